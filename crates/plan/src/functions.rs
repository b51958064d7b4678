//! The functions of values: each takes a selection of a view's rows
//! (`last(monthly.riders where route = "Loop")`) or, for `ratio`, two
//! values, and computes one figure with `crescendo_data::stats`.

use crescendo_data::{stats, ColType, Table, Value};
use crescendo_diag::Diagnostic;
use crescendo_lang::ast::{CallArg, Expr, Selection, Span};

use crate::rows::{self, schema_of};
use crate::values::{Computed, Evaluator, Quantity};

const FUNCTIONS: &[&str] = &[
    "last",
    "first",
    "min",
    "max",
    "sum",
    "mean",
    "median",
    "sample_variance",
    "population_variance",
    "sample_standard_deviation",
    "population_standard_deviation",
    "count",
    "share",
    "change",
    "percent_change",
    "ratio",
    "growth",
    "rank",
    "slope",
    "intercept",
    "correlation",
];

/// The rows a selection picked: the column's cells (and the `by` column's
/// cells), in row order, or in `by` order when `by` is given.
struct Picked {
    cells: Vec<Value>,
    by: Option<(ColType, Vec<Value>)>,
    /// The whole column, unfiltered (for `share` and `rank`).
    all: Vec<Value>,
    /// Rows selected (for `count` of a view).
    rows: usize,
    column_type: Option<ColType>,
    describe: String,
}

fn num(v: &Value) -> Option<f64> {
    match v {
        Value::Number(n) => Some(*n),
        _ => None,
    }
}

fn position(v: &Value) -> Option<f64> {
    match v {
        Value::Number(n) => Some(*n),
        Value::Date(d) | Value::Month(d) | Value::Year(d) => Some(f64::from(*d)),
        _ => None,
    }
}

impl Evaluator<'_> {
    /// `FUNCTION(ARGUMENTS)` named `fname` at `fspan`; the call is at `span`.
    pub(crate) fn call(
        &self,
        fname: &str,
        fspan: &Span,
        args: &[CallArg],
        span: &Span,
    ) -> Computed {
        match fname {
            "ratio" => self.ratio(args, span),
            "count" => self.count(fname, args, span),
            "first" | "last" | "min" | "max" => self.extreme(fname, args, span),
            "sum" | "mean" | "median" => self.sums(fname, args, span),
            "sample_variance"
            | "population_variance"
            | "sample_standard_deviation"
            | "population_standard_deviation" => self.spread(fname, args, span),
            "share" => self.share(fname, args, span),
            "change" | "percent_change" => self.change(fname, args, span),
            "growth" => self.growth(fname, args, span),
            "rank" => self.rank(fname, args, span),
            "slope" | "intercept" | "correlation" => self.fit(fname, args, span),
            other => {
                if let Some(d) = self.ambiguous_spread(other, fspan) {
                    return Err(vec![d]);
                }
                let d = self.err(
                    "unknown-name",
                    format!("unknown function `{other}`"),
                    fspan.clone(),
                    "not a value function",
                );
                Err(vec![d.among(
                    other,
                    "value functions",
                    FUNCTIONS.iter().copied(),
                )])
            }
        }
    }

    /// A number computed from the rows `p`, or its error as a diagnostic.
    fn wrap(
        &self,
        fname: &str,
        r: Result<f64, stats::StatError>,
        p: &Picked,
        span: &Span,
    ) -> Computed {
        r.map(Quantity::Number)
            .map_err(|e| self.stat_err(fname, e, p, span))
    }

    fn selection_arg<'b>(
        &self,
        fname: &str,
        args: &'b [CallArg],
        span: &Span,
    ) -> Result<&'b Selection, Vec<Diagnostic>> {
        match args {
            [CallArg::Selection(s)] => Ok(s),
            [CallArg::Value(Expr::Name(id))] if self.tables.by_name.contains_key(&id.name) => {
                Err(vec![self
                    .err(
                        "value-argument",
                        format!("`{fname}` needs a column of `{}`", id.name),
                        id.span.clone(),
                        "a table, not a column",
                    )
                    .help(format!("write `{fname}({}.COLUMN)`", id.name))])
            }
            _ => Err(vec![self
                .err(
                    "value-argument",
                    format!("`{fname}` takes one selection of rows"),
                    span.clone(),
                    "wrong arguments",
                )
                .help(format!("write `{fname}(VIEW.COLUMN where CONDITION)`"))]),
        }
    }

    fn pick(&self, sel: &Selection, need_column: bool) -> Result<Picked, Vec<Diagnostic>> {
        let mut diags = Vec::new();
        let Some(named) = self.tables.get(self.src, &sel.view, &mut diags) else {
            return Err(diags);
        };
        let table: &Table = &named.table;
        let schema = schema_of(table);
        let place = format!("in `{}`", sel.view.name);
        let at = rows::At::new(self.src, &schema, &place);
        let column = match &sel.column {
            Some(c) => Some(at.column(c, &mut diags).ok_or_else(|| diags.clone())?),
            None if need_column => {
                return Err(vec![self
                    .err(
                        "value-argument",
                        format!("which column of `{}`?", sel.view.name),
                        sel.span.clone(),
                        "no column",
                    )
                    .help(format!("write `{}.COLUMN`", sel.view.name))]);
            }
            None => None,
        };
        let by = match &sel.by {
            Some(b) => Some(at.column(b, &mut diags).ok_or_else(|| diags.clone())?),
            None => None,
        };
        let rows: Vec<usize> = match &sel.filter {
            None => (0..table.columns.first().map_or(0, |c| c.values.len())).collect(),
            Some(f) => {
                let cond = at.condition(f, &mut diags).ok_or_else(|| diags.clone())?;
                let unmatched = crate::unmatched::in_table(self.src, table, f);
                if !unmatched.is_empty() {
                    return Err(unmatched);
                }
                rows::kept_rows(table, cond)
            }
        };
        let mut order = rows.clone();
        // One rule for every function with `by`: a row without a position
        // (a missing month, year, date or number) is skipped, and said so.
        let mut skipped = 0;
        if let Some((bi, _)) = by {
            let col = &table.columns[bi].values;
            order.retain(|r| position(&col.value(*r)).is_some());
            skipped = rows.len() - order.len();
            order.sort_by(|a, b| {
                let pa = position(&col.value(*a)).unwrap_or(f64::INFINITY);
                let pb = position(&col.value(*b)).unwrap_or(f64::INFINITY);
                pa.total_cmp(&pb)
            });
        }
        let mut describe = match &sel.filter {
            Some(f) => format!(
                "`{}` where `{}`",
                sel.view.name,
                self.src.text.get(f.span()).unwrap_or("...").trim()
            ),
            None => format!("`{}`", sel.view.name),
        };
        if let (Some((bi, _)), true) = (by, skipped > 0) {
            describe.push_str(&format!(
                " ({} without a `{}` skipped)",
                plural(skipped, "row"),
                table.columns[bi].name
            ));
        }
        Ok(Picked {
            cells: column.map_or_else(Vec::new, |(ci, _)| {
                order
                    .iter()
                    .map(|r| table.columns[ci].values.value(*r))
                    .collect()
            }),
            by: by.map(|(bi, bt)| {
                (
                    bt,
                    order
                        .iter()
                        .map(|r| table.columns[bi].values.value(*r))
                        .collect(),
                )
            }),
            all: column.map_or_else(Vec::new, |(ci, _)| table.columns[ci].values.to_vec()),
            rows: rows.len(),
            column_type: column.map(|(_, t)| t),
            describe,
        })
    }

    /// The numbers of a function's one selection argument, with what was
    /// picked (for the value's description and provenance).
    fn selected_numbers(
        &self,
        fname: &str,
        args: &[CallArg],
        span: &Span,
    ) -> Result<(Picked, Vec<f64>), Vec<Diagnostic>> {
        let sel = self.selection_arg(fname, args, span)?;
        let p = self.pick(sel, true)?;
        let xs = self.numbers(fname, sel, &p)?;
        Ok((p, xs))
    }

    fn numbers(
        &self,
        fname: &str,
        sel: &Selection,
        p: &Picked,
    ) -> Result<Vec<f64>, Vec<Diagnostic>> {
        if p.column_type != Some(ColType::Number) {
            let col = sel.column.as_ref().map_or("?", |c| c.name.as_str());
            return Err(vec![self.err(
                "type",
                format!(
                    "`{fname}` needs a number column, but `{col}` is {}",
                    p.column_type.map_or("not a column", ColType::name)
                ),
                sel.column
                    .as_ref()
                    .map_or(sel.span.clone(), |c| c.span.clone()),
                "not a number column",
            )]);
        }
        Ok(p.cells.iter().filter_map(num).collect())
    }

    fn stat_err(
        &self,
        fname: &str,
        e: stats::StatError,
        p: &Picked,
        span: &Span,
    ) -> Vec<Diagnostic> {
        // an overflow is the data's, not the condition's: the same words as
        // a view's `sum` that overflows (streamed or loaded)
        let (code, help) = match e {
            stats::StatError::Overflow => (
                "overflow",
                "look in the data for values far too large: a wrong unit, or a placeholder such as 1e308 written for a missing value",
            ),
            _ => ("value", "check the `where` condition against the data"),
        };
        vec![self
            .err(
                code,
                format!("`{fname}` cannot be computed: {}", e.message()),
                span.clone(),
                &format!("{} selected from {}", plural(p.rows, "row"), p.describe),
            )
            .help(help)]
    }

    /// `ratio(a, b)`.
    fn ratio(&self, args: &[CallArg], span: &Span) -> Computed {
        let [CallArg::Value(a), CallArg::Value(b)] = args else {
            return Err(vec![self
                .err(
                    "value-argument",
                    "`ratio` takes two values".into(),
                    span.clone(),
                    "",
                )
                .help("write `ratio(a, b)` (the same as `a / b`)")]);
        };
        let (x, y) = (self.eval(a)?, self.eval(b)?);
        match (x, y) {
            (Quantity::Number(x), Quantity::Number(y)) => {
                stats::ratio(x, y).map(Quantity::Number).map_err(|e| {
                    vec![self
                        .err(
                            "division-by-zero",
                            format!("`ratio` cannot be computed: {}", e.message()),
                            span.clone(),
                            "",
                        )
                        .also(
                            self.src,
                            b.span(),
                            format!("this is {}", Quantity::Number(y).figure()),
                        )]
                })
            }
            _ => Err(vec![self.err(
                "type",
                "`ratio` needs numbers".into(),
                span.clone(),
                "",
            )]),
        }
    }

    /// `count(VIEW [where ...])` or `count(VIEW.COLUMN ...)`: rows, or present cells.
    fn count(&self, fname: &str, args: &[CallArg], span: &Span) -> Computed {
        let sel = self.selection_arg(fname, args, span)?;
        let p = self.pick(sel, false)?;
        let n = if sel.column.is_some() {
            p.cells
                .iter()
                .filter(|v| !matches!(v, Value::Missing))
                .count()
        } else {
            p.rows
        };
        Ok(Quantity::Number(n as f64))
    }

    /// `first`, `last`, `min`, `max` of a column.
    fn extreme(&self, fname: &str, args: &[CallArg], span: &Span) -> Computed {
        let sel = self.selection_arg(fname, args, span)?;
        let p = self.pick(sel, true)?;
        let present: Vec<&Value> = p
            .cells
            .iter()
            .filter(|v| !matches!(v, Value::Missing))
            .collect();
        let chosen = match fname {
            "first" => present.first().copied(),
            "last" => present.last().copied(),
            _ => {
                if matches!(p.column_type, Some(ColType::Text)) {
                    return Err(vec![self.err(
                        "type",
                        format!("`{fname}` needs numbers or times, but this column is text"),
                        sel.span.clone(),
                        "text column",
                    )]);
                }
                let mut best: Option<&Value> = None;
                for v in &present {
                    let better = match best {
                        None => true,
                        Some(b) => {
                            let (x, y) = (position(v).unwrap_or(0.0), position(b).unwrap_or(0.0));
                            if fname == "min" {
                                x < y
                            } else {
                                x > y
                            }
                        }
                    };
                    if better {
                        best = Some(v);
                    }
                }
                best
            }
        };
        match chosen {
            Some(v) => Ok(quantity_of(v)),
            None => Err(self.stat_err(fname, stats::StatError::Empty, &p, span)),
        }
    }

    /// `sum`, `mean`, `median` of a number column.
    fn sums(&self, fname: &str, args: &[CallArg], span: &Span) -> Computed {
        let (p, xs) = self.selected_numbers(fname, args, span)?;
        let r = match fname {
            "sum" => stats::sum(&xs),
            "mean" => stats::mean(&xs),
            _ => stats::median(&xs),
        };
        self.wrap(fname, r, &p, span)
    }

    /// `sample_variance`, `population_variance` and their square roots.
    fn spread(&self, fname: &str, args: &[CallArg], span: &Span) -> Computed {
        let (p, xs) = self.selected_numbers(fname, args, span)?;
        let divisor = if fname.starts_with("sample") {
            stats::Divisor::Sample
        } else {
            stats::Divisor::Population
        };
        let r = stats::spread(&xs, divisor).map(|s| {
            if fname.ends_with("variance") {
                s.variance
            } else {
                s.deviation
            }
        });
        self.wrap(fname, r, &p, span)
    }

    /// A spread named without saying which divisor (`variance`, `stdev`,
    /// `sd`, …): an error that names both and says how they differ.
    fn ambiguous_spread(&self, name: &str, fspan: &Span) -> Option<Diagnostic> {
        let lower = name.to_ascii_lowercase();
        let (a, b) = match lower.as_str() {
            "variance" | "var" | "pvariance" | "svariance" => {
                ("sample_variance", "population_variance")
            }
            "stdev" | "std" | "sd" | "stddev" | "pstdev" | "standard_deviation" | "deviation" => {
                ("sample_standard_deviation", "population_standard_deviation")
            }
            _ => return None,
        };
        Some(
            self.err(
                "unknown-name",
                format!("unknown function `{name}`: say which spread"),
                fspan.clone(),
                "sample or population?",
            )
            .note(format!(
                "`{a}` divides by n − 1 (the values are a sample of a larger group); \
                 `{b}` divides by n (the values are the whole group)"
            ))
            .help(format!("write `{a}(…)` or `{b}(…)`")),
        )
    }

    /// `share`: the selected part of the column's total.
    fn share(&self, fname: &str, args: &[CallArg], span: &Span) -> Computed {
        let (p, xs) = self.selected_numbers(fname, args, span)?;
        let all: Vec<f64> = p.all.iter().filter_map(num).collect();
        let r = stats::sum(&xs)
            .and_then(|part| stats::sum(&all).and_then(|total| stats::share(part, total)));
        self.wrap(fname, r, &p, span)
    }

    /// `change` and `percent_change` from the first to the last number.
    fn change(&self, fname: &str, args: &[CallArg], span: &Span) -> Computed {
        let (p, xs) = self.selected_numbers(fname, args, span)?;
        let r = match (xs.first(), xs.last()) {
            (Some(a), Some(b)) if xs.len() >= 2 => {
                if fname == "change" {
                    stats::change(*a, *b)
                } else {
                    stats::percent_change(*a, *b)
                }
            }
            _ => Err(stats::StatError::TooFew {
                needed: 2,
                got: xs.len(),
            }),
        };
        self.wrap(fname, r, &p, span)
    }

    /// `growth`: the compound yearly rate along a time column.
    fn growth(&self, fname: &str, args: &[CallArg], span: &Span) -> Computed {
        let sel = self.selection_arg(fname, args, span)?;
        let p = self.pick(sel, true)?;
        let Some((bt, bys)) = &p.by else {
            let message = "`growth` needs the time column it grows along";
            return Err(self.needs_by(sel, "growth", message.into(), "YEAR_OR_MONTH_COLUMN"));
        };
        let xs = self.numbers(fname, sel, &p)?;
        let pairs: Vec<(f64, &Value)> = p
            .cells
            .iter()
            .zip(bys)
            .filter_map(|(c, b)| num(c).map(|x| (x, b)))
            .collect();
        let (Some(first), Some(last)) = (pairs.first(), pairs.last()) else {
            return Err(self.stat_err(
                fname,
                stats::StatError::TooFew {
                    needed: 2,
                    got: xs.len(),
                },
                &p,
                span,
            ));
        };
        let years = match (bt, first.1, last.1) {
            (ColType::Month, Value::Month(a), Value::Month(b)) => {
                stats::years_between_months(*a, *b)
            }
            (ColType::Date, Value::Date(a), Value::Date(b)) => stats::years_between_days(*a, *b),
            (ColType::Year, Value::Year(a), Value::Year(b)) => f64::from(b - a),
            (ColType::Number, Value::Number(a), Value::Number(b)) => b - a,
            _ => {
                return Err(vec![self.err(
                    "type",
                    "`growth` runs along a year, month, date or number column".into(),
                    sel.by.as_ref().map_or(sel.span.clone(), |b| b.span.clone()),
                    "not a time column",
                )])
            }
        };
        self.wrap(fname, stats::growth_rate(first.0, last.0, years), &p, span)
    }

    /// The error for `fname` called without the `by` column it runs along;
    /// the help shows the call with `by PLACEHOLDER`.
    fn needs_by(
        &self,
        sel: &Selection,
        fname: &str,
        message: String,
        placeholder: &str,
    ) -> Vec<Diagnostic> {
        let column = sel.column.as_ref().map_or("COLUMN", |c| c.name.as_str());
        let call = format!(
            "{fname}({}.{column} by {placeholder} where ...)",
            sel.view.name
        );
        let d = self.err("value-argument", message, sel.span.clone(), "");
        vec![d.help(format!("write `{call}`"))]
    }

    /// `rank`: the place of the one selected number among the column's.
    fn rank(&self, fname: &str, args: &[CallArg], span: &Span) -> Computed {
        let (p, xs) = self.selected_numbers(fname, args, span)?;
        if xs.len() != 1 {
            return Err(vec![self
                .err(
                    "value",
                    format!(
                        "`rank` needs exactly one selected row, but {} were selected",
                        xs.len()
                    ),
                    span.clone(),
                    &format!("from {}", p.describe),
                )
                .help("narrow the `where` condition to one category")]);
        }
        let all: Vec<f64> = p.all.iter().filter_map(num).collect();
        stats::rank_descending(xs[0], &all)
            .map(|r| Quantity::Number(r as f64))
            .map_err(|e| self.stat_err(fname, e, &p, span))
    }

    /// `slope`, `intercept`, `correlation` of a least-squares fit along a column.
    fn fit(&self, fname: &str, args: &[CallArg], span: &Span) -> Computed {
        let sel = self.selection_arg(fname, args, span)?;
        let p = self.pick(sel, true)?;
        self.numbers(fname, sel, &p)?;
        let Some((_, bys)) = &p.by else {
            let message = format!("`{fname}` needs the column to fit along");
            return Err(self.needs_by(sel, fname, message, "X_COLUMN"));
        };
        let (xs, ys): (Vec<f64>, Vec<f64>) = p
            .cells
            .iter()
            .zip(bys)
            .filter_map(|(c, b)| Some((position(b)?, num(c)?)))
            .unzip();
        let r = match fname {
            "slope" => stats::linear_fit(&xs, &ys).map(|f| f.slope),
            "intercept" => stats::linear_fit(&xs, &ys).map(|f| f.intercept),
            _ => stats::correlation(&xs, &ys),
        };
        self.wrap(fname, r, &p, span)
    }
}

fn plural(n: usize, what: &str) -> String {
    if n == 1 {
        format!("1 {what}")
    } else {
        format!("{n} {what}s")
    }
}

fn quantity_of(v: &Value) -> Quantity {
    match v {
        Value::Number(n) => Quantity::Number(*n),
        Value::Text(t) => Quantity::Text(t.clone()),
        Value::Date(d) => Quantity::Time(ColType::Date, *d),
        Value::Month(m) => Quantity::Time(ColType::Month, *m),
        Value::Year(y) => Quantity::Time(ColType::Year, *y),
        Value::Missing => Quantity::Text(String::new()),
    }
}
