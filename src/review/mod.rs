//! `crescendo review STORY --against REV`: the deck the story makes now
//! next to the deck it made at a git revision. The old story, its data and
//! its house style come from the repository's objects (`git.rs`); both
//! decks are planned, linted and drawn in memory, as `build` would; then
//! `compare.rs` pairs their frames and claims, and the review is written
//! as a page (`page.rs`), Markdown or JSON. No deck is written.

mod compare;
mod git;
mod markdown;
mod page;

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use crescendo_diag::Diagnostic;
use crescendo_plan::Planned;

use crate::cli::{DataArgs, LintArgs, ReviewFormat};
use crate::{EXIT_CLAIM, EXIT_OUTPUT, EXIT_STORY};

pub use compare::{Review, Side};

/// What the user asked for besides the story.
pub struct Request {
    pub against: String,
    pub format: ReviewFormat,
    pub out: Option<PathBuf>,
    pub fail_on_change: bool,
    /// A share (0.05 for 5%).
    pub near_miss: f64,
}

fn stop(diags: &[Diagnostic], color: bool, code: u8) -> ExitCode {
    crate::output::diagnostics(diags, color);
    tell!("no review written");
    ExitCode::from(code)
}

/// Plan the story as it was at the revision; `None` when it did not exist.
fn plan_then(
    story: &Path,
    revision: &git::Revision,
    data: &DataArgs,
) -> Result<Option<Planned>, Vec<Diagnostic>> {
    let Some(bytes) = revision.story(story).map_err(|d| vec![d])? else {
        return Ok(None);
    };
    let name = format!("{} (at {})", story.display(), revision.name);
    let src = crescendo_lang::source::decode(&name, bytes)?;
    let dir = story.parent().unwrap_or(Path::new("."));
    let options = crate::planning::options(data).map_err(|d| vec![d])?;
    let mut io = git::AtRevision::new(revision, &options);
    crescendo_plan::plan_story_with(&src, dir, &options, &mut io).map(Some)
}

/// Draw every frame of a plan and lint it, as `build` does.
fn draw<'a>(planned: &'a Planned, lint: &LintArgs) -> Result<Side<'a>, Diagnostic> {
    let host = crate::deck::Host(&planned.plugins);
    let mut svgs = Vec::new();
    for f in &planned.plan.frames {
        let svg =
            crescendo_render::render_frame_with(&planned.plan, f, Some(&host)).map_err(|e| {
                Diagnostic::error(
                    "render",
                    format!(
                        "cannot draw frame {} (\"{}\"): {}",
                        f.number, f.headline, e.message
                    ),
                )
            })?;
        svgs.push(svg);
    }
    let lint = crate::planning::run_lint(planned, lint)
        .iter()
        .map(|d| (finding_frame(d), format!("{}: {}", d.code, d.message)))
        .collect();
    Ok(Side {
        plan: &planned.plan,
        svgs,
        lint,
    })
}

/// The number of the frame a lint finding is about (its `in frame N`
/// note), or `None` for the whole story.
fn finding_frame(d: &Diagnostic) -> Option<usize> {
    d.notes.iter().find_map(|n| {
        let rest = n.strip_prefix("in frame ")?;
        rest.split(' ').next()?.parse().ok()
    })
}

/// Build the review, or the errors that stop it.
fn make(
    story: &Path,
    request: &Request,
    data: &DataArgs,
    lint: &LintArgs,
) -> Result<Review, (Vec<Diagnostic>, u8)> {
    let revision = git::open(story, &request.against).map_err(|d| (vec![d], EXIT_STORY))?;
    let then = plan_then(story, &revision, data).map_err(|mut d| {
        d.push(
            Diagnostic::error(
                "review",
                format!(
                    "the story as it was at `{}` does not plan, so there is nothing to compare with",
                    revision.name
                ),
            )
            .help("compare against another revision with `--against REV`"),
        );
        (d, EXIT_STORY)
    })?;
    let now = crate::planning::plan_quietly(story, data, None).map_err(|d| (d, EXIT_STORY))?;
    let new = draw(&now, lint).map_err(|d| (vec![d], EXIT_STORY))?;
    // a story new since the revision: an empty deck before it
    let empty = crescendo_plan::DeckPlan {
        frames: Vec::new(),
        claims: Vec::new(),
        ..now.plan.clone()
    };
    let old = match &then {
        Some(then) => draw(then, lint).map_err(|d| (vec![d], EXIT_STORY))?,
        None => Side {
            plan: &empty,
            svgs: Vec::new(),
            lint: Vec::new(),
        },
    };
    Ok(compare::review(
        &old,
        &new,
        (&revision.name, &revision.short),
        request.near_miss,
    ))
}

/// `crescendo review`.
pub fn run(
    story: &Path,
    request: &Request,
    data: &DataArgs,
    lint: &LintArgs,
    color: bool,
) -> ExitCode {
    if !request.near_miss.is_finite() || request.near_miss < 0.0 {
        return stop(
            &[Diagnostic::error(
                "review",
                "--near-miss must be a percentage of 0 or more",
            )],
            color,
            EXIT_STORY,
        );
    }
    let review = match make(story, request, data, lint) {
        Ok(r) => r,
        Err((diags, code)) => return stop(&diags, color, code),
    };
    match request.format {
        ReviewFormat::Markdown => say!("{}", markdown::write(&review).trim_end()),
        ReviewFormat::Json => match serde_json::to_string_pretty(&review) {
            Ok(j) => say!("{j}"),
            Err(e) => {
                let d = Diagnostic::error("output", format!("cannot write the review: {e}"));
                return stop(&[d], color, EXIT_OUTPUT);
            }
        },
        ReviewFormat::Page => {
            let out = request
                .out
                .clone()
                .unwrap_or_else(|| PathBuf::from("review.html"));
            if let Err(d) = page::write_file(&out, &review) {
                return stop(&[d], color, EXIT_OUTPUT);
            }
            tell!("review written to {}", out.display());
        }
    }
    if review.counts.failing_claims > 0 {
        ExitCode::from(EXIT_CLAIM)
    } else if request.fail_on_change && review.any_change() {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    }
}
