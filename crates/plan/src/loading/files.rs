//! Data files: the CSV spec of a `data` item (its declared column types,
//! its file, its missing-value tokens), and the located errors of a read.

use std::path::Path;

use crescendo_data::digits::NumberStyle;
use crescendo_data::{ColType, CsvSpec, LoadError};
use crescendo_diag::Diagnostic;
use crescendo_lang::ast::{self, Ident};

use crate::context::{Ctx, Outcome};

/// A declared column type.
fn col_type(cx: &mut Ctx, id: &Ident) -> Outcome<ColType> {
    Ok(match id.name.as_str() {
        "text" => ColType::Text,
        "number" => ColType::Number,
        "date" => ColType::Date,
        "month" => ColType::Month,
        "year" => ColType::Year,
        other => {
            let mut d = cx
                .at(
                    "unknown-type",
                    format!("unknown column type `{other}`"),
                    id.span.clone(),
                    "not a type",
                )
                .note("column types are text, number, date (YYYY-MM-DD), month (YYYY-MM) and year (YYYY)");
            d = d.suggest(other, ["text", "number", "date", "month", "year"]);
            return Err(cx.report(d));
        }
    })
}

/// The CSV spec of a `data` item; reports bad column declarations.
/// `replacement`: the file `--data` names (relative to the working
/// folder) instead of the story's.
pub(crate) fn data_spec(
    cx: &mut Ctx,
    decl: &ast::DataDecl,
    replacement: Option<&Path>,
) -> Outcome<CsvSpec> {
    let cp = cx.checkpoint();
    let mut declared: Vec<(String, ColType)> = Vec::new();
    for c in &decl.columns {
        if declared.iter().any(|(n, _)| *n == c.name.name) {
            cx.error(
                "duplicate-name",
                format!("column `{}` is declared twice", c.name.name),
                c.name.span.clone(),
                "declared again here",
            );
            continue;
        }
        if let Ok(t) = col_type(cx, &c.ty) {
            declared.push((c.name.name.clone(), t));
        }
    }
    let numbers = number_style(cx, decl);
    cx.errors_since(cp)?;
    let path = match replacement {
        Some(p) => p.to_path_buf(),
        None => cx.dir.join(&decl.file.value),
    };
    Ok(CsvSpec {
        display_name: path.display().to_string(),
        path,
        declared,
        missing: match &decl.missing {
            Some(m) => m.iter().map(|s| s.value.clone()).collect(),
            None => vec![String::new(), "NA".to_string()],
        },
        numbers: numbers.unwrap_or_default(),
    })
}

/// How the item's file writes its numbers (`thousands`, `decimal`); a
/// bad option is reported at it.
fn number_style(cx: &mut Ctx, decl: &ast::DataDecl) -> Option<NumberStyle> {
    let (t, d) = (decl.thousands.as_deref(), decl.decimal.as_deref());
    match NumberStyle::new(t.map(|s| s.value.as_str()), d.map(|s| s.value.as_str())) {
        Ok(style) => Some(style),
        Err(why) => {
            let at = match (t, d) {
                (Some(t), Some(d)) => t.span.start..d.span.end,
                (Some(s), None) | (None, Some(s)) => s.span.clone(),
                (None, None) => decl.file.span.clone(),
            };
            let d = cx
                .at("bad-option", why, at, "not a way to write numbers")
                .help(
                    "e.g. `thousands \",\"` for 1,050.5, or `thousands \".\" decimal \",\"` for 1.050,5",
                );
            cx.report(d);
            None
        }
    }
}

/// The result of reading a data file, its error located in the story (and
/// in the file, with an excerpt of the record).
pub(crate) fn reported<T>(
    cx: &mut Ctx,
    decl: &ast::DataDecl,
    result: Result<T, LoadError>,
) -> Outcome<T> {
    let d = match result {
        Ok(t) => return Ok(t),
        Err(LoadError::Csv(d)) => d.also(
            cx.src,
            decl.file.span.clone(),
            format!("while loading `{}`", decl.name.name),
        ),
        Err(LoadError::Many(ds)) => {
            // every bad row and cell of the file, each located in it
            let mut last = None;
            for d in ds {
                let label = format!("while loading `{}`", decl.name.name);
                // a workbook's cells are named in the message (sheet and
                // A1 cell): such a problem is at the data item
                let d = match d.location() {
                    Some(_) => d.also(cx.src, decl.file.span.clone(), label),
                    None => d.at(cx.src, decl.file.span.clone(), label),
                };
                last = Some(cx.report(d));
            }
            return Err(last.unwrap_or_else(|| cx.already_reported()));
        }
        Err(LoadError::Story {
            code,
            message,
            help,
            declared,
        }) => {
            let clause = match code {
                "unknown-sheet" => decl.sheet.as_ref(),
                "bad-cells" => decl.cells.as_ref(),
                _ => None,
            };
            let span = match (declared, clause) {
                (Some(i), _) => decl
                    .columns
                    .get(i)
                    .map_or(decl.file.span.clone(), |c| c.name.span.clone()),
                (None, Some(s)) => s.span.clone(),
                (None, None) => decl.file.span.clone(),
            };
            let mut d = Diagnostic::error(code, message).at(cx.src, span, "");
            d.help = help;
            d
        }
    };
    Err(cx.report(d))
}
