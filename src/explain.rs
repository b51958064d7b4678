//! `crescendo explain [RULE]`: the lint rules' documentation.

use std::process::ExitCode;

use crate::EXIT_STORY;

pub fn run(rule: Option<&str>, color: bool) -> ExitCode {
    match rule {
        None => {
            say_raw!("{}", crescendo_lint::list());
            ExitCode::SUCCESS
        }
        Some(name) => match crescendo_lint::explain(name) {
            Some(text) => {
                say_raw!("{text}");
                ExitCode::SUCCESS
            }
            None => {
                let d = crescendo_lint::unknown_rule(name);
                crate::output::diagnostics(&[d], color);
                ExitCode::from(EXIT_STORY)
            }
        },
    }
}
