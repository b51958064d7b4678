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
use std::io::{self, Read};
use std::ops::Range;
use std::path::PathBuf;
use std::sync::Arc;

use crescendo_diag::{closest, Diagnostic, Source};

use crate::files::ReadAt;
use crate::model::{Cell, ColType, Column, Table, Value, Values};
use crate::time::{parse_date, parse_month, parse_year};

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
}

impl LoadError {
    /// The machine-readable code of the problem.
    pub fn code(&self) -> &'static str {
        match self {
            LoadError::Story { code, .. } => code,
            LoadError::Csv(d) => d.code,
        }
    }
}

impl fmt::Display for LoadError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            LoadError::Story { message, .. } => f.write_str(message),
            LoadError::Csv(d) => f.write_str(&d.message),
        }
    }
}

impl std::error::Error for LoadError {}

/// Load a CSV file into a typed [`Table`].
///
/// The first record is the header. Declared column types are enforced (the
/// first cell that does not parse is reported); other columns are inferred
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
                    other => story(
                        "data-file",
                        format!("cannot read data file `{}`: {other:?}", spec.display_name),
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
        loader.record(index, &record, &raw)?;
        tee.consumed(end);
        if index == 0 {
            data_start = bom + end;
        }
        index += 1;
    }
    Ok((loader, data_start))
}

/// The CSV dialect of every reader here (RFC 4180, see the module docs).
pub(crate) fn reader_builder() -> csv::ReaderBuilder {
    let mut b = csv::ReaderBuilder::new();
    b.has_headers(false)
        .flexible(true)
        .delimiter(b',')
        .quote(b'"')
        .double_quote(true)
        .escape(None)
        .quoting(true)
        .trim(csv::Trim::None)
        .comment(None);
    b
}

/// Parse a plain decimal number: an optional sign, digits with an optional
/// fraction (`12`, `-3.5`, `.5`, `5.`), and an optional exponent (`1e-3`).
/// Rejects `inf`, `nan`, hexadecimal, thousands separators, surrounding spaces
/// and values too large for a finite `f64`.
pub fn parse_number(s: &str) -> Option<f64> {
    let b = s.as_bytes();
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
    s.parse::<f64>().ok().filter(|v| v.is_finite())
}

/// The first character of `s` that XML 1.0 cannot carry (see the module
/// docs), with its byte offset.
pub(crate) fn forbidden_char(s: &str) -> Option<(usize, char)> {
    // fast path: only bytes below 0x20 and the lead byte of U+FFFE/U+FFFF
    if !s.bytes().any(|b| b < 0x20 || b == 0xEF) {
        return None;
    }
    s.char_indices().find(|&(_, c)| {
        matches!(c, '\u{0}'..='\u{8}' | '\u{b}' | '\u{c}' | '\u{e}'..='\u{1f}' | '\u{fffe}' | '\u{ffff}')
    })
}

/// The number of characters of `s` when it has more than `limit`.
pub(crate) fn too_long(s: &str, limit: usize) -> Option<usize> {
    if s.len() <= limit {
        return None;
    }
    let n = s.chars().count();
    (n > limit).then_some(n)
}

/// Parse one cell as `ty`; `None` when it does not parse.
fn parse_as(ty: ColType, s: &str) -> Option<Value> {
    match ty {
        ColType::Text => Some(Value::Text(s.to_owned())),
        ColType::Number => parse_number(s).map(Value::Number),
        ColType::Date => parse_date(s).map(Value::Date),
        ColType::Month => parse_month(s).map(Value::Month),
        ColType::Year => parse_year(s).map(Value::Year),
    }
}

fn story(code: &'static str, message: String) -> LoadError {
    LoadError::Story {
        code,
        message,
        help: None,
        declared: None,
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
    story(
        "data-file",
        format!("cannot read data file `{}`: {reason}", spec.display_name),
    )
}

const BOM: &[u8] = b"\xEF\xBB\xBF";

/// Read the first bytes and drop a UTF-8 byte order mark if present.
/// A file with its byte order mark (if any) removed.
type WithoutBom<R> = io::Chain<io::Cursor<Vec<u8>>, R>;

fn skip_bom<R: Read>(mut file: R) -> io::Result<(WithoutBom<R>, u64)> {
    let mut head = Vec::with_capacity(3);
    let mut buf = [0u8; 3];
    while head.len() < 3 {
        let n = match file.read(&mut buf[..3 - head.len()]) {
            Ok(n) => n,
            Err(e) if e.kind() == io::ErrorKind::Interrupted => continue,
            Err(e) => return Err(e),
        };
        if n == 0 {
            break;
        }
        head.extend_from_slice(&buf[..n]);
    }
    let bom = if head == BOM {
        head.clear();
        BOM.len() as u64
    } else {
        0
    };
    Ok((io::Cursor::new(head).chain(file), bom))
}

/// A reader that keeps the bytes it passed on since the start of the current
/// record, so a record's raw text is available for validation and excerpts.
pub(crate) struct Tee<R> {
    inner: R,
    /// Bytes read but not yet reported to the progress display.
    unreported: u64,
    /// Raw bytes from offset `base` onwards.
    buf: Vec<u8>,
    base: u64,
}

/// Drop consumed bytes once this many have accumulated (amortised O(1)).
const DRAIN_AT: usize = 64 * 1024;

impl<R: Read> Tee<R> {
    pub(crate) fn new(inner: R) -> Self {
        Tee {
            inner,
            unreported: 0,
            buf: Vec::new(),
            base: 0,
        }
    }

    /// The raw bytes between two stream offsets (empty if out of range).
    pub(crate) fn window(&self, start: u64, end: u64) -> &[u8] {
        let a = start.saturating_sub(self.base) as usize;
        let b = end.saturating_sub(self.base) as usize;
        self.buf.get(a..b.min(self.buf.len())).unwrap_or(&[])
    }

    /// Everything before stream offset `end` will not be asked for again.
    pub(crate) fn consumed(&mut self, end: u64) {
        let cut = (end.saturating_sub(self.base) as usize).min(self.buf.len());
        if cut >= DRAIN_AT {
            self.buf.drain(..cut);
            self.base += cut as u64;
        }
    }
}

impl<R: Read> Read for Tee<R> {
    fn read(&mut self, out: &mut [u8]) -> io::Result<usize> {
        let n = self.inner.read(out)?;
        self.buf.extend_from_slice(&out[..n]);
        self.unreported += n as u64;
        if self.unreported >= crate::progress::STEP || n == 0 {
            crate::progress::advance(self.unreported);
            self.unreported = 0;
        }
        Ok(n)
    }
}

/// The raw text of one record without surrounding line breaks, and the
/// 1-based file line it starts on.
pub(crate) struct RawRecord<'a> {
    pub(crate) bytes: &'a [u8],
    line: usize,
}

impl<'a> RawRecord<'a> {
    pub(crate) fn new(window: &'a [u8], line_at_start: u64) -> Self {
        // Blank lines skipped before the record belong to its window.
        let lead = window
            .iter()
            .position(|&b| b != b'\r' && b != b'\n')
            .unwrap_or(window.len());
        let skipped_lines = window[..lead].iter().filter(|&&b| b == b'\n').count();
        let mut bytes = &window[lead..];
        while let [rest @ .., b'\r' | b'\n'] = bytes {
            bytes = rest;
        }
        RawRecord {
            bytes,
            line: (line_at_start as usize)
                .saturating_add(skipped_lines)
                .max(1),
        }
    }
}

/// A problem found while scanning a record's raw text.
pub(crate) enum ScanError {
    /// Text follows the closing quote of field `field`; `at` is its offset.
    AfterQuote { field: usize, at: usize },
    /// Field `field` opens a quote at `at` that is never closed.
    Unterminated { field: usize, at: usize },
}

/// Split a record's raw text into field spans (quotes included), checking the
/// RFC 4180 quoting rules chosen in the module docs.
pub(crate) fn scan_fields(raw: &[u8]) -> Result<Vec<Range<usize>>, ScanError> {
    let mut fields = Vec::new();
    let mut i = 0;
    let n = raw.len();
    loop {
        let start = i;
        if i < n && raw[i] == b'"' {
            i += 1;
            loop {
                match raw[i..].iter().position(|&b| b == b'"') {
                    None => {
                        return Err(ScanError::Unterminated {
                            field: fields.len(),
                            at: start,
                        })
                    }
                    Some(p) => {
                        i += p + 1;
                        if i < n && raw[i] == b'"' {
                            i += 1;
                        } else {
                            break;
                        }
                    }
                }
            }
            if i < n && raw[i] != b',' {
                return Err(ScanError::AfterQuote {
                    field: fields.len(),
                    at: i,
                });
            }
        } else {
            while i < n && raw[i] != b',' {
                i += 1;
            }
        }
        fields.push(start..i);
        if i >= n {
            return Ok(fields);
        }
        i += 1;
    }
}

/// Span of field `field` in a raw record, or the whole record.
fn field_span(raw: &[u8], field: usize) -> Range<usize> {
    match scan_fields(raw) {
        Ok(spans) => spans.get(field).cloned().unwrap_or(0..raw.len()),
        Err(_) => 0..raw.len(),
    }
}

/// Keep excerpts of huge records (an unclosed quote, say) readable.
const MAX_EXCERPT: usize = 8 * 1024;
/// Bytes shown after the span of a line longer than [`MAX_EXCERPT`].
const EXCERPT_AFTER: usize = 60;

/// A cell's text for a message: control characters escaped, long text cut.
fn show(s: &str) -> String {
    let mut out = String::new();
    for (i, c) in s.chars().enumerate() {
        if i == 40 {
            out.push('…');
            break;
        }
        if c.is_control() {
            out.extend(c.escape_default());
        } else {
            out.push(c);
        }
    }
    out
}

/// Why a control character in data is refused, and what to do.
pub(crate) const CHAR_NOTE: &str = "a frame is SVG, an XML format, and XML cannot carry control \
characters (other than tab and line breaks) or U+FFFE and U+FFFF; browsers refuse such a frame";
pub(crate) const CHAR_HELP: &str =
    "remove the character from the data file (it is often a stray byte from the program that wrote it)";
const ROWS_HELP: &str =
    "a data file read only by views that start with `keep` or `by` is streamed \
instead of held in memory; or set the most rows to hold with --max-rows N";

/// "1 field", "2 fields".
fn count(n: usize, noun: &str) -> String {
    if n == 1 {
        format!("1 {noun}")
    } else {
        format!("{n} {noun}s")
    }
}

/// How a declared type is described under the caret.
fn expected(ty: ColType) -> &'static str {
    match ty {
        ColType::Text => "text",
        ColType::Number => "not a number",
        ColType::Date => "not a date (YYYY-MM-DD)",
        ColType::Month => "not a month (YYYY-MM)",
        ColType::Year => "not a year (YYYY)",
    }
}

/// Inference state of an undeclared column.
struct Infer {
    month: bool,
    date: bool,
    number: bool,
    any: bool,
}

impl Infer {
    /// The type the cells seen so far suggest (`text` when none was seen).
    fn ty(&self) -> ColType {
        match self {
            Infer { any: false, .. } => ColType::Text,
            Infer { month: true, .. } => ColType::Month,
            Infer { date: true, .. } => ColType::Date,
            Infer { number: true, .. } => ColType::Number,
            _ => ColType::Text,
        }
    }
}

struct Builder {
    name: String,
    /// Whether the column's values are kept (see [`Columns`]).
    keep: bool,
    declared: Option<ColType>,
    infer: Infer,
    /// Declared columns hold typed cells; undeclared ones hold their texts
    /// (each distinct text once) until [`Loader::finish`] knows their type.
    values: Values,
}

struct Loader<'s> {
    spec: &'s CsvSpec,
    keep: &'s Columns,
    limits: &'s ReadLimits,
    columns: Vec<Builder>,
    /// Data rows read.
    rows: usize,
}

/// How often (in rows) the memory the rows take is measured.
const MEASURE_EVERY: usize = 8192;

/// Bytes for people: "512 kB", "1.2 GB" (decimal units).
fn bytes(n: u64) -> String {
    let n = n as f64;
    match n {
        _ if n >= 1e9 => format!("{:.1} GB", n / 1e9),
        _ if n >= 1e6 => format!("{:.1} MB", n / 1e6),
        _ => format!("{:.0} kB", (n / 1e3).ceil()),
    }
}

/// The text of an excerpt: invalid UTF-8 replaced, and characters that
/// must not reach a terminal or XML shown as their visible pictures
/// (U+2400 to U+241F for C0 controls, U+FFFD for U+FFFE and U+FFFF). Tab and
/// line breaks stay.
fn excerpt_text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes)
        .chars()
        .map(|c| match c {
            '\t' | '\n' | '\r' => c,
            '\u{0}'..='\u{1f}' => char::from_u32(0x2400 + c as u32).unwrap_or('\u{fffd}'),
            '\u{fffe}' | '\u{ffff}' => '\u{fffd}',
            c => c,
        })
        .collect()
}

impl<'s> Loader<'s> {
    fn new(spec: &'s CsvSpec, keep: &'s Columns, limits: &'s ReadLimits) -> Self {
        Loader {
            spec,
            keep,
            limits,
            columns: Vec::new(),
            rows: 0,
        }
    }

    /// A diagnostic located on `span` of a raw record.
    fn located(
        &self,
        code: &'static str,
        message: String,
        raw: &RawRecord<'_>,
        span: Range<usize>,
        label: &str,
    ) -> Diagnostic {
        let bytes = if raw.bytes.len() > MAX_EXCERPT {
            let from = span.end.min(raw.bytes.len());
            let mut cut = raw.bytes[from..]
                .iter()
                .position(|&b| b == b'\n' || b == b'\r')
                .map_or(raw.bytes.len(), |p| from + p);
            if cut > MAX_EXCERPT {
                // a single line that long (one huge field, say): show the
                // text around the span only
                cut = cut.min(from.max(span.start + 1) + EXCERPT_AFTER);
            }
            &raw.bytes[..cut]
        } else {
            raw.bytes
        };
        let text = excerpt_text(bytes);
        let span = if text.as_bytes() == bytes {
            span
        } else {
            let at = |o: usize| excerpt_text(&bytes[..o.min(bytes.len())]).len();
            at(span.start)..at(span.end)
        };
        let source: Arc<Source> = Source::excerpt(&self.spec.display_name, text, raw.line);
        Diagnostic::error(code, message).at(&source, span, label)
    }

    fn check_quotes(&self, index: usize, raw: &RawRecord<'_>) -> Result<(), LoadError> {
        if !raw.bytes.contains(&b'"') {
            return Ok(());
        }
        let what = if index == 0 {
            "the header".to_owned()
        } else {
            format!("row {index}")
        };
        match scan_fields(raw.bytes) {
            Ok(_) => Ok(()),
            Err(ScanError::AfterQuote { field, at }) => {
                let end = raw.bytes[at..]
                    .iter()
                    .position(|&b| b == b',')
                    .map_or(raw.bytes.len(), |p| at + p);
                Err(LoadError::Csv(
                    self.located(
                        "bad-quote",
                        format!(
                            "{what}, field {}: text after the closing quote of a quoted field",
                            field + 1
                        ),
                        raw,
                        at..end,
                        "expected a comma or the end of the line here",
                    )
                    .help(
                        "quote the whole field and double any quote inside it, \
                         e.g. `\"abc\"\"d\"` for the text abc\"d",
                    ),
                ))
            }
            Err(ScanError::Unterminated { field, at }) => Err(LoadError::Csv(
                self.located(
                    "bad-quote",
                    format!(
                        "{what}, field {}: this quoted field is never closed",
                        field + 1
                    ),
                    raw,
                    at..at + 1,
                    "opening quote without a closing quote",
                )
                .note("the quoted field runs to the end of the file")
                .help(
                    "add the closing quote, or double the quote (`\"\"`) if it is part of the text",
                ),
            )),
        }
    }

    fn record(
        &mut self,
        index: usize,
        record: &csv::ByteRecord,
        raw: &RawRecord<'_>,
    ) -> Result<(), LoadError> {
        if index > 0 {
            self.check_rows(index)?;
        }
        self.check_quotes(index, raw)?;
        if index == 0 {
            return self.header(record, raw);
        }
        let n = self.columns.len();
        if record.len() != n {
            let m = record.len();
            let spans = scan_fields(raw.bytes).unwrap_or_default();
            let (span, label) = if m > n {
                let start = spans.get(n).map_or(0, |s| s.start);
                (
                    start..raw.bytes.len(),
                    format!("{} extra", count(m - n, "field")),
                )
            } else {
                let end = raw.bytes.len();
                (end..end, format!("expected {n} fields, found {m}"))
            };
            let mut d = self.located(
                "ragged-row",
                format!(
                    "row {index} has {}, but the header has {n}",
                    count(m, "field")
                ),
                raw,
                span,
                &label,
            );
            d = if m > n && raw.bytes.ends_with(b",") {
                d.help("a comma at the end of a line adds an empty field; remove it")
            } else {
                d.help(
                    "every row needs one field per header column; quote fields that contain commas",
                )
            };
            return Err(LoadError::Csv(d));
        }
        for (j, cell) in record.iter().enumerate() {
            let text = match std::str::from_utf8(cell) {
                Ok(t) => t,
                Err(_) => {
                    let name = &self.columns[j].name;
                    return Err(LoadError::Csv(
                        self.located(
                            "bad-encoding",
                            format!("row {index}, column `{name}` is not valid UTF-8 text"),
                            raw,
                            field_span(raw.bytes, j),
                            "invalid UTF-8",
                        )
                        .help("save the data file as UTF-8"),
                    ));
                }
            };
            let col = &self.columns[j];
            if !col.keep && col.declared.is_none() {
                continue;
            }
            self.check_text(index, j, text, raw)?;
            if self.spec.missing.iter().any(|m| m == text) {
                if self.columns[j].keep {
                    self.columns[j].values.push_cell(Cell::Missing);
                }
                continue;
            }
            let col = &mut self.columns[j];
            let value = match col.declared {
                Some(ty) => match parse_as(ty, text) {
                    Some(v) => v,
                    None => return Err(self.bad_value(index, j, ty, text, raw)),
                },
                None => {
                    let inf = &mut col.infer;
                    inf.any = true;
                    inf.month = inf.month && parse_month(text).is_some();
                    inf.date = inf.date && parse_date(text).is_some();
                    inf.number = inf.number && parse_number(text).is_some();
                    if col.keep {
                        col.values.push_cell(Cell::Text(text));
                    }
                    continue;
                }
            };
            if col.keep {
                col.values.push(value);
            }
        }
        self.rows += 1;
        Ok(())
    }

    /// May row `index` be read? Within the row limit, or (without one)
    /// while the rows read so far fit in the memory allowed.
    fn check_rows(&self, index: usize) -> Result<(), LoadError> {
        let name = &self.spec.display_name;
        match self.limits.rows {
            Some(max) if index > max => Err(LoadError::Story {
                code: "limit",
                message: format!(
                    "data file `{name}` has more rows than the limit of {max} (--max-rows)"
                ),
                help: Some(ROWS_HELP.into()),
                declared: None,
            }),
            None if index.is_multiple_of(MEASURE_EVERY) => {
                let held: usize = self.columns.iter().map(|b| b.values.heap_bytes()).sum();
                if held as u64 <= self.limits.memory {
                    return Ok(());
                }
                Err(LoadError::Story {
                    code: "limit",
                    message: format!(
                        "data file `{name}` has more rows than fit in memory: its first {} rows \
                         take {}, more than the {} allowed (half of the memory available; \
                         the default of --max-rows)",
                        index - 1,
                        bytes(held as u64),
                        bytes(self.limits.memory)
                    ),
                    help: Some(ROWS_HELP.into()),
                    declared: None,
                })
            }
            _ => Ok(()),
        }
    }

    /// A cell the story reads: no character XML cannot carry, and within
    /// the text limit.
    fn check_text(
        &self,
        index: usize,
        j: usize,
        text: &str,
        raw: &RawRecord<'_>,
    ) -> Result<(), LoadError> {
        let name = &self.columns[j].name;
        let field = field_span(raw.bytes, j);
        if let Some((_, c)) = forbidden_char(text) {
            let mut utf8 = [0u8; 4];
            let needle = c.encode_utf8(&mut utf8).as_bytes();
            let at = raw.bytes[field.clone()]
                .windows(needle.len())
                .position(|w| w == needle)
                .map_or(field.start, |p| field.start + p);
            return Err(LoadError::Csv(
                self.located(
                    "bad-character",
                    format!(
                        "row {index}, column `{name}` holds the control character U+{:04X}",
                        c as u32
                    ),
                    raw,
                    at..at + needle.len(),
                    "this character",
                )
                .note(CHAR_NOTE)
                .help(CHAR_HELP),
            ));
        }
        if let Some(n) = too_long(text, self.limits.text) {
            return Err(LoadError::Csv(
                self.located(
                    "limit",
                    format!(
                        "row {index}, column `{name}` has {n} characters, more than the limit of {} (--max-text)",
                        self.limits.text
                    ),
                    raw,
                    field.start..field.start + 1,
                    "this text is too long",
                )
                .help("shorten the text in the data file, or raise the limit with --max-text N"),
            ));
        }
        Ok(())
    }

    fn bad_value(
        &self,
        index: usize,
        j: usize,
        ty: ColType,
        text: &str,
        raw: &RawRecord<'_>,
    ) -> LoadError {
        let name = &self.columns[j].name;
        let mut d = self.located(
            "bad-value",
            format!(
                "column `{name}` is declared {}, but row {index} holds `{}`",
                ty.name(),
                show(text)
            ),
            raw,
            field_span(raw.bytes, j),
            expected(ty),
        );
        d = if text.trim() != text && parse_as(ty, text.trim()).is_some() {
            d.note("spaces are part of a CSV field, so the value is not read as trimmed")
                .help(format!(
                    "remove the spaces around `{}` in the data file",
                    show(text.trim())
                ))
        } else {
            d.help(format!(
                "declare `{name}` as text, or add `{}` to the missing-value tokens",
                show(text)
            ))
        };
        LoadError::Csv(d)
    }

    fn header(&mut self, record: &csv::ByteRecord, raw: &RawRecord<'_>) -> Result<(), LoadError> {
        let mut names: Vec<String> = Vec::with_capacity(record.len());
        for (j, cell) in record.iter().enumerate() {
            let Ok(name) = std::str::from_utf8(cell) else {
                return Err(LoadError::Csv(
                    self.located(
                        "bad-encoding",
                        format!("header field {} is not valid UTF-8 text", j + 1),
                        raw,
                        field_span(raw.bytes, j),
                        "invalid UTF-8",
                    )
                    .help("save the data file as UTF-8"),
                ));
            };
            if let Some((_, c)) = forbidden_char(name) {
                return Err(LoadError::Csv(
                    self.located(
                        "bad-character",
                        format!(
                            "header field {} holds the control character U+{:04X}",
                            j + 1,
                            c as u32
                        ),
                        raw,
                        field_span(raw.bytes, j),
                        "this column name",
                    )
                    .note(CHAR_NOTE)
                    .help(CHAR_HELP),
                ));
            }
            if name.is_empty() {
                return Err(LoadError::Csv(
                    self.located(
                        "bad-header",
                        format!("header field {} has no name", j + 1),
                        raw,
                        field_span(raw.bytes, j),
                        "empty column name",
                    )
                    .help("give every column a name in the first line of the file"),
                ));
            }
            if let Some(first) = names.iter().position(|n| n == name) {
                let d = self.located(
                    "bad-header",
                    format!("column `{name}` appears twice in the header"),
                    raw,
                    field_span(raw.bytes, j),
                    "second column with this name",
                );
                let first_span = field_span(raw.bytes, first);
                let src = d.primary.as_ref().map(|p| Arc::clone(&p.source));
                let d = match src {
                    Some(s) => d.also(&s, first_span, "first column with this name"),
                    None => d,
                };
                return Err(LoadError::Csv(
                    d.help("rename one of the columns so every header name is unique"),
                ));
            }
            names.push(name.to_owned());
        }
        for (i, (want, _)) in self.spec.declared.iter().enumerate() {
            if !names.iter().any(|n| n == want) {
                let help = closest(want, names.iter().map(String::as_str))
                    .map(|c| format!("did you mean `{c}`?"));
                return Err(LoadError::Story {
                    code: "unknown-column",
                    message: format!(
                        "column `{want}` is not in the header of `{}` (columns: {})",
                        self.spec.display_name,
                        names
                            .iter()
                            .map(|n| format!("`{n}`"))
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                    help,
                    declared: Some(i),
                });
            }
        }
        self.columns = names
            .into_iter()
            .map(|name| {
                let declared = self
                    .spec
                    .declared
                    .iter()
                    .find(|(n, _)| *n == name)
                    .map(|(_, t)| *t);
                Builder {
                    keep: self.keep.keeps(&name),
                    name,
                    declared,
                    infer: Infer {
                        month: true,
                        date: true,
                        number: true,
                        any: false,
                    },
                    values: Values::new(),
                }
            })
            .collect();
        Ok(())
    }

    fn finish(self) -> Result<Table, LoadError> {
        let name = &self.spec.display_name;
        if self.columns.is_empty() {
            return Err(LoadError::Story {
                code: "empty-data",
                message: format!("data file `{name}` is empty"),
                help: Some("the first line must be a header naming the columns".into()),
                declared: None,
            });
        }
        if self.rows == 0 {
            return Err(LoadError::Story {
                code: "empty-data",
                message: format!("data file `{name}` has a header but no data rows"),
                help: None,
                declared: None,
            });
        }
        let rows = self.rows;
        let columns = self
            .columns
            .into_iter()
            .map(|b| {
                let ty = match b.declared {
                    Some(t) => t,
                    None if !b.keep => ColType::Text,
                    None => b.infer.ty(),
                };
                if !b.keep {
                    return Column {
                        name: b.name,
                        ty,
                        values: Values::missing(rows),
                    };
                }
                let values = if b.declared.is_none() && ty != ColType::Text {
                    // each distinct text is parsed once
                    b.values.map_texts(|s| parse_as(ty, s))
                } else {
                    let mut v = b.values;
                    v.shrink_to_fit();
                    v
                };
                Column {
                    name: b.name,
                    ty,
                    values,
                }
            })
            .collect();
        Ok(Table { columns })
    }
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

    #[test]
    fn scanner_spans_and_quote_rules() {
        let spans = scan_fields(b"a,\"b,\"\"c\",,d").ok().unwrap_or_default();
        assert_eq!(spans, vec![0..1, 2..9, 10..10, 11..12]);
        assert!(matches!(
            scan_fields(b"x,\"abc\"d,e"),
            Err(ScanError::AfterQuote { field: 1, at: 7 })
        ));
        assert!(matches!(
            scan_fields(b"x,\"abc"),
            Err(ScanError::Unterminated { field: 1, at: 2 })
        ));
        // A bare quote inside an unquoted field is data (documented choice).
        assert_eq!(scan_fields(b"aa\"a,b").ok().map(|s| s.len()), Some(2));
        let empty = scan_fields(b"").ok().unwrap_or_default();
        assert_eq!((empty.len(), empty.first()), (1, Some(&(0..0))));
    }

    #[test]
    fn raw_record_skips_blank_lines_and_terminators() {
        let r = RawRecord::new(b"\r\n\nabc,d\r\n", 4);
        assert_eq!(r.bytes, b"abc,d");
        assert_eq!(r.line, 6);
    }

    #[test]
    fn show_escapes_and_cuts() {
        assert_eq!(show("a\nb"), "a\\nb");
        assert_eq!(show(&"x".repeat(50)).chars().count(), 41);
    }
}
