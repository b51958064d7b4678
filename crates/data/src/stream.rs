//! Streaming views: the leading `keep` and `by` steps of views over one CSV
//! file, evaluated record by record while the file is read, so memory grows
//! with the number of groups (and the rows a `keep`-only view keeps), not
//! with the file.
//!
//! # What streams
//!
//! A [`StreamView`] is the prefix of a view that the reader can evaluate on
//! one record at a time: any number of `keep` predicates, then at most one
//! group step. Each group holds accumulators: an exact sum ([`Sum`]) and a
//! count for `sum`/`mean`, counts, the first strictly smaller or larger cell
//! for `min`/`max`, the first and last non-missing cell. `median` keeps the
//! group's numbers (so its memory grows with the group's size: the one
//! aggregate that is not bounded by the number of groups). The planner runs
//! the view's remaining steps on the small table this produces.
//!
//! # Two cores, same result
//!
//! The file is cut into pieces at nominal offsets; each piece starts after
//! the first line break at or after its offset. A run per core reads
//! pieces one after another, and a core that finishes early takes over
//! pieces no run has reached yet ([`crate::pieces`]). A piece's line break
//! may sit inside a quoted field, so every boundary is *verified* by the
//! run that reaches it: it reads on until a record ends exactly at the
//! boundary (or only line breaks lie between the record's end and the
//! boundary), and stops there only if another run started at that piece.
//! If a record spans the boundary instead, the guess was wrong: the run
//! absorbs the piece and reads on, and the result of a run started there is
//! discarded. Results are merged in file order, from the first piece along
//! the chain of verified stops (groups in order of first appearance, first
//! before last), and sums are exact, so the merged result is bit-for-bit
//! the one-pass result, whatever the cutting and whichever core read what.
//!
//! # Errors
//!
//! Any problem in the file — a ragged row, a quoting error, invalid UTF-8, a
//! declared column's cell that does not parse, a cell the story reads that
//! holds a control character or is longer than the text limit, more kept
//! rows than the row limit allows, or a cell that contradicts the
//! type the first records suggested for an undeclared column — makes the
//! scan return [`ScanFailure::Fallback`]. The caller then loads the file with
//! [`crate::load_csv_columns`], which reports the located diagnostic (with
//! the CSV's own line number) or, for a wrong type guess, gives the table
//! with the right types. The reader checks the same cells as the loader
//! (those of the kept and the declared columns), so both report the same
//! first problem.
//!
//! # One descriptor
//!
//! Every thread reads the one file descriptor the caller opened and checked
//! (see [`crate::files`]), with positional reads; the path is never opened
//! again.

use std::fs::File;
use std::io::Read;
use std::sync::atomic::{AtomicUsize, Ordering as AtomicOrdering};
use std::sync::Mutex;

use crate::files::ReadAt;
use crate::fold::{merge_states, Sink};
use crate::groups::Groups;
use crate::load::{CsvSpec, LoadError, ReadLimits};
use crate::model::{AggFn, Aggregate, Cell, ColType, Column, Expr, Table, Values};
use crate::pieces::{Pieces, SMALL_STATE};
use crate::probe::{Probe, Seen, Watch};

/// The streamable prefix of one view.
#[derive(Clone, Debug, PartialEq)]
pub struct StreamView {
    /// Leading `keep` predicates, in order.
    pub keeps: Vec<Expr>,
    /// The group step after them: keys and aggregates (column indices into
    /// the file's columns).
    pub group: Option<(Vec<usize>, Vec<Aggregate>)>,
}

/// What to scan.
#[derive(Clone, Debug)]
pub struct ScanInput<'a> {
    pub spec: &'a CsvSpec,
    /// The file, opened (and checked) by the caller: every thread reads it
    /// through this descriptor.
    pub file: &'a File,
    /// The text and row limits (the same as the loader's).
    pub limits: &'a ReadLimits,
    /// Every header column in file order, with the type its cells are read
    /// as (for columns that are not parsed, any type: their cells are not
    /// read).
    pub schema: &'a [(String, ColType)],
    /// Per column: parse and check its cells (the declared columns and the
    /// columns the views read).
    pub parse: &'a [bool],
    /// Per column: keep its values in the rows of `keep`-only views (the
    /// other columns are all-missing there).
    pub keep_values: &'a [bool],
    /// File offset of the first data record (see [`crate::Probe`]).
    pub data_start: u64,
    pub views: &'a [StreamView],
}

/// How to cut the file.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Chunks {
    /// Pieces of about [`PIECE`] bytes (at most [`MAX_PIECES`]), one run
    /// per available core (at most 8), a core that finishes early taking
    /// over pieces ([`crate::pieces`]); one piece for small files.
    Auto,
    /// Nominal cut offsets (file offsets, any order; out-of-range ones are
    /// ignored) and the number of threads; a run starts at every piece.
    /// For tests.
    At(Vec<u64>, usize),
    /// Nominal cut offsets, the number of runs started at first (evenly
    /// spaced) and the number of threads: as [`Chunks::Auto`] does. For
    /// tests.
    Shared(Vec<u64>, usize, usize),
}

/// Bytes per piece of a large file (see [`Chunks::Auto`]).
pub const PIECE: u64 = 4 << 20;

/// Most pieces a file is cut into.
pub const MAX_PIECES: u64 = 1024;

/// The result of a scan.
#[derive(Clone, Debug, PartialEq)]
pub struct ScanOutput {
    /// One table per view: the group step's output, or the kept rows.
    pub tables: Vec<Table>,
    /// Data rows in the file.
    pub rows: usize,
    /// Per column that is parsed as text: the first cell (0-based data row
    /// and text) that is not a number, to explain why it is text.
    pub first_text: Vec<Option<(usize, String)>>,
    /// How many piece starts turned out to be inside a quoted field (on
    /// the chain of runs whose results count).
    pub absorbed: usize,
    /// Per view: what the text literals of its `keep`s met ([`crate::probe`]).
    pub probes: Vec<Vec<(Probe, Seen)>>,
}

/// Why a scan gave no result.
#[derive(Debug)]
pub enum ScanFailure {
    /// The file has a problem, or a type guess was wrong: load it with
    /// [`crate::load_csv_columns`] instead, which reports or resolves it.
    Fallback,
    /// The file could not be read.
    Io(Box<LoadError>),
}

/// Scan the file once and evaluate every view's streamable prefix.
pub fn scan(input: &ScanInput<'_>, chunks: &Chunks) -> Result<ScanOutput, ScanFailure> {
    let len = input
        .file
        .metadata()
        .map_err(|e| ScanFailure::Io(Box::new(io_failure(input.spec, &e))))?
        .len();
    let cores = || {
        std::thread::available_parallelism()
            .map_or(1, |n| n.get())
            .min(8)
    };
    let (offsets, runs, threads) = match chunks {
        Chunks::Auto => {
            let data = len.saturating_sub(input.data_start);
            let n = if data < PIECE {
                1
            } else {
                (data / PIECE).clamp(2, MAX_PIECES)
            };
            let offsets = (1..n).map(|k| input.data_start + data * k / n).collect();
            (offsets, Some(cores()), cores())
        }
        Chunks::At(o, t) => (o.clone(), None, (*t).max(1)),
        Chunks::Shared(o, r, t) => (o.clone(), Some((*r).max(1)), (*t).max(1)),
    };
    let starts = chunk_starts(input, len, offsets)?;
    // the pieces where runs start at first: every one, or `r` evenly spaced
    let first: Vec<usize> = match runs {
        None => (0..starts.len()).collect(),
        Some(r) => {
            let n = starts.len();
            let mut v: Vec<usize> = (0..r.min(n)).map(|i| i * n / r.min(n)).collect();
            v.dedup();
            v
        }
    };
    let pieces = Pieces::new(starts, &first);
    let _task = crate::progress::Task::begin(&input.spec.display_name, len);
    let results: Mutex<Vec<Option<ChunkOut>>> = Mutex::new(vec![None; pieces.starts.len()]);
    let next = AtomicUsize::new(0);
    let workers = threads.min(pieces.starts.len()).max(1);
    let work = || {
        let mut small = true;
        loop {
            let k = next.fetch_add(1, AtomicOrdering::SeqCst);
            let k = match first.get(k) {
                Some(&k) => k,
                // no run left to start: take over pieces while this core's
                // last state was small
                None => match small.then(|| pieces.take_over()).flatten() {
                    Some(k) => k,
                    None => break,
                },
            };
            let out = crate::chunk::run_chunk(input, &pieces, k);
            small = out.entries() <= SMALL_STATE;
            if let Ok(mut r) = results.lock() {
                r[k] = Some(out);
            }
        }
    };
    if workers == 1 {
        work();
    } else {
        std::thread::scope(|s| {
            for _ in 0..workers {
                s.spawn(work);
            }
        });
    }
    let results = results.into_inner().map_err(|_| ScanFailure::Fallback)?;
    merge(input, results)
}

fn io_failure(spec: &CsvSpec, e: &std::io::Error) -> LoadError {
    LoadError::Story {
        code: "data-file",
        message: format!("cannot read data file `{}`: {e}", spec.display_name),
        help: None,
        declared: None,
    }
}

/// The first chunk starts at the data; each other chunk just after the first
/// line break at or after its nominal offset.
fn chunk_starts(
    input: &ScanInput<'_>,
    len: u64,
    mut offsets: Vec<u64>,
) -> Result<Vec<u64>, ScanFailure> {
    offsets.sort_unstable();
    let mut starts = vec![input.data_start];
    // a line break is nearly always within the first bytes: small reads
    let mut buf = vec![0u8; 4096];
    for o in offsets {
        let from = o.max(input.data_start + 1) - 1;
        let Some(&last) = starts.last() else { break };
        if from < last || from >= len {
            continue;
        }
        let mut file = ReadAt::new(input.file, from);
        let mut at = from;
        let found = loop {
            let n = file
                .read(&mut buf)
                .map_err(|e| ScanFailure::Io(Box::new(io_failure(input.spec, &e))))?;
            if n == 0 {
                break None;
            }
            if let Some(p) = buf[..n].iter().position(|&b| b == b'\n') {
                break Some(at + p as u64 + 1);
            }
            at += n as u64;
        };
        if let Some(s) = found.filter(|&s| s < len && s > last) {
            starts.push(s);
        }
    }
    Ok(starts)
}

/// Where a run stopped.
#[derive(Clone, Debug)]
pub(crate) enum End {
    /// At the end of the file.
    Eof,
    /// At the verified start of piece `j`, where another run started.
    Piece(usize),
    /// A problem in the file (or a wrong type guess) in this run.
    Failed,
}

/// What one run read ([`crate::pieces`]).
#[derive(Clone, Debug)]
pub(crate) struct ChunkOut {
    pub(crate) end: End,
    pub(crate) rows: usize,
    /// Piece starts that a record of this run spanned (guesses inside a
    /// quoted field).
    pub(crate) absorbed: usize,
    pub(crate) views: Vec<ViewState>,
    pub(crate) watches: Vec<Watch>,
    pub(crate) first_text: Vec<Option<(usize, String)>>,
}

/// Per view: groups, or kept rows.
#[derive(Clone, Debug)]
pub(crate) enum ViewState {
    Groups(Groups),
    Rows(Vec<Values>),
}

/// Add one record (cells by column) to every view whose `keep`s it passes;
/// `false` when a view's kept rows outgrow the limits, or its state does not fit.
pub(crate) fn add_record(
    input: &Sink<'_>,
    cells: &[Cell<'_>],
    (states, watches): (&mut [ViewState], &mut [Watch]),
    kept: &mut [usize],
    keybuf: &mut Vec<u8>,
) -> bool {
    let row = |c: usize| cells.get(c).copied().unwrap_or(Cell::Missing);
    for (vi, ((view, state), watch)) in input.views.iter().zip(states).zip(watches).enumerate() {
        if watch.passes(&row, &view.keeps) && !add_passed(input, vi, state, (kept, keybuf), &row) {
            return false;
        }
    }
    true
}

/// Add a row that passed the `keep`s of view `vi` to its state `state`;
/// `false` when the view's kept rows outgrow the limits, or its state does
/// not fit.
pub(crate) fn add_passed<'c>(
    input: &Sink<'_>,
    vi: usize,
    state: &mut ViewState,
    (kept, keybuf): (&mut [usize], &mut Vec<u8>),
    row: &impl Fn(usize) -> Cell<'c>,
) -> bool {
    match (state, &input.views[vi].group) {
        (ViewState::Groups(g), Some((keys, aggs))) => {
            g.add(keybuf, (keys, aggs), row);
        }
        (ViewState::Rows(cols), _) => {
            for (j, col) in cols.iter_mut().enumerate() {
                let keep = input.keep_values.get(j).copied().unwrap_or(false);
                col.push_cell(if keep { row(j) } else { Cell::Missing });
            }
            let n = kept.get_mut(vi).map_or(0, |n| {
                *n += 1;
                *n
            });
            let over_limit = input.limits.rows.is_some_and(|m| n > m);
            if over_limit || (n.is_multiple_of(8192) && !rows_fit(input.limits, cols)) {
                return false;
            }
        }
        _ => return false,
    }
    true
}

/// Do the kept rows held in `cols` fit the row limit (or, without one, the
/// memory allowed)?
pub(crate) fn rows_fit(limits: &ReadLimits, cols: &[Values]) -> bool {
    match limits.rows {
        Some(max) => cols.first().map_or(0, Values::len) <= max,
        None => cols.iter().map(Values::heap_bytes).sum::<usize>() as u64 <= limits.memory,
    }
}

impl ChunkOut {
    /// Groups and kept rows over all views: how much memory the state holds.
    pub(crate) fn entries(&self) -> usize {
        let one = |v: &ViewState| match v {
            ViewState::Groups(g) => g.len(),
            ViewState::Rows(cols) => cols.first().map_or(0, Values::len),
        };
        self.views.iter().map(one).sum()
    }
}

/// Chain the runs from the first piece: each run's stop names the piece
/// where the next run whose result counts started.
fn merge(input: &ScanInput<'_>, results: Vec<Option<ChunkOut>>) -> Result<ScanOutput, ScanFailure> {
    let ncols = input.schema.len();
    let mut results: Vec<Option<ChunkOut>> = results;
    let mut k = 0usize;
    let mut absorbed = 0usize;
    let mut acc: Option<ChunkOut> = None;
    loop {
        let chunk = results
            .get_mut(k)
            .and_then(Option::take)
            .ok_or(ScanFailure::Fallback)?;
        let end = chunk.end.clone();
        absorbed += chunk.absorbed;
        acc = Some(match acc {
            None => chunk,
            Some(mut a) => {
                for (j, t) in chunk.first_text.into_iter().enumerate() {
                    if a.first_text[j].is_none() {
                        a.first_text[j] = t.map(|(r, s)| (r + a.rows, s));
                    }
                }
                a.rows += chunk.rows;
                Watch::merge_all(&mut a.watches, chunk.watches);
                if !merge_states(&mut a.views, chunk.views) {
                    return Err(ScanFailure::Fallback);
                }
                a
            }
        });
        match end {
            End::Failed => return Err(ScanFailure::Fallback),
            End::Eof => break,
            // a later piece: the chain cannot loop
            End::Piece(j) if j > k => k = j,
            End::Piece(_) => return Err(ScanFailure::Fallback),
        }
    }
    let out = acc.ok_or(ScanFailure::Fallback)?;
    // the kept rows of all chunks together
    for state in &out.views {
        if let ViewState::Rows(cols) = state {
            if !rows_fit(input.limits, cols) {
                return Err(ScanFailure::Fallback);
            }
        }
    }
    let probes = out.watches.into_iter().map(Watch::finish).collect();
    let tables = input
        .views
        .iter()
        .zip(out.views)
        .map(|(v, state)| finish(input.schema, v, state))
        .collect();
    let first_text = (0..ncols)
        .map(|j| {
            let text =
                input.parse.get(j).copied().unwrap_or(false) && input.schema[j].1 == ColType::Text;
            if text {
                out.first_text[j].clone()
            } else {
                None
            }
        })
        .collect();
    Ok(ScanOutput {
        tables,
        rows: out.rows,
        first_text,
        absorbed,
        probes,
    })
}

/// The table of one view's prefix: as the table engine's group step would
/// give it, or the kept rows with every header column.
pub(crate) fn finish(schema: &[(String, ColType)], view: &StreamView, state: ViewState) -> Table {
    match (state, &view.group) {
        (ViewState::Groups(g), Some((keys, aggs))) => {
            let key_cols = keys
                .iter()
                .map(|&k| {
                    schema
                        .get(k)
                        .map_or((String::new(), ColType::Text), |c| c.clone())
                })
                .collect();
            let agg_cols = aggs
                .iter()
                .map(|a| {
                    let in_ty = a
                        .column
                        .and_then(|c| schema.get(c))
                        .map_or(ColType::Number, |c| c.1);
                    let ty = match a.func {
                        AggFn::Min | AggFn::Max | AggFn::First | AggFn::Last => in_ty,
                        _ => ColType::Number,
                    };
                    (a.name.clone(), ty)
                })
                .collect();
            Table {
                columns: g.finish(key_cols, agg_cols),
            }
        }
        (ViewState::Rows(cols), _) => Table {
            columns: schema
                .iter()
                .zip(cols)
                .map(|((name, ty), values)| Column {
                    name: name.clone(),
                    ty: *ty,
                    values,
                })
                .collect(),
        },
        (ViewState::Groups(_), None) => Table::default(),
    }
}
