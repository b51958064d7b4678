//! The `crescendo` command: compiles a story file and its CSV data into an
//! ordered deck of SVG frames, a manifest and a self-contained HTML deck.
//!
//! `cli` defines the flags; each subcommand has a module of its own (`build`,
//! `check`, `plan`, `diff`, `review`, `explain`, `plugins`, `watch`, `new`, `fmt`,
//! `completions`, `manual`); `planning` is what the story commands share.

// A `Diagnostic` is large, but it is only built on the cold error path.
#![allow(clippy::result_large_err)]

use std::io::IsTerminal;
use std::process::ExitCode;

use cli::{Command, DeckArgs};

#[macro_use]
mod output;

mod build;
mod check;
mod cli;
mod completions;
mod content;
mod deck;
mod diff;
mod explain;
mod export;
mod fmt;
mod incremental;
mod manual;
mod new;
mod plan;
mod planning;
mod plugins;
mod progress;
mod review;
mod serve;
mod store;
mod watch;

/// Exit status when the story or its data has errors.
const EXIT_STORY: u8 = 1;
/// Exit status when a claim does not hold.
const EXIT_CLAIM: u8 = 3;
/// Exit status when the deck could not be written.
const EXIT_OUTPUT: u8 = 4;

/// Fixed thresholds for glibc's allocator. By default glibc raises its
/// mmap threshold as large blocks are freed and gives memory back to the
/// system whenever the top of the heap is free; the engine frees and takes
/// again buffers of a few MiB per chunk or row group on both threads, so the
/// defaults spend a fifth of the streamed paths' time in page faults and
/// `madvise`/`munmap` (measured with `tests/bench/run`: Parquet 1.08 s ->
/// 0.8 s, ledger 1.46 s -> 1.05 s, peak memory within 5 MiB). Blocks of 4 MiB
/// and more still come from mmap and go back when freed. The values follow
/// mallopt(3); a user's own `GLIBC_TUNABLES` for malloc is left alone.
fn tune_allocator() {
    #[cfg(all(target_os = "linux", target_env = "gnu"))]
    {
        let user_set = std::env::var("GLIBC_TUNABLES").is_ok_and(|t| t.contains("malloc"));
        if !user_set {
            // SAFETY: mallopt only sets two of the allocator's parameters; it
            // is called first thing in main, before any other thread exists.
            unsafe {
                libc::mallopt(libc::M_MMAP_THRESHOLD, 4 << 20);
                libc::mallopt(libc::M_TRIM_THRESHOLD, 16 << 20);
            }
        }
    }
}

fn main() -> ExitCode {
    tune_allocator();
    let cli = cli::parse();
    progress::install();
    let color = std::io::stderr().is_terminal() && std::env::var_os("NO_COLOR").is_none();
    match cli.command {
        Command::Build {
            deck: DeckArgs { story, out, draft },
            no_cache,
            format,
            scale,
            transparent,
            frames_only,
            data,
            lint,
        } => build::run(
            &story,
            out,
            draft,
            no_cache,
            &format,
            (scale, transparent, !frames_only),
            &data,
            &lint,
            color,
        ),
        Command::Watch {
            deck: DeckArgs { story, out, draft },
            serve,
            port,
            data,
            lint,
        } => watch::run(&story, out, draft, serve, port, &data, &lint, color),
        Command::Check {
            story,
            format,
            explain_sql,
            cache,
            mut data,
            lint,
        } => {
            data.explain_plans = explain_sql;
            let cache = cache.dir(&story);
            check::run(&story, format, explain_sql, (&data, cache), &lint, color)
        }
        Command::Explain { rule } => explain::run(rule.as_deref(), color),
        Command::Plugins {
            story,
            allow_paths,
            load_plugins,
        } => plugins::run(&story, allow_paths, load_plugins, color),
        Command::Plan {
            story,
            load_plugins,
            cache,
            data,
        } => plan::run(&story, data, load_plugins, cache.dir(&story), color),
        Command::New { data, out, force } => new::run(&data, out.as_deref(), force, color),
        Command::Fmt { check, files } => fmt::run(&files, check, color),
        Command::Completions { shell } => completions::run(shell),
        Command::Manual => manual::run(),
        Command::Diff { old, new } => diff::run(&old, &new, color),
        Command::Review {
            story,
            against,
            format,
            out,
            fail_on_change,
            near_miss,
            data,
            lint,
        } => review::run(
            &story,
            &review::Request {
                against,
                format,
                out,
                fail_on_change,
                near_miss: near_miss / 100.0,
            },
            &data,
            &lint,
            color,
        ),
    }
}
