//! The command line: every subcommand, flag and argument (clap), and the
//! parsing of the flags that take `NAME=VALUE` pairs.

use std::path::PathBuf;

use clap::{Parser, Subcommand, ValueEnum};
use crescendo_diag::Diagnostic;

#[derive(Parser)]
#[command(
    name = "crescendo",
    version,
    about = "Compile a story file and its data into a checked deck of clean charts"
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    Human,
    Json,
}

/// A kind of file `build` writes.
#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Export {
    /// Numbered SVG frames.
    Svg,
    /// The self-contained HTML deck (index.html).
    Html,
    /// deck.pdf, one page per frame, vector with real text.
    Pdf,
    /// Numbered PNG frames (see --scale).
    Png,
}

#[derive(clap::Args)]
pub struct LintArgs {
    /// Let lint warnings stop the build too, as errors do (for CI); advice
    /// never stops it.
    #[arg(long)]
    pub strict: bool,
    /// Counts of rows below N are flagged as possibly identifying people
    /// (follow your organisation's disclosure rules).
    #[arg(long, value_name = "N", default_value_t = 5.0)]
    pub small_counts: f64,
}

/// The story and where its deck goes, shared by `build` and `watch`.
#[derive(clap::Args)]
pub struct DeckArgs {
    /// The story file (.cresc).
    pub story: PathBuf,
    /// Output folder (default: `deck/` beside the story). It is replaced
    /// only when the whole build succeeded.
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Build even when claims fail, marking every frame whose text
    /// depends on a failed claim.
    #[arg(long)]
    pub draft: bool,
}

#[derive(clap::Args)]
pub struct DataArgs {
    /// Read data item NAME from FILE instead of the file the story names
    /// (repeatable), e.g. `--data trips=exports/2024-12.csv`.
    #[arg(long = "data", value_name = "NAME=FILE", value_parser = parse_data_arg)]
    pub data: Vec<(String, PathBuf)>,
    /// Refuse every plugin the story names (plugins are native code that
    /// runs with your rights).
    #[arg(long)]
    pub no_plugins: bool,
    /// Print under every frame the claims its texts rest on, with their
    /// figures and whether they hold, as `footnote claims` does for one
    /// frame (a copy of the deck for review).
    #[arg(long)]
    pub claims_footnote: bool,
    /// Check plugins (path, file, pin) without loading them (`plan` and
    /// `plugins` unless asked to load): no plugin code runs.
    #[arg(skip)]
    pub inspect_plugins: bool,
    /// Ask the database for each query's plan too (`check --explain-sql`).
    #[arg(skip)]
    pub explain_plans: bool,
    /// Read the connection string of database data item NAME from the
    /// environment variable ENVVAR instead of the one the story names
    /// (repeatable), e.g. `--connection visits=STAGING_DB`.
    /// (Checked after parsing, so that a connection string given here by
    /// mistake is never echoed.)
    #[arg(long = "connection", value_name = "NAME=ENVVAR")]
    pub connections: Vec<String>,
    /// Cancel any database query that runs longer than this many seconds.
    #[arg(long, value_name = "SECONDS", default_value_t = 60.0)]
    pub statement_timeout: f64,
    /// Let the story read data, house styles and plugins from DIR too
    /// (repeatable). Without it a story may read only files in its own
    /// folder and below.
    #[arg(long = "allow-path", value_name = "DIR")]
    pub allow_paths: Vec<PathBuf>,
    #[command(flatten)]
    pub limits: LimitArgs,
}

/// Read the command line; a wrong one is printed with its usage and ends
/// the program with status 2. `--deny` (no option of ours) gets a tip
/// naming the option to write instead.
pub fn parse() -> Cli {
    use clap::error::{ContextKind, ContextValue, ErrorKind};
    Cli::try_parse().unwrap_or_else(|mut e| {
        let deny = e.kind() == ErrorKind::UnknownArgument
            && matches!(e.get(ContextKind::InvalidArg),
                Some(ContextValue::String(a)) if a == "--deny" || a.starts_with("--deny="));
        if deny {
            e.insert(
                ContextKind::Suggested,
                ContextValue::StyledStrs(vec![
                    "write `--strict` to let lint warnings stop the build".into(),
                ]),
            );
        }
        e.exit()
    })
}

/// `--connection NAME=ENVVAR`; the error never repeats the argument (it
/// may be a connection string given by mistake). The variable's name is
/// quoted in later messages ("`X` is not set"), so a value that does not
/// look like a variable name (upper-case letters, digits and `_`, the
/// convention for environment variables) is accepted only when a variable
/// of that name is set: a bare password pasted here is refused, unechoed.
pub fn parse_connection_arg(s: &str) -> Result<(String, String), Diagnostic> {
    let valid = |v: &str| {
        !v.is_empty()
            && v.chars().all(|c| c.is_ascii_alphanumeric() || c == '_')
            && !v.starts_with(|c: char| c.is_ascii_digit())
    };
    let looks_like_a_name = |v: &str| {
        v.chars()
            .all(|c| c.is_ascii_uppercase() || c.is_ascii_digit() || c == '_')
    };
    let is_set = |v: &str| std::env::var_os(v).is_some_and(|x| !x.is_empty());
    match s.split_once('=') {
        Some((name, var)) if !name.is_empty() && valid(var) => {
            if looks_like_a_name(var) || is_set(var) {
                return Ok((name.to_string(), var.to_string()));
            }
            Err(Diagnostic::error(
                "connection-option",
                "`--connection NAME=ENVVAR` names no environment variable that is set, and the \
                 value does not look like a variable name (it is not repeated here, in case it \
                 is a password)",
            )
            .help(
                "give the name of the variable that holds the connection string, e.g. \
                 `--connection trips=STAGING_DB`",
            ))
        }
        _ => Err(Diagnostic::error(
            "connection-option",
            "`--connection` expects NAME=ENVVAR: a data item and the name of the environment \
             variable that holds its connection string (the value given is not repeated here, \
             in case it holds a password)",
        )),
    }
}

/// The view cache `check` and `plan` share with `build`: the one beside
/// the deck the story builds into.
#[derive(clap::Args, Clone, Default)]
pub struct CacheArgs {
    /// The deck folder whose cache of computed views to read and update,
    /// as `build --out` names it (default: `deck/` beside the story).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Compute every view, without reading or writing the cache.
    #[arg(long)]
    pub no_cache: bool,
}

impl CacheArgs {
    /// The cache folder to use for `story` (none with `--no-cache`).
    pub fn dir(&self, story: &std::path::Path) -> Option<PathBuf> {
        (!self.no_cache).then(|| {
            let out = self
                .out
                .clone()
                .unwrap_or_else(|| crate::planning::default_out(story));
            crate::incremental::cache_dir(&out)
        })
    }
}

/// Limits on what one build reads and makes; a story or data file over a
/// limit stops the build with a located error.
#[derive(clap::Args, Clone)]
pub struct LimitArgs {
    /// Largest story or data file, in bytes [default: 4 GiB for a story and
    /// a data file read whole; none for a data file streamed record by
    /// record].
    #[arg(long, value_name = "BYTES")]
    pub max_input_bytes: Option<u64>,
    /// Most rows of a data file held in memory [default: as many as fit in
    /// half the memory available].
    #[arg(long, value_name = "N")]
    pub max_rows: Option<usize>,
    /// Most frames in a deck.
    #[arg(long, value_name = "N", default_value_t = crescendo_plan::limits::Limits::default().frames)]
    pub max_frames: usize,
    /// Longest text (a story string or a data cell), in characters.
    #[arg(long, value_name = "N", default_value_t = crescendo_plan::limits::Limits::default().text)]
    pub max_text: usize,
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
    pub fn limits(&self) -> crescendo_plan::limits::Limits {
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
pub enum Command {
    /// Build the deck: numbered SVG frames, deck.json and index.html.
    Build {
        #[command(flatten)]
        deck: DeckArgs,
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
        /// PNG frames without the painted page (transparent behind the
        /// drawing, for laying over a slide of your own); by default every
        /// PNG is painted with the theme's page colour.
        #[arg(long)]
        transparent: bool,
        /// The HTML deck without its opening frame (title, byline, source)
        /// and closing frame (the conclusion).
        #[arg(long)]
        frames_only: bool,
        #[command(flatten)]
        data: DataArgs,
        #[command(flatten)]
        lint: LintArgs,
    },
    /// Rebuild the deck whenever the story, its data, its style file or a
    /// plugin changes; errors are printed and the last good deck stays.
    Watch {
        #[command(flatten)]
        deck: DeckArgs,
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
        cache: CacheArgs,
        #[command(flatten)]
        data: DataArgs,
        #[command(flatten)]
        lint: LintArgs,
    },
    /// List the plugins a story names: path, SHA-256 and pin, without
    /// running any of their code; with --load-plugins, also their forms,
    /// versions and ABI version.
    Plugins {
        /// The story file (.cresc).
        story: PathBuf,
        /// Let the story load plugins from DIR too (repeatable).
        #[arg(long = "allow-path", value_name = "DIR")]
        allow_paths: Vec<PathBuf>,
        /// Load each plugin (its code runs, with your rights) to ask it for
        /// its name, version and forms.
        #[arg(long)]
        load_plugins: bool,
    },
    /// Explain a lint rule (a story excerpt it flags, the same excerpt
    /// fixed, and why); without a rule, list them all.
    Explain {
        /// The rule's name, e.g. `bars-off-zero`.
        rule: Option<String>,
    },
    /// Print the frame plan (the renderer's input) as JSON. Plugins are
    /// checked but not loaded unless --load-plugins is given.
    Plan {
        /// The story file (.cresc).
        story: PathBuf,
        /// Load the story's plugins (their code runs, with your rights), so
        /// frames they draw are planned with their names, versions and
        /// checked forms.
        #[arg(long, conflicts_with = "no_plugins")]
        load_plugins: bool,
        #[command(flatten)]
        cache: CacheArgs,
        #[command(flatten)]
        data: DataArgs,
    },
    /// Compare two decks: which frames changed and which quoted numbers
    /// moved. Exit status 1 when any frame changed; the claims that fail in
    /// the newer deck are listed.
    Diff {
        /// The older deck folder.
        old: PathBuf,
        /// The newer deck folder.
        new: PathBuf,
    },
    /// Compare the deck a story makes now with the deck it made at a git
    /// revision (the story, its data and house style read from the
    /// repository; nothing checked out, no deck written): a side-by-side
    /// page, or a summary for a pull request. Exit status 3 when a claim
    /// fails now, 1 with --fail-on-change when any frame changed.
    Review {
        /// The story file (.cresc), inside a git repository.
        story: PathBuf,
        /// The revision to compare against: a branch, tag, commit id or
        /// `HEAD~2` (default: the last commit).
        #[arg(long, value_name = "REV", default_value = "HEAD")]
        against: String,
        /// `page` (default: a self-contained HTML page), `markdown` (a
        /// summary for a pull-request comment) or `json`; the last two are
        /// printed.
        #[arg(long, value_enum, default_value = "page")]
        format: ReviewFormat,
        /// Where to write the page (default: `review.html` in the current
        /// folder).
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
        /// Exit with status 1 when any frame changed, moved, came or went.
        #[arg(long)]
        fail_on_change: bool,
        /// A claim that holds with less room than this is called a near
        /// miss: for `a > b` the distance over b, for `about … within T`
        /// the part of T left (a percentage).
        #[arg(long, value_name = "PERCENT", default_value_t = 5.0)]
        near_miss: f64,
        #[command(flatten)]
        data: DataArgs,
        #[command(flatten)]
        lint: LintArgs,
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

/// What `review` writes.
#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ReviewFormat {
    Page,
    Markdown,
    Json,
}

/// Shells `completions` writes scripts for.
#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Shell {
    Bash,
    Zsh,
    Fish,
    Elvish,
    Powershell,
}
