//! The row groups of a Parquet file split among threads: each thread
//! decodes and folds its own run of consecutive groups into its own part,
//! and the parts, taken in order, hold the groups in file order.

use std::fs::File;
use std::ops::Range;

use parquet::file::reader::FileReader;

use super::{hand_on, read_group, Groups, Opened};
use crate::load::{Columns, CsvSpec, LoadError, ReadLimits};
use crate::model::{Expr, Table};

/// The caller's part of the work: the rows it folds, and how.
pub struct Parts<'p, S> {
    /// The part the groups before `from` were folded into; it takes the
    /// first run.
    pub first: S,
    /// A part for another run.
    pub new: &'p (dyn Fn() -> S + Sync),
    /// Fold one row group into a part; `false` stops that part.
    pub each: &'p (dyn Fn(&mut S, Table) -> bool + Sync),
}

/// [`super::each_group_from`] with the row groups from `from` on split
/// into runs of consecutive groups of about equal rows, one per core: each
/// run is decoded and folded on its own thread into its own part. Returns
/// the parts in file order (to be merged in that order) and what was done.
/// An error is the first problem in file order; a part that stops makes
/// the parts after it unread (`stopped`).
pub fn fold_groups_from<S: Send>(
    spec: &CsvSpec,
    file: &File,
    (columns, limits, keeps): (&Columns, &ReadLimits, &[Expr]),
    from: usize,
    parts: Parts<'_, S>,
) -> Result<(Vec<S>, Groups), LoadError> {
    let opened = Opened::new(spec, file, columns)?;
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    let runs = runs(&opened, from, cores);
    let each = parts.each;
    let run = |opened: &Opened, range: Range<usize>, mut part: S| {
        let mut done = Groups {
            read: 0,
            skipped: 0,
            stopped: false,
        };
        for g in range {
            let read = read_group(opened, (spec, limits), keeps, g)?;
            if !hand_on(read, &mut done, &mut |t| each(&mut part, t)) {
                break;
            }
        }
        Ok((part, done))
    };
    let mut runs = runs.into_iter();
    let head = runs.next().unwrap_or(from..from);
    let results: Vec<Result<(S, Groups), LoadError>> = std::thread::scope(|s| {
        let others: Vec<_> = runs
            .map(|range| {
                let (new, run) = (parts.new, &run);
                s.spawn(move || {
                    // a handle of its own: handles cloned from one file
                    // share its offset, which the reader moves
                    let own = File::open(&spec.path)
                        .map_err(|e| super::damaged(&spec.display_name, &e))?;
                    run(&Opened::new(spec, &own, columns)?, range, new())
                })
            })
            .collect();
        let mut all = vec![run(&opened, head, parts.first)];
        for h in others {
            all.push(h.join().unwrap_or_else(|p| std::panic::resume_unwind(p)));
        }
        all
    });
    let mut done = Groups {
        read: 0,
        skipped: 0,
        stopped: false,
    };
    let mut out = Vec::new();
    for r in results {
        let (part, d) = r?;
        done.read += d.read;
        done.skipped += d.skipped;
        out.push(part);
        if d.stopped {
            done.stopped = true;
            break;
        }
    }
    Ok((out, done))
}

/// Groups `from..` in at most `n` runs of consecutive groups holding about
/// equal rows (by the file's metadata); at least one run.
fn runs(opened: &Opened, from: usize, n: usize) -> Vec<Range<usize>> {
    let meta = opened.reader.metadata();
    let groups = meta.num_row_groups().max(from);
    let rows: Vec<u64> = (from..groups)
        .map(|g| u64::try_from(meta.row_group(g).num_rows()).unwrap_or(0))
        .collect();
    let total: u64 = rows.iter().sum();
    let n = n.clamp(1, rows.len().max(1)) as u64;
    let mut out = Vec::new();
    let (mut start, mut sum) = (from, 0u64);
    for (i, r) in rows.iter().enumerate() {
        sum += r;
        // a run ends once its share of the rows is reached
        let share = total * (out.len() as u64 + 1) / n;
        if sum >= share && (out.len() as u64) < n - 1 {
            out.push(start..from + i + 1);
            start = from + i + 1;
        }
    }
    out.push(start..groups);
    out
}
