//! A text literal that matches no value of the column it is compared with
//! (`keep region = "Nrth"`, `count(sales where region = "Nrth")`) selects
//! nothing, silently: a misspelt category would turn a chart empty and let
//! a claim about it pass. Every equality (`=`, `!=`, `in`) between a text
//! column and a text literal is checked against the rows that reach it, on
//! each read path: a loaded table here ([`in_table`]), a streamed file by
//! the probes the stream engine watched (`crescendo_data::probe`,
//! `loading/stream.rs`), a database by a query (`loading/db_probe.rs`).
//! A literal no row holds is a located error with the closest value as a
//! suggestion.

use std::sync::Arc;

use crescendo_data::{ColType, Table, Value};
use crescendo_diag::{closest, Diagnostic, Source};
use crescendo_lang::ast::{BinOp, Expr, Link};

/// What the rows reaching an equality hold for (column, text).
#[derive(Clone)]
pub(crate) enum Lookup {
    /// Some row holds the text.
    Found,
    /// No row does; the column's distinct texts (first appearance first).
    Absent(Vec<String>),
    /// Not a text column, or not known: no check.
    Unknown,
}

/// The equalities of `expr` whose text no row holds, as located errors;
/// `look` answers for a (column, text).
pub(crate) fn unmatched(
    src: &Arc<Source>,
    expr: &Expr,
    look: &mut dyn FnMut(&str, &str) -> Lookup,
) -> Vec<Diagnostic> {
    let mut out = Vec::new();
    walk(src, expr, look, &mut out);
    out
}

/// [`unmatched`] against the text columns of a loaded table.
pub(crate) fn in_table(src: &Arc<Source>, table: &Table, expr: &Expr) -> Vec<Diagnostic> {
    unmatched(src, expr, &mut |name, text| {
        let Some(c) = table
            .columns
            .iter()
            .find(|c| c.name == name && c.ty == ColType::Text)
        else {
            return Lookup::Unknown;
        };
        let mut seen: Vec<String> = Vec::new();
        let mut index = std::collections::HashSet::new();
        for v in c.values.iter() {
            if let Value::Text(t) = v {
                if t == text {
                    return Lookup::Found;
                }
                if seen.len() < crescendo_data::probe::SEEN_CAP && index.insert(t.clone()) {
                    seen.push(t);
                }
            }
        }
        Lookup::Absent(seen)
    })
}

fn walk(
    src: &Arc<Source>,
    expr: &Expr,
    look: &mut dyn FnMut(&str, &str) -> Lookup,
    out: &mut Vec<Diagnostic>,
) {
    let mut check = |col: &Expr, lit: &Expr| {
        let (Expr::Name(id), Expr::Text(s)) = (col, lit) else {
            return;
        };
        if let Lookup::Absent(seen) = look(&id.name, &s.value) {
            out.push(error(src, &id.name, s, &seen));
        }
    };
    match expr {
        Expr::Compare {
            op: BinOp::Eq | BinOp::Ne,
            left,
            right,
            ..
        } => {
            check(left, right);
            check(right, left);
        }
        Expr::In {
            expr: col, list, ..
        } => {
            for lit in list {
                check(col, lit);
            }
        }
        Expr::Not { expr, .. } => walk(src, expr, look, out),
        Expr::Chain { first, rest, .. } => {
            walk(src, first, look, out);
            for Link { operand, .. } in rest {
                walk(src, operand, look, out);
            }
        }
        _ => {}
    }
}

/// "no row has `col` = "text"", at the literal, with the closest value (or
/// a few of the column's values) as help.
fn error(
    src: &Arc<Source>,
    col: &str,
    lit: &crescendo_lang::ast::Str,
    seen: &[String],
) -> Diagnostic {
    let d = Diagnostic::error(
        "no-match",
        format!("no row has `{col}` = \"{}\"", lit.value),
    )
    .at(
        src,
        lit.span.clone(),
        "matches no value of this column".to_string(),
    );
    match closest(&lit.value, seen.iter().map(String::as_str)) {
        Some(c) => d.help(format!("did you mean \"{c}\"?")),
        None if seen.is_empty() => d.note(format!("no row reaching this step has a `{col}` text")),
        None => {
            let shown: Vec<String> = seen.iter().take(5).map(|t| format!("\"{t}\"")).collect();
            let more = if seen.len() > 5 { ", …" } else { "" };
            d.help(format!("`{col}` holds {}{more}", shown.join(", ")))
        }
    }
}
