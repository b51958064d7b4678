//! CSV loading and column type inference.
//!
//! The reader follows RFC 4180 (Y. Shafranovich, "Common Format and MIME Type
//! for Comma-Separated Values (CSV) Files", IETF, 2005) with the usual
//! relaxations:
//!
//! * records may end with CRLF, LF or CR, and the last line break is optional;
//! * text is UTF-8 (the RFC grammar is ASCII-only); a UTF-8 byte order mark at
//!   the very start of the file is skipped;
//! * nothing is trimmed: spaces belong to the field (RFC 4180 §2.4);
//! * blank lines between records are skipped (as the `csv` crate and Python's
//!   `csv` module do), so they never create a record.
//!
//! Deliberate choices on input that the RFC grammar does not allow:
//!
//! * **Text after a closing quote** (`"abc"d`) is rejected with a located
//!   `bad-quote` diagnostic. It almost always means a field was quoted wrongly,
//!   and silently gluing the parts together (as lenient parsers do) would hide
//!   that.
//! * **An unterminated quoted field** (an opening quote with no closing quote
//!   before the end of the file) is rejected: otherwise one stray quote would
//!   swallow the rest of the file into a single cell.
//! * **A bare quote inside an unquoted field** (`aa"a`) is accepted and kept as
//!   data (`aa"a`), as Python's `csv` module does even in strict mode. The field
//!   did not start with a quote, so the quote cannot be a delimiter and the
//!   parse is unambiguous; rejecting it would refuse common exports such as
//!   `27" screen` without protecting against any misreading.
//!
//! Row numbers in messages count data records (row 1 is the first record after
//! the header); the diagnostic's location shows the real line of the file.
//!
//! Cells the story reads (kept and declared columns) and header names may
//! not hold a control character XML cannot carry (U+0000–U+0008, U+000B,
//! U+000C, U+000E–U+001F, U+FFFE, U+FFFF): such a cell is a located
//! `bad-character` error, as invalid UTF-8 is. Tab, line feed and carriage
//! return are kept. [`ReadLimits`] bounds the length of those cells and the
//! rows held in memory.

// `LoadError::Csv` holds a full `Diagnostic` by value, as the crate's API
// specifies; the error happens at most once per load, so its size is harmless.
#![allow(clippy::result_large_err)]

use std::collections::BTreeSet;
use std::fmt;
use std::fs::File;
use std::io;
use std::path::PathBuf;

use crescendo_diag::Diagnostic;

use crate::digits::NumberStyle;
use crate::files::ReadAt;
use crate::loader::Loader;
use crate::model::{ColType, Table, Value};
use crate::record::{reader_builder, skip_bom, RawRecord, Tee};
use crate::time::{parse_date, parse_month_or_date, parse_year};

/// What to load and how to read it.
#[derive(Clone, Debug, PartialEq)]
pub struct CsvSpec {
    /// The file to open.
    pub path: PathBuf,
    /// How diagnostics name the file (as the story wrote it).
    pub display_name: String,
    /// Declared column types by header name; other columns are inferred.
    pub declared: Vec<(String, ColType)>,
    /// Exact cell texts that mean "missing"; callers pass `["", "NA"]` by default.
    pub missing: Vec<String>,
    /// How the file writes its numbers (the `thousands` and `decimal`
    /// options); plain by default.
    pub numbers: NumberStyle,
}

/// Limits on one read, so that a hostile or broken file stops with a clear
/// error instead of exhausting memory or time.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ReadLimits {
    /// Longest text, in characters, of a cell the story reads.
    pub text: usize,
    /// Most data rows held in memory (`--max-rows`); `None`: as many as fit
    /// in `memory` bytes.
    pub rows: Option<usize>,
    /// Bytes the held rows may take when `rows` is `None`.
    pub memory: u64,
}

impl ReadLimits {
    /// No limits (what [`load_csv`] uses).
    pub fn none() -> ReadLimits {
        ReadLimits {
            text: usize::MAX,
            rows: None,
            memory: u64::MAX,
        }
    }
}

impl Default for ReadLimits {
    fn default() -> Self {
        ReadLimits::none()
    }
}

/// Why a CSV file could not be loaded.
#[derive(Clone, Debug)]
pub enum LoadError {
    /// Not located inside the CSV; the caller points it at the story's data
    /// statement. `declared` is `Some(i)` when the problem is about
    /// `spec.declared[i]` (for example, that column is not in the header).
    Story {
        /// Machine-readable kind: `data-file`, `empty-data` or `unknown-column`.
        code: &'static str,
        /// One-line description.
        message: String,
        /// A suggested fix.
        help: Option<String>,
        /// Index into `spec.declared` the problem is about, if any.
        declared: Option<usize>,
    },
    /// Located in the CSV: the primary location is an excerpt holding the
    /// offending record's text with its real 1-based line number, and the span
    /// covers the offending field.
    Csv(Diagnostic),
    /// Several located problems in the CSV, in file order (each as in
    /// [`LoadError::Csv`]): a read reports every bad row and cell of a file
    /// at once, up to [`MAX_ERRORS`]; the last one says when the read
    /// stopped there.
    Many(Vec<Diagnostic>),
}

/// The most located problems one read of a data file reports; it stops
/// reading at that many (and says so).
pub const MAX_ERRORS: usize = 20;

impl LoadError {
    /// A problem not located inside the file, with a suggested fix if any.
    pub fn story(code: &'static str, message: String, help: Option<&str>) -> LoadError {
        LoadError::Story {
            code,
            message,
            help: help.map(str::to_owned),
            declared: None,
        }
    }

    /// The machine-readable code of the problem.
    pub fn code(&self) -> &'static str {
        match self {
            LoadError::Story { code, .. } => code,
            LoadError::Csv(d) => d.code,
            LoadError::Many(ds) => ds.first().map_or("data-file", |d| d.code),
        }
    }

    /// The located diagnostics of the error (none for [`LoadError::Story`]).
    pub fn located(&self) -> &[Diagnostic] {
        match self {
            LoadError::Story { .. } => &[],
            LoadError::Csv(d) => std::slice::from_ref(d),
            LoadError::Many(ds) => ds,
        }
    }
}

impl fmt::Display for LoadError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            LoadError::Story { message, .. } => f.write_str(message),
            LoadError::Csv(d) => f.write_str(&d.message),
            LoadError::Many(ds) => match ds.first() {
                Some(d) => write!(f, "{} (and {} more)", d.message, ds.len() - 1),
                None => f.write_str("errors in the data file"),
            },
        }
    }
}

impl std::error::Error for LoadError {}

/// Load a CSV file into a typed [`Table`].
///
/// The first record is the header. Declared column types are enforced
/// (every cell that does not parse is reported, with the file's other bad
/// rows and cells, up to [`MAX_ERRORS`]); other columns are inferred
/// over all non-missing cells: `month` if every cell is `YYYY-MM`, `date` if
/// every cell is `YYYY-MM-DD`, `number` if every cell is a plain decimal number
/// (see [`parse_number`]), otherwise `text`. `year` is never inferred, and a
/// column whose cells are all missing is `text`. Cells equal to one of
/// `spec.missing` become [`Value::Missing`]; text cells keep their exact text.
///
/// The file is streamed: only the columns and the current record's raw text
/// (for diagnostics) are held in memory.
pub fn load_csv(spec: &CsvSpec) -> Result<Table, LoadError> {
    load_csv_columns(spec, &Columns::All)
}

/// Which columns a load keeps the values of.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub enum Columns {
    /// Every column (what [`load_csv`] does).
    #[default]
    All,
    /// Only the named columns. The others stay in the table (same names, so
    /// messages can list them) as all-missing columns of their declared type,
    /// or `text`; they are not inferred. Every declared column is still
    /// checked, so a load reports exactly the errors [`load_csv`] reports.
    Only(BTreeSet<String>),
}

impl Columns {
    /// Does the load keep the values of column `name`?
    pub fn keeps(&self, name: &str) -> bool {
        match self {
            Columns::All => true,
            Columns::Only(names) => names.contains(name),
        }
    }
}

/// [`load_csv`], keeping the values of the selected columns only.
pub fn load_csv_columns(spec: &CsvSpec, columns: &Columns) -> Result<Table, LoadError> {
    let file = File::open(&spec.path).map_err(|e| io_error(spec, &e))?;
    load_file(spec, &file, columns, &ReadLimits::none())
}

/// [`load_csv_columns`] from a file already opened (and checked, see
/// [`crate::files`]) for `spec.path`, within `limits`. Every byte is read
/// through `file`.
pub fn load_file(
    spec: &CsvSpec,
    file: &File,
    columns: &Columns,
    limits: &ReadLimits,
) -> Result<Table, LoadError> {
    let total = file.metadata().map(|m| m.len()).unwrap_or(0);
    let _task = crate::progress::Task::begin(&spec.display_name, total);
    let (loader, _) = read(spec, file, columns, None, limits)?;
    loader.finish()
}

/// The header and the column types a file's first records suggest: what the
/// streaming reader needs before it splits the file.
#[derive(Clone, Debug, PartialEq)]
pub struct Probe {
    /// Header names in file order.
    pub names: Vec<String>,
    /// Per column: the declared type, or the type inferred over the sample
    /// for kept columns (`None` when the sample held no value of it), or
    /// `None` for columns that are not kept.
    pub types: Vec<Option<ColType>>,
    /// File offset just after the header record.
    pub data_start: u64,
    /// Data rows read (at most the sample size).
    pub rows: usize,
}

/// Read the header and up to `rows` records. Errors in that part of the file
/// are reported as [`load_csv`] reports them.
pub fn probe(spec: &CsvSpec, columns: &Columns, rows: usize) -> Result<Probe, LoadError> {
    let file = File::open(&spec.path).map_err(|e| io_error(spec, &e))?;
    probe_file(spec, &file, columns, rows, &ReadLimits::none())
}

/// [`probe`] from a file already opened for `spec.path`, within `limits`.
pub fn probe_file(
    spec: &CsvSpec,
    file: &File,
    columns: &Columns,
    rows: usize,
    limits: &ReadLimits,
) -> Result<Probe, LoadError> {
    let (loader, data_start) = read(spec, file, columns, Some(rows), limits)?;
    let types = loader
        .columns
        .iter()
        .map(|b| match b.declared {
            Some(t) => Some(t),
            None if !b.keep || !b.infer.any => None,
            None => Some(b.infer.ty()),
        })
        .collect();
    Ok(Probe {
        names: loader.columns.iter().map(|b| b.name.clone()).collect(),
        types,
        data_start,
        rows: loader.rows,
    })
}

/// The records of a file through the loader; stops after `limit` data rows.
/// Returns the loader and the file offset where the data rows start.
fn read<'s>(
    spec: &'s CsvSpec,
    file: &File,
    columns: &'s Columns,
    limit: Option<usize>,
    limits: &'s ReadLimits,
) -> Result<(Loader<'s>, u64), LoadError> {
    let (input, bom) = skip_bom(ReadAt::new(file, 0)).map_err(|e| io_error(spec, &e))?;
    let mut rdr = reader_builder().from_reader(Tee::new(input));
    let mut loader = Loader::new(spec, columns, limits);
    let mut record = csv::ByteRecord::new();
    let mut index = 0usize;
    let mut data_start = bom;
    loop {
        if limit.is_some_and(|l| index > l) {
            break;
        }
        match rdr.read_byte_record(&mut record) {
            Ok(true) => {}
            Ok(false) => break,
            Err(e) => {
                return Err(match e.into_kind() {
                    csv::ErrorKind::Io(io) => io_error(spec, &io),
                    other => LoadError::story(
                        "data-file",
                        format!("cannot read data file `{}`: {other:?}", spec.display_name),
                        None,
                    ),
                })
            }
        }
        let (start, line) = record
            .position()
            .map(|p| (p.byte(), p.line()))
            .unwrap_or((0, 1));
        let end = rdr.position().byte();
        let tee = rdr.get_mut();
        let raw = RawRecord::new(tee.window(start, end), line);
        if let Err(e) = loader.record(index, &record, &raw) {
            return Err(loader.fatal(e));
        }
        tee.consumed(end);
        if index == 0 {
            data_start = bom + end;
        }
        index += 1;
        if loader.full() {
            break;
        }
    }
    loader.errors()?;
    Ok((loader, data_start))
}

/// Whether a cell is a number written with thousands separators
/// (`1,050`, `1.050,5`, `12 345`), which crescendo does not read as a
/// number: the help then says so, and never suggests reading it as missing.
pub fn is_grouped_number(s: &str) -> bool {
    crate::loader::grouped_number(ColType::Number, s)
}

/// Parse a plain decimal number: an optional sign, digits with an optional
/// fraction (`12`, `-3.5`, `.5`, `5.`), and an optional exponent (`1e-3`).
/// Rejects `inf`, `nan`, hexadecimal, thousands separators, surrounding spaces
/// and values too large for a finite `f64`.
pub fn parse_number(s: &str) -> Option<f64> {
    let b = s.as_bytes();
    if let Some(v) = crate::quicknum::short_decimal(b) {
        return Some(v);
    }
    let mut i = 0;
    if i < b.len() && (b[i] == b'+' || b[i] == b'-') {
        i += 1;
    }
    let int_start = i;
    while i < b.len() && b[i].is_ascii_digit() {
        i += 1;
    }
    let mut mantissa_digits = i - int_start;
    if i < b.len() && b[i] == b'.' {
        i += 1;
        let frac_start = i;
        while i < b.len() && b[i].is_ascii_digit() {
            i += 1;
        }
        mantissa_digits += i - frac_start;
    }
    if mantissa_digits == 0 {
        return None;
    }
    if i < b.len() && (b[i] == b'e' || b[i] == b'E') {
        i += 1;
        if i < b.len() && (b[i] == b'+' || b[i] == b'-') {
            i += 1;
        }
        let exp_start = i;
        while i < b.len() && b[i].is_ascii_digit() {
            i += 1;
        }
        if i == exp_start {
            return None;
        }
    }
    if i != b.len() {
        return None;
    }
    // the text is a plain decimal now; fast-float2 rounds it correctly, as
    // the standard library's parser does (both: the nearest double, ties
    // to even), only faster
    fast_float2::parse::<f64, _>(b)
        .ok()
        .filter(|v| v.is_finite())
}

/// Parse one cell as `ty` (numbers written in `style`); `None` when it
/// does not parse.
pub(crate) fn parse_as(style: &NumberStyle, ty: ColType, s: &str) -> Option<Value> {
    match ty {
        ColType::Text => Some(Value::Text(s.to_owned())),
        ColType::Number => style.parse(s).map(Value::Number),
        ColType::Date => parse_date(s).map(Value::Date),
        ColType::Month => parse_month_or_date(s).map(Value::Month),
        ColType::Year => parse_year(s).map(Value::Year),
    }
}

/// Why a data file could not be opened or read, as a [`LoadError`].
pub fn io_error(spec: &CsvSpec, e: &io::Error) -> LoadError {
    let reason = match e.kind() {
        io::ErrorKind::NotFound => "no such file".to_owned(),
        io::ErrorKind::PermissionDenied => "permission denied".to_owned(),
        _ => {
            let text = e.to_string();
            // "Is a directory (os error 21)" -> "Is a directory"
            match text.find(" (os error") {
                Some(i) => text[..i].to_owned(),
                None => text,
            }
        }
    };
    LoadError::story(
        "data-file",
        format!("cannot read data file `{}`: {reason}", spec.display_name),
        None,
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn plain_numbers_only() {
        for ok in ["0", "-12", "+3.5", ".5", "5.", "1e3", "1E-3", "-0.25e+2"] {
            assert!(parse_number(ok).is_some(), "{ok}");
        }
        assert_eq!(parse_number("-0.25e+2"), Some(-25.0));
        for bad in [
            "", "-", ".", "e3", "1e", "inf", "NaN", "0x1F", "1,000", " 1", "1 ", "1e999", "1.2.3",
            "--1", "1_000",
        ] {
            assert_eq!(parse_number(bad), None, "{bad}");
        }
    }
}
