//! `crescendo build`: plan, lint and check the story, then write the deck.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use crescendo_diag::{Diagnostic, Severity};

use crate::cli::{DataArgs, Export, LintArgs};
use crate::planning::{default_out, load_plan, run_lint};
use crate::{deck, diff, incremental, EXIT_CLAIM, EXIT_OUTPUT, EXIT_STORY};

/// `build` as the command line gives it: which files to write, then [`build`].
#[allow(clippy::too_many_arguments)]
pub fn run(
    story: &Path,
    out: Option<PathBuf>,
    draft: bool,
    no_cache: bool,
    format: &[Export],
    (scale, transparent, bookends): (u32, bool, bool),
    data: &DataArgs,
    lint: &LintArgs,
    color: bool,
) -> ExitCode {
    let exports = deck::Exports {
        svg: format.contains(&Export::Svg),
        html: format.contains(&Export::Html),
        pdf: format.contains(&Export::Pdf),
        png: format.contains(&Export::Png),
        scale,
        transparent,
        bookends,
    };
    build_with(story, out, draft, !no_cache, &exports, data, lint, color)
}

/// Build a deck, with its caches (see [`build_with`]).
pub fn build(
    story: &Path,
    out: Option<PathBuf>,
    draft: bool,
    exports: &deck::Exports,
    data: &DataArgs,
    lint: &LintArgs,
    color: bool,
) -> ExitCode {
    build_with(story, out, draft, true, exports, data, lint, color)
}

/// Plan, lint and check the story, then write the deck; with `cache`, the
/// planner's views and the frames are reused from the cache folder beside
/// the deck (see `incremental.rs`).
#[allow(clippy::too_many_arguments)]
pub fn build_with(
    story: &Path,
    out: Option<PathBuf>,
    draft: bool,
    cache: bool,
    exports: &deck::Exports,
    data: &DataArgs,
    lint: &LintArgs,
    color: bool,
) -> ExitCode {
    let cache =
        cache.then(|| incremental::cache_dir(&out.clone().unwrap_or_else(|| default_out(story))));
    let planned = match load_plan(story, data, cache.clone(), color) {
        Ok(p) => p,
        Err(code) => return code,
    };
    let findings = run_lint(&planned, lint);
    if !findings.is_empty() {
        crate::output::diagnostics(&findings, color);
    }
    let lint_errors = findings.iter().filter(|d| d.is_error()).count();
    if lint_errors > 0 {
        tell!(
            "{lint_errors} lint error{} in {}; no deck written",
            if lint_errors == 1 { "" } else { "s" },
            story.display()
        );
        return ExitCode::from(EXIT_STORY);
    }
    let out = out.unwrap_or_else(|| default_out(story));
    if !planned.failed_claims.is_empty() {
        if draft {
            let as_warnings: Vec<Diagnostic> = planned
                .failed_claims
                .iter()
                .cloned()
                .map(|mut d| {
                    d.severity = Severity::Warning;
                    d
                })
                .collect();
            crate::output::diagnostics(&as_warnings, color);
        } else {
            crate::output::diagnostics(&planned.failed_claims, color);
            let n = planned.failed_claims.len();
            let kept = if diff::read_manifest(&out).is_ok() {
                format!(" (the previous deck in {} is kept)", out.display())
            } else {
                String::new()
            };
            tell!(
                "{n} claim{} of {} not supported by the data; no deck written{kept}",
                if n == 1 { "" } else { "s" },
                story.display(),
            );
            return ExitCode::from(EXIT_CLAIM);
        }
    }
    let previous = diff::read_manifest(&out).ok();
    let host = deck::Host(&planned.plugins);
    let ctx = deck::Context {
        plugins: Some(&host),
        source: Some(&planned.source),
        anchors: Some(&planned.anchors),
    };
    let mut frames = incremental::FrameCache::new(cache.as_deref(), &planned.plan);
    match deck::build(&planned.plan, &out, exports, &ctx, &mut frames) {
        Ok(files) => {
            tell!(
                "built {} frame{} into {}{}",
                files,
                if files == 1 { "" } else { "s" },
                out.display(),
                if draft && !planned.failed_claims.is_empty() {
                    " (draft: claims fail)"
                } else {
                    ""
                }
            );
            if let (Some(old), Ok(new)) = (previous, diff::read_manifest(&out)) {
                for line in diff::diff(&old, &new) {
                    tell!("  {line}");
                }
            }
            for line in frames.finish(&planned.report) {
                tell!("  {line}");
            }
            ExitCode::SUCCESS
        }
        Err(e) => {
            crate::output::diagnostics(std::slice::from_ref(&e), color);
            if previous.is_some() {
                tell!("the previous deck in {} was left as it was", out.display());
            } else {
                tell!("nothing was written to {}", out.display());
            }
            // a frame that cannot be drawn (a failing plugin) is the story's
            // problem; anything else is the output folder's
            ExitCode::from(if e.code == "render" {
                EXIT_STORY
            } else {
                EXIT_OUTPUT
            })
        }
    }
}
