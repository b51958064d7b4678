//! The SQL printer: a view prefix (filters, then at most one group with its
//! aggregates, then filters, derived columns, sorts and projections; see
//! [`pipeline`]) as one PostgreSQL query that reproduces the local engine.
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
//! | a comparison with a missing operand is false   | `COALESCE(a op b, false)`; plain `a op b` in a `WHERE` outside any `NOT` (NULL drops the row as false does; `Printer::filter`) |
//! | texts compare by bytes                          | `COLLATE "C"` (UTF-8 byte order)             |
//! | `x / 0` is missing                              | `x / NULLIF(y, 0)`                           |
//! | arithmetic in doubles                           | `::double precision`                         |
//! | `add NAME = EXPR` (a number column)             | the expression, inlined where it is used     |
//! | time buckets of dates and months (`crescendo_data::bucket`) | `substr` of the ISO text; `to_char` with `IYYY`, `IW`, `Dy` for weeks and weekdays (`expr::bucket_sql`) |
//! | `year_quarter(y, q)`: the quarter's first month, or missing | `lpad` of the year and month in ISO text, `CASE` for the cells that make a quarter (`expr::year_quarter_sql`) |
//! | number keys are doubles (`-0` is `0`)           | `GROUP BY x::double precision`               |
//! | groups in order of first appearance             | `ORDER BY min(r)`                            |
//! | a missing key is a group of its own             | `GROUP BY` puts NULLs in one group           |
//! | `sum`: exact, rounded once                       | exact in SQL, parsed once: `sum(x)` of integers and `numeric`; a double of the source summed as the integers `round(x * 10^6)` when that is every value's shortest text (at most six decimals, magnitude below 2^32); otherwise the query stops and runs again with the other values through their text (`x::text::numeric`; `expr::exact_fallback`, `Session::rows`), as an `add` column always is (`Printer::exact_sum`) |
//! | `mean`: the sum over the count                   | sum and count, divided locally               |
//! | `median`: the middle value, or the two middle values halved and added | `percentile_disc(0.5)` ascending and descending, and the count; combined locally |
//! | `min`/`max` (texts by bytes)                     | `min`/`max` (`COLLATE "C"`)                  |
//! | `first`/`last`: first/last non-missing in row order | `array_agg(… ORDER BY r) FILTER (WHERE … IS NOT NULL)` |
//! | `count()`, `count(x)`                           | `count(*)`, `count(x)`                       |
//! | `sort`: stable, missing last both ways          | `row_number() OVER (ORDER BY k … NULLS LAST, r)` |
//! | `columns`                                       | the outer select list                        |
//! | `top`, a second `by` (exact sums of doubles)    | not printed: run locally                     |
//!
//! Every output is sent as text and parsed by [`crate::decode`], so numbers
//! arrive exactly (numeric text, or the shortest text that reads back as
//! the same double).
//!
//! Known differences, all outside ordinary data: a sum is the exact sum of
//! the stored decimals (of the shortest texts, for doubles), where the
//! local engine sums the nearest doubles exactly — the two can differ in
//! the last bit; an arithmetic overflow is an error in PostgreSQL where the
//! engine gives a missing value (so is an underflow of a mean or a median
//! after a group); `-0` and `0` compare equal in SQL (a sort tells them
//! apart as the engine does); a sum of a `smallint` or `integer` column is
//! a `bigint`, which only more than 2^32 rows of the largest values
//! overflow; dates and months compare as their ISO text,
//! which is their order for years 0 to 9999.
//!
//! The printer is in parts: `expr.rs` prints expressions and columns,
//! `prefix.rs` the source select and a prefix up to its group, and
//! `pipeline.rs` the steps after it.

mod expr;
mod pipeline;
mod prefix;

use crescendo_data::{ColType, Step};

use crate::From;

pub use expr::exact_fallback;
pub use pipeline::pipeline;
pub use prefix::{prefix, prefix_steps};

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
    /// A column of the source itself (`s.c3`): cheap to name several
    /// times in one expression.
    source: bool,
    name: String,
}

/// Prints expressions over the prefix's columns, collecting the values
/// bound to `$1…` (see `expr.rs`).
struct Printer {
    cols: Vec<Col>,
    params: Vec<String>,
}

/// A step of a pushed pipeline: a resolved step, or `columns` (the picked
/// columns, by position).
#[derive(Clone, Debug, PartialEq)]
pub enum Piece {
    Step(Step),
    Columns(Vec<usize>),
}

/// What kind of step a piece (or a step as written) is, as far as printing
/// it as SQL goes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum StepKind {
    Keep,
    /// `add`.
    Derive,
    /// `by`.
    Group,
    Sort,
    Columns,
    Top,
}

impl Piece {
    pub fn kind(&self) -> StepKind {
        match self {
            Piece::Step(Step::Keep(_)) => StepKind::Keep,
            Piece::Step(Step::Derive { .. }) => StepKind::Derive,
            Piece::Step(Step::Group { .. }) => StepKind::Group,
            Piece::Step(Step::Sort { .. }) => StepKind::Sort,
            Piece::Step(Step::Top { .. }) => StepKind::Top,
            Piece::Columns(_) => StepKind::Columns,
        }
    }
}

/// How many leading steps of a pipeline one query prints (the one rule of
/// what goes to SQL): `keep`s and `add`s, at most one group, and after it
/// (or after a row-level `sort` or `columns`) only `keep`, `add`, `sort`
/// and `columns`. A `top` and a second group are never printed (see the
/// module docs); they and everything after run locally.
pub fn pushable_len(kinds: impl IntoIterator<Item = StepKind>) -> usize {
    let mut grouped_or_reordered = false;
    let mut n = 0;
    for kind in kinds {
        match kind {
            StepKind::Keep | StepKind::Derive => {}
            StepKind::Group if !grouped_or_reordered => grouped_or_reordered = true,
            StepKind::Sort | StepKind::Columns => grouped_or_reordered = true,
            StepKind::Group | StepKind::Top => break,
        }
        n += 1;
    }
    n
}

/// Whether [`pipeline`] prints `pieces` whole (see [`pushable_len`]).
pub fn pushable(pieces: &[Piece]) -> bool {
    pushable_len(pieces.iter().map(Piece::kind)) == pieces.len()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::types::{Read, SrcColumn};
    use crescendo_data::{AggFn, Aggregate, ArithOp, CmpOp, Expr, Value};

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
    fn what_goes_to_sql() {
        use StepKind::*;
        assert_eq!(pushable_len([Keep, Derive, Group, Keep, Sort, Columns]), 6);
        // a second group, or a `top`, ends what the query prints
        assert_eq!(pushable_len([Keep, Group, Derive, Group, Keep]), 3);
        assert_eq!(pushable_len([Keep, Top, Keep]), 1);
        assert_eq!(pushable_len([Top]), 0);
        // a group after a row-level sort or `columns` runs locally
        assert_eq!(pushable_len([Sort, Group]), 1);
        assert_eq!(pushable_len([Columns, Keep, Group]), 2);
        let group = Piece::Step(Step::Group {
            keys: vec![0],
            aggregates: Vec::new(),
        });
        assert!(pushable(&[
            Piece::Columns(vec![0]),
            Piece::Step(Step::Sort {
                keys: vec![(0, false)]
            })
        ]));
        assert!(!pushable(&[group.clone(), group]));
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
            "SELECT s.c0::text, sum(s.c2)::text FROM (SELECT \"month\"::text AS c0, \
             \"po\"\"ol; x\"::text AS c1, \"visits\" AS c2, \"line\" AS r FROM \"s\"\"1\".\"t;\") AS s \
             WHERE ((s.c1 COLLATE \"C\") = ($1::text COLLATE \"C\")) \
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
            Expr::And(vec![
                Expr::Cmp(CmpOp::Ge, col(0), lit(Value::Month(2024 * 12))),
                Expr::Not(Box::new(Expr::In(
                    col(1),
                    vec![Value::Text("A".into()), Value::Text("B".into())],
                ))),
            ]),
            Expr::Or(vec![
                Expr::Cmp(CmpOp::Ne, col(3), lit(Value::Year(2020))),
                Expr::Cmp(
                    CmpOp::Lt,
                    Box::new(Expr::Neg(Box::new(Expr::arith(
                        ArithOp::Sub,
                        *col(4),
                        *col(2),
                    )))),
                    lit(Value::Number(-1.5)),
                ),
            ]),
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
                expr: Expr::arith(ArithOp::Div, Expr::Col(2), Expr::Lit(Value::Number(2.0))),
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
            q.sql.contains(&format!(
                "WHERE ({half}::double precision > CAST($2::text AS double precision))"
            )),
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

    /// A chain of operators prints as nested parentheses, one per
    /// operator, written in a loop: 100,000 `and`ed comparisons print on a
    /// test thread's stack, in time linear in their number.
    #[test]
    fn chains_print_nested_in_a_loop() {
        let gt = |v: f64| {
            Expr::Cmp(
                CmpOp::Gt,
                Box::new(Expr::Col(2)),
                Box::new(Expr::Lit(Value::Number(v))),
            )
        };
        let keep = |e: Expr| {
            prefix(
                &From::Query("select 1;".into()),
                &RowOrder::default(),
                &cols(),
                &[e],
                None,
            )
        };
        let sum = Expr::Arith(
            Box::new(Expr::Col(2)),
            vec![(ArithOp::Add, Expr::Col(2)), (ArithOp::Sub, Expr::Col(2))],
        );
        let q = keep(Expr::Cmp(
            CmpOp::Gt,
            Box::new(sum),
            Box::new(Expr::Lit(Value::Number(1.0))),
        ));
        let c = "s.c2::double precision";
        assert!(q.sql.contains(&format!("(({c} + {c}) - {c})")), "{}", q.sql);
        // a filter of its own: NULL drops the row as false does
        let q = keep(Expr::Or(vec![gt(1.0), gt(2.0), gt(3.0)]));
        assert!(
            q.sql.contains(" WHERE (((s.c2") && q.sql.contains(") OR (s.c2"),
            "{}",
            q.sql
        );
        assert!(!q.sql.contains("COALESCE"), "{}", q.sql);
        // under `not`, a missing operand must read as false first
        let q = keep(Expr::Not(Box::new(Expr::Or(vec![gt(1.0), gt(2.0)]))));
        assert!(
            q.sql.contains("(NOT (COALESCE(") && q.sql.contains(", false) OR COALESCE("),
            "{}",
            q.sql
        );
        let n = 100_000;
        let q = keep(Expr::And((0..n).map(|i| gt(i as f64)).collect()));
        assert_eq!(q.params.len(), n);
        assert_eq!(q.sql.matches(" AND ").count(), n - 1);
    }

    #[test]
    fn numbers_divide_safely_and_median_reads_both_middles() {
        let keep = Expr::Cmp(
            CmpOp::Gt,
            Box::new(Expr::arith(
                ArithOp::Div,
                Expr::Col(2),
                Expr::Lit(Value::Number(0.5)),
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

    /// A group followed by `sort` (both directions), `add`, `keep` and
    /// `columns`: one query whose relations carry the row position `r`
    /// and which ends with `ORDER BY` it (snapshot, read by a person).
    #[test]
    fn later_steps_print_over_typed_groups() {
        let agg = |name: &str, func, column| Aggregate {
            name: name.into(),
            func,
            column,
        };
        let pieces = vec![
            Piece::Step(Step::Group {
                keys: vec![1],
                aggregates: vec![
                    agg("total", AggFn::Sum, Some(2)),
                    agg("avg", AggFn::Mean, Some(2)),
                    agg("mid", AggFn::Median, Some(2)),
                    agg("since", AggFn::Min, Some(0)),
                    agg("n", AggFn::Count, None),
                ],
            }),
            Piece::Step(Step::Sort {
                keys: vec![(2, true), (1, false)],
            }),
            Piece::Step(Step::Derive {
                name: "share".into(),
                expr: Expr::arith(ArithOp::Div, Expr::Col(1), Expr::Lit(Value::Number(4.0))),
            }),
            Piece::Step(Step::Keep(Expr::Cmp(
                CmpOp::Gt,
                Box::new(Expr::Col(6)),
                Box::new(Expr::Lit(Value::Number(1.0))),
            ))),
            Piece::Columns(vec![0, 6, 4]),
        ];
        assert!(pushable(&pieces));
        let q = pipeline(
            &From::Table {
                schema: None,
                name: "t".into(),
            },
            &RowOrder {
                columns: vec![("line".into(), false)],
            },
            &cols(),
            &pieces,
        );
        assert!(q.sql.ends_with(" ORDER BY t2.r"), "{}", q.sql);
        assert_eq!(q.params, vec!["4.0".to_string(), "1.0".to_string()]);
        assert_eq!(
            q.outputs,
            vec![
                Output::Value {
                    name: "po\"ol; x".into(),
                    ty: ColType::Text
                },
                Output::Value {
                    name: "share".into(),
                    ty: ColType::Number
                },
                Output::Value {
                    name: "since".into(),
                    ty: ColType::Month
                },
            ]
        );
        let shown = q
            .sql
            .replace(" FROM ", "\nFROM ")
            .replace(" WHERE ", "\nWHERE ")
            .replace(" GROUP BY ", "\nGROUP BY ")
            .replace(" ORDER BY t", "\nORDER BY t");
        insta::assert_snapshot!(shown);
    }

    #[test]
    fn only_exact_steps_are_pushable_and_a_bare_prefix_prints_as_before() {
        let group = Piece::Step(Step::Group {
            keys: vec![0],
            aggregates: Vec::new(),
        });
        let top = Piece::Step(Step::Top {
            key: 0,
            by: 1,
            n: 3,
            rest: "Other".into(),
        });
        let sort = Piece::Step(Step::Sort {
            keys: vec![(0, false)],
        });
        assert!(pushable(&[sort.clone(), Piece::Columns(vec![0])]));
        assert!(pushable(&[group.clone(), sort.clone()]));
        assert!(!pushable(&[group.clone(), sort.clone(), group.clone()]));
        assert!(!pushable(&[sort.clone(), group.clone()]));
        assert!(!pushable(&[group.clone(), top.clone()]));
        assert!(!pushable(&[top]));
        let from = From::Table {
            schema: None,
            name: "t".into(),
        };
        let Piece::Step(g) = group.clone() else {
            unreachable!()
        };
        assert_eq!(
            pipeline(&from, &RowOrder::default(), &cols(), &[group]),
            prefix_steps(&from, &RowOrder::default(), &cols(), &[g])
        );
    }
}
