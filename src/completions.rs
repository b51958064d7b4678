//! `crescendo completions SHELL`: a shell completion script generated from
//! the command definitions.

use std::process::ExitCode;

use crate::cli::{Cli, Shell};

/// The completion script for `shell`, generated from the command definitions.
pub fn run(shell: Shell) -> ExitCode {
    use clap::CommandFactory as _;
    use clap_complete::Shell as S;
    let shell = match shell {
        Shell::Bash => S::Bash,
        Shell::Zsh => S::Zsh,
        Shell::Fish => S::Fish,
        Shell::Elvish => S::Elvish,
        Shell::Powershell => S::PowerShell,
    };
    let mut cmd = Cli::command();
    let mut buf = Vec::new();
    clap_complete::generate(shell, &mut cmd, "crescendo", &mut buf);
    say_raw!("{}", String::from_utf8_lossy(&buf));
    ExitCode::SUCCESS
}
