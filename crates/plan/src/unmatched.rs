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

/// Answers for a (column, text).
type Look<'a> = dyn FnMut(&str, &str) -> Lookup + 'a;

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
    walk(src, expr, (look, All), &mut out);
    out
}

/// Which equalities to check.
#[derive(Clone, Copy, PartialEq, Eq)]
pub(crate) enum Which {
    All,
    /// Only those a row must satisfy for the condition to hold where they
    /// stand (`=` and `in`, not under `not`): for a Parquet item whose
    /// row groups were skipped by the first `keep`, a text held only by
    /// skipped rows leaves such an equality false on every row read, and
    /// the step selects nothing through it; a `!=` would not.
    Positive,
}
use Which::{All, Positive};

/// [`unmatched`] against the text columns of a loaded table.
pub(crate) fn in_table(src: &Arc<Source>, table: &Table, expr: &Expr) -> Vec<Diagnostic> {
    in_table_checking(src, table, expr, All)
}

/// [`in_table`], checking `which` equalities.
pub(crate) fn in_table_checking(
    src: &Arc<Source>,
    table: &Table,
    expr: &Expr,
    which: Which,
) -> Vec<Diagnostic> {
    let mut out = Vec::new();
    let look = &mut |name: &str, text: &str| {
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
    };
    walk(src, expr, (look, which), &mut out);
    out
}

fn walk(
    src: &Arc<Source>,
    expr: &Expr,
    (look, which): (&mut Look<'_>, Which),
    out: &mut Vec<Diagnostic>,
) {
    let mut check = |col: &Expr, lit: &Expr, positive: bool| {
        let (Expr::Name(id), Expr::Text(s)) = (col, lit) else {
            return;
        };
        if which == Positive && !positive {
            return;
        }
        if let Lookup::Absent(seen) = look(&id.name, &s.value) {
            out.push(error(src, &id.name, s, &seen));
        }
    };
    match expr {
        Expr::Compare {
            op: op @ (BinOp::Eq | BinOp::Ne),
            left,
            right,
            ..
        } => {
            check(left, right, *op == BinOp::Eq);
            check(right, left, *op == BinOp::Eq);
        }
        Expr::In {
            expr: col,
            list,
            negated,
            ..
        } => {
            for lit in list {
                check(col, lit, !negated);
            }
        }
        // under `not`, nothing is positive
        Expr::Not { expr, .. } => match which {
            All => walk(src, expr, (look, All), out),
            Positive => {}
        },
        Expr::Chain { first, rest, .. } => {
            walk(src, first, (&mut *look, which), out);
            for Link { operand, .. } in rest {
                walk(src, operand, (&mut *look, which), out);
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

#[cfg(test)]
mod tests {
    use super::*;
    use crescendo_data::{Column, Values};
    use crescendo_lang::ast::{Item, StepAst};

    /// The errors of the first `keep` of `view` over a table whose column
    /// `k` holds "a" and "b".
    fn check(view: &str, which: Which) -> Vec<String> {
        let src = Source::file("t.cresc", format!("{view}\n"));
        let (ast, diags) = crescendo_lang::parse(&src);
        assert!(diags.is_empty(), "{diags:#?}");
        let Some(Item::View(v)) = ast.items.first() else {
            panic!("no view")
        };
        let Some(StepAst::Keep { expr, .. }) = v.steps.first() else {
            panic!("no keep")
        };
        let table = Table {
            columns: vec![Column {
                name: "k".into(),
                ty: ColType::Text,
                values: Values::from_iter([Value::Text("a".into()), Value::Text("b".into())]),
            }],
        };
        in_table_checking(&src, &table, expr, which)
            .iter()
            .map(|d| d.message.clone())
            .collect()
    }

    #[test]
    fn every_equality_or_only_the_positive_ones() {
        let cases = [
            ("view v = d | keep k = \"x\"", 1, 1),
            ("view v = d | keep k != \"x\"", 1, 0),
            ("view v = d | keep k in (\"a\", \"x\")", 1, 1),
            ("view v = d | keep k not in (\"x\")", 1, 0),
            ("view v = d | keep not (k = \"x\")", 1, 0),
            (
                "view v = d | keep k = \"a\" or k = \"y\" and k != \"z\"",
                2,
                1,
            ),
            ("view v = d | keep \"b\" = k", 0, 0),
        ];
        for (view, all, positive) in cases {
            assert_eq!(check(view, All).len(), all, "{view}");
            assert_eq!(check(view, Positive).len(), positive, "{view}");
        }
        assert_eq!(
            check("view v = d | keep k = \"x\"", All),
            ["no row has `k` = \"x\""]
        );
    }
}
