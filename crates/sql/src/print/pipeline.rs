//! A whole pushable view pipeline as one query: the steps after the
//! leading `keep`s, `add`s and group read the relation before them.

use crescendo_data::{AggFn, Aggregate, ColType, Expr, Step};

use super::prefix::{prefix_steps, start};
use super::{from_clause, Col, Output, Piece, Printer, Query, RowOrder};
use crate::types::SrcColumn;
use crate::From;

impl Printer {
    /// Column `i` as an `ORDER BY` term of a stable sort: missing last in
    /// both directions; texts by bytes; `-0` before `0` ascending (as
    /// `f64::total_cmp`, which SQL's float order does not tell apart).
    pub(super) fn sort_terms(&self, i: usize, desc: bool) -> Vec<String> {
        let dir = if desc { "DESC" } else { "ASC" };
        match self.cols.get(i) {
            Some(c) => match c.ty {
                ColType::Number => {
                    let x = format!("{}::double precision", c.sql);
                    let neg_first = if desc { "ASC" } else { "DESC" };
                    vec![
                        format!("{x} {dir} NULLS LAST"),
                        format!("({x} = 0 AND {x}::text LIKE '-%') {neg_first} NULLS LAST"),
                    ]
                }
                ColType::Year => vec![format!("{} {dir} NULLS LAST", c.sql)],
                ColType::Text | ColType::Month | ColType::Date => {
                    vec![format!("({} COLLATE \"C\") {dir} NULLS LAST", c.sql)]
                }
            },
            None => Vec::new(),
        }
    }

    /// The typed value of aggregate `a` of a group (numbers as doubles,
    /// equal to what [`crate::decode`] makes of the prefix query's cells).
    pub(super) fn aggregate_value(&self, a: &Aggregate) -> (String, ColType) {
        let in_ty = a.column.map_or(ColType::Number, |c| self.col_ty(c));
        let c = a.column.map(|c| self.sql(c));
        let typed = |text: String, ty: ColType| match ty {
            ColType::Number => format!("({text})::double precision"),
            ColType::Year => format!("({text})::integer"),
            _ => text,
        };
        match (a.func, a.column, c) {
            (AggFn::Count, None, _) => ("count(*)::double precision".into(), ColType::Number),
            (_, None, _) | (_, _, None) => ("NULL::double precision".into(), ColType::Number),
            (AggFn::Count, Some(_), Some(c)) => {
                (format!("count({c})::double precision"), ColType::Number)
            }
            (AggFn::Sum, Some(i), Some(_)) => (
                format!("{}::double precision", self.exact_sum(i)),
                ColType::Number,
            ),
            (AggFn::Mean, Some(i), Some(c)) => (
                format!(
                    "({}::double precision / NULLIF(count({c}), 0)::double precision)",
                    self.exact_sum(i)
                ),
                ColType::Number,
            ),
            (AggFn::Median, Some(_), Some(c)) => {
                let lo =
                    format!("(percentile_disc(0.5) WITHIN GROUP (ORDER BY {c}::double precision))");
                let hi = format!(
                    "(percentile_disc(0.5) WITHIN GROUP (ORDER BY {c}::double precision DESC))"
                );
                (
                    format!(
                        "(CASE WHEN count({c}) % 2 = 1 THEN {lo} ELSE {lo} / 2 + {hi} / 2 END)"
                    ),
                    ColType::Number,
                )
            }
            (AggFn::Min | AggFn::Max, Some(i), Some(_)) => {
                let f = if a.func == AggFn::Min { "min" } else { "max" };
                (typed(format!("{f}({})", self.sortable(i)), in_ty), in_ty)
            }
            (AggFn::First | AggFn::Last, Some(_), Some(c)) => {
                let dir = if a.func == AggFn::First { "" } else { " DESC" };
                (
                    typed(
                        format!(
                            "(array_agg({c}::text ORDER BY s.r{dir}) FILTER (WHERE {c} IS NOT NULL))[1]"
                        ),
                        in_ty,
                    ),
                    in_ty,
                )
            }
        }
    }

    /// The groups' order: first appearance, ties (rows without a position)
    /// by the keys.
    pub(super) fn group_order(&self, keys: &[usize]) -> String {
        let ties: Vec<String> = keys
            .iter()
            .map(|&k| match self.col_ty(k) {
                ColType::Number => format!("{} NULLS LAST", self.key(k)),
                _ => format!("{} NULLS LAST", self.sortable(k)),
            })
            .collect();
        let mut all = vec!["min(s.r) NULLS LAST".to_string()];
        all.extend(ties);
        all.join(", ")
    }

    /// Select the current columns as `v0`, `v1`, … and `r` from `rel`
    /// (aliased `t{k}`), with an optional filter; the columns then read the
    /// new relation `t{k+1}`.
    pub(super) fn wrap(&mut self, rel: &str, k: usize, r: &str, filter: Option<String>) -> String {
        let mut select: Vec<String> = self
            .cols
            .iter()
            .enumerate()
            .map(|(i, c)| format!("{} AS v{i}", c.sql))
            .collect();
        select.push(format!("{r} AS r"));
        let filter = filter.map_or_else(String::new, |f| format!(" WHERE {f}"));
        for (i, c) in self.cols.iter_mut().enumerate() {
            c.sql = format!("t{}.v{i}", k + 1);
        }
        format!(
            "(SELECT {} FROM {rel}{filter}) AS t{}",
            select.join(", "),
            k + 1
        )
    }
}

/// Print a whole view pipeline (see [`super::pushable`]) as one query. Without
/// steps after the leading `keep`s, `add`s and group, this is
/// [`prefix_steps`]. Otherwise the group (or the filtered rows) becomes a
/// relation of typed values (numbers as doubles, exactly the values the
/// local engine computes) with a row position `r` (the groups' order of
/// first appearance); each later step reads the previous one: `keep` is a
/// `WHERE`, `add` an inlined expression, `columns` a projection, and `sort`
/// renumbers `r` by `row_number() OVER (ORDER BY keys…, r)` (stable, missing
/// last in both directions, texts by bytes). The query ends with
/// `ORDER BY r`, so the rows arrive in the view's order and are decoded
/// as they are.
pub fn pipeline(from: &From, order: &RowOrder, cols: &[SrcColumn], pieces: &[Piece]) -> Query {
    let mut head: Vec<Step> = Vec::new();
    for piece in pieces {
        match piece {
            Piece::Step(s @ (Step::Keep(_) | Step::Derive { .. })) => head.push(s.clone()),
            Piece::Step(s @ Step::Group { .. }) => {
                head.push(s.clone());
                break;
            }
            _ => break,
        }
    }
    let later = pieces.get(head.len()..).unwrap_or_default();
    if later.is_empty() {
        return prefix_steps(from, order, cols, &head);
    }
    let (mut p, inner, filter, group) = start(order, cols, &head);
    let source = format!(
        "(SELECT {} FROM {}) AS s",
        inner.join(", "),
        from_clause(from)
    );
    // The first relation `t0`: the groups, or the filtered rows.
    let mut select: Vec<String> = Vec::new();
    let mut typed: Vec<Col> = Vec::new();
    let base = match &group {
        Some((keys, aggs)) => {
            for &k in keys {
                select.push(p.key(k));
                typed.push(Col {
                    sql: String::new(),
                    ty: p.col_ty(k),
                    float: true,
                    source: false,
                    name: p.cols.get(k).map_or(String::new(), |c| c.name.clone()),
                });
            }
            for a in aggs {
                let (sql, ty) = p.aggregate_value(a);
                select.push(sql);
                typed.push(Col {
                    sql: String::new(),
                    ty,
                    float: true,
                    source: false,
                    name: a.name.clone(),
                });
            }
            if keys.is_empty() {
                select.push("1 AS r".to_string());
                format!("SELECT {} FROM {source}{filter}", select_list(&select))
            } else {
                let ks: Vec<String> = keys.iter().map(|&k| p.key(k)).collect();
                select.push(format!(
                    "row_number() OVER (ORDER BY {}) AS r",
                    p.group_order(keys)
                ));
                format!(
                    "SELECT {} FROM {source}{filter} GROUP BY {}",
                    select_list(&select),
                    ks.join(", ")
                )
            }
        }
        None => {
            for i in 0..p.cols.len() {
                select.push(p.value(&Expr::Col(i)));
                typed.push(Col {
                    sql: String::new(),
                    ty: p.col_ty(i),
                    float: true,
                    source: false,
                    name: p.cols.get(i).map_or(String::new(), |c| c.name.clone()),
                });
            }
            select.push("row_number() OVER (ORDER BY s.r NULLS LAST) AS r".to_string());
            format!("SELECT {} FROM {source}{filter}", select_list(&select))
        }
    };
    for (i, c) in typed.iter_mut().enumerate() {
        c.sql = format!("t0.v{i}");
    }
    p.cols = typed;
    let mut rel = format!("({base}) AS t0");
    let mut k = 0;
    for piece in later {
        match piece {
            Piece::Step(Step::Keep(e)) => {
                let pred = p.filter(e);
                rel = p.wrap(&rel, k, &format!("t{k}.r"), Some(pred));
                k += 1;
            }
            Piece::Step(Step::Derive { name, expr }) => {
                p.derived(name, expr);
            }
            Piece::Columns(picked) => {
                p.cols = picked
                    .iter()
                    .filter_map(|&i| p.cols.get(i))
                    .map(|c| Col {
                        sql: c.sql.clone(),
                        ty: c.ty,
                        float: c.float,
                        source: c.source,
                        name: c.name.clone(),
                    })
                    .collect();
            }
            Piece::Step(Step::Sort { keys }) => {
                let mut terms: Vec<String> = keys
                    .iter()
                    .flat_map(|&(i, desc)| p.sort_terms(i, desc))
                    .collect();
                terms.push(format!("t{k}.r"));
                let r = format!("row_number() OVER (ORDER BY {})", terms.join(", "));
                rel = p.wrap(&rel, k, &r, None);
                k += 1;
            }
            // Not printed (see `pushable`); the caller runs them locally.
            Piece::Step(Step::Group { .. } | Step::Top { .. }) => break,
        }
    }
    let mut outputs = Vec::new();
    let mut select = Vec::new();
    for c in &p.cols {
        select.push(format!("{}::text", c.sql));
        outputs.push(Output::Value {
            name: c.name.clone(),
            ty: c.ty,
        });
    }
    if select.is_empty() {
        select.push("NULL::text".to_string());
    }
    Query {
        sql: format!("SELECT {} FROM {rel} ORDER BY t{k}.r", select.join(", ")),
        params: p.params,
        outputs,
    }
}

/// `select` as `e0 AS v0, e1 AS v1, …` (an `… AS r` item kept as is).
fn select_list(select: &[String]) -> String {
    select
        .iter()
        .enumerate()
        .map(|(i, e)| {
            if e.ends_with(" AS r") {
                e.clone()
            } else {
                format!("{e} AS v{i}")
            }
        })
        .collect::<Vec<_>>()
        .join(", ")
}
