//! `crescendo explain [RULE]`: the lint rules' documentation.

use std::process::ExitCode;

use crescendo_diag::Diagnostic;

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
                let names = crescendo_lint::RULES.iter().map(|r| r.name);
                let mut d = Diagnostic::error(
                    "unknown-rule",
                    format!("there is no lint rule named `{name}`"),
                )
                .note("`crescendo explain` lists the rules");
                if let Some(s) = crescendo_diag::closest(name, names) {
                    d = d.help(format!("did you mean `{s}`?"));
                }
                crate::output::diagnostics(&[d], color);
                ExitCode::from(EXIT_STORY)
            }
        },
    }
}
