//! `crescendo plan`: print the frame plan (the renderer's only input) as JSON.

use std::path::Path;
use std::process::ExitCode;

use crate::cli::DataArgs;
use crate::planning::load_plan;
use crate::EXIT_OUTPUT;

pub fn run(story: &Path, data: &DataArgs, color: bool) -> ExitCode {
    match load_plan(story, data, color) {
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
