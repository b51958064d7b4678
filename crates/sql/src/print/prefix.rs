//! The source select every query starts from (columns `c0`, `c1`, … and
//! the row position `r`), and a view prefix up to its first group as one
//! query.

use crescendo_data::{AggFn, Aggregate, ColType, Expr, Step};

use super::{from_clause, quote_ident, Col, Output, Printer, Query, RowOrder};
use crate::types::{Read, SrcColumn};
use crate::From;

/// Print a view prefix over `cols` of `from`: the `keeps` (in order), then
/// `group` (keys and aggregates) if any. Column indices in the steps are
/// positions in `cols`. Without a group the rows themselves are returned,
/// in row order.
pub fn prefix(
    from: &From,
    order: &RowOrder,
    cols: &[SrcColumn],
    keeps: &[Expr],
    group: Option<(&[usize], &[Aggregate])>,
) -> Query {
    let mut steps: Vec<Step> = keeps.iter().cloned().map(Step::Keep).collect();
    if let Some((keys, aggregates)) = group {
        steps.push(Step::Group {
            keys: keys.to_vec(),
            aggregates: aggregates.to_vec(),
        });
    }
    prefix_steps(from, order, cols, &steps)
}

/// The start of every query: the printer over the source's columns, the
/// inner select list (`c0`, `c1`, …, `r`), the leading `keep`s (as a
/// `WHERE` clause with its leading space, empty when there is none; `add`
/// columns are inlined) and the first group, if any.
pub(super) type Start = (
    Printer,
    Vec<String>,
    String,
    Option<(Vec<usize>, Vec<Aggregate>)>,
);

pub(super) fn start(order: &RowOrder, cols: &[SrcColumn], steps: &[Step]) -> Start {
    let mut p = Printer {
        cols: cols
            .iter()
            .enumerate()
            .map(|(i, c)| Col {
                sql: format!("s.c{i}"),
                ty: c.ty,
                float: c.read == Read::Float,
                source: true,
                name: c.name.clone(),
            })
            .collect(),
        params: Vec::new(),
    };
    let mut inner: Vec<String> = cols
        .iter()
        .enumerate()
        .map(|(i, c)| format!("{} AS c{i}", c.expr()))
        .collect();
    let row = match order.columns.as_slice() {
        [(name, text)] => {
            let c = quote_ident(name);
            if *text {
                format!("({c} COLLATE \"C\")")
            } else {
                c
            }
        }
        many => {
            let keys: Vec<String> = if many.is_empty() {
                cols.iter()
                    .map(|c| match c.ty {
                        ColType::Text | ColType::Month | ColType::Date => {
                            format!("{} COLLATE \"C\" NULLS LAST", c.expr())
                        }
                        _ => format!("{} NULLS LAST", c.expr()),
                    })
                    .collect()
            } else {
                many.iter()
                    .map(|(n, text)| {
                        if *text {
                            format!("{} COLLATE \"C\" NULLS LAST", quote_ident(n))
                        } else {
                            format!("{} NULLS LAST", quote_ident(n))
                        }
                    })
                    .collect()
            };
            if keys.is_empty() {
                "row_number() OVER ()".to_string()
            } else {
                format!("row_number() OVER (ORDER BY {})", keys.join(", "))
            }
        }
    };
    inner.push(format!("{row} AS r"));
    let mut preds: Vec<String> = Vec::new();
    let mut group = None;
    for step in steps {
        match step {
            Step::Keep(e) => preds.push(p.filter(e)),
            Step::Derive { name, expr } => {
                // Arithmetic prints parenthesised; a column or a literal
                // needs no parentheses.
                p.derived(name, expr);
            }
            Step::Group { keys, aggregates } => {
                group = Some((keys.clone(), aggregates.clone()));
                break;
            }
            Step::Sort { .. } | Step::Top { .. } => break,
        }
    }
    let filter = if preds.is_empty() {
        String::new()
    } else {
        format!(" WHERE {}", preds.join(" AND "))
    };
    (p, inner, filter, group)
}

/// Print a view prefix made of `keep` and `add` steps, then at most one
/// group (later steps are not printed here: see [`super::pipeline`]). An `add`
/// column is its expression, inlined where it is used (its parameters are
/// shared, not bound twice).
pub fn prefix_steps(from: &From, order: &RowOrder, cols: &[SrcColumn], steps: &[Step]) -> Query {
    let (p, inner, filter, group) = start(order, cols, steps);
    let group = group.as_ref().map(|(k, a)| (k.as_slice(), a.as_slice()));
    let mut outputs = Vec::new();
    let mut select = Vec::new();
    let mut tail = String::new();
    match group {
        Some((keys, aggs)) => {
            for &k in keys {
                select.push(format!("{}::text", p.key(k)));
                outputs.push(Output::Value {
                    name: p.cols.get(k).map_or(String::new(), |c| c.name.clone()),
                    ty: p.col_ty(k),
                });
            }
            for a in aggs {
                let in_ty = a.column.map_or(ColType::Number, |c| p.col_ty(c));
                let c = a.column.map(|c| p.sql(c));
                let name = a.name.clone();
                let value = |ty| Output::Value {
                    name: a.name.clone(),
                    ty,
                };
                match (a.func, a.column, &c) {
                    (AggFn::Count, None, _) | (_, None, _) | (_, _, None) => {
                        // Only `count` has no column.
                        if a.func == AggFn::Count {
                            select.push("count(*)::text".to_string());
                        } else {
                            select.push("NULL::text".to_string());
                        }
                        outputs.push(value(ColType::Number));
                    }
                    (AggFn::Count, Some(_), Some(c)) => {
                        select.push(format!("count({c})::text"));
                        outputs.push(value(ColType::Number));
                    }
                    (AggFn::Sum, Some(i), Some(_)) => {
                        select.push(format!("{}::text", p.exact_sum(i)));
                        outputs.push(value(ColType::Number));
                    }
                    (AggFn::Mean, Some(i), Some(c)) => {
                        select.push(format!("{}::text", p.exact_sum(i)));
                        select.push(format!("count({c})::text"));
                        outputs.push(Output::Mean { name });
                    }
                    (AggFn::Median, Some(_), Some(c)) => {
                        select.push(format!(
                            "(percentile_disc(0.5) WITHIN GROUP (ORDER BY {c}::double precision))::text"
                        ));
                        select.push(format!(
                            "(percentile_disc(0.5) WITHIN GROUP (ORDER BY {c}::double precision DESC))::text"
                        ));
                        select.push(format!("count({c})::text"));
                        outputs.push(Output::Median { name });
                    }
                    (AggFn::Min | AggFn::Max, Some(i), Some(_)) => {
                        let f = if a.func == AggFn::Min { "min" } else { "max" };
                        select.push(format!("{f}({})::text", p.sortable(i)));
                        outputs.push(value(in_ty));
                    }
                    (AggFn::First | AggFn::Last, Some(_), Some(c)) => {
                        let dir = if a.func == AggFn::First { "" } else { " DESC" };
                        select.push(format!(
                            "(array_agg({c}::text ORDER BY s.r{dir}) FILTER (WHERE {c} IS NOT NULL))[1]"
                        ));
                        outputs.push(value(in_ty));
                    }
                }
            }
            if !keys.is_empty() {
                let ks: Vec<String> = keys.iter().map(|&k| p.key(k)).collect();
                tail = format!(
                    " GROUP BY {} ORDER BY {}",
                    ks.join(", "),
                    p.group_order(keys)
                );
            }
        }
        None => {
            for c in &p.cols {
                select.push(format!("{}::text", c.sql));
                outputs.push(Output::Value {
                    name: c.name.clone(),
                    ty: c.ty,
                });
            }
            tail = " ORDER BY s.r NULLS LAST".to_string();
        }
    }
    if select.is_empty() {
        select.push("NULL::text".to_string());
    }
    let sql = format!(
        "SELECT {} FROM (SELECT {} FROM {}) AS s{filter}{tail}",
        select.join(", "),
        inner.join(", "),
        from_clause(from)
    );
    Query {
        sql,
        params: p.params,
        outputs,
    }
}
