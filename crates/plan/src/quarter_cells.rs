//! `year_quarter(YEAR, QUARTER)` over cells that make no quarter (a
//! quarter of 5 or `Q5`, a year of 2024.5) would give a missing time,
//! silently: the row would drop off the chart. Each such row is a located
//! error (`bad-value`, as a bad cell of a data file) naming the row, the
//! column and the cell, all at once up to the cap of one read
//! ([`crescendo_data::load::MAX_ERRORS`]). A missing cell stays missing.
//!
//! Checked on the rows reaching the step, in `views/`: an `add` never
//! streams (a streamed file's prefix is `keep`s and one `by`), so a loaded
//! and a streamed file are both checked here. A view whose `add` runs in
//! the database is not checked yet (the query gives a missing time).

use std::sync::Arc;

use crescendo_data::bucket::BadQuarter;
use crescendo_data::load::MAX_ERRORS;
use crescendo_data::{Expr, Step, Table, Value};
use crescendo_diag::{Diagnostic, Source};
use crescendo_lang::ast;

/// The arguments of a step that adds `year_quarter(...)`.
pub(crate) fn args(step: &Step) -> Option<(&Expr, &Expr)> {
    match step {
        Step::Derive {
            expr: Expr::YearQuarter(y, q),
            ..
        } => Some((y, q)),
        _ => None,
    }
}

/// The errors for `step` (an `add` of `year_quarter`) over `table`, the
/// rows reaching it; `rows_of` names them: the data item's name when they
/// are its rows as read, else `None` (rows reaching the step).
pub(crate) fn check(
    src: &Arc<Source>,
    step_ast: &ast::StepAst,
    step: &Step,
    table: &Table,
    rows_of: Option<&str>,
) -> Vec<Diagnostic> {
    let Some((y, q)) = args(step) else {
        return Vec::new();
    };
    let bad = crescendo_data::bad_quarters(table, (y, q), MAX_ERRORS);
    let name = |e: &Expr| match e {
        Expr::Col(i) => table.columns.get(*i).map(|c| c.name.clone()),
        _ => None,
    };
    let names = (name(y), name(q));
    diagnostics(src, step_ast, &bad, (&names.0, &names.1), rows_of)
}

/// The located errors for the rows in `bad`; `columns` are the year's and
/// the quarter's column names (when the arguments are columns).
pub(crate) fn diagnostics(
    src: &Arc<Source>,
    step_ast: &ast::StepAst,
    bad: &[BadQuarter],
    columns: (&Option<String>, &Option<String>),
    rows_of: Option<&str>,
) -> Vec<Diagnostic> {
    let ast::StepAst::Add { expr, .. } = step_ast else {
        return Vec::new();
    };
    let mut out: Vec<Diagnostic> = bad
        .iter()
        .map(|b| {
            let row = match rows_of {
                Some(item) => format!("row {} of `{item}`", b.row + 1),
                None => format!("row {} reaching this step", b.row + 1),
            };
            let (column, what, takes) = if b.year {
                (columns.0, "year", "a year or a whole number from 1 to 9999")
            } else {
                (columns.1, "quarter", "1 to 4, or `Q1` to `Q4`")
            };
            let cell = match column {
                Some(c) => format!("column `{c}`"),
                None => format!("the {what}"),
            };
            Diagnostic::error(
                "bad-value",
                format!(
                    "{row}, {cell}: {} is not a {what} ({takes})",
                    shown(&b.cell)
                ),
            )
            .at(src, expr.span(), format!("no {what} in {row}"))
            .help(format!(
                "correct the data, or leave such rows out with `keep` before this step; \
                 a {what} must be {takes}"
            ))
        })
        .collect();
    if out.len() >= MAX_ERRORS {
        if let Some(last) = out.last_mut() {
            *last = last.clone().note(format!(
                "the check stopped at {MAX_ERRORS} errors (the most one read reports); \
                 there may be more after this one"
            ));
        }
    }
    out
}

/// A cell as the error quotes it.
fn shown(v: &Value) -> String {
    match v {
        Value::Text(t) => format!("\"{t}\""),
        Value::Number(x) => format!("{x}"),
        Value::Missing => "a missing value".into(),
        Value::Year(y) => format!("{y}"),
        Value::Date(_) | Value::Month(_) => "a time".into(),
    }
}
