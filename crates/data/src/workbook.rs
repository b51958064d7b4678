//! Spreadsheet workbooks (`.xlsx`, Office Open XML; `.ods`, OpenDocument)
//! read with the `calamine` crate into a [`Table`].
//!
//! A sheet (the first unless one is named) is read from its used cells, or
//! from a block named in A1 style (`B3:F200`); the block's first row is the
//! header. Cells keep their type: numbers, text, booleans and dates. A
//! formula cell is read as the value the workbook stored when it was last
//! saved (the cached result; nothing is recalculated). Rows whose cells are
//! all empty are skipped, as blank lines of a CSV file are. Columns then
//! get their types as in [`crate::typed`].
//!
//! # Dates
//!
//! An Office Open XML workbook stores a date as a serial number of days
//! (ECMA-376 Part 1, 18.17.4.1, "date base" 1900 or 1904; ISO/IEC 29500):
//! in the 1900 system serial 1 is 1900-01-01 and the year 1900 is counted
//! as a leap year, so serial 60 is the day 1900-02-29 that never was and
//! serial 61 is 1900-03-01; in the 1904 system serial 0 is 1904-01-01. A
//! date with a time of day reads as its day. The serial 60 and a time of
//! day without a date are located errors. OpenDocument stores dates as ISO
//! 8601 text.
//!
//! # Errors
//!
//! Each names the workbook, the sheet and the cell in A1 style: an
//! encrypted or damaged file, a missing sheet (with the nearest name), a
//! blank or repeated header cell (a merged header cell leaves all but its
//! first cell blank), a spreadsheet error value (`#DIV/0!`), a cell that
//! does not fit its declared type.

#![allow(clippy::result_large_err)]

use std::fs::File;
use std::io::{BufReader, Read, Seek};

use calamine::{Data, Ods, Range, Reader, Xlsx};
use crescendo_diag::closest;

use crate::load::{Columns, CsvSpec, LoadError, ReadLimits, MAX_ERRORS};
use crate::model::Table;
use crate::time::days_from_civil;
use crate::typed::{finish_after, Typed, TypedColumn};

/// Which sheet and block of a workbook to read.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct SheetSpec {
    /// `sheet "NAME"`; the first sheet when `None`.
    pub sheet: Option<String>,
    /// `cells "B3:F200"`; the used cells when `None`.
    pub cells: Option<String>,
}

/// The file formats read here, by file name.
pub fn is_workbook(path: &std::path::Path) -> bool {
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase);
    matches!(ext.as_deref(), Some("xlsx" | "xlsm" | "ods"))
}

/// Column letters of a 0-based column: 0 → `A`, 26 → `AA`.
pub fn column_name(mut c: u32) -> String {
    let mut out = Vec::new();
    loop {
        out.push(b'A' + (c % 26) as u8);
        if c < 26 {
            break;
        }
        c = c / 26 - 1;
    }
    out.reverse();
    String::from_utf8(out).unwrap_or_default()
}

/// A1 name of a 0-based `(row, column)`.
pub fn cell_name((row, col): (u32, u32)) -> String {
    format!("{}{}", column_name(col), u64::from(row) + 1)
}

/// Parse one A1 cell name (`B3`) into a 0-based `(row, column)`.
fn parse_cell(s: &str) -> Option<(u32, u32)> {
    let letters = s.bytes().take_while(u8::is_ascii_alphabetic).count();
    let (col, row) = s.split_at(letters);
    if letters == 0 || letters > 3 || row.is_empty() || !row.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    let mut c: u32 = 0;
    for b in col.bytes() {
        c = c * 26 + u32::from(b.to_ascii_uppercase() - b'A') + 1;
    }
    let r: u32 = row.parse().ok()?;
    ((1..=1_048_576).contains(&r) && c <= 16_384).then(|| (r - 1, c - 1))
}

/// Parse a block `B3:F200` into its corners.
pub fn parse_block(s: &str) -> Option<((u32, u32), (u32, u32))> {
    let (a, b) = s.split_once(':')?;
    let (a, b) = (parse_cell(a.trim())?, parse_cell(b.trim())?);
    (a.0 <= b.0 && a.1 <= b.1).then_some((a, b))
}

/// The day of a workbook date serial (see the module docs): `Err` with
/// the reason when it is not a day.
fn day_of(dt: &calamine::ExcelDateTime) -> Result<i32, &'static str> {
    let (y, m, d, ..) = dt.to_ymd_hms_milli();
    if dt.as_f64() < 0.0 {
        return Err("a negative date serial");
    }
    match (y, m, d) {
        (1900, 2, 29) => Err("1900-02-29, a day that never was (the 1900 date system counts it)"),
        // serial 0 of the 1900 system ("1900-01-00"): a time of day alone
        (..=1899, _, _) | (_, _, 0) | (_, 0, _) => Err("a time of day without a date"),
        _ => Ok(days_from_civil(i32::from(y), u32::from(m), u32::from(d))),
    }
}

/// Read a sheet of a workbook already opened (and checked) for
/// `spec.path`.
pub fn load_workbook(
    spec: &CsvSpec,
    file: &File,
    sheet: &SheetSpec,
    columns: &Columns,
    limits: &ReadLimits,
) -> Result<Table, LoadError> {
    let name = &spec.display_name;
    let ods = spec
        .path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("ods"));
    let reader = BufReader::new(file);
    let (sheet_name, range) = if ods {
        open::<_, Ods<_>>(name, reader, sheet, |e| {
            matches!(e, calamine::OdsError::Password)
        })
    } else {
        open::<_, Xlsx<_>>(name, reader, sheet, |e| {
            matches!(e, calamine::XlsxError::Password)
        })
    }?;
    read_range(spec, &sheet_name, &range, sheet, columns, limits)
}

/// Open a workbook of format `R` and pick its sheet; `locked` tells the
/// opening errors that mean the workbook is protected with a password.
fn open<RS: Read + Seek, R: Reader<RS>>(
    name: &str,
    reader: RS,
    sheet: &SheetSpec,
    locked: fn(&R::Error) -> bool,
) -> Result<(String, Range<Data>), LoadError>
where
    R::Error: std::fmt::Display,
{
    let mut book = R::new(reader).map_err(|e| open_error(name, &e.to_string(), locked(&e)))?;
    pick(name, &mut book, sheet)
}

fn open_error(name: &str, why: &str, password: bool) -> LoadError {
    if password {
        return LoadError::story(
            "data-file",
            format!("workbook `{name}` is encrypted (protected with a password)"),
            Some("save a copy without a password, or export the sheet as CSV"),
        );
    }
    LoadError::story(
        "data-file",
        format!(
            "cannot read workbook `{name}`: it is damaged, cut short or not a workbook ({why})"
        ),
        Some("open it in a spreadsheet program and save it again, or export the sheet as CSV"),
    )
}

/// The sheet to read and its cells.
fn pick<RS: Read + Seek, R: Reader<RS>>(
    name: &str,
    book: &mut R,
    sheet: &SheetSpec,
) -> Result<(String, Range<Data>), LoadError>
where
    R::Error: std::fmt::Display,
{
    let names = book.sheet_names();
    let wanted = match &sheet.sheet {
        Some(s) => s.clone(),
        None => match names.first() {
            Some(first) => first.clone(),
            None => {
                return Err(LoadError::story(
                    "empty-data",
                    format!("workbook `{name}` has no sheet"),
                    None,
                ))
            }
        },
    };
    if !names.contains(&wanted) {
        let list: Vec<String> = names.iter().map(|n| format!("`{n}`")).collect();
        let help = closest(&wanted, names.iter().map(String::as_str))
            .map(|c| format!("did you mean `{c}`?"));
        return Err(LoadError::Story {
            code: "unknown-sheet",
            message: format!(
                "workbook `{name}` has no sheet named `{wanted}` (sheets: {})",
                list.join(", ")
            ),
            help,
            declared: None,
        });
    }
    match book.worksheet_range(&wanted) {
        Ok(r) => Ok((wanted, r)),
        Err(e) => Err(LoadError::story(
            "data-file",
            format!("cannot read sheet `{wanted}` of workbook `{name}`: it is damaged or cut short ({e})"),
            Some("open it in a spreadsheet program and save it again, or export the sheet as CSV"),
        )),
    }
}

/// A typed cell, or why it cannot be one.
fn typed(cell: Option<&Data>) -> Result<Typed, String> {
    Ok(match cell {
        None | Some(Data::Empty) => Typed::Missing,
        Some(Data::Int(i)) => Typed::Number(*i as f64),
        Some(Data::Float(x)) => Typed::Number(*x),
        Some(Data::String(s)) => Typed::Text(s.clone()),
        Some(Data::Bool(b)) => Typed::Bool(*b),
        Some(Data::DateTime(dt)) if dt.is_duration() => Typed::Number(dt.as_f64()),
        Some(Data::DateTime(dt)) => Typed::Date(day_of(dt).map_err(str::to_owned)?),
        Some(Data::DateTimeIso(s)) => match s.get(..10).and_then(crate::time::parse_date) {
            Some(d) => Typed::Date(d),
            None => Typed::Text(s.clone()),
        },
        Some(Data::DurationIso(s)) => Typed::Text(s.clone()),
        Some(Data::Error(e)) => return Err(format!("the spreadsheet error {e}")),
    })
}

fn read_range(
    spec: &CsvSpec,
    sheet_name: &str,
    range: &Range<Data>,
    sheet: &SheetSpec,
    columns: &Columns,
    limits: &ReadLimits,
) -> Result<Table, LoadError> {
    let name = &spec.display_name;
    let at = |pos: (u32, u32)| format!("sheet `{sheet_name}` of `{name}`, cell {}", cell_name(pos));
    let block = match &sheet.cells {
        Some(c) => match parse_block(c) {
            Some(b) => Some(b),
            None => {
                return Err(LoadError::story(
                    "bad-cells",
                    format!("`{c}` is not a block of cells"),
                    Some("write its corners in A1 style, top left first, e.g. `B3:F200`"),
                ))
            }
        },
        None => range.start().zip(range.end()),
    };
    let Some(((r0, c0), (r1, c1))) = block else {
        return Err(LoadError::story(
            "empty-data",
            format!("sheet `{sheet_name}` of workbook `{name}` is empty"),
            None,
        ));
    };
    // the header: every column named, each name once
    let mut cols: Vec<TypedColumn> = Vec::new();
    let mut positions: Vec<u32> = Vec::new();
    for c in c0..=c1 {
        let title = match range.get_value((r0, c)) {
            None | Some(Data::Empty) => None,
            Some(d) => typed(Some(d))
                .ok()
                .map(|t| t.text())
                .filter(|t| !t.trim().is_empty()),
        };
        let Some(title) = title else {
            let below_empty =
                (r0 + 1..=r1).all(|r| matches!(range.get_value((r, c)), None | Some(Data::Empty)));
            if below_empty && sheet.cells.is_none() {
                continue; // an empty column at the edge of the used cells
            }
            return Err(LoadError::story(
                "bad-header",
                format!("{}: the header cell is blank", at((r0, c))),
                Some("give every column a name in the header row; a merged header cell leaves all but its first cell blank, so unmerge it"),
            ));
        };
        if let Some(k) = cols.iter().position(|p| p.name == title) {
            return Err(LoadError::story(
                "bad-header",
                format!(
                    "{}: the column name `{title}` is already the name of cell {}",
                    at((r0, c)),
                    cell_name((r0, positions[k]))
                ),
                Some("rename one of the columns so every header name is unique"),
            ));
        }
        cols.push(TypedColumn {
            keep: columns.keeps(&title) || spec.declared.iter().any(|(n, _)| *n == title),
            name: title,
            cells: Vec::new(),
        });
        positions.push(c);
    }
    if cols.is_empty() {
        return Err(LoadError::story(
            "empty-data",
            format!("sheet `{sheet_name}` of workbook `{name}` has no header"),
            Some("the first row of the block must name the columns"),
        ));
    }
    let mut rows: Vec<u32> = Vec::new();
    let mut errs: Vec<LoadError> = Vec::new();
    for r in r0 + 1..=r1 {
        if errs.len() >= MAX_ERRORS {
            break;
        }
        if (c0..=c1).all(|c| matches!(range.get_value((r, c)), None | Some(Data::Empty))) {
            continue;
        }
        if limits.rows.is_some_and(|max| rows.len() >= max) {
            return Err(LoadError::story(
                "too-many-rows",
                format!(
                    "sheet `{sheet_name}` of `{name}` has more than {} rows",
                    rows.len()
                ),
                Some("raise `--max-rows`, or read a block of the sheet with `cells`"),
            ));
        }
        for (col, &c) in cols.iter_mut().zip(&positions) {
            if !col.keep {
                continue;
            }
            // every bad cell is reported (up to the cap), as in a CSV file
            let cell = match typed(range.get_value((r, c))) {
                Ok(Typed::Text(s)) if s.chars().count() > limits.text => {
                    errs.push(LoadError::story(
                        "too-long",
                        format!(
                            "{}: the text is longer than {} characters",
                            at((r, c)),
                            limits.text
                        ),
                        Some("raise `--max-text`"),
                    ));
                    Typed::Missing
                }
                Ok(cell) => cell,
                Err(why) => {
                    errs.push(LoadError::story(
                        "bad-value",
                        format!("{} holds {why}", at((r, c))),
                        Some("correct the cell in the workbook, or clear it to leave the value missing"),
                    ));
                    Typed::Missing
                }
            };
            col.cells.push(cell);
        }
        rows.push(r);
    }
    let locate = |j: usize, i: usize| {
        at((
            rows.get(i).copied().unwrap_or(r0),
            positions.get(j).copied().unwrap_or(c0),
        ))
    };
    finish_after(spec, cols, rows.len(), &locate, errs)
}

#[cfg(test)]
mod tests {
    use super::*;
    use calamine::{ExcelDateTime, ExcelDateTimeType};

    fn serial(x: f64, is_1904: bool) -> Result<String, &'static str> {
        day_of(&ExcelDateTime::new(x, ExcelDateTimeType::DateTime, is_1904))
            .map(crate::time::date_iso)
    }

    #[test]
    fn serial_dates_follow_the_two_date_systems_of_ecma_376() {
        // ECMA-376 Part 1, 18.17.4.1 (from memory of the standard's text;
        // the differences were recomputed with Python's `datetime`): in the
        // 1900 system serial 1 is 1900-01-01, 59 is 1900-02-28, 60 the
        // nonexistent 1900-02-29, 61 is 1900-03-01 (day 1899-12-30 + 61);
        // 2006-02-28 is 38776. In the 1904 system serial 0 is 1904-01-01
        // and 2006-02-28 is 37314 (the two systems are 1462 days apart).
        assert_eq!(serial(1.0, false).as_deref(), Ok("1900-01-01"));
        assert_eq!(serial(59.0, false).as_deref(), Ok("1900-02-28"));
        assert!(serial(60.0, false).is_err());
        assert_eq!(serial(61.0, false).as_deref(), Ok("1900-03-01"));
        assert_eq!(serial(38776.0, false).as_deref(), Ok("2006-02-28"));
        assert_eq!(serial(38776.75, false).as_deref(), Ok("2006-02-28"));
        assert_eq!(serial(0.0, true).as_deref(), Ok("1904-01-01"));
        assert_eq!(serial(37314.0, true).as_deref(), Ok("2006-02-28"));
        assert_eq!(serial(1.0, true).as_deref(), Ok("1904-01-02"));
        assert!(serial(0.5, false).is_err());
    }

    #[test]
    fn serials_as_the_writing_library_stored_them() {
        // tests/formats/expected-serials.csv: the serial openpyxl (the
        // library that wrote the fixtures) stored for each date, in the
        // 1900 and the 1904 system (made by tests/formats/make_fixtures.py)
        let table = include_str!("../../../tests/formats/expected-serials.csv");
        let mut checked = 0;
        for line in table.lines().skip(1) {
            let f: Vec<&str> = line.split(',').collect();
            let s1900: f64 = f[1].parse().unwrap();
            assert_eq!(serial(s1900, false).as_deref(), Ok(f[0]), "{line}");
            if let Ok(s1904) = f[2].parse::<f64>() {
                assert_eq!(serial(s1904, true).as_deref(), Ok(f[0]), "{line}");
            }
            checked += 1;
        }
        assert_eq!(checked, 8);
    }

    #[test]
    fn a1_names() {
        assert_eq!(column_name(0), "A");
        assert_eq!(column_name(25), "Z");
        assert_eq!(column_name(26), "AA");
        assert_eq!(column_name(701), "ZZ");
        assert_eq!(column_name(702), "AAA");
        assert_eq!(cell_name((6, 1)), "B7");
        assert_eq!(parse_block("B3:F200"), Some(((2, 1), (199, 5))));
        assert_eq!(parse_block("aa1:ab2"), Some(((0, 26), (1, 27))));
        assert_eq!(parse_block("F3:B200"), None);
        assert_eq!(parse_block("B0:C2"), None);
        assert_eq!(parse_block("B3"), None);
    }
}
