//! Each step of a view checked against the columns before it: `columns`,
//! `keep`, `add`, `by` with its aggregates, `sort` and `top`. A step that
//! checks becomes a step of the view engine (`crescendo_data::Step`).

use std::sync::Arc;

use crescendo_data::{self as data, AggFn, Aggregate, ColType, Step};
use crescendo_diag::{Diagnostic, Source};
use crescendo_lang::ast::{self, Expr, Ident, StepAst};

use crate::rows::{At, Schema, Ty};

/// A step checked: the columns a `columns` step keeps, or an engine step.
pub(crate) enum Checked {
    Columns(Vec<usize>),
    Step(Step),
}

/// Check one step; `None` after an error (the caller also looks for
/// errors reported while a step still came out).
pub(crate) fn check(at: &At, step: &StepAst, diags: &mut Vec<Diagnostic>) -> Option<Checked> {
    let step = match step {
        StepAst::Columns { names, .. } => return Some(Checked::Columns(columns(at, names, diags))),
        StepAst::Keep { expr, .. } => keep(at, expr, diags),
        StepAst::Add {
            name: new, expr, ..
        } => add(at, new, expr, diags),
        StepAst::By {
            keys, aggregates, ..
        } => by(at, keys, aggregates, diags),
        StepAst::Sort { keys, .. } => {
            let keys = keys
                .iter()
                .filter_map(|k| Some((at.column(&k.column, diags)?.0, k.descending)))
                .collect();
            Some(Step::Sort { keys })
        }
        StepAst::Top {
            n,
            n_span,
            key,
            by,
            rest,
            ..
        } => top(at, (*n, n_span), key, by, rest, diags),
    };
    step.map(Checked::Step)
}

/// `columns a, b, c`: keep only these columns, in this order.
fn columns(at: &At, names: &[Ident], diags: &mut Vec<Diagnostic>) -> Vec<usize> {
    let twice = ("is listed twice", "again here");
    let found = found_columns(at, names, twice, diags);
    found.into_iter().map(|(i, _, _)| i).collect()
}

/// The columns `names` name, in order, with their names and types (an
/// unknown one is reported and left out); a column named again is
/// reported, as `` `NAME` `` and `said`, under a caret labelled `label`.
fn found_columns<'n>(
    at: &At,
    names: &'n [Ident],
    (said, label): (&str, &str),
    diags: &mut Vec<Diagnostic>,
) -> Vec<(usize, &'n Ident, ColType)> {
    let mut found: Vec<(usize, &Ident, ColType)> = Vec::new();
    for n in names {
        if let Some((i, t)) = at.column(n, diags) {
            if found.iter().any(|f| f.0 == i) {
                diags.push(
                    Diagnostic::error("duplicate-name", format!("`{}` {said}", n.name)).at(
                        at.src,
                        n.span.clone(),
                        label,
                    ),
                );
            }
            found.push((i, n, t));
        }
    }
    found
}

fn keep(at: &At, expr: &Expr, diags: &mut Vec<Diagnostic>) -> Option<Step> {
    let mut ck = at.checker(diags);
    let (e, t) = ck.check(expr)?;
    if matches!(t, Ty::Bool) {
        return Some(Step::Keep(e));
    }
    let message = format!("`keep` needs a condition, but this is {}", t.describe());
    ck.err(expr.span(), message, "not a condition");
    None
}

fn add(at: &At, new: &Ident, expr: &Expr, diags: &mut Vec<Diagnostic>) -> Option<Step> {
    if !check_new_name(at.src, at.schema, new, diags) {
        return None;
    }
    let mut ck = at.checker(diags);
    let (e, t) = ck.check_added(expr)?;
    let time = matches!(e, data::Expr::Bucket { .. } | data::Expr::YearQuarter(..));
    if time || matches!(t, Ty::Col(ColType::Number)) {
        let name = new.name.clone();
        return Some(Step::Derive { name, expr: e });
    }
    let message = format!("`add` computes a number, but this is {}", t.describe());
    ck.err(expr.span(), message, "not a number");
    None
}

/// `by KEYS: name = aggregate(column), ...`.
fn by(
    at: &At,
    keys: &[Ident],
    aggregates: &[ast::AggregateAst],
    diags: &mut Vec<Diagnostic>,
) -> Option<Step> {
    let found = found_columns(at, keys, ("is already a key", "repeated key"), diags);
    let key_idx = found.iter().map(|(i, _, _)| *i).collect();
    let mut out: Schema = (found.into_iter())
        .map(|(_, k, t)| (k.name.clone(), t))
        .collect();
    let mut aggs = Vec::new();
    for a in aggregates {
        if !check_new_name(at.src, &out, &a.name, diags) {
            continue;
        }
        if let Some((agg, ty)) = aggregate(at, a, diags) {
            out.push((a.name.name.clone(), ty));
            aggs.push(agg);
        }
    }
    Some(Step::Group {
        keys: key_idx,
        aggregates: aggs,
    })
}

/// One aggregate of a `by` step, with the type of its result.
fn aggregate(
    at: &At,
    a: &ast::AggregateAst,
    diags: &mut Vec<Diagnostic>,
) -> Option<(Aggregate, ColType)> {
    let func = agg_fn(at.src, &a.func, diags)?;
    let col = match &a.column {
        None if func == AggFn::Count => None,
        None => {
            diags.push(
                Diagnostic::error("type", format!("`{}` needs a column", a.func.name))
                    .at(at.src, a.span.clone(), "no column given")
                    .help(format!("write `{} = {}(COLUMN)`", a.name.name, a.func.name)),
            );
            return None;
        }
        Some(c) => {
            let (i, t) = at.column(c, diags)?;
            let numeric = matches!(func, AggFn::Sum | AggFn::Mean | AggFn::Median);
            if numeric && t != ColType::Number {
                let mut d = Diagnostic::error(
                    "type",
                    format!(
                        "`{}` needs a number column, but `{}` is {}",
                        a.func.name,
                        c.name,
                        t.name()
                    ),
                )
                .at(at.src, c.span.clone(), "not a number column");
                d.notes.extend((at.why)(&c.name));
                diags.push(d);
                return None;
            }
            Some(i)
        }
    };
    let ty = match (func, col) {
        (AggFn::Count | AggFn::Sum | AggFn::Mean | AggFn::Median, _) => ColType::Number,
        (_, Some(i)) => at.schema[i].1,
        (_, None) => ColType::Number,
    };
    let agg = Aggregate {
        name: a.name.name.clone(),
        func,
        column: col,
    };
    Some((agg, ty))
}

/// `top N KEY by MEASURE [rest "Other"]`.
fn top(
    at: &At,
    (n, n_span): (u64, &ast::Span),
    key: &Ident,
    by: &Ident,
    rest: &Option<ast::Str>,
    diags: &mut Vec<Diagnostic>,
) -> Option<Step> {
    let k = at.column(key, diags);
    let b = at.column(by, diags);
    if n == 0 {
        diags.push(Diagnostic::error("type", "`top 0` would keep nothing").at(
            at.src,
            n_span.clone(),
            "must be 1 or more",
        ));
    }
    let ((ki, kt), (bi, bt)) = (k?, b?);
    if kt != ColType::Text {
        diags.push(
            Diagnostic::error(
                "type",
                format!(
                    "`top` folds text categories, but `{}` is {}",
                    key.name,
                    kt.name()
                ),
            )
            .at(at.src, key.span.clone(), "not a text column"),
        );
    }
    if bt != ColType::Number {
        diags.push(
            Diagnostic::error(
                "type",
                format!(
                    "`top` ranks by a number column, but `{}` is {}",
                    by.name,
                    bt.name()
                ),
            )
            .at(at.src, by.span.clone(), "not a number column"),
        );
    }
    Some(Step::Top {
        key: ki,
        by: bi,
        n: usize::try_from(n).unwrap_or(usize::MAX),
        rest: rest
            .as_ref()
            .map_or_else(|| "Other".to_string(), |r| r.value.clone()),
    })
}

fn agg_fn(src: &Arc<Source>, id: &Ident, diags: &mut Vec<Diagnostic>) -> Option<AggFn> {
    const NAMES: [&str; 8] = [
        "sum", "mean", "median", "min", "max", "count", "first", "last",
    ];
    Some(match id.name.as_str() {
        "sum" => AggFn::Sum,
        "mean" => AggFn::Mean,
        "median" => AggFn::Median,
        "min" => AggFn::Min,
        "max" => AggFn::Max,
        "count" => AggFn::Count,
        "first" => AggFn::First,
        "last" => AggFn::Last,
        other => {
            let mut d = Diagnostic::error("unknown-name", format!("unknown aggregate `{other}`"))
                .at(src, id.span.clone(), "not an aggregate")
                .note(format!("aggregates are {}", NAMES.join(", ")));
            d = d.suggest(other, NAMES);
            diags.push(d);
            return None;
        }
    })
}

fn check_new_name(
    src: &Arc<Source>,
    schema: &Schema,
    id: &Ident,
    diags: &mut Vec<Diagnostic>,
) -> bool {
    if schema.iter().any(|(n, _)| *n == id.name) {
        diags.push(
            Diagnostic::error(
                "duplicate-name",
                format!("a column named `{}` already exists here", id.name),
            )
            .at(src, id.span.clone(), "name taken")
            .help("choose another name"),
        );
        return false;
    }
    true
}
