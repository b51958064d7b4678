//! The `crescendo` command: compiles a story file and its CSV data into an
//! ordered deck of SVG frames, a manifest and a self-contained HTML deck.

// A `Diagnostic` is large, but it is only built on the cold error path.
#![allow(clippy::result_large_err)]

use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::Arc;

use clap::{Parser, Subcommand};
use crescendo_diag::{render, Diagnostic, Source};
use crescendo_plan::DeckPlan;

mod deck;

/// Exit status when the story or its data has errors.
const EXIT_STORY: u8 = 1;
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

#[derive(Subcommand)]
enum Command {
    /// Build the deck: numbered SVG frames, deck.json and index.html.
    Build {
        /// The story file (.cresc).
        story: PathBuf,
        /// Output folder (default: `deck/` beside the story). It is replaced
        /// only when the whole build succeeds.
        #[arg(long)]
        out: Option<PathBuf>,
    },
    /// Print the frame plan (the renderer's input) as JSON.
    Plan {
        /// The story file (.cresc).
        story: PathBuf,
    },
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let color = std::io::stderr().is_terminal();
    match cli.command {
        Command::Build { story, out } => {
            let plan = match load_plan(&story, color) {
                Ok(p) => p,
                Err(code) => return code,
            };
            let out = out.unwrap_or_else(|| story.parent().unwrap_or(Path::new(".")).join("deck"));
            match deck::build(&plan, &out) {
                Ok(files) => {
                    eprintln!(
                        "built {} frame{} into {}",
                        files,
                        if files == 1 { "" } else { "s" },
                        out.display()
                    );
                    ExitCode::SUCCESS
                }
                Err(e) => {
                    eprint!("{}", render(&[e], color));
                    eprintln!("the previous deck in {} was left as it was", out.display());
                    ExitCode::from(EXIT_OUTPUT)
                }
            }
        }
        Command::Plan { story } => match load_plan(&story, color) {
            Ok(p) => match serde_json::to_string_pretty(&p) {
                Ok(s) => {
                    println!("{s}");
                    ExitCode::SUCCESS
                }
                Err(e) => {
                    eprintln!("error: cannot print the plan: {e}");
                    ExitCode::from(EXIT_OUTPUT)
                }
            },
            Err(code) => code,
        },
    }
}

/// Read, parse and plan a story; print diagnostics; exit status on failure.
fn load_plan(story: &Path, color: bool) -> Result<DeckPlan, ExitCode> {
    let text = match std::fs::read_to_string(story) {
        Ok(t) => t,
        Err(e) => {
            let d = Diagnostic::error(
                "story-file",
                format!("cannot read story file `{}`: {e}", story.display()),
            );
            eprint!("{}", render(&[d], color));
            return Err(ExitCode::from(EXIT_STORY));
        }
    };
    let src: Arc<Source> = Source::file(story.display().to_string(), text);
    let dir = story.parent().unwrap_or(Path::new("."));
    match crescendo_plan::plan_story(&src, dir) {
        Ok((plan, warnings)) => {
            if !warnings.is_empty() {
                eprint!("{}", render(&warnings, color));
            }
            Ok(plan)
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
