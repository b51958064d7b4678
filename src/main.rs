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
mod incremental;
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
    /// Let the story read data, house styles and plugins from DIR too
    /// (repeatable). Without it a story may read only files in its own
    /// folder and below.
    #[arg(long = "allow-path", value_name = "DIR")]
    allow_paths: Vec<PathBuf>,
    #[command(flatten)]
    limits: LimitArgs,
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
            data,
            lint,
        } => check(&story, format, &data, &lint, color),
        Command::Explain { rule } => explain(rule.as_deref(), color),
        Command::Plugins { story, allow_paths } => {
            let none = DataArgs {
                data: Vec::new(),
                no_plugins: false,
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

fn check(story: &Path, format: Format, data: &DataArgs, lint: &LintArgs, color: bool) -> ExitCode {
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
