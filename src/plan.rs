//! `crescendo plan`: print the frame plan (the renderer's only input) as JSON.

use std::path::Path;
use std::process::ExitCode;

use crate::cli::DataArgs;
use crate::planning::load_plan;
use crate::EXIT_OUTPUT;

/// `load_plugins`: load the story's plugins (their code runs); without it
/// they are only checked.
pub fn run(story: &Path, mut data: DataArgs, load_plugins: bool, color: bool) -> ExitCode {
    data.inspect_plugins = !load_plugins;
    match load_plan(story, &data, None, color) {
        Ok(p) => match serde_json::to_string_pretty(&p.plan) {
            Ok(s) => {
                say!("{}", crate::output::json(&s));
                ExitCode::SUCCESS
            }
            Err(e) => {
                tell!("error: cannot print the plan: {e}");
                ExitCode::from(EXIT_OUTPUT)
            }
        },
        Err(code) => code,
    }
}
