//! The SQL printer: a view prefix (filters, then at most one group with its
//! aggregates) as one PostgreSQL query that reproduces the local engine.
//!
//! The query reads the source through an inner select that names every
//! column `c0`, `c1`, … (in the order of the data item's columns) and adds
//! the row's position `r`:
//!
//! * with one `in order of` column, `r` is that column (first appearance of
//!   a group is `min(r)`; no window, so the database can aggregate in
//!   parallel);
//! * with several, `r` is `row_number()` over them;
//! * without any, `row_number()` over all the columns the story reads (rows
//!   that tie on all of them are indistinguishable in every result).
//!
//! How each part matches `crescendo_data::view` (the local engine):
//!
//! | local engine                                   | SQL                                          |
//! |------------------------------------------------|----------------------------------------------|
//! | a comparison with a missing operand is false   | `COALESCE(a op b, false)`                    |
//! | texts compare by bytes                          | `COLLATE "C"` (UTF-8 byte order)             |
//! | `x / 0` is missing                              | `x / NULLIF(y, 0)`                           |
//! | arithmetic in doubles                           | `::double precision`                         |
//! | `add NAME = EXPR` (a number column)             | the expression, inlined where it is used     |
//! | number keys are doubles (`-0` is `0`)           | `GROUP BY x::double precision`               |
//! | groups in order of first appearance             | `ORDER BY min(r)`                            |
//! | a missing key is a group of its own             | `GROUP BY` puts NULLs in one group           |
//! | `sum`: exact, rounded once                       | `sum(x::numeric)` (exact), parsed once       |
//! | `mean`: the sum over the count                   | sum and count, divided locally               |
//! | `median`: the middle value, or the two middle values halved and added | `percentile_disc(0.5)` ascending and descending, and the count; combined locally |
//! | `min`/`max` (texts by bytes)                     | `min`/`max` (`COLLATE "C"`)                  |
//! | `first`/`last`: first/last non-missing in row order | `array_agg(… ORDER BY r) FILTER (WHERE … IS NOT NULL)` |
//! | `count()`, `count(x)`                           | `count(*)`, `count(x)`                       |
//!
//! Every output is sent as text and parsed by [`crate::decode`], so numbers
//! arrive exactly (numeric text, or the shortest text that reads back as
//! the same double).
//!
//! Known differences, all outside ordinary data: a sum is the exact sum of
//! the stored decimals (of the shortest texts, for doubles), where the
//! local engine sums the nearest doubles exactly — the two can differ in
//! the last bit; an arithmetic overflow is an error in PostgreSQL where the
//! engine gives a missing value; `-0` and `0` compare equal in SQL.

use crescendo_data::{AggFn, Aggregate, ArithOp, CmpOp, ColType, Expr, Step, Value};

use crate::types::{Read, SrcColumn};
use crate::From;

/// `name` as a quoted SQL identifier (double quotes, inner quotes doubled).
pub fn quote_ident(name: &str) -> String {
    format!("\"{}\"", name.replace('"', "\"\""))
}

/// One output of a prefix query and how to decode its cells.
#[derive(Clone, Debug, PartialEq)]
pub enum Output {
    /// One cell of the given type, named `name`.
    Value { name: String, ty: ColType },
    /// Two cells: an exact sum and a count; the mean is computed locally.
    Mean { name: String },
    /// Three cells: the lower and upper middle values and the count.
    Median { name: String },
}

impl Output {
    /// Number of SQL columns this output reads.
    pub fn width(&self) -> usize {
        match self {
            Output::Value { .. } => 1,
            Output::Mean { .. } => 2,
            Output::Median { .. } => 3,
        }
    }
}

/// A printed query: its text, the values bound to `$1…`, and its outputs.
#[derive(Clone, Debug, PartialEq)]
pub struct Query {
    pub sql: String,
    pub params: Vec<String>,
    pub outputs: Vec<Output>,
}

/// The `FROM` part for a source.
pub fn from_clause(from: &From) -> String {
    match from {
        From::Table { schema, name } => match schema {
            Some(s) => format!("{}.{}", quote_ident(s), quote_ident(name)),
            None => quote_ident(name),
        },
        From::Query(q) => {
            let q = q.trim().trim_end_matches(';').trim_end();
            format!("({q}) AS \"crescendo source\"")
        }
    }
}

/// The query that names the source's columns and their types without
/// reading a row (it is prepared, not run).
pub fn describe(from: &From) -> String {
    format!("SELECT * FROM {} LIMIT 0", from_clause(from))
}

/// The row order of the source: the raw `in order of` columns (name and
/// whether it is text-like), or none.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct RowOrder {
    pub columns: Vec<(String, bool)>,
}

/// A column of the prefix as the outer query sees it: a source column
/// (`s.c3`) or one computed by `add` (its expression).
struct Col {
    sql: String,
    ty: ColType,
    /// A binary double (summed through its shortest text).
    float: bool,
    name: String,
}

struct Printer {
    cols: Vec<Col>,
    params: Vec<String>,
}

impl Printer {
    fn param(&mut self, v: &Value) -> String {
        let (text, cast) = match v {
            Value::Missing => return "NULL".to_string(),
            Value::Number(x) => (format!("{x:?}"), "double precision"),
            Value::Text(s) => (s.clone(), ""),
            Value::Date(d) => (crescendo_data::time::date_iso(*d), ""),
            Value::Month(m) => (crescendo_data::time::month_iso(*m), ""),
            Value::Year(y) => (y.to_string(), "integer"),
        };
        self.params.push(text);
        let p = format!("${}::text", self.params.len());
        if cast.is_empty() {
            p
        } else {
            format!("CAST({p} AS {cast})")
        }
    }

    fn col_ty(&self, i: usize) -> ColType {
        self.cols.get(i).map_or(ColType::Text, |c| c.ty)
    }

    /// The story type an expression has (numbers for arithmetic).
    fn ty_of(&self, e: &Expr) -> ColType {
        match e {
            Expr::Col(i) => self.col_ty(*i),
            Expr::Lit(v) => match v {
                Value::Text(_) | Value::Missing => ColType::Text,
                Value::Number(_) => ColType::Number,
                Value::Date(_) => ColType::Date,
                Value::Month(_) => ColType::Month,
                Value::Year(_) => ColType::Year,
            },
            _ => ColType::Number,
        }
    }

    /// A value expression; numbers as double precision.
    fn value(&mut self, e: &Expr) -> String {
        match e {
            Expr::Col(i) => {
                let c = self
                    .cols
                    .get(*i)
                    .map_or_else(|| "NULL".to_string(), |c| c.sql.clone());
                match self.col_ty(*i) {
                    ColType::Number => format!("{c}::double precision"),
                    _ => c,
                }
            }
            Expr::Lit(v) => self.param(v),
            Expr::Neg(a) => format!("(-{})", self.number(a)),
            Expr::Arith(op, a, b) => {
                let (x, y) = (self.number(a), self.number(b));
                match op {
                    ArithOp::Add => format!("({x} + {y})"),
                    ArithOp::Sub => format!("({x} - {y})"),
                    ArithOp::Mul => format!("({x} * {y})"),
                    ArithOp::Div => format!("({x} / NULLIF({y}, 0))"),
                }
            }
            // A predicate used as a value is missing (as in the engine).
            _ => "NULL".to_string(),
        }
    }

    /// A value expression as a number (years count as their number).
    fn number(&mut self, e: &Expr) -> String {
        let v = self.value(e);
        if self.ty_of(e) == ColType::Year {
            format!("{v}::double precision")
        } else {
            v
        }
    }

    /// A comparison operand: texts in the `C` collation, a year compared
    /// with a number as a number.
    fn operand(&mut self, e: &Expr, other: &Expr) -> String {
        let (t, o) = (self.ty_of(e), self.ty_of(other));
        match t {
            ColType::Text | ColType::Month | ColType::Date => {
                format!("({} COLLATE \"C\")", self.value(e))
            }
            ColType::Year if o == ColType::Number => self.number(e),
            _ => self.value(e),
        }
    }

    /// A predicate, never NULL.
    fn truth(&mut self, e: &Expr) -> String {
        match e {
            Expr::Cmp(op, a, b) => {
                let (x, y) = (self.operand(a, b), self.operand(b, a));
                let op = match op {
                    CmpOp::Eq => "=",
                    CmpOp::Ne => "<>",
                    CmpOp::Lt => "<",
                    CmpOp::Le => "<=",
                    CmpOp::Gt => ">",
                    CmpOp::Ge => ">=",
                };
                format!("COALESCE({x} {op} {y}, false)")
            }
            Expr::And(a, b) => format!("({} AND {})", self.truth(a), self.truth(b)),
            Expr::Or(a, b) => format!("({} OR {})", self.truth(a), self.truth(b)),
            Expr::Not(a) => format!("(NOT {})", self.truth(a)),
            Expr::In(a, list) => {
                if list.is_empty() {
                    return "false".to_string();
                }
                let first = Expr::Lit(list[0].clone());
                let x = self.operand(a, &first);
                let items: Vec<String> = list
                    .iter()
                    .map(|v| {
                        let lit = Expr::Lit(v.clone());
                        self.operand(&lit, a)
                    })
                    .collect();
                format!("COALESCE({x} IN ({}), false)", items.join(", "))
            }
            // A value used as a predicate is false (as in the engine).
            _ => "false".to_string(),
        }
    }
}

impl Printer {
    fn sql(&self, i: usize) -> String {
        self.cols
            .get(i)
            .map_or_else(|| "NULL".to_string(), |c| c.sql.clone())
    }

    /// The exact (numeric) form of number column `i` for sums: a double
    /// through its shortest text (which reads back as the same double).
    fn exact(&self, i: usize) -> String {
        match self.cols.get(i) {
            Some(c) if c.float => format!("{}::text::numeric", c.sql),
            Some(c) => format!("{}::numeric", c.sql),
            None => "NULL::numeric".to_string(),
        }
    }

    /// Column `i` as a group key: numbers as doubles, so that two decimals
    /// that read as the same double are one group (as in the engine).
    fn key(&self, i: usize) -> String {
        match self.cols.get(i) {
            Some(c) if c.ty == ColType::Number && !c.float => {
                format!("{}::double precision", c.sql)
            }
            _ => self.sql(i),
        }
    }

    /// Column `i` in the `C` collation when it is text-like.
    fn sortable(&self, i: usize) -> String {
        match self.cols.get(i) {
            Some(c) if matches!(c.ty, ColType::Text | ColType::Month | ColType::Date) => {
                format!("{} COLLATE \"C\"", c.sql)
            }
            Some(c) => c.sql.clone(),
            None => "NULL".to_string(),
        }
    }
}

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

/// Print a view prefix made of `keep` and `add` steps, then at most one
/// group (steps after the group, and sorts or top-N anywhere, are not
/// printed: they run locally). An `add` column is its expression, inlined
/// where it is used (its parameters are shared, not bound twice).
pub fn prefix_steps(from: &From, order: &RowOrder, cols: &[SrcColumn], steps: &[Step]) -> Query {
    let mut p = Printer {
        cols: cols
            .iter()
            .enumerate()
            .map(|(i, c)| Col {
                sql: format!("s.c{i}"),
                ty: c.ty,
                float: c.read == Read::Float,
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
            Step::Keep(e) => preds.push(p.truth(e)),
            Step::Derive { name, expr } => {
                // Arithmetic prints parenthesised; a column or a literal
                // needs no parentheses.
                let sql = p.number(expr);
                p.cols.push(Col {
                    sql,
                    ty: ColType::Number,
                    float: true,
                    name: name.clone(),
                });
            }
            Step::Group { keys, aggregates } => {
                group = Some((keys.as_slice(), aggregates.as_slice()));
                break;
            }
            Step::Sort { .. } | Step::Top { .. } => break,
        }
    }
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
                        select.push(format!("sum({})::text", p.exact(i)));
                        outputs.push(value(ColType::Number));
                    }
                    (AggFn::Mean, Some(i), Some(c)) => {
                        select.push(format!("sum({})::text", p.exact(i)));
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
                let ties: Vec<String> = keys
                    .iter()
                    .map(|&k| match p.col_ty(k) {
                        ColType::Number => format!("{} NULLS LAST", p.key(k)),
                        _ => format!("{} NULLS LAST", p.sortable(k)),
                    })
                    .collect();
                tail = format!(
                    " GROUP BY {} ORDER BY min(s.r) NULLS LAST, {}",
                    ks.join(", "),
                    ties.join(", ")
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
    let filter = if preds.is_empty() {
        String::new()
    } else {
        format!(" WHERE {}", preds.join(" AND "))
    };
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

#[cfg(test)]
mod tests {
    use super::*;

    fn cols() -> Vec<SrcColumn> {
        vec![
            SrcColumn {
                name: "month".into(),
                ty: ColType::Month,
                read: Read::Text,
            },
            SrcColumn {
                name: "po\"ol; x".into(),
                ty: ColType::Text,
                read: Read::Text,
            },
            SrcColumn {
                name: "visits".into(),
                ty: ColType::Number,
                read: Read::Exact,
            },
        ]
    }

    #[test]
    fn values_are_parameters_and_names_are_quoted() {
        let keep = Expr::Cmp(
            CmpOp::Eq,
            Box::new(Expr::Col(1)),
            Box::new(Expr::Lit(Value::Text("'); DROP TABLE x; --".into()))),
        );
        let q = prefix(
            &From::Table {
                schema: Some("s\"1".into()),
                name: "t;".into(),
            },
            &RowOrder {
                columns: vec![("line".into(), false)],
            },
            &cols(),
            &[keep],
            Some((
                &[0],
                &[Aggregate {
                    name: "visits".into(),
                    func: AggFn::Sum,
                    column: Some(2),
                }],
            )),
        );
        assert_eq!(q.params, vec!["'); DROP TABLE x; --".to_string()]);
        assert!(!q.sql.contains("DROP"), "{}", q.sql);
        assert_eq!(
            q.sql,
            "SELECT s.c0::text, sum(s.c2::numeric)::text FROM (SELECT \"month\"::text AS c0, \
             \"po\"\"ol; x\"::text AS c1, \"visits\" AS c2, \"line\" AS r FROM \"s\"\"1\".\"t;\") AS s \
             WHERE COALESCE((s.c1 COLLATE \"C\") = ($1::text COLLATE \"C\"), false) \
             GROUP BY s.c0 ORDER BY min(s.r) NULLS LAST, s.c0 COLLATE \"C\" NULLS LAST"
        );
    }

    /// Every aggregate over every kind of column, with a filter using each
    /// operator: the printed query, read by a person (snapshot).
    #[test]
    fn every_aggregate_prints() {
        let mut cs = cols();
        cs.push(SrcColumn {
            name: "year".into(),
            ty: ColType::Year,
            read: Read::Year,
        });
        cs.push(SrcColumn {
            name: "amount".into(),
            ty: ColType::Number,
            read: Read::Float,
        });
        let lit = |v: Value| Box::new(Expr::Lit(v));
        let col = |i: usize| Box::new(Expr::Col(i));
        let keeps = vec![
            Expr::And(
                Box::new(Expr::Cmp(CmpOp::Ge, col(0), lit(Value::Month(2024 * 12)))),
                Box::new(Expr::Not(Box::new(Expr::In(
                    col(1),
                    vec![Value::Text("A".into()), Value::Text("B".into())],
                )))),
            ),
            Expr::Or(
                Box::new(Expr::Cmp(CmpOp::Ne, col(3), lit(Value::Year(2020)))),
                Box::new(Expr::Cmp(
                    CmpOp::Lt,
                    Box::new(Expr::Neg(Box::new(Expr::Arith(
                        ArithOp::Sub,
                        col(4),
                        col(2),
                    )))),
                    lit(Value::Number(-1.5)),
                )),
            ),
        ];
        let agg = |name: &str, func, column| Aggregate {
            name: name.into(),
            func,
            column,
        };
        let aggs = vec![
            agg("rows", AggFn::Count, None),
            agg("n", AggFn::Count, Some(4)),
            agg("total", AggFn::Sum, Some(4)),
            agg("visits", AggFn::Sum, Some(2)),
            agg("avg", AggFn::Mean, Some(2)),
            agg("mid", AggFn::Median, Some(4)),
            agg("lo", AggFn::Min, Some(1)),
            agg("hi", AggFn::Max, Some(0)),
            agg("one", AggFn::First, Some(1)),
            agg("end", AggFn::Last, Some(3)),
        ];
        let q = prefix(
            &From::Table {
                schema: None,
                name: "visits".into(),
            },
            &RowOrder {
                columns: vec![("day".into(), false), ("gate".into(), true)],
            },
            &cs,
            &keeps,
            Some((&[1, 3], &aggs)),
        );
        let mut shown = q
            .sql
            .replace(" FROM (", "\nFROM (")
            .replace(" WHERE ", "\nWHERE ");
        shown = shown
            .replace(" GROUP BY ", "\nGROUP BY ")
            .replace(", ", ",\n  ");
        for (i, p) in q.params.iter().enumerate() {
            shown.push_str(&format!("\n-- ${} = {p:?}", i + 1));
        }
        insta::assert_snapshot!(shown);
    }

    #[test]
    fn added_columns_are_inlined_and_number_keys_group_as_doubles() {
        let steps = vec![
            Step::Derive {
                name: "half".into(),
                expr: Expr::Arith(
                    ArithOp::Div,
                    Box::new(Expr::Col(2)),
                    Box::new(Expr::Lit(Value::Number(2.0))),
                ),
            },
            Step::Keep(Expr::Cmp(
                CmpOp::Gt,
                Box::new(Expr::Col(3)),
                Box::new(Expr::Lit(Value::Number(10.0))),
            )),
            Step::Group {
                keys: vec![2],
                aggregates: vec![Aggregate {
                    name: "s".into(),
                    func: AggFn::Sum,
                    column: Some(3),
                }],
            },
        ];
        let q = prefix_steps(
            &From::Table {
                schema: None,
                name: "t".into(),
            },
            &RowOrder::default(),
            &cols(),
            &steps,
        );
        let half = "(s.c2::double precision / NULLIF(CAST($1::text AS double precision), 0))";
        assert!(
            q.sql.contains(&format!("WHERE COALESCE({half}::double precision > CAST($2::text AS double precision), false)")),
            "{}",
            q.sql
        );
        assert!(
            q.sql.contains(&format!("sum({half}::text::numeric)")),
            "{}",
            q.sql
        );
        assert!(
            q.sql.starts_with("SELECT s.c2::double precision::text,"),
            "{}",
            q.sql
        );
        assert!(
            q.sql.contains("GROUP BY s.c2::double precision ORDER BY"),
            "{}",
            q.sql
        );
        assert_eq!(q.params, vec!["2.0".to_string(), "10.0".to_string()]);
    }

    #[test]
    fn numbers_divide_safely_and_median_reads_both_middles() {
        let keep = Expr::Cmp(
            CmpOp::Gt,
            Box::new(Expr::Arith(
                ArithOp::Div,
                Box::new(Expr::Col(2)),
                Box::new(Expr::Lit(Value::Number(0.5))),
            )),
            Box::new(Expr::Lit(Value::Number(3.0))),
        );
        let q = prefix(
            &From::Query("select 1;".into()),
            &RowOrder::default(),
            &cols(),
            &[keep],
            Some((
                &[],
                &[Aggregate {
                    name: "m".into(),
                    func: AggFn::Median,
                    column: Some(2),
                }],
            )),
        );
        assert_eq!(q.params, vec!["0.5".to_string(), "3.0".to_string()]);
        assert!(
            q.sql.contains(
                "(s.c2::double precision / NULLIF(CAST($1::text AS double precision), 0))"
            ),
            "{}",
            q.sql
        );
        assert!(
            q.sql
                .contains("percentile_disc(0.5) WITHIN GROUP (ORDER BY s.c2 DESC)")
                || q.sql.contains("ORDER BY s.c2::double precision DESC"),
            "{}",
            q.sql
        );
        assert!(
            q.sql.contains("FROM (select 1) AS \"crescendo source\""),
            "{}",
            q.sql
        );
        assert!(
            q.sql
                .contains("row_number() OVER (ORDER BY \"month\"::text COLLATE \"C\" NULLS LAST"),
            "{}",
            q.sql
        );
        assert!(!q.sql.contains("GROUP BY"));
        assert_eq!(q.outputs, vec![Output::Median { name: "m".into() }]);
    }
}
