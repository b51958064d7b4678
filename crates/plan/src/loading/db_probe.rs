//! The text literals of the `keep`s a database computes (see
//! `crate::unmatched`): for each, whether a row reaching the step holds
//! it, asked as one cheap `EXISTS` query over the steps before it; when
//! none does, the column's distinct texts there (at most
//! `crescendo_data::probe::SEEN_CAP`) for the suggestion.

use std::collections::HashSet;

use crescendo_data::probe::{probes, SEEN_CAP};
use crescendo_data::{CmpOp, Expr, Step, Table, Value};
use crescendo_diag::Diagnostic;
use crescendo_lang::ast;
use crescendo_sql::print::{self, Piece, Query, RowOrder};
use crescendo_sql::SrcColumn;

use crate::io::Database;
use crate::unmatched::{unmatched, Lookup};

/// One literal to ask about: the step (index among the steps as written),
/// the column's name, the text, and its two queries.
pub(crate) struct Probe {
    step: usize,
    column: String,
    text: String,
    exists: Query,
    values: Query,
}

/// The probes of a `keep` piece at `at` (its literals, over the pieces
/// before it; `schema` is the table those give).
pub(crate) fn of_keep(
    (from, order, cols): (&crescendo_sql::From, &RowOrder, &[SrcColumn]),
    pieces: &[Piece],
    at: usize,
    schema: &Table,
) -> Vec<Probe> {
    let (Some(Piece::Step(Step::Keep(e))), Some(before)) = (pieces.get(at), pieces.get(..at))
    else {
        return Vec::new();
    };
    let mut out = Vec::new();
    for p in probes(std::slice::from_ref(e)) {
        let Some(col) = schema.columns.get(p.column) else {
            continue;
        };
        let is = Expr::Cmp(
            CmpOp::Eq,
            Box::new(Expr::Col(p.column)),
            Box::new(Expr::Lit(Value::Text(p.text.clone()))),
        );
        let mut hit = before.to_vec();
        hit.push(Piece::Step(Step::Keep(is)));
        hit.push(Piece::Columns(vec![p.column]));
        let mut all = before.to_vec();
        all.push(Piece::Columns(vec![p.column]));
        if !print::pushable(&hit) || !print::pushable(&all) {
            continue;
        }
        let mut exists = print::pipeline(from, order, cols, &hit);
        exists.sql = format!("SELECT EXISTS ({})::text", exists.sql);
        let mut values = print::pipeline(from, order, cols, &all);
        values.sql = format!(
            "SELECT * FROM ({}) AS probe LIMIT {}",
            values.sql,
            SEEN_CAP * 10
        );
        out.push(Probe {
            step: at,
            column: col.name.clone(),
            text: p.text,
            exists,
            values,
        });
    }
    out
}

/// Ask the database about each probe of `view`; the literals no row
/// holds, as located errors. `Err`: a query failed (its message).
pub(crate) fn check(
    cx: &crate::context::Ctx,
    session: &mut dyn Database,
    timeout: std::time::Duration,
    view: &ast::ViewDecl,
    asked: &[Probe],
) -> Result<Vec<Diagnostic>, String> {
    let mut answers: Vec<(usize, &str, &str, Lookup)> = Vec::new();
    for p in asked {
        let (rows, _) = session
            .rows(&p.exists.sql, &p.exists.params, timeout)
            .map_err(|e| e.message)?;
        let found = rows.first().and_then(|r| r.first()).cloned().flatten();
        let look = if found.as_deref() == Some("true") || found.as_deref() == Some("t") {
            Lookup::Found
        } else {
            let (rows, _) = session
                .rows(&p.values.sql, &p.values.params, timeout)
                .map_err(|e| e.message)?;
            let mut seen = Vec::new();
            let mut index = HashSet::new();
            for t in rows
                .into_iter()
                .filter_map(|r| r.into_iter().next().flatten())
            {
                if seen.len() < SEEN_CAP && index.insert(t.clone()) {
                    seen.push(t);
                }
            }
            Lookup::Absent(seen)
        };
        answers.push((p.step, &p.column, &p.text, look));
    }
    let mut out = Vec::new();
    for (k, step) in view.steps.iter().enumerate() {
        let ast::StepAst::Keep { expr, .. } = step else {
            continue;
        };
        out.extend(unmatched(cx.src, expr, &mut |name, text| {
            let hit = answers
                .iter()
                .find(|(s, c, t, _)| *s == k && *c == name && *t == text);
            match hit {
                Some((_, _, _, look)) => look.clone(),
                None => Lookup::Unknown,
            }
        }));
    }
    Ok(out)
}
