//! Reading, parsing, planning and linting a story: what `build`, `check`,
//! `plan`, `plugins` and `watch` share.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::Arc;

use crescendo_diag::{Diagnostic, Source};
use crescendo_plan::{Options, Planned};

use crate::cli::{parse_connection_arg, DataArgs, LintArgs};
use crate::EXIT_STORY;

/// Lint a plan with the theme it will be drawn with.
pub fn run_lint(planned: &Planned, args: &LintArgs) -> Vec<Diagnostic> {
    let theme = match crescendo_render::theme::effective(&planned.plan) {
        Ok(t) => t,
        Err(e) => return vec![Diagnostic::error("theme", e.message)],
    };
    // the frames laid out (no SVG written, no plugin code run) for the
    // rules about geometry
    let skip = crescendo_render::plugin::SkipPlugins;
    let displays: Vec<_> = (planned.plan.frames.iter())
        .map(|f| crescendo_render::display_list(&planned.plan, f, Some(&skip)).unwrap_or_default())
        .collect();
    let input = crescendo_lint::Input {
        src: &planned.source,
        plan: &planned.plan,
        anchors: &planned.anchors,
        theme: &theme,
        displays: &displays,
        small_counts: args.small_counts,
    };
    crescendo_lint::lint(
        &input,
        &crescendo_lint::Options {
            strict: args.strict,
        },
    )
}

/// The default deck folder: `deck/` beside the story.
pub fn default_out(story: &Path) -> PathBuf {
    story.parent().unwrap_or(Path::new(".")).join("deck")
}

/// The planner's options from the command line.
pub fn options(data: &DataArgs) -> Result<Options, Diagnostic> {
    Ok(Options {
        data: data.data.iter().cloned().collect::<BTreeMap<_, _>>(),
        no_plugins: data.no_plugins,
        claims_footnote: data.claims_footnote,
        inspect_plugins: data.inspect_plugins,
        database: crescendo_plan::DbOptions {
            connections: data
                .connections
                .iter()
                .map(|c| parse_connection_arg(c))
                .collect::<Result<_, _>>()?,
            timeout: std::time::Duration::from_secs_f64(
                if data.statement_timeout.is_finite() && data.statement_timeout > 0.0 {
                    data.statement_timeout.min(86_400.0)
                } else {
                    60.0
                },
            ),
            explain: data.explain_plans,
        },
        allow_paths: data.allow_paths.clone(),
        limits: data.limits.limits(),
    })
}

/// Read, parse and plan a story without printing anything; `cache`: the
/// folder of the planner's view cache (none: no cache).
pub fn plan_quietly(
    story: &Path,
    data: &DataArgs,
    cache: Option<PathBuf>,
) -> Result<Planned, Vec<Diagnostic>> {
    crescendo_plan::limits::file_size(story, &data.limits.limits())
        .map_err(|e| vec![Diagnostic::error("limit", e)])?;
    let bytes = std::fs::read(story).map_err(|e| {
        vec![Diagnostic::error(
            "story-file",
            format!("cannot read story file `{}`: {e}", story.display()),
        )]
    })?;
    let src: Arc<Source> = crescendo_lang::source::decode(&story.display().to_string(), bytes)?;
    let dir = story.parent().unwrap_or(Path::new("."));
    let options = options(data).map_err(|d| vec![d])?;
    let mut io = crate::store::Reading::new(&options, cache.as_deref());
    crescendo_plan::plan_story_with(&src, dir, &options, &mut io)
}

/// Read, parse and plan a story; print diagnostics; exit status on failure.
pub fn load_plan(
    story: &Path,
    data: &DataArgs,
    cache: Option<PathBuf>,
    color: bool,
) -> Result<Planned, ExitCode> {
    match plan_quietly(story, data, cache) {
        Ok(p) => {
            if !p.warnings.is_empty() {
                crate::output::diagnostics(&p.warnings, color);
            }
            Ok(p)
        }
        Err(diags) => {
            crate::output::diagnostics(&diags, color);
            let n = diags.iter().filter(|d| d.is_error()).count();
            tell!(
                "{n} error{} in {}; no deck written",
                if n == 1 { "" } else { "s" },
                story.display()
            );
            Err(ExitCode::from(EXIT_STORY))
        }
    }
}
