//! The loader behind [`crate::load`]: records one at a time into column
//! builders, with every check of that module's docs (quotes, ragged rows,
//! UTF-8, control characters, declared types, the text and row limits), each
//! failure a diagnostic located on the record.

// `LoadError::Csv` holds a full `Diagnostic` by value, as the crate's API
// specifies; the error happens at most once per load, so its size is harmless.
#![allow(clippy::result_large_err)]

use std::ops::Range;
use std::sync::Arc;

use crescendo_diag::{closest, Diagnostic, Source};

use crate::load::{parse_as, Columns, CsvSpec, LoadError, ReadLimits, MAX_ERRORS};
use crate::model::{Cell, ColType, Column, Table, Values};
use crate::record::{field_span, forbidden_char, scan_fields, too_long, RawRecord, ScanError};
use crate::time::{parse_date, parse_month};

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
        ColType::Month => "not a month (YYYY-MM, or a date YYYY-MM-DD)",
        ColType::Year => "not a year (YYYY)",
    }
}

/// Inference state of an undeclared column.
pub(crate) struct Infer {
    pub(crate) month: bool,
    pub(crate) date: bool,
    pub(crate) number: bool,
    pub(crate) any: bool,
}

impl Infer {
    /// The type the cells seen so far suggest (`text` when none was seen).
    pub(crate) fn ty(&self) -> ColType {
        match self {
            Infer { any: false, .. } => ColType::Text,
            Infer { month: true, .. } => ColType::Month,
            Infer { date: true, .. } => ColType::Date,
            Infer { number: true, .. } => ColType::Number,
            _ => ColType::Text,
        }
    }
}

pub(crate) struct Builder {
    pub(crate) name: String,
    /// Whether the column's values are kept (see [`Columns`]).
    pub(crate) keep: bool,
    pub(crate) declared: Option<ColType>,
    pub(crate) infer: Infer,
    /// Declared columns hold typed cells; undeclared ones hold their texts
    /// (each distinct text once) until [`Loader::finish`] knows their type.
    values: Values,
}

pub(crate) struct Loader<'s> {
    spec: &'s CsvSpec,
    keep: &'s Columns,
    limits: &'s ReadLimits,
    pub(crate) columns: Vec<Builder>,
    /// Data rows read.
    pub(crate) rows: usize,
    /// The located problems found so far, in file order: a bad row or cell
    /// does not stop the read, so one run reports them all (up to
    /// [`MAX_ERRORS`]).
    errors: Vec<Diagnostic>,
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

impl<'s> Loader<'s> {
    pub(crate) fn new(spec: &'s CsvSpec, keep: &'s Columns, limits: &'s ReadLimits) -> Self {
        Loader {
            spec,
            keep,
            limits,
            columns: Vec::new(),
            rows: 0,
            errors: Vec::new(),
        }
    }

    /// Keep a row's or cell's problem and read on.
    fn push(&mut self, e: LoadError) {
        match e {
            LoadError::Csv(d) => self.errors.push(d),
            LoadError::Many(ds) => self.errors.extend(ds),
            LoadError::Story { .. } => {}
        }
    }

    /// Has the read found as many problems as it reports?
    pub(crate) fn full(&self) -> bool {
        self.errors.len() >= MAX_ERRORS
    }

    /// The problems found, as one error (`Ok` when there are none). At the
    /// cap, the last one says that the read stopped there.
    pub(crate) fn errors(&mut self) -> Result<(), LoadError> {
        let mut ds = std::mem::take(&mut self.errors);
        if ds.len() >= MAX_ERRORS {
            if let Some(last) = ds.last_mut() {
                let note = format!(
                    "reading `{}` stopped at {MAX_ERRORS} errors (the most one read reports); \
                     there may be more after this one",
                    self.spec.display_name
                );
                *last = last.clone().note(note);
            }
        }
        match ds.len() {
            0 => Ok(()),
            1 => Err(LoadError::Csv(ds.remove(0))),
            _ => Err(LoadError::Many(ds)),
        }
    }

    /// A problem that stops the read, after the ones found before it. A
    /// problem not located in the file (a limit) waits until those are
    /// fixed.
    pub(crate) fn fatal(&mut self, e: LoadError) -> LoadError {
        if self.errors.is_empty() {
            return e;
        }
        self.push(e);
        match self.errors() {
            Err(all) => all,
            Ok(()) => LoadError::Many(Vec::new()),
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
        let (text, span) = raw.excerpt(span);
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

    pub(crate) fn record(
        &mut self,
        index: usize,
        record: &csv::ByteRecord,
        raw: &RawRecord<'_>,
    ) -> Result<(), LoadError> {
        if index > 0 {
            self.check_rows(index)?;
        }
        if index == 0 {
            self.check_quotes(index, raw)?;
            return self.header(record, raw);
        }
        if let Err(e) = self.check_quotes(index, raw) {
            self.push(e);
            return Ok(());
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
            self.push(LoadError::Csv(d));
            return Ok(());
        }
        for (j, cell) in record.iter().enumerate() {
            let text = match std::str::from_utf8(cell) {
                Ok(t) => t,
                Err(_) => {
                    let name = &self.columns[j].name;
                    let e = LoadError::Csv(
                        self.located(
                            "bad-encoding",
                            format!("row {index}, column `{name}` is not valid UTF-8 text"),
                            raw,
                            field_span(raw.bytes, j),
                            "invalid UTF-8",
                        )
                        .help("save the data file as UTF-8"),
                    );
                    self.cell_error(j, e);
                    continue;
                }
            };
            let col = &self.columns[j];
            if !col.keep && col.declared.is_none() {
                continue;
            }
            if let Err(e) = self.check_text(index, j, text, raw) {
                self.cell_error(j, e);
                continue;
            }
            if self.spec.missing.iter().any(|m| m == text) {
                if self.columns[j].keep {
                    self.columns[j].values.push_cell(Cell::Missing);
                }
                continue;
            }
            let value = match self.columns[j].declared {
                Some(ty) => match parse_as(&self.spec.numbers, ty, text) {
                    Some(v) => v,
                    None => {
                        let e = self.bad_value(index, j, ty, text, raw);
                        self.cell_error(j, e);
                        continue;
                    }
                },
                None => {
                    let numbers = &self.spec.numbers;
                    let col = &mut self.columns[j];
                    let inf = &mut col.infer;
                    inf.any = true;
                    inf.month = inf.month && parse_month(text).is_some();
                    inf.date = inf.date && parse_date(text).is_some();
                    inf.number = inf.number && numbers.parse(text).is_some();
                    if col.keep {
                        col.values.push_cell(Cell::Text(text));
                    }
                    continue;
                }
            };
            let col = &mut self.columns[j];
            if col.keep {
                col.values.push(value);
            }
        }
        self.rows += 1;
        Ok(())
    }

    /// A cell's problem: kept, and the cell read as missing so the
    /// columns stay aligned while the read goes on.
    fn cell_error(&mut self, j: usize, e: LoadError) {
        self.push(e);
        if self.columns[j].keep {
            self.columns[j].values.push_cell(Cell::Missing);
        }
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
        if let Some((_, c)) = forbidden_char(text) {
            let field = field_span(raw.bytes, j);
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
            let field = field_span(raw.bytes, j);
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
        d = if text.trim() != text && parse_as(&self.spec.numbers, ty, text.trim()).is_some() {
            d.note("spaces are part of a CSV field, so the value is not read as trimmed")
                .help(format!(
                    "remove the spaces around `{}` in the data file",
                    show(text.trim())
                ))
        } else if let Some(style) = number_hint(&self.spec.numbers, ty, text) {
            // a real value: never suggest reading it as missing
            d.note(style.0).help(style.1)
        } else if !looks_missing(text) {
            // a value in another form ("eighty", "12a"): never suggest
            // reading it as missing
            d.help(format!(
                "correct the cell in the data file, or declare `{name}` as text"
            ))
        } else {
            d.help(format!(
                "declare `{name}` as text, or add `{}` to the missing-value tokens if it means no value",
                show(text)
            ))
        };
        LoadError::Csv(d)
    }

    fn header(&mut self, record: &csv::ByteRecord, raw: &RawRecord<'_>) -> Result<(), LoadError> {
        let mut names: Vec<String> = Vec::with_capacity(record.len());
        for (j, cell) in record.iter().enumerate() {
            // A diagnostic pointing at header field `j`.
            let at_field = |code: &'static str, message: String, label: &str| {
                self.located(code, message, raw, field_span(raw.bytes, j), label)
            };
            let Ok(name) = std::str::from_utf8(cell) else {
                let message = format!("header field {} is not valid UTF-8 text", j + 1);
                let d = at_field("bad-encoding", message, "invalid UTF-8");
                return Err(LoadError::Csv(d.help("save the data file as UTF-8")));
            };
            if let Some((_, c)) = forbidden_char(name) {
                let message = format!(
                    "header field {} holds the control character U+{:04X}",
                    j + 1,
                    c as u32
                );
                let d = at_field("bad-character", message, "this column name");
                return Err(LoadError::Csv(d.note(CHAR_NOTE).help(CHAR_HELP)));
            }
            if name.is_empty() {
                let message = format!("header field {} has no name", j + 1);
                let d = at_field("bad-header", message, "empty column name");
                return Err(LoadError::Csv(
                    d.help("give every column a name in the first line of the file"),
                ));
            }
            if let Some(first) = names.iter().position(|n| n == name) {
                let message = format!("column `{name}` appears twice in the header");
                let d = at_field("bad-header", message, "second column with this name");
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

    pub(crate) fn finish(self) -> Result<Table, LoadError> {
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
        let numbers = self.spec.numbers;
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
                    b.values.map_texts(|s| parse_as(&numbers, ty, s))
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

/// For a number cell written with groups or a decimal comma: a note on
/// how the file is read and a help naming the data item's options that
/// read it (`thousands ","`). `None` for a cell no such option reads.
pub(crate) fn number_hint(
    style: &crate::digits::NumberStyle,
    ty: ColType,
    text: &str,
) -> Option<(String, String)> {
    if ty != ColType::Number {
        return None;
    }
    if !style.is_plain() {
        let groups = match style.thousands {
            Some(' ') => "grouped with spaces".to_owned(),
            Some(t) => format!("grouped with `{t}`"),
            None => "without groups".to_owned(),
        };
        let written = text.trim().chars().any(|c| c.is_ascii_digit())
            && crate::digits::GROUPING.iter().any(|&g| text.contains(g));
        return written.then(|| {
            (
                format!(
                    "the data item reads numbers {groups} and with a decimal `{}`; digits after \
                     a group separator come in groups of three",
                    style.decimal
                ),
                "correct the cell in the data file, or change the data item's `thousands` and \
                 `decimal` options"
                    .to_owned(),
            )
        });
    }
    let options = crate::digits::suggest(text)?;
    Some((
        "numbers are read with a decimal point and no group separators unless the data item \
         says otherwise"
            .to_owned(),
        format!("name how the file writes numbers on the data item: `{options}`"),
    ))
}

/// Whether a cell reads as a placeholder for "no value" (`n.a.`, `-`,
/// `null`, `?`): only then does the help suggest the missing-value tokens.
fn looks_missing(text: &str) -> bool {
    let t: String = text
        .trim()
        .chars()
        .filter(|c| c.is_alphanumeric())
        .collect::<String>()
        .to_lowercase();
    matches!(
        t.as_str(),
        "" | "na" | "nan" | "null" | "nil" | "none" | "missing" | "unknown" | "nd" | "x"
    )
}

/// Whether `text` is a number written with thousands separators (`1,050`,
/// `1.050,5`, `12 345`): digits in groups of three after a separator.
pub(crate) fn grouped_number(ty: ColType, text: &str) -> bool {
    if ty != ColType::Number {
        return false;
    }
    let t = text.trim().trim_start_matches(['-', '+']);
    [',', '.', ' ', '\'', '\u{a0}', '\u{202f}']
        .iter()
        .any(|&sep| {
            let int = match sep {
                ',' => t.split('.').next().unwrap_or(""),
                '.' => t.split(',').next().unwrap_or(""),
                _ => t.split(['.', ',']).next().unwrap_or(""),
            };
            let groups: Vec<&str> = int.split(sep).collect();
            groups.len() > 1
                && (1..=3).contains(&groups[0].len())
                && groups.iter().all(|g| g.chars().all(|c| c.is_ascii_digit()))
                && groups[1..].iter().all(|g| g.len() == 3)
        })
}

#[cfg(test)]
mod tests {
    #[test]
    fn grouped_numbers_are_recognised() {
        use crate::ColType::{Number, Text};
        for (t, want) in [
            ("1,050", true),
            ("12,345,678.5", true),
            ("1.050,5", true),
            ("12 345", true),
            ("-4,625", true),
            ("1,05", false),
            ("10,50,000", false),
            ("n/a", false),
            ("1050x", false),
        ] {
            assert_eq!(super::grouped_number(Number, t), want, "{t}");
        }
        assert!(!super::grouped_number(Text, "1,050"));
    }

    use super::*;

    #[test]
    fn show_escapes_and_cuts() {
        assert_eq!(show("a\nb"), "a\\nb");
        assert_eq!(show(&"x".repeat(50)).chars().count(), 41);
    }
}
