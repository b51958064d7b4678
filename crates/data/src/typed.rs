//! Columns of typed cells (from a workbook or a Parquet file) into a
//! [`Table`], with the same column types a CSV file of the same rows gets.
//!
//! A column of text cells is inferred as a CSV column is (month, date,
//! number, else text), so a month written as `2024-03` in a workbook is a
//! month as in the CSV. A column whose cells are all numbers is a number
//! column, all dates a date column; a mix is text, each cell written as a
//! CSV cell would be (`12`, `0.5`, `2024-03-01`, `true`). A declared type
//! converts each cell or names the one that does not fit.

// `LoadError` is the crate's error type for every read (see `load.rs`).
#![allow(clippy::result_large_err)]

use crescendo_diag::closest;

use crate::digits::NumberStyle;
use crate::flat::{flat_column, Flat};
use crate::load::{parse_as, CsvSpec, LoadError, MAX_ERRORS};
use crate::model::{ColType, Column, Table, Value, Values};
use crate::time::{date_iso, month_of_day, parse_date, parse_month};

/// One cell as the file typed it.
#[derive(Clone, Debug, PartialEq)]
pub enum Typed {
    Missing,
    Number(f64),
    Text(String),
    /// Days since 1970-01-01.
    Date(i32),
    Bool(bool),
}

impl Typed {
    /// The cell as a CSV file would hold it.
    pub fn text(&self) -> String {
        match self {
            Typed::Missing => String::new(),
            Typed::Number(x) => format!("{x}"),
            Typed::Text(s) => s.clone(),
            Typed::Date(d) => date_iso(*d),
            Typed::Bool(b) => b.to_string(),
        }
    }
}

/// One column: its header name and cells (empty when not kept).
pub struct TypedColumn {
    pub name: String,
    pub keep: bool,
    pub cells: Vec<Typed>,
}

/// Where cell `(column, row)` is, for messages (`sheet "Ledger", cell B7`).
pub type Locate<'a> = &'a dyn Fn(usize, usize) -> String;

fn located(code: &'static str, message: String, help: Option<String>) -> LoadError {
    LoadError::Story {
        code,
        message,
        help,
        declared: None,
    }
}

/// Check the declared columns are present, then type every kept or
/// declared column; `rows` is the number of data rows.
pub fn finish(
    spec: &CsvSpec,
    columns: Vec<TypedColumn>,
    rows: usize,
    locate: Locate<'_>,
) -> Result<Table, LoadError> {
    finish_after(spec, columns, rows, locate, Vec::new())
}

/// [`finish`] after the cell problems found while reading (`earlier`):
/// every problem is reported at once, up to [`MAX_ERRORS`] ([`all_of`]).
pub fn finish_after(
    spec: &CsvSpec,
    columns: Vec<TypedColumn>,
    rows: usize,
    locate: Locate<'_>,
    mut errs: Vec<LoadError>,
) -> Result<Table, LoadError> {
    check(spec, &columns, rows)?;
    let mut out = Vec::with_capacity(columns.len());
    for (j, c) in columns.into_iter().enumerate() {
        out.push(typed_column(spec, (j, c), rows, locate, &mut errs));
    }
    if !errs.is_empty() {
        return Err(all_of(errs, &spec.display_name));
    }
    Ok(Table { columns: out })
}

/// [`finish`] of columns some of which were read flat (`flats[j]` for
/// column `j`, see [`crate::flat`]): the same table, or the same errors.
pub(crate) fn finish_flat(
    spec: &CsvSpec,
    columns: Vec<TypedColumn>,
    flats: Vec<Option<Flat>>,
    rows: usize,
    locate: Locate<'_>,
) -> Result<Table, LoadError> {
    check(spec, &columns, rows)?;
    let mut errs = Vec::new();
    let mut out = Vec::with_capacity(columns.len());
    for (j, (mut c, flat)) in columns.into_iter().zip(flats).enumerate() {
        if let Some(flat) = flat {
            match flat_column(spec, (&c.name, c.keep), flat) {
                Ok(column) => {
                    out.push(column);
                    continue;
                }
                Err(flat) => c.cells = flat.typed(),
            }
        }
        out.push(typed_column(spec, (j, c), rows, locate, &mut errs));
    }
    if !errs.is_empty() {
        return Err(all_of(errs, &spec.display_name));
    }
    Ok(Table { columns: out })
}

/// The declared columns are present and there are rows.
fn check(spec: &CsvSpec, columns: &[TypedColumn], rows: usize) -> Result<(), LoadError> {
    let names: Vec<&str> = columns.iter().map(|c| c.name.as_str()).collect();
    for (i, (want, _)) in spec.declared.iter().enumerate() {
        if !names.contains(&want.as_str()) {
            let list: Vec<String> = names.iter().map(|n| format!("`{n}`")).collect();
            return Err(LoadError::Story {
                code: "unknown-column",
                message: format!(
                    "column `{want}` is not in the header of `{}` (columns: {})",
                    spec.display_name,
                    list.join(", ")
                ),
                help: closest(want, names.iter().copied()).map(|c| format!("did you mean `{c}`?")),
                declared: Some(i),
            });
        }
    }
    if rows == 0 {
        return Err(located(
            "empty-data",
            format!(
                "data file `{}` has a header but no data rows",
                spec.display_name
            ),
            None,
        ));
    }
    Ok(())
}

/// Column `j` typed; the cells that do not convert are added to `errs`
/// (up to [`MAX_ERRORS`]).
fn typed_column(
    spec: &CsvSpec,
    (j, c): (usize, TypedColumn),
    rows: usize,
    locate: Locate<'_>,
    errs: &mut Vec<LoadError>,
) -> Column {
    let declared = spec
        .declared
        .iter()
        .find(|(n, _)| *n == c.name)
        .map(|(_, t)| *t);
    if !c.keep && declared.is_none() {
        return Column {
            name: c.name,
            ty: ColType::Text,
            values: Values::missing(rows),
        };
    }
    let cells: Vec<Typed> = c
        .cells
        .into_iter()
        .map(|t| match t {
            Typed::Text(s) if spec.missing.contains(&s) => Typed::Missing,
            t => t,
        })
        .collect();
    let ty = match declared {
        Some(t) => t,
        None => infer(&cells, &spec.numbers),
    };
    let mut values = Vec::with_capacity(rows);
    for (r, cell) in cells.iter().enumerate() {
        match convert(cell, ty, &spec.numbers) {
            Some(v) => values.push(v),
            None => {
                let what = match cell {
                    Typed::Text(s) => format!("the text `{s}`"),
                    Typed::Number(x) => format!("the number {x}"),
                    Typed::Date(d) => format!("the date {}", date_iso(*d)),
                    Typed::Bool(b) => format!("`{b}`"),
                    Typed::Missing => "nothing".to_string(),
                };
                values.push(Value::Missing);
                if errs.len() >= MAX_ERRORS {
                    continue;
                }
                errs.push(located(
                    "bad-value",
                    format!(
                        "column `{}` is declared {}, but {} holds {what}",
                        c.name,
                        ty.name(),
                        locate(j, r)
                    ),
                    Some(match cell {
                        // a real value: never suggest reading it as missing
                        Typed::Text(s) if ty == ColType::Number && crate::digits::suggest(s).is_some() => format!(
                            "name how the file writes its numbers on the data item: `{}`",
                            crate::digits::suggest(s).unwrap_or_default()
                        ),
                        _ => format!(
                            "correct that cell, declare `{}` as text, or add its text to the missing-value tokens if it means no value",
                            c.name
                        ),
                    }),
                ));
            }
        }
    }
    Column {
        name: c.name,
        ty,
        values: if c.keep {
            values.into_iter().collect()
        } else {
            Values::missing(rows)
        },
    }
}

/// Problems of one read as one error: the one, or all of them (each with
/// its help) as [`LoadError::Many`]; at [`MAX_ERRORS`], the last says the
/// read stopped there.
pub fn all_of(mut errs: Vec<LoadError>, name: &str) -> LoadError {
    if errs.len() == 1 {
        return errs.remove(0);
    }
    let full = errs.len() >= MAX_ERRORS;
    let mut ds: Vec<crescendo_diag::Diagnostic> = errs
        .into_iter()
        .take(MAX_ERRORS)
        .flat_map(|e| match e {
            LoadError::Story {
                code,
                message,
                help,
                ..
            } => {
                let mut d = crescendo_diag::Diagnostic::error(code, message);
                d.help = help;
                vec![d]
            }
            LoadError::Csv(d) => vec![d],
            LoadError::Many(ds) => ds,
        })
        .collect();
    if let (true, Some(last)) = (full, ds.last_mut()) {
        *last = last.clone().note(format!(
            "reading `{name}` stopped at {MAX_ERRORS} errors (the most one read reports); \
             there may be more after this one"
        ));
    }
    LoadError::Many(ds)
}

/// The type of an undeclared column (see the module docs).
fn infer(cells: &[Typed], numbers: &NumberStyle) -> ColType {
    let present = || cells.iter().filter(|c| **c != Typed::Missing);
    if present().next().is_none() {
        return ColType::Text;
    }
    if present().all(|c| matches!(c, Typed::Number(_))) {
        return ColType::Number;
    }
    if present().all(|c| matches!(c, Typed::Date(_))) {
        return ColType::Date;
    }
    if !present().all(|c| matches!(c, Typed::Text(_))) {
        return ColType::Text;
    }
    let texts = || present().map(|c| c.text());
    if texts().all(|s| parse_month(&s).is_some()) {
        ColType::Month
    } else if texts().all(|s| parse_date(&s).is_some()) {
        ColType::Date
    } else if texts().all(|s| numbers.parse(&s).is_some()) {
        ColType::Number
    } else {
        ColType::Text
    }
}

/// A cell as a value of type `ty`; `None` when it is not one.
fn convert(cell: &Typed, ty: ColType, numbers: &NumberStyle) -> Option<Value> {
    Some(match (cell, ty) {
        (Typed::Missing, _) => Value::Missing,
        (Typed::Text(s), _) => return parse_as(numbers, ty, s),
        (c, ColType::Text) => Value::Text(c.text()),
        (Typed::Number(x), ColType::Number) => Value::Number(*x),
        (Typed::Number(x), ColType::Year) if x.fract() == 0.0 && (0.0..=9999.0).contains(x) => {
            Value::Year(*x as i32)
        }
        (Typed::Date(d), ColType::Date) => Value::Date(*d),
        (Typed::Date(d), ColType::Month) => Value::Month(month_of_day(*d)),
        _ => return None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec(declared: Vec<(String, ColType)>) -> CsvSpec {
        CsvSpec {
            path: "book.xlsx".into(),
            display_name: "book.xlsx".into(),
            declared,
            missing: vec![String::new(), "NA".into()],
            numbers: Default::default(),
        }
    }

    fn col(name: &str, cells: Vec<Typed>) -> TypedColumn {
        TypedColumn {
            name: name.into(),
            keep: true,
            cells,
        }
    }

    #[test]
    fn inference_matches_the_csv_rules() {
        let t = finish(
            &spec(vec![]),
            vec![
                col("m", vec![Typed::Text("2024-01".into()), Typed::Missing]),
                col("d", vec![Typed::Date(0), Typed::Date(1)]),
                col("n", vec![Typed::Number(1.5), Typed::Text("NA".into())]),
                col("mixed", vec![Typed::Number(12.0), Typed::Text("x".into())]),
            ],
            2,
            &|c, r| format!("{c}:{r}"),
        )
        .unwrap();
        let types: Vec<ColType> = t.columns.iter().map(|c| c.ty).collect();
        assert_eq!(
            types,
            [
                ColType::Month,
                ColType::Date,
                ColType::Number,
                ColType::Text
            ]
        );
        assert_eq!(t.columns[3].values.value(0), Value::Text("12".into()));
        assert_eq!(t.columns[2].values.value(1), Value::Missing);
    }

    #[test]
    fn a_declared_type_names_the_cell_that_does_not_fit() {
        let e = finish(
            &spec(vec![("day".into(), ColType::Date)]),
            vec![col("day", vec![Typed::Date(3), Typed::Text("soon".into())])],
            2,
            &|_, r| format!("sheet `S`, cell A{}", r + 2),
        )
        .unwrap_err();
        let msg = e.to_string();
        assert!(msg.contains("cell A3") && msg.contains("`soon`"), "{msg}");
        // a date read as its month, a whole number as a year
        let t = finish(
            &spec(vec![
                ("m".into(), ColType::Month),
                ("y".into(), ColType::Year),
            ]),
            vec![
                col("m", vec![Typed::Date(31)]),
                col("y", vec![Typed::Number(2024.0)]),
            ],
            1,
            &|_, _| String::new(),
        )
        .unwrap();
        assert_eq!(t.columns[0].values.value(0), Value::Month(1970 * 12 + 1));
        assert_eq!(t.columns[1].values.value(0), Value::Year(2024));
    }
}
