//! `crescendo plan`: print the frame plan (the renderer's only input) as JSON.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use crate::cli::DataArgs;
use crate::planning::load_plan;
use crate::EXIT_OUTPUT;

/// `load_plugins`: load the story's plugins (their code runs); without it
/// they are only checked.
/// `cache`: the view cache folder shared with `build` (none: no cache).
pub fn run(
    story: &Path,
    mut data: DataArgs,
    load_plugins: bool,
    cache: Option<PathBuf>,
    color: bool,
) -> ExitCode {
    data.inspect_plugins = !load_plugins;
    match load_plan(story, &data, cache.clone(), color) {
        Ok(p) => {
            if let Some(dir) = &cache {
                // as a good build does: forget entries no longer used
                crate::incremental::prune(dir, &p.report);
            }
            print_plan(&p)
        }
        Err(code) => code,
    }
}

fn print_plan(p: &crescendo_plan::Planned) -> ExitCode {
    match serde_json::to_string_pretty(&p.plan) {
        Ok(s) => {
            say!("{}", crate::output::json(&s));
            ExitCode::SUCCESS
        }
        Err(e) => {
            tell!("error: cannot print the plan: {e}");
            ExitCode::from(EXIT_OUTPUT)
        }
    }
}
