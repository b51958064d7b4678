//! `crescendo manual`: the manual page (roff) generated from the command
//! definitions.

use std::process::ExitCode;

use crate::cli::Cli;
use crate::EXIT_OUTPUT;

/// The manual page, generated from the command definitions: the main page
/// followed by a section per subcommand.
pub fn run() -> ExitCode {
    use clap::CommandFactory as _;
    let cmd = Cli::command();
    let mut buf = Vec::new();
    let man = clap_mangen::Man::new(cmd.clone());
    if let Err(e) = man.render(&mut buf) {
        tell!("error: cannot write the manual page: {e}");
        return ExitCode::from(EXIT_OUTPUT);
    }
    // clap_mangen lists the subcommands by name; give each its own
    // section with its options.
    let mut roff = String::from_utf8_lossy(&buf).into_owned();
    for sub in cmd.get_subcommands() {
        let mut page = Vec::new();
        let sub = sub
            .clone()
            .bin_name(format!("crescendo {}", sub.get_name()));
        if clap_mangen::Man::new(sub.clone())
            .render_options_section(&mut page)
            .is_err()
        {
            continue;
        }
        roff.push_str(&format!(
            ".SH \"COMMAND: {}\"\n",
            sub.get_name().to_uppercase()
        ));
        let mut usage = Vec::new();
        let _ = clap_mangen::Man::new(sub.clone()).render_synopsis_section(&mut usage);
        let usage = String::from_utf8_lossy(&usage).replacen(".SH SYNOPSIS\n", "", 1);
        roff.push_str(&usage);
        if let Some(about) = sub.get_long_about().or(sub.get_about()) {
            roff.push_str(&format!(".PP\n{}\n", roff_escape(&about.to_string())));
        }
        let opts = String::from_utf8_lossy(&page).replacen(".SH OPTIONS\n", ".PP\n", 1);
        roff.push_str(&opts);
    }
    say_raw!("{roff}");
    ExitCode::SUCCESS
}

/// Escape text for roff: backslashes, and a leading `.` or `'`.
fn roff_escape(text: &str) -> String {
    let t = text.replace('\\', "\\e");
    if t.starts_with('.') || t.starts_with('\'') {
        format!("\\&{t}")
    } else {
        t
    }
}
