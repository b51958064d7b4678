//! Expressions and columns as SQL: values as bound parameters, numbers as
//! double precision, texts compared in the `C` collation, predicates never
//! NULL (see the table in the module docs of `print`).

use crescendo_data::bucket::Bucket;
use crescendo_data::{ArithOp, CmpOp, ColType, Expr, Value};

use super::Printer;

impl Printer {
    pub(super) fn param(&mut self, v: &Value) -> String {
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

    pub(super) fn col_ty(&self, i: usize) -> ColType {
        self.cols.get(i).map_or(ColType::Text, |c| c.ty)
    }

    /// The story type an expression has (numbers for arithmetic).
    pub(super) fn ty_of(&self, e: &Expr) -> ColType {
        match e {
            Expr::Col(i) => self.col_ty(*i),
            Expr::Lit(v) => match v {
                Value::Text(_) | Value::Missing => ColType::Text,
                Value::Number(_) => ColType::Number,
                Value::Date(_) => ColType::Date,
                Value::Month(_) => ColType::Month,
                Value::Year(_) => ColType::Year,
            },
            Expr::Bucket { ty, .. } => *ty,
            Expr::YearQuarter(..) => ColType::Month,
            _ => ColType::Number,
        }
    }

    /// A value expression; numbers as double precision.
    pub(super) fn value(&mut self, e: &Expr) -> String {
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
            Expr::Bucket { bucket, of, .. } => {
                let x = self.value(of);
                bucket_sql(*bucket, &x)
            }
            Expr::YearQuarter(y, q) => {
                let (yt, qt) = (self.ty_of(y), self.ty_of(q));
                let (y, q) = (self.value(y), self.value(q));
                year_quarter_sql((&y, yt), (&q, qt))
            }
            // A predicate used as a value is missing (as in the engine).
            _ => "NULL".to_string(),
        }
    }

    /// A value expression as a number (years count as their number).
    pub(super) fn number(&mut self, e: &Expr) -> String {
        let v = self.value(e);
        if self.ty_of(e) == ColType::Year {
            format!("{v}::double precision")
        } else {
            v
        }
    }

    /// A comparison operand: texts in the `C` collation, a year compared
    /// with a number as a number.
    pub(super) fn operand(&mut self, e: &Expr, other: &Expr) -> String {
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
    pub(super) fn joined(&mut self, parts: &[Expr], word: &str, empty: &str) -> String {
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

    /// A predicate that alone decides whether a row is kept (a `WHERE`
    /// conjunct), where NULL drops the row as false does. Under `AND` and
    /// `OR` (three-valued), a result is true exactly when it is true with
    /// every NULL read as false (both are monotone, and true whichever
    /// value a NULL stands for), so comparisons print without the
    /// `COALESCE` of [`Self::truth`], which only a `NOT` needs.
    pub(super) fn filter(&mut self, e: &Expr) -> String {
        match e {
            Expr::Cmp(..) | Expr::In(..) => match self.comparison(e) {
                Some(bare) => format!("({bare})"),
                None => "false".to_string(),
            },
            Expr::And(parts) | Expr::Or(parts) if !parts.is_empty() => {
                let word = if matches!(e, Expr::And(_)) {
                    "AND"
                } else {
                    "OR"
                };
                let (first, rest) = parts.split_at(1);
                let mut out = "(".repeat(rest.len());
                out.push_str(&self.filter(&first[0]));
                for p in rest {
                    let t = self.filter(p);
                    out.push_str(&format!(" {word} {t})"));
                }
                out
            }
            _ => self.truth(e),
        }
    }

    /// A comparison or an `in` list as SQL, NULL where an operand is
    /// missing; `None` for an empty list (false) and other expressions.
    fn comparison(&mut self, e: &Expr) -> Option<String> {
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
                Some(format!("{x} {op} {y}"))
            }
            Expr::In(a, list) => {
                let first = Expr::Lit(list.first()?.clone());
                let x = self.operand(a, &first);
                let items: Vec<String> = list
                    .iter()
                    .map(|v| {
                        let lit = Expr::Lit(v.clone());
                        self.operand(&lit, a)
                    })
                    .collect();
                Some(format!("{x} IN ({})", items.join(", ")))
            }
            _ => None,
        }
    }

    /// A predicate, never NULL.
    pub(super) fn truth(&mut self, e: &Expr) -> String {
        match e {
            Expr::Cmp(..) | Expr::In(..) => match self.comparison(e) {
                Some(c) => format!("COALESCE({c}, false)"),
                None => "false".to_string(),
            },
            Expr::And(parts) => self.joined(parts, "AND", "true"),
            Expr::Or(parts) => self.joined(parts, "OR", "false"),
            Expr::Not(a) => format!("(NOT {})", self.truth(a)),
            // A value used as a predicate is false (as in the engine).
            _ => "false".to_string(),
        }
    }
}

/// A time bucket of `x`, the ISO text of a date (`YYYY-MM-DD`) or a month
/// (`YYYY-MM`), as `crescendo_data::bucket` computes it: dates and months
/// as ISO text, years as integers, labels as text. `to_char`'s `Dy`, `IYYY`
/// and `IW` are English weekday abbreviations and ISO 8601 week fields
/// whatever the server's locale (without the `TM` prefix).
pub(super) fn bucket_sql(bucket: Bucket, x: &str) -> String {
    let year = format!("CAST(substr({x}, 1, 4) AS integer)");
    let month = format!("CAST(substr({x}, 6, 2) AS integer)");
    let day = format!("CAST({x} AS date)");
    match bucket {
        Bucket::Month => format!("substr({x}, 1, 7)"),
        Bucket::Year => year,
        Bucket::Quarter => {
            format!("(CAST({year} AS text) || ' Q' || CAST(({month} + 2) / 3 AS text))")
        }
        Bucket::FiscalYear(f) => format!(
            "({} || {})",
            text_literal(year_prefix(f)),
            fiscal_year(&year, &month, f.start_month)
        ),
        Bucket::FiscalQuarter(f) => format!(
            "({} || {} || {} || CAST(({month} + {}) % 12 / 3 + 1 AS text))",
            text_literal(year_prefix(f)),
            fiscal_year(&year, &month, f.start_month),
            text_literal(&format!(" {}", quarter_prefix(f))),
            12 - f.start_month.clamp(1, 12)
        ),
        Bucket::WeekStart => format!(
            "to_char({day} - (CAST(extract(isodow FROM {day}) AS integer) - 1), 'YYYY-MM-DD')"
        ),
        Bucket::Week => format!("to_char({day}, 'IYYY-\"W\"IW')"),
        Bucket::Weekday => format!("to_char({day}, 'Dy')"),
    }
}

/// The text before a fiscal year's number, as `Fiscal::year_label` writes
/// it (none for a calendar year).
fn year_prefix(f: crescendo_data::locale::Fiscal) -> &'static str {
    if f.is_fiscal() {
        f.names.year
    } else {
        ""
    }
}

/// The text before a quarter's number, as `Fiscal::quarter_name` writes it.
fn quarter_prefix(f: crescendo_data::locale::Fiscal) -> &'static str {
    if f.is_fiscal() {
        f.names.quarter
    } else {
        "Q"
    }
}

/// A PostgreSQL string literal (standard conforming: a quote is doubled,
/// a backslash is itself).
fn text_literal(text: &str) -> String {
    format!("'{}'", text.replace('\'', "''"))
}

/// `year_quarter(y, q)` as `crescendo_data::bucket::year_quarter` computes
/// it: the ISO text (`YYYY-MM`) of the quarter's first month, NULL unless
/// the year is a year or a whole number 1 to 9999 and the quarter a number
/// 1 to 4 or a text `1`..`4`, `Q1`..`Q4` (any case, spaces around it
/// ignored).
pub(super) fn year_quarter_sql((y, yt): (&str, ColType), (q, qt): (&str, ColType)) -> String {
    let year = match yt {
        ColType::Year => y.to_string(),
        _ => format!(
            "(CASE WHEN {y} = trunc({y}) AND {y} BETWEEN 1 AND 9999 THEN CAST({y} AS integer) END)"
        ),
    };
    let quarter = match qt {
        ColType::Text => format!(
            "(CASE WHEN upper(trim(' ' FROM {q})) IN ('1', '2', '3', '4', 'Q1', 'Q2', 'Q3', 'Q4') \
             THEN CAST(right(trim(' ' FROM {q}), 1) AS integer) END)"
        ),
        _ => format!("(CASE WHEN {q} IN (1, 2, 3, 4) THEN CAST({q} AS integer) END)"),
    };
    format!(
        "(lpad(CAST({year} AS text), 4, '0') || '-' || lpad(CAST(({quarter} - 1) * 3 + 1 AS text), 2, '0'))"
    )
}

/// The fiscal year (named by the calendar year it ends in) as text.
fn fiscal_year(year: &str, month: &str, start: u32) -> String {
    if start.clamp(1, 12) == 1 {
        format!("CAST({year} AS text)")
    } else {
        format!("CAST({year} + CASE WHEN {month} >= {start} THEN 1 ELSE 0 END AS text)")
    }
}

impl Printer {
    /// The column an `add` step appends: a number, or a time bucket.
    pub(super) fn derived(&mut self, name: &str, expr: &Expr) {
        let ty = expr.value_type();
        let sql = if ty == ColType::Number {
            self.number(expr)
        } else {
            self.value(expr)
        };
        self.cols.push(super::Col {
            sql,
            ty,
            float: ty == ColType::Number,
            source: false,
            name: name.to_owned(),
        });
    }

    pub(super) fn sql(&self, i: usize) -> String {
        self.cols
            .get(i)
            .map_or_else(|| "NULL".to_string(), |c| c.sql.clone())
    }

    /// The exact sum of number column `i` over a group, as an SQL
    /// `numeric` (or integer) aggregate expression.
    ///
    /// * Integer and `numeric` columns: `sum(x)` (PostgreSQL sums `smallint`
    ///   and `integer` in a `bigint`, `bigint` and `numeric` exactly in
    ///   `numeric`), with no per-row conversion.
    /// * A double of the source: each value whose shortest text has at
    ///   most six decimals, and whose magnitude is below 2^32, is summed as
    ///   the integer `round(x * 10^6)` (a `bigint` sum, exact), without
    ///   printing and parsing text ([`decimal_sum`]). Any other value
    ///   stops the query, and [`exact_fallback`] adds such values through
    ///   their shortest text as `numeric` instead. Both give the exact sum
    ///   of the shortest texts.
    /// * Any other double (an `add` column): through its shortest text.
    pub(super) fn exact_sum(&self, i: usize) -> String {
        match self.cols.get(i) {
            Some(c) if c.float && c.source => decimal_sum(&c.sql),
            Some(c) if c.float => format!("sum({}::text::numeric)", c.sql),
            Some(c) if c.ty == ColType::Number => format!("sum({})", c.sql),
            Some(c) => format!("sum({}::numeric)", c.sql),
            None => "sum(NULL::numeric)".to_string(),
        }
    }

    /// Column `i` as a group key: numbers as doubles, so that two decimals
    /// that read as the same double are one group (as in the engine).
    pub(super) fn key(&self, i: usize) -> String {
        match self.cols.get(i) {
            Some(c) if c.ty == ColType::Number && !c.float => {
                format!("{}::double precision", c.sql)
            }
            _ => self.sql(i),
        }
    }

    /// Column `i` in the `C` collation when it is text-like.
    pub(super) fn sortable(&self, i: usize) -> String {
        match self.cols.get(i) {
            Some(c) if matches!(c.ty, ColType::Text | ColType::Month | ColType::Date) => {
                format!("{} COLLATE \"C\"", c.sql)
            }
            Some(c) => c.sql.clone(),
            None => "NULL".to_string(),
        }
    }
}

/// The number of decimals a double's shortest text may have to be summed
/// as an integer by [`decimal_sum`].
const DECIMALS: u32 = 6;

/// What [`decimal_sum`] adds to a value that is not such a decimal before
/// casting it to `bigint`: the sum is NaN, which no `bigint` holds, so the
/// cast stops the query with `numeric_value_out_of_range` (22003).
const NOT_SCALED: &str = " + 'NaN'::double precision)::bigint END)";

/// `x > -2^32 AND x < 2^32` with `x = round(x * 10^6) / 10^6` before
/// them, in double arithmetic (the condition of the proof at
/// [`decimal_sum`]). The equality first and two comparisons rather than
/// `abs`: measured the cheaper order in PostgreSQL 15
/// (tests/bench/database).
fn scaled(x: &str) -> String {
    let scale = 10u64.pow(DECIMALS);
    let bound = "4294967296::double precision";
    format!(
        "{x} = round({x} * {scale}::double precision) / {scale}::double precision AND {x} > -{bound} AND {x} < {bound}"
    )
}

/// `n * 10^-DECIMALS` as a `numeric` literal factor.
fn unscale(n: &str) -> String {
    format!("({n} * 0.{:0>width$})", 1, width = DECIMALS as usize)
}

/// The exact sum of double column `x` (a plain column reference: it is
/// named several times), equal to `sum(x::text::numeric)` (the session
/// prints doubles as their shortest text, `extra_float_digits = 1`),
/// when every value passes [`scaled`]; otherwise the query stops with
/// `numeric_value_out_of_range` and [`exact_fallback`] gives the query
/// to run instead ([`crate::client::Session::rows`] does so).
///
/// A value passes when `x = round(x * 10^6) / 10^6` in double arithmetic
/// and `-2^32 < x < 2^32` (NaN and the infinities fail the bound). Then
/// `n = round(x * 10^6)` is an integer below 2^53 (exact as a double and
/// as a `bigint`; the cast `(x * 10^6)::bigint` rounds as `round` does,
/// to the nearest, ties to even), `n / 10^6` rounds to `x` (IEEE division
/// is correctly rounded, both operands are exact), so the decimal
/// `n / 10^6` lies in `x`'s rounding interval. That interval is one ulp
/// wide, below 2^-20 < 10^-6 for `|x| < 2^32`, so it holds no other
/// decimal with six or fewer decimals, and the shortest text (the
/// shortest decimal in the interval, which then has six or fewer decimals
/// as well) is `n / 10^6` exactly. The passing values are summed as the
/// integers `n` (a `bigint` sum, exact in `numeric`) scaled back by
/// 10^-6 (exact in `numeric`). A value that fails (more decimals, larger,
/// NaN, infinities) goes to the `ELSE` branch, whose `x + NaN` is NaN for
/// every non-NULL `x` and fails the cast (`CASE` evaluates a branch only
/// for the rows that reach it). NULLs reach the `ELSE` branch as NULL and
/// are skipped; the sum is NULL when every value is.
///
/// One test per row and no second aggregate: measured 18% less server
/// CPU than [`exact_decimal_sum`] on the products view of the benchmark
/// ledger (tests/bench/database), which runs only when a value fails.
fn decimal_sum(x: &str) -> String {
    let scale = 10u64.pow(DECIMALS);
    unscale(&format!(
        "sum(CASE WHEN {} THEN ({x} * {scale}::double precision)::bigint ELSE ({x}{NOT_SCALED}",
        scaled(x)
    ))
}

/// The exact sum of double column `x` that holds for every value, as
/// [`decimal_sum`] but with the values that fail [`scaled`] summed through
/// their shortest text in a second filtered sum (`numeric`). NULLs pass
/// neither filter; the sum is NULL when both parts are (PostgreSQL
/// computes a repeated aggregate once).
fn exact_decimal_sum(x: &str) -> String {
    let scale = 10u64.pow(DECIMALS);
    let pass = scaled(x);
    let ints = unscale(&format!(
        "sum(round({x} * {scale}::double precision)::bigint) FILTER (WHERE {pass})"
    ));
    let texts = format!("sum({x}::text::numeric) FILTER (WHERE NOT ({pass}))");
    format!("COALESCE({ints} + {texts}, {ints}, {texts})")
}

/// `sql` with every sum printed by [`decimal_sum`] replaced by
/// [`exact_decimal_sum`] of the same column: the query to run when `sql`
/// stopped with `numeric_value_out_of_range`. `None` when `sql` holds no
/// such sum (a text that only looks like one is left alone).
pub fn exact_fallback(sql: &str) -> Option<String> {
    let mut columns: Vec<&str> = Vec::new();
    for (end, _) in sql.match_indices(NOT_SCALED) {
        let Some(start) = sql[..end].rfind("ELSE (").map(|i| i + "ELSE (".len()) else {
            continue;
        };
        let x = &sql[start..end];
        if !columns.contains(&x) && sql.contains(&decimal_sum(x)) {
            columns.push(x);
        }
    }
    if columns.is_empty() {
        return None;
    }
    let mut out = sql.to_string();
    for x in columns {
        out = out.replace(&decimal_sum(x), &exact_decimal_sum(x));
    }
    Some(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_fallback_swaps_each_scaled_sum_for_the_exact_one() {
        let sql = format!(
            "SELECT {}::text, {} FROM t WHERE x > 0 AND {}",
            decimal_sum("s.c4"),
            decimal_sum("s.c7"),
            decimal_sum("s.c4")
        );
        let exact = exact_fallback(&sql).expect("scaled sums");
        assert_eq!(
            exact,
            format!(
                "SELECT {}::text, {} FROM t WHERE x > 0 AND {}",
                exact_decimal_sum("s.c4"),
                exact_decimal_sum("s.c7"),
                exact_decimal_sum("s.c4")
            )
        );
        assert!(!exact.contains(NOT_SCALED));
        // a query wrapped around it keeps its wrapping
        let wrapped = format!("SELECT EXISTS ({sql})::text");
        assert_eq!(
            exact_fallback(&wrapped),
            Some(format!("SELECT EXISTS ({exact})::text"))
        );
    }

    #[test]
    fn a_query_without_scaled_sums_has_no_fallback() {
        assert_eq!(exact_fallback("SELECT sum(s.c1) FROM t"), None);
        assert_eq!(exact_fallback(&exact_decimal_sum("s.c4")), None);
        // the marker alone, in a source query of the user's, is left alone
        let user = format!("SELECT CASE WHEN a THEN 1 ELSE (b{NOT_SCALED} FROM t");
        assert_eq!(exact_fallback(&user), None);
        // ... also next to a printed sum, which alone is swapped
        let both = format!("{user} UNION {}", decimal_sum("s.c2"));
        assert_eq!(
            exact_fallback(&both),
            Some(format!("{user} UNION {}", exact_decimal_sum("s.c2")))
        );
    }
}
