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
//! apart as the engine does); dates and months compare as their ISO text,
//! which is their order for years 0 to 9999.

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
            Expr::Arith(first, rest) => {
                // `((a + b) - c)`: one parenthesis per operator, written in
                // a loop
                let mut out = "(".repeat(rest.len());
                out.push_str(&self.number(first));
                for (op, b) in rest {
                    let y = self.number(b);
                    out.push_str(&match op {
                        ArithOp::Add => format!(" + {y})"),
                        ArithOp::Sub => format!(" - {y})"),
                        ArithOp::Mul => format!(" * {y})"),
                        ArithOp::Div => format!(" / NULLIF({y}, 0))"),
                    });
                }
                out
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

    /// Predicates joined by `word`, `((a AND b) AND c)`, in a loop;
    /// `empty` when there are none.
    fn joined(&mut self, parts: &[Expr], word: &str, empty: &str) -> String {
        let Some((first, rest)) = parts.split_first() else {
            return empty.to_string();
        };
        let mut out = "(".repeat(rest.len());
        out.push_str(&self.truth(first));
        for p in rest {
            let t = self.truth(p);
            out.push_str(&format!(" {word} {t})"));
        }
        out
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
            Expr::And(parts) => self.joined(parts, "AND", "true"),
            Expr::Or(parts) => self.joined(parts, "OR", "false"),
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

/// The start of every query: the printer over the source's columns, the
/// inner select list (`c0`, `c1`, …, `r`), the leading `keep`s (as
/// predicates; `add` columns are inlined) and the first group, if any.
type Start = (
    Printer,
    Vec<String>,
    Vec<String>,
    Option<(Vec<usize>, Vec<Aggregate>)>,
);

fn start(order: &RowOrder, cols: &[SrcColumn], steps: &[Step]) -> Start {
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
                group = Some((keys.clone(), aggregates.clone()));
                break;
            }
            Step::Sort { .. } | Step::Top { .. } => break,
        }
    }
    (p, inner, preds, group)
}

/// Print a view prefix made of `keep` and `add` steps, then at most one
/// group (later steps are not printed here: see [`pipeline`]). An `add`
/// column is its expression, inlined where it is used (its parameters are
/// shared, not bound twice).
pub fn prefix_steps(from: &From, order: &RowOrder, cols: &[SrcColumn], steps: &[Step]) -> Query {
    let (p, inner, preds, group) = start(order, cols, steps);
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

impl Printer {
    /// Column `i` as an `ORDER BY` term of a stable sort: missing last in
    /// both directions; texts by bytes; `-0` before `0` ascending (as
    /// `f64::total_cmp`, which SQL's float order does not tell apart).
    fn sort_terms(&self, i: usize, desc: bool) -> Vec<String> {
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
    fn aggregate_value(&self, a: &Aggregate) -> (String, ColType) {
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
                format!("sum({})::double precision", self.exact(i)),
                ColType::Number,
            ),
            (AggFn::Mean, Some(i), Some(c)) => (
                format!(
                    "(sum({})::double precision / NULLIF(count({c}), 0)::double precision)",
                    self.exact(i)
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
    fn group_order(&self, keys: &[usize]) -> String {
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
    fn wrap(&mut self, rel: &str, k: usize, r: &str, filter: Option<String>) -> String {
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

/// Print a whole view pipeline (see [`pushable`]) as one query. Without
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
    let (mut p, inner, preds, group) = start(order, cols, &head);
    let filter = if preds.is_empty() {
        String::new()
    } else {
        format!(" WHERE {}", preds.join(" AND "))
    };
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
                let pred = p.truth(e);
                rel = p.wrap(&rel, k, &format!("t{k}.r"), Some(pred));
                k += 1;
            }
            Piece::Step(Step::Derive { name, expr }) => {
                let sql = p.number(expr);
                p.cols.push(Col {
                    sql,
                    ty: ColType::Number,
                    float: true,
                    name: name.clone(),
                });
            }
            Piece::Columns(picked) => {
                p.cols = picked
                    .iter()
                    .filter_map(|&i| p.cols.get(i))
                    .map(|c| Col {
                        sql: c.sql.clone(),
                        ty: c.ty,
                        float: c.float,
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
        let q = keep(Expr::Or(vec![gt(1.0), gt(2.0), gt(3.0)]));
        assert!(
            q.sql.contains("((COALESCE(") && q.sql.contains(", false) OR COALESCE("),
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
