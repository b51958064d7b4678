//! `crescendo new DATA.csv`: profile a CSV file and write a starter story.
//!
//! The profile uses the data crate's loader and its type inference (the
//! same types a story would get), plus a year guess: a whole-number column
//! named like a year (`year`, `fy`…) with values from 1000 to 2999 is
//! declared `year`, which the loader never infers.
//!
//! Each number column then gets a role (`roles.rs`): an amount (summed),
//! a rate or level (averaged, never summed), a code or identifier (never a
//! measure), or the quarter or month number of a year column (part of the
//! time: a year and a quarter become one quarterly time with
//! `year_quarter(year, quarter)`; a month number is folded into the year).
//!
//! The chart form follows the data's shape and the question it most likely
//! answers (common practice of chart choice):
//! - a time column and a measure: change over time, a line (one line per
//!   category when there are a few categories); with fewer than three
//!   periods, bars grouped by period (two points make a slope, not a trend);
//!   a second measure is drawn against the first in a scatter, never added;
//! - two measures and no time: their relationship, a scatter plot (one
//!   panel per group, on one scale, when the rows fall in a few groups);
//! - a measure, a category and a second category of two to four values:
//!   part of a whole with few parts, stacked bars (amounts only);
//! - a measure and a name per row, many rows: a distribution, a dot plot;
//! - otherwise a comparison of categories: bars sorted by size, horizontal
//!   when the names are long.
//!
//! The story builds up in four frames (context, comparison, spotlight,
//! conclusion placeholder). Its headlines state facts computed from the
//! data as values, each protected by a claim, and comments say why each
//! form was chosen, so it builds and passes the lint with `--strict` before
//! the analyst edits it.

mod profile;
mod roles;
mod shape;
mod story;
mod trend;

use std::path::Path;
use std::process::ExitCode;

use crescendo_diag::Diagnostic;

use profile::{profile_file, summary};
use shape::choose_shape;
use story::{relative_data_path, write_story};

pub fn run(data: &Path, out: Option<&Path>, force: bool, color: bool) -> ExitCode {
    let story_path = out
        .map(Path::to_path_buf)
        .unwrap_or_else(|| data.with_extension("cresc"));
    if story_path.exists() && !force {
        let d = Diagnostic::error(
            "exists",
            format!("{} exists; it was left as it is", story_path.display()),
        )
        .help("choose another file with `--out STORY`, or replace it with `--force`");
        crate::output::diagnostics(&[d], color);
        return ExitCode::from(1);
    }
    let (table, profile) = match profile_file(data) {
        Ok(p) => p,
        Err(d) => {
            crate::output::diagnostics(&[d], color);
            return ExitCode::from(1);
        }
    };
    let shape = match choose_shape(&profile) {
        Ok(s) => s,
        Err(message) => {
            say_raw!("{}", summary(&profile, None));
            let d = Diagnostic::error("no-starter", message)
                .help("a starter story needs a column of numbers with a plain name (letters, digits, `_`)");
            crate::output::diagnostics(&[d], color);
            return ExitCode::from(1);
        }
    };
    let data_rel = relative_data_path(data, &story_path);
    let story = write_story(&table, &profile, &shape, &data_rel);
    say_raw!("{}", summary(&profile, Some(&shape)));
    if let Err(e) = std::fs::write(&story_path, story) {
        tell!("error: cannot write {}: {e}", story_path.display());
        return ExitCode::from(4);
    }
    say!("wrote {}", story_path.display());
    if data_rel.starts_with("../") || Path::new(&data_rel).is_absolute() {
        // a story reads only files in its own folder tree unless allowed
        let folder = data
            .parent()
            .filter(|d| !d.as_os_str().is_empty())
            .unwrap_or(Path::new("."));
        say!(
            "note: the data is outside the story's folder; move it next to the story, or allow its folder:"
        );
        say!(
            "next: crescendo build {} --allow-path {}",
            story_path.display(),
            folder.display()
        );
    } else {
        say!("next: crescendo build {}", story_path.display());
    }
    ExitCode::SUCCESS
}
