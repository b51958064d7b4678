//! The `crescendo` command: compiles a story file and its CSV data into an
//! ordered deck of SVG frames, a manifest and a self-contained HTML deck.

// A `Diagnostic` is large, but it is only built on the cold error path.
#![allow(clippy::result_large_err)]

use std::collections::BTreeMap;
use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::Arc;

use clap::{Parser, Subcommand, ValueEnum};
use crescendo_diag::{render, Diagnostic, Severity, Source};
use crescendo_plan::{Options, Planned};

mod deck;
mod diff;
mod export;
mod fmt;
mod incremental;
mod new;
mod progress;
mod watch;

/// Print a line to standard output; a closed pipe (`crescendo check | head`)
/// ends the program quietly instead of panicking.
macro_rules! say {
    ($($arg:tt)*) => {{
        use std::io::Write as _;
        if writeln!(std::io::stdout(), $($arg)*).is_err() {
            std::process::exit(0);
        }
    }};
}

/// Like [`say!`] without the line break.
macro_rules! say_raw {
    ($($arg:tt)*) => {{
        use std::io::Write as _;
        if write!(std::io::stdout(), $($arg)*).is_err() {
            std::process::exit(0);
        }
    }};
}

/// Exit status when the story or its data has errors.
const EXIT_STORY: u8 = 1;
/// Exit status when a claim does not hold.
const EXIT_CLAIM: u8 = 3;
/// Exit status when the deck could not be written.
const EXIT_OUTPUT: u8 = 4;

#[derive(Parser)]
#[command(
    name = "crescendo",
    version,
    about = "Compile a story file and its data into a checked deck of clean charts"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum Format {
    Human,
    Json,
}

/// A kind of file `build` writes.
#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum Export {
    /// Numbered SVG frames.
    Svg,
    /// The self-contained HTML deck (index.html).
    Html,
    /// deck.pdf, one page per frame, vector with real text.
    Pdf,
    /// Numbered PNG frames (see --scale).
    Png,
}

#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum Deny {
    /// Treat lint warnings as errors (for CI).
    Warnings,
}

#[derive(clap::Args)]
struct LintArgs {
    /// `--deny warnings` turns lint warnings into errors.
    #[arg(long, value_enum)]
    deny: Option<Deny>,
    /// Counts of rows below N are flagged as possibly identifying people
    /// (follow your organisation's disclosure rules).
    #[arg(long, value_name = "N", default_value_t = 5.0)]
    small_counts: f64,
}

#[derive(clap::Args)]
struct DataArgs {
    /// Read data item NAME from FILE instead of the file the story names
    /// (repeatable), e.g. `--data trips=exports/2024-12.csv`.
    #[arg(long = "data", value_name = "NAME=FILE", value_parser = parse_data_arg)]
    data: Vec<(String, PathBuf)>,
    /// Refuse every plugin the story names (plugins are native code that
    /// runs with your rights).
    #[arg(long)]
    no_plugins: bool,
    /// Read the connection string of database data item NAME from the
    /// environment variable ENVVAR instead of the one the story names
    /// (repeatable), e.g. `--connection visits=STAGING_DB`.
    /// (Checked after parsing, so that a connection string given here by
    /// mistake is never echoed.)
    #[arg(long = "connection", value_name = "NAME=ENVVAR")]
    connections: Vec<String>,
    /// Cancel any database query that runs longer than this many seconds.
    #[arg(long, value_name = "SECONDS", default_value_t = 60.0)]
    statement_timeout: f64,
    /// Let the story read data, house styles and plugins from DIR too
    /// (repeatable). Without it a story may read only files in its own
    /// folder and below.
    #[arg(long = "allow-path", value_name = "DIR")]
    allow_paths: Vec<PathBuf>,
    #[command(flatten)]
    limits: LimitArgs,
}

/// `--connection NAME=ENVVAR`; the error never repeats the argument (it
/// may be a connection string given by mistake).
fn parse_connection_arg(s: &str) -> Result<(String, String), Diagnostic> {
    let ok_var = |v: &str| {
        !v.is_empty()
            && v.chars().all(|c| c.is_ascii_alphanumeric() || c == '_')
            && !v.starts_with(|c: char| c.is_ascii_digit())
    };
    match s.split_once('=') {
        Some((name, var)) if !name.is_empty() && ok_var(var) => {
            Ok((name.to_string(), var.to_string()))
        }
        _ => Err(Diagnostic::error(
            "connection-option",
            "`--connection` expects NAME=ENVVAR: a data item and the name of the environment \
             variable that holds its connection string (the value given is not repeated here, \
             in case it holds a password)",
        )),
    }
}

/// Limits on what one build reads and makes; a story or data file over a
/// limit stops the build with a located error.
#[derive(clap::Args, Clone)]
struct LimitArgs {
    /// Largest story or data file, in bytes.
    #[arg(long, value_name = "BYTES", default_value_t = crescendo_plan::limits::Limits::default().input_bytes)]
    max_input_bytes: u64,
    /// Most rows of a data file held in memory.
    #[arg(long, value_name = "N", default_value_t = crescendo_plan::limits::Limits::default().rows)]
    max_rows: usize,
    /// Most frames in a deck.
    #[arg(long, value_name = "N", default_value_t = crescendo_plan::limits::Limits::default().frames)]
    max_frames: usize,
    /// Longest text (a story string or a data cell), in characters.
    #[arg(long, value_name = "N", default_value_t = crescendo_plan::limits::Limits::default().text)]
    max_text: usize,
}

impl Default for LimitArgs {
    fn default() -> Self {
        let l = crescendo_plan::limits::Limits::default();
        Self {
            max_input_bytes: l.input_bytes,
            max_rows: l.rows,
            max_frames: l.frames,
            max_text: l.text,
        }
    }
}

impl LimitArgs {
    fn limits(&self) -> crescendo_plan::limits::Limits {
        crescendo_plan::limits::Limits {
            input_bytes: self.max_input_bytes,
            rows: self.max_rows,
            frames: self.max_frames,
            text: self.max_text,
        }
    }
}

fn parse_data_arg(s: &str) -> Result<(String, PathBuf), String> {
    match s.split_once('=') {
        Some((name, file)) if !name.is_empty() && !file.is_empty() => {
            Ok((name.to_string(), PathBuf::from(file)))
        }
        _ => Err(format!("expected NAME=FILE, got `{s}`")),
    }
}

#[derive(Subcommand)]
enum Command {
    /// Build the deck: numbered SVG frames, deck.json and index.html.
    Build {
        /// The story file (.cresc).
        story: PathBuf,
        /// Output folder (default: `deck/` beside the story). It is replaced
        /// only when the whole build succeeded.
        #[arg(long)]
        out: Option<PathBuf>,
        /// Build even when claims fail, marking every frame whose text
        /// depends on a failed claim.
        #[arg(long)]
        draft: bool,
        /// Compute every view and draw every frame, without reading or
        /// writing the cache beside the deck.
        #[arg(long)]
        no_cache: bool,
        /// What to write, comma-separated: svg, html, pdf, png
        /// (deck.json is always written).
        #[arg(
            long,
            value_enum,
            value_delimiter = ',',
            default_value = "svg,html",
            value_name = "FORMATS"
        )]
        format: Vec<Export>,
        /// PNG pixels per SVG pixel: 2 gives 2560×1440 images.
        #[arg(long, value_name = "N", default_value_t = 2,
              value_parser = clap::value_parser!(u32).range(1..=4))]
        scale: u32,
        #[command(flatten)]
        data: DataArgs,
        #[command(flatten)]
        lint: LintArgs,
    },
    /// Rebuild the deck whenever the story, its data, its style file or a
    /// plugin changes; errors are printed and the last good deck stays.
    Watch {
        /// The story file (.cresc).
        story: PathBuf,
        /// Output folder (default: `deck/` beside the story).
        #[arg(long)]
        out: Option<PathBuf>,
        /// Build even when claims fail (see `build --draft`).
        #[arg(long)]
        draft: bool,
        /// Serve the deck on 127.0.0.1 and reload the browser after each
        /// rebuild.
        #[arg(long)]
        serve: bool,
        /// Port for `--serve` (0 picks a free one).
        #[arg(long, default_value_t = 8765, requires = "serve")]
        port: u16,
        #[command(flatten)]
        data: DataArgs,
        #[command(flatten)]
        lint: LintArgs,
    },
    /// Parse, compute every value and check every claim, without drawing.
    Check {
        /// The story file (.cresc).
        story: PathBuf,
        /// `human` (default) or `json` for CI.
        #[arg(long, value_enum, default_value = "human")]
        format: Format,
        /// Print the SQL each view over a database source sends (with its
        /// bound values listed apart) and the rows and bytes it received.
        #[arg(long)]
        explain_sql: bool,
        #[command(flatten)]
        data: DataArgs,
        #[command(flatten)]
        lint: LintArgs,
    },
    /// List the plugins a story loads: their forms, versions and ABI version.
    Plugins {
        /// The story file (.cresc).
        story: PathBuf,
        /// Let the story load plugins from DIR too (repeatable).
        #[arg(long = "allow-path", value_name = "DIR")]
        allow_paths: Vec<PathBuf>,
    },
    /// Explain a lint rule (what it flags, why, an example, what to do
    /// instead); without a rule, list them all.
    Explain {
        /// The rule's name, e.g. `bars-off-zero`.
        rule: Option<String>,
    },
    /// Print the frame plan (the renderer's input) as JSON.
    Plan {
        /// The story file (.cresc).
        story: PathBuf,
        #[command(flatten)]
        data: DataArgs,
    },
    /// Compare two decks: which frames changed and which quoted numbers moved.
    Diff {
        /// The older deck folder.
        old: PathBuf,
        /// The newer deck folder.
        new: PathBuf,
    },
    /// Profile a CSV file and write a starter story for it that builds and
    /// passes the lint.
    New {
        /// The CSV file to start from.
        data: PathBuf,
        /// Where to write the story (default: the CSV's name with .cresc,
        /// beside it). An existing file is not replaced without --force.
        #[arg(long, value_name = "STORY")]
        out: Option<PathBuf>,
        /// Replace the story file if it exists.
        #[arg(long)]
        force: bool,
    },
    /// Rewrite stories in the canonical layout (comments are kept).
    Fmt {
        /// Change nothing; list the files that would change and exit with
        /// status 1 if there are any (for CI).
        #[arg(long)]
        check: bool,
        /// The story files (.cresc), or folders to search for them.
        #[arg(required = true)]
        files: Vec<PathBuf>,
    },
    /// Print a shell completion script: `crescendo completions bash >
    /// /etc/bash_completion.d/crescendo`.
    Completions {
        /// The shell.
        #[arg(value_enum)]
        shell: Shell,
    },
    /// Print the manual page (roff) of crescendo: `crescendo manual | man -l -`.
    Manual,
}

/// Shells `completions` writes scripts for.
#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum Shell {
    Bash,
    Zsh,
    Fish,
    Elvish,
    Powershell,
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    progress::install();
    let color = std::io::stderr().is_terminal() && std::env::var_os("NO_COLOR").is_none();
    match cli.command {
        Command::Build {
            story,
            out,
            draft,
            no_cache,
            format,
            scale,
            data,
            lint,
        } => {
            incremental::disable(no_cache);
            let exports = deck::Exports {
                svg: format.contains(&Export::Svg),
                html: format.contains(&Export::Html),
                pdf: format.contains(&Export::Pdf),
                png: format.contains(&Export::Png),
                scale,
            };
            build(&story, out, draft, &exports, &data, &lint, color)
        }
        Command::Watch {
            story,
            out,
            draft,
            serve,
            port,
            data,
            lint,
        } => {
            let deck_dir = out.clone().unwrap_or_else(|| default_out(&story));
            let exports = deck::Exports::default();
            watch::run(&story, &deck_dir, &data.data, serve.then_some(port), || {
                build(&story, out.clone(), draft, &exports, &data, &lint, color)
                    == ExitCode::SUCCESS
            })
        }
        Command::Check {
            story,
            format,
            explain_sql,
            data,
            lint,
        } => check(&story, format, explain_sql, &data, &lint, color),
        Command::Explain { rule } => explain(rule.as_deref(), color),
        Command::Plugins { story, allow_paths } => {
            let none = DataArgs {
                data: Vec::new(),
                no_plugins: false,
                connections: Vec::new(),
                statement_timeout: 60.0,
                allow_paths,
                limits: LimitArgs::default(),
            };
            match load_plan(&story, &none, color) {
                Ok(p) => {
                    if p.plugins.is_empty() {
                        say!("{} loads no plugins", story.display());
                    }
                    for (alias, plugin) in &p.plugins {
                        let i = plugin.info();
                        say!(
                            "{alias}: {} {} (plugin ABI {}), forms: {}\n  {}\n  sha256 {}",
                            i.name,
                            i.version,
                            i.abi_version,
                            i.forms.join(", "),
                            i.path.display(),
                            i.sha256
                        );
                    }
                    ExitCode::SUCCESS
                }
                Err(code) => code,
            }
        }
        Command::Plan { story, data } => match load_plan(&story, &data, color) {
            Ok(p) => match serde_json::to_string_pretty(&p.plan) {
                Ok(s) => {
                    say!("{s}");
                    ExitCode::SUCCESS
                }
                Err(e) => {
                    eprintln!("error: cannot print the plan: {e}");
                    ExitCode::from(EXIT_OUTPUT)
                }
            },
            Err(code) => code,
        },
        Command::New { data, out, force } => new::run(&data, out.as_deref(), force, color),
        Command::Fmt { check, files } => fmt::run(&files, check, color),
        Command::Completions { shell } => completions(shell),
        Command::Manual => manual(),
        Command::Diff { old, new } => match diff::diff_folders(&old, &new) {
            Ok(lines) => {
                for l in lines {
                    say!("{l}");
                }
                ExitCode::SUCCESS
            }
            Err(d) => {
                eprint!("{}", render(&[d], color));
                ExitCode::from(EXIT_STORY)
            }
        },
    }
}

/// The completion script for `shell`, generated from the command definitions.
fn completions(shell: Shell) -> ExitCode {
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

/// The manual page, generated from the command definitions: the main page
/// followed by a section per subcommand.
fn manual() -> ExitCode {
    use clap::CommandFactory as _;
    let cmd = Cli::command();
    let mut buf = Vec::new();
    let man = clap_mangen::Man::new(cmd.clone());
    if let Err(e) = man.render(&mut buf) {
        eprintln!("error: cannot write the manual page: {e}");
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

fn explain(rule: Option<&str>, color: bool) -> ExitCode {
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
                eprint!("{}", render(&[d], color));
                ExitCode::from(EXIT_STORY)
            }
        },
    }
}

/// Lint a plan with the theme it will be drawn with.
fn run_lint(planned: &Planned, args: &LintArgs) -> Vec<Diagnostic> {
    let theme = match crescendo_render::theme::effective(&planned.plan) {
        Ok(t) => t,
        Err(e) => return vec![Diagnostic::error("theme", e.message)],
    };
    let input = crescendo_lint::Input {
        src: &planned.source,
        plan: &planned.plan,
        anchors: &planned.anchors,
        theme: &theme,
        small_counts: args.small_counts,
    };
    crescendo_lint::lint(
        &input,
        &crescendo_lint::Options {
            deny_warnings: args.deny == Some(Deny::Warnings),
        },
    )
}

fn build(
    story: &Path,
    out: Option<PathBuf>,
    draft: bool,
    exports: &deck::Exports,
    data: &DataArgs,
    lint: &LintArgs,
    color: bool,
) -> ExitCode {
    // caches beside the deck (see incremental.rs)
    incremental::configure_for(&out.clone().unwrap_or_else(|| default_out(story)));
    let planned = match load_plan(story, data, color) {
        Ok(p) => p,
        Err(code) => return code,
    };
    let findings = run_lint(&planned, lint);
    if !findings.is_empty() {
        eprint!("{}", render(&findings, color));
    }
    let lint_errors = findings.iter().filter(|d| d.is_error()).count();
    if lint_errors > 0 {
        eprintln!(
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
            eprint!("{}", render(&as_warnings, color));
        } else {
            eprint!("{}", render(&planned.failed_claims, color));
            let n = planned.failed_claims.len();
            eprintln!(
                "{n} claim{} of {} not supported by the data; no deck written (the previous deck in {} is kept)",
                if n == 1 { "" } else { "s" },
                story.display(),
                out.display()
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
    match deck::build(&planned.plan, &out, exports, &ctx) {
        Ok(files) => {
            eprintln!(
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
                    eprintln!("  {line}");
                }
            }
            for line in incremental::summary() {
                eprintln!("  {line}");
            }
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprint!("{}", render(std::slice::from_ref(&e), color));
            eprintln!("the previous deck in {} was left as it was", out.display());
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

fn diag_json(d: &Diagnostic) -> serde_json::Value {
    let (file, line, column) = match d.location() {
        Some((f, l, c)) => (Some(f), Some(l), Some(c)),
        None => (None, None, None),
    };
    serde_json::json!({
        "severity": d.severity,
        "code": d.code,
        "message": d.message,
        "file": file,
        "line": line,
        "column": column,
        "notes": d.notes,
        "help": d.help,
    })
}

fn check(
    story: &Path,
    format: Format,
    explain_sql: bool,
    data: &DataArgs,
    lint: &LintArgs,
    color: bool,
) -> ExitCode {
    let result = plan_quietly(story, data);
    let (planned, mut errors) = match result {
        Ok(p) => (Some(p), Vec::new()),
        Err(d) => (None, d),
    };
    let findings = planned
        .as_ref()
        .map(|p| run_lint(p, lint))
        .unwrap_or_default();
    let (lint_errors, lint_rest): (Vec<Diagnostic>, Vec<Diagnostic>) =
        findings.into_iter().partition(Diagnostic::is_error);
    errors.extend(lint_errors);
    let failed = planned.as_ref().map_or(0, |p| p.failed_claims.len());
    let status = if !errors.is_empty() {
        EXIT_STORY
    } else if failed > 0 {
        EXIT_CLAIM
    } else {
        0
    };
    match format {
        Format::Json => {
            let mut problems: Vec<serde_json::Value> = errors.iter().map(diag_json).collect();
            if let Some(p) = &planned {
                problems.extend(p.failed_claims.iter().map(diag_json));
            }
            problems.extend(lint_rest.iter().map(diag_json));
            if let Some(p) = &planned {
                problems.extend(p.warnings.iter().map(diag_json));
            }
            let report = serde_json::json!({
                "story": story.display().to_string(),
                "ok": status == 0,
                "status": status,
                "diagnostics": problems,
                "frames": planned.as_ref().map(|p| p.plan.frames.len()),
                "values": planned.as_ref().map(|p| p.plan.values.clone()),
                "claims": planned.as_ref().map(|p| p.plan.claims.clone()),
                "sql": planned.as_ref().filter(|_| explain_sql).map(|p| p.sql.clone()),
            });
            match serde_json::to_string_pretty(&report) {
                Ok(s) => say!("{s}"),
                Err(e) => eprintln!("error: {e}"),
            }
        }
        Format::Human => {
            if !errors.is_empty() {
                eprint!("{}", render(&errors, color));
            }
            if !lint_rest.is_empty() {
                eprint!("{}", render(&lint_rest, color));
            }
            if let Some(p) = planned.as_ref().filter(|_| errors.is_empty()) {
                if !p.warnings.is_empty() {
                    eprint!("{}", render(&p.warnings, color));
                }
                if !p.failed_claims.is_empty() {
                    eprint!("{}", render(&p.failed_claims, color));
                }
                let plan = &p.plan;
                say!(
                    "{}: {} frame{}, {} value{}, {} claim{}",
                    story.display(),
                    plan.frames.len(),
                    if plan.frames.len() == 1 { "" } else { "s" },
                    plan.values.len(),
                    if plan.values.len() == 1 { "" } else { "s" },
                    plan.claims.len(),
                    if plan.claims.len() == 1 { "" } else { "s" }
                );
                for (name, figure) in &plan.values {
                    say!("  value {name} = {figure}");
                }
                for c in &plan.claims {
                    say!(
                        "  claim {}: \"{}\" ({})",
                        if c.holds { "holds" } else { "FAILS" },
                        c.sentence,
                        c.detail.join("; ")
                    );
                }
                if explain_sql {
                    explain_queries(&p.sql);
                }
            } else {
                let n = errors.iter().filter(|d| d.is_error()).count();
                eprintln!(
                    "{n} error{} in {}",
                    if n == 1 { "" } else { "s" },
                    story.display()
                );
            }
        }
    }
    ExitCode::from(status)
}

/// `check --explain-sql`: each query a database source ran.
fn explain_queries(sql: &[crescendo_sql::Explained]) {
    if sql.is_empty() {
        say!("no database queries (the story reads no database source)");
    }
    for q in sql {
        match &q.view {
            Some(v) => say!("-- view {v} (data {})", q.data),
            None => say!("-- data {} (all rows)", q.data),
        }
        say!("{};", q.sql);
        for (i, p) in q.params.iter().enumerate() {
            say!("--   ${} = {p:?}", i + 1);
        }
        say!("--   received {} rows, {} bytes", q.rows, q.bytes);
    }
}

/// The default deck folder: `deck/` beside the story.
fn default_out(story: &Path) -> PathBuf {
    story.parent().unwrap_or(Path::new(".")).join("deck")
}

/// Read, parse and plan a story without printing anything.
fn plan_quietly(story: &Path, data: &DataArgs) -> Result<Planned, Vec<Diagnostic>> {
    crescendo_plan::limits::file_size(story, &data.limits.limits())
        .map_err(|e| vec![Diagnostic::error("limit", e)])?;
    let text = std::fs::read_to_string(story).map_err(|e| {
        vec![Diagnostic::error(
            "story-file",
            format!("cannot read story file `{}`: {e}", story.display()),
        )]
    })?;
    let src: Arc<Source> = Source::file(story.display().to_string(), text);
    let dir = story.parent().unwrap_or(Path::new("."));
    let options = Options {
        data: data.data.iter().cloned().collect::<BTreeMap<_, _>>(),
        cache: incremental::planner_cache(),
        no_plugins: data.no_plugins,
        database: crescendo_plan::DbOptions {
            connections: data
                .connections
                .iter()
                .map(|c| parse_connection_arg(c))
                .collect::<Result<_, _>>()
                .map_err(|d| vec![d])?,
            timeout: std::time::Duration::from_secs_f64(
                if data.statement_timeout.is_finite() && data.statement_timeout > 0.0 {
                    data.statement_timeout.min(86_400.0)
                } else {
                    60.0
                },
            ),
        },
        allow_paths: data.allow_paths.clone(),
        limits: data.limits.limits(),
    };
    crescendo_plan::plan_story(&src, dir, &options)
}

/// Read, parse and plan a story; print diagnostics; exit status on failure.
fn load_plan(story: &Path, data: &DataArgs, color: bool) -> Result<Planned, ExitCode> {
    match plan_quietly(story, data) {
        Ok(p) => {
            if !p.warnings.is_empty() {
                eprint!("{}", render(&p.warnings, color));
            }
            Ok(p)
        }
        Err(diags) => {
            eprint!("{}", render(&diags, color));
            let n = diags.iter().filter(|d| d.is_error()).count();
            eprintln!(
                "{n} error{} in {}; no deck written",
                if n == 1 { "" } else { "s" },
                story.display()
            );
            Err(ExitCode::from(EXIT_STORY))
        }
    }
}
