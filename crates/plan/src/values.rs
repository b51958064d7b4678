//! Values, claims and texts that quote them.
//!
//! A value is computed from a selection of a view's rows (`last`, `mean`,
//! `growth`, `slope`, ...) or from other values by arithmetic. A claim is a
//! condition over values with the sentence it protects; every build checks
//! every claim. Texts quote values in braces: `"{multiple:.1}× as many"`.

use std::collections::{BTreeMap, BTreeSet};
use std::sync::Arc;

use crescendo_data::{self as data, stats, time, ColType, Step, Table, Value};
use crescendo_diag::{closest, Diagnostic, Source};
use crescendo_lang::ast::{
    BinOp, CallArg, FormatSpec, NumberStyle, Selection, Str, TextPart, VCond, VExpr,
};

use crate::resolve::{self, schema_of, Tables};

/// The result of a value: a number, a point in time, or a text.
#[derive(Clone, Debug, PartialEq)]
pub enum Quantity {
    Number(f64),
    /// A date, month or year, in the column type's encoding.
    Time(ColType, i32),
    Text(String),
}

impl Quantity {
    fn kind(&self) -> &'static str {
        match self {
            Quantity::Number(_) => "a number",
            Quantity::Time(t, _) => t.name(),
            Quantity::Text(_) => "text",
        }
    }

    /// The plain figure used in messages and manifests.
    pub fn figure(&self) -> String {
        format_quantity(self, &FormatSpec::default())
    }
}

/// Every value of a story, by name, with what it depends on.
#[derive(Default)]
pub struct Values {
    pub by_name: BTreeMap<String, Quantity>,
    /// Names each value refers to directly.
    pub deps: BTreeMap<String, BTreeSet<String>>,
    /// Names whose definition failed (not reported again when used).
    pub broken: BTreeSet<String>,
    /// Where each value was defined.
    pub spans: BTreeMap<String, std::ops::Range<usize>>,
}

impl Values {
    /// The names `names` depend on, themselves included, transitively.
    pub fn closure(&self, names: &BTreeSet<String>) -> BTreeSet<String> {
        let mut out = BTreeSet::new();
        let mut stack: Vec<String> = names.iter().cloned().collect();
        while let Some(n) = stack.pop() {
            if out.insert(n.clone()) {
                if let Some(d) = self.deps.get(&n) {
                    stack.extend(d.iter().cloned());
                }
            }
        }
        out
    }
}

/// Names referenced by a value expression.
pub fn names_in(e: &VExpr, out: &mut BTreeSet<String>) {
    match e {
        VExpr::Number { .. } => {}
        VExpr::Name(i) => {
            out.insert(i.name.clone());
        }
        VExpr::Neg { expr, .. } => names_in(expr, out),
        VExpr::Binary { left, right, .. } => {
            names_in(left, out);
            names_in(right, out);
        }
        VExpr::Call { args, .. } => {
            for a in args {
                if let CallArg::Value(v) = a {
                    names_in(v, out);
                }
            }
        }
    }
}

/// Names referenced by a condition.
pub fn names_in_cond(c: &VCond, out: &mut BTreeSet<String>) {
    match c {
        VCond::Compare { left, right, .. } | VCond::About { left, right, .. } => {
            names_in(left, out);
            names_in(right, out);
        }
        VCond::And { left, right, .. } | VCond::Or { left, right, .. } => {
            names_in_cond(left, out);
            names_in_cond(right, out);
        }
        VCond::Not { cond, .. } => names_in_cond(cond, out),
    }
}

/// Evaluates value expressions against the story's tables.
pub struct Evaluator<'a> {
    pub src: &'a Arc<Source>,
    pub tables: &'a Tables,
    pub values: &'a Values,
}

const FUNCTIONS: &[&str] = &[
    "last",
    "first",
    "min",
    "max",
    "sum",
    "mean",
    "median",
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
    fn err(
        &self,
        code: &'static str,
        msg: String,
        span: std::ops::Range<usize>,
        label: &str,
    ) -> Diagnostic {
        Diagnostic::error(code, msg).at(self.src, span, label.to_string())
    }

    /// Evaluate an expression; errors are returned located.
    pub fn eval(&self, e: &VExpr) -> Result<Quantity, Vec<Diagnostic>> {
        match e {
            VExpr::Number { value, .. } => Ok(Quantity::Number(*value)),
            VExpr::Name(id) => {
                if let Some(q) = self.values.by_name.get(&id.name) {
                    return Ok(q.clone());
                }
                if self.values.broken.contains(&id.name) {
                    return Err(Vec::new());
                }
                let mut d = self.err(
                    "unknown-name",
                    format!("no value named `{}`", id.name),
                    id.span.clone(),
                    "not defined before this point",
                );
                if self.tables.by_name.contains_key(&id.name) {
                    d = d.help(format!(
                        "`{}` is a table; values come from functions of it, e.g. `last({}.COLUMN)`",
                        id.name, id.name
                    ));
                } else if let Some(s) =
                    closest(&id.name, self.values.by_name.keys().map(String::as_str))
                {
                    d = d.help(format!("did you mean `{s}`?"));
                } else {
                    d = d.help("define it first with `value NAME = ...`");
                }
                Err(vec![d])
            }
            VExpr::Neg { expr, span } => match self.eval(expr)? {
                Quantity::Number(n) => Ok(Quantity::Number(-n)),
                q => Err(vec![self.err(
                    "type",
                    format!("`-` needs a number, but this is {}", q.kind()),
                    span.clone(),
                    "not a number",
                )]),
            },
            VExpr::Binary {
                op,
                left,
                right,
                span,
            } => {
                let l = self.eval(left);
                let r = self.eval(right);
                let (l, r) = match (l, r) {
                    (Ok(l), Ok(r)) => (l, r),
                    (l, r) => {
                        let mut d = l.err().unwrap_or_default();
                        d.extend(r.err().unwrap_or_default());
                        return Err(d);
                    }
                };
                let (Quantity::Number(a), Quantity::Number(b)) = (&l, &r) else {
                    let bad = if matches!(l, Quantity::Number(_)) {
                        (right, &r)
                    } else {
                        (left, &l)
                    };
                    return Err(vec![self.err(
                        "type",
                        format!(
                            "`{}` needs numbers, but this is {}",
                            op.symbol(),
                            bad.1.kind()
                        ),
                        bad.0.span(),
                        "not a number",
                    )]);
                };
                let v = match op {
                    BinOp::Add => a + b,
                    BinOp::Sub => a - b,
                    BinOp::Mul => a * b,
                    _ => {
                        if *b == 0.0 {
                            return Err(vec![self
                                .err(
                                    "division-by-zero",
                                    "division by zero".into(),
                                    span.clone(),
                                    &format!("{} / 0", l.figure()),
                                )
                                .also(self.src, right.span(), "this is 0")]);
                        }
                        a / b
                    }
                };
                if !v.is_finite() {
                    return Err(vec![self.err(
                        "overflow",
                        "the result is too large".into(),
                        span.clone(),
                        "",
                    )]);
                }
                Ok(Quantity::Number(v))
            }
            VExpr::Call { func, args, span } => self.call(&func.name, &func.span, args, span),
        }
    }

    fn selection_arg<'b>(
        &self,
        fname: &str,
        args: &'b [CallArg],
        span: &std::ops::Range<usize>,
    ) -> Result<&'b Selection, Vec<Diagnostic>> {
        match args {
            [CallArg::Selection(s)] => Ok(s),
            [CallArg::Value(VExpr::Name(id))] if self.tables.by_name.contains_key(&id.name) => {
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
        let column = match &sel.column {
            Some(c) => Some(
                resolve::column(self.src, &schema, &place, c, &mut diags)
                    .ok_or_else(|| diags.clone())?,
            ),
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
            Some(b) => Some(
                resolve::column(self.src, &schema, &place, b, &mut diags)
                    .ok_or_else(|| diags.clone())?,
            ),
            None => None,
        };
        let rows: Vec<usize> = match &sel.filter {
            None => (0..table.columns.first().map_or(0, |c| c.values.len())).collect(),
            Some(f) => {
                let cond = resolve::check_condition(self.src, &schema, &place, f, &mut diags)
                    .ok_or_else(|| diags.clone())?;
                // Run the filter through the view engine on a table that
                // carries the row numbers.
                let mut t = table.clone();
                let n = t.columns.first().map_or(0, |c| c.values.len());
                t.columns.push(data::Column {
                    name: "\u{0}row".into(),
                    ty: ColType::Number,
                    values: (0..n).map(|i| Value::Number(i as f64)).collect(),
                });
                let kept = data::run_view(&t, &[Step::Keep(cond)]);
                kept.columns
                    .last()
                    .map(|c| {
                        c.values
                            .iter()
                            .filter_map(num)
                            .map(|x| x as usize)
                            .collect()
                    })
                    .unwrap_or_default()
            }
        };
        let mut order = rows.clone();
        if let Some((bi, _)) = by {
            let col = &table.columns[bi].values;
            order.sort_by(|a, b| {
                let pa = position(&col[*a]).unwrap_or(f64::INFINITY);
                let pb = position(&col[*b]).unwrap_or(f64::INFINITY);
                pa.total_cmp(&pb)
            });
        }
        let describe = match &sel.filter {
            Some(f) => format!(
                "`{}` where `{}`",
                sel.view.name,
                self.src.text.get(f.span()).unwrap_or("...").trim()
            ),
            None => format!("`{}`", sel.view.name),
        };
        Ok(Picked {
            cells: column.map_or_else(Vec::new, |(ci, _)| {
                order
                    .iter()
                    .map(|r| table.columns[ci].values[*r].clone())
                    .collect()
            }),
            by: by.map(|(bi, bt)| {
                (
                    bt,
                    order
                        .iter()
                        .map(|r| table.columns[bi].values[*r].clone())
                        .collect(),
                )
            }),
            all: column.map_or_else(Vec::new, |(ci, _)| table.columns[ci].values.clone()),
            rows: rows.len(),
            column_type: column.map(|(_, t)| t),
            describe,
        })
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
        span: &std::ops::Range<usize>,
    ) -> Vec<Diagnostic> {
        vec![self
            .err(
                "value",
                format!("`{fname}` cannot be computed: {}", e.message()),
                span.clone(),
                &format!("{} selected from {}", plural(p.rows, "row"), p.describe),
            )
            .help("check the `where` condition against the data")]
    }

    fn call(
        &self,
        fname: &str,
        fspan: &std::ops::Range<usize>,
        args: &[CallArg],
        span: &std::ops::Range<usize>,
    ) -> Result<Quantity, Vec<Diagnostic>> {
        let wrap =
            |r: Result<f64, stats::StatError>, p: &Picked| -> Result<Quantity, Vec<Diagnostic>> {
                r.map(Quantity::Number)
                    .map_err(|e| self.stat_err(fname, e, p, span))
            };
        match fname {
            "ratio" => {
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
            "count" => {
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
            "first" | "last" | "min" | "max" => {
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
                                format!(
                                    "`{fname}` needs numbers or times, but this column is text"
                                ),
                                sel.span.clone(),
                                "text column",
                            )]);
                        }
                        let mut best: Option<&Value> = None;
                        for v in &present {
                            let better = match best {
                                None => true,
                                Some(b) => {
                                    let (x, y) =
                                        (position(v).unwrap_or(0.0), position(b).unwrap_or(0.0));
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
            "sum" | "mean" | "median" => {
                let sel = self.selection_arg(fname, args, span)?;
                let p = self.pick(sel, true)?;
                let xs = self.numbers(fname, sel, &p)?;
                let r = match fname {
                    "sum" => stats::sum(&xs),
                    "mean" => stats::mean(&xs),
                    _ => stats::median(&xs),
                };
                wrap(r, &p)
            }
            "share" => {
                let sel = self.selection_arg(fname, args, span)?;
                let p = self.pick(sel, true)?;
                let xs = self.numbers(fname, sel, &p)?;
                let all: Vec<f64> = p.all.iter().filter_map(num).collect();
                let r = stats::sum(&xs)
                    .and_then(|part| stats::sum(&all).and_then(|total| stats::share(part, total)));
                wrap(r, &p)
            }
            "change" | "percent_change" => {
                let sel = self.selection_arg(fname, args, span)?;
                let p = self.pick(sel, true)?;
                let xs = self.numbers(fname, sel, &p)?;
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
                wrap(r, &p)
            }
            "growth" => {
                let sel = self.selection_arg(fname, args, span)?;
                let p = self.pick(sel, true)?;
                let Some((bt, bys)) = &p.by else {
                    return Err(vec![self
                        .err(
                            "value-argument",
                            "`growth` needs the time column it grows along".into(),
                            sel.span.clone(),
                            "",
                        )
                        .help(format!(
                            "write `growth({}.{} by YEAR_OR_MONTH_COLUMN where ...)`",
                            sel.view.name,
                            sel.column.as_ref().map_or("COLUMN", |c| c.name.as_str())
                        ))]);
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
                    (ColType::Date, Value::Date(a), Value::Date(b)) => {
                        stats::years_between_days(*a, *b)
                    }
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
                wrap(stats::growth_rate(first.0, last.0, years), &p)
            }
            "rank" => {
                let sel = self.selection_arg(fname, args, span)?;
                let p = self.pick(sel, true)?;
                let xs = self.numbers(fname, sel, &p)?;
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
            "slope" | "intercept" | "correlation" => {
                let sel = self.selection_arg(fname, args, span)?;
                let p = self.pick(sel, true)?;
                self.numbers(fname, sel, &p)?;
                let Some((_, bys)) = &p.by else {
                    return Err(vec![self
                        .err(
                            "value-argument",
                            format!("`{fname}` needs the column to fit along"),
                            sel.span.clone(),
                            "",
                        )
                        .help(format!(
                            "write `{fname}({}.{} by X_COLUMN where ...)`",
                            sel.view.name,
                            sel.column.as_ref().map_or("COLUMN", |c| c.name.as_str())
                        ))]);
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
                wrap(r, &p)
            }
            other => {
                let mut d = self.err(
                    "unknown-name",
                    format!("unknown function `{other}`"),
                    fspan.clone(),
                    "not a value function",
                );
                d = d.note(format!("value functions: {}", FUNCTIONS.join(", ")));
                if let Some(s) = closest(other, FUNCTIONS.iter().copied()) {
                    d = d.help(format!("did you mean `{s}`?"));
                }
                Err(vec![d])
            }
        }
    }

    /// Evaluate a claim's condition. Returns whether it holds and, for the
    /// message, each comparison with its operands' values.
    pub fn condition(&self, c: &VCond, shown: &mut Vec<String>) -> Result<bool, Vec<Diagnostic>> {
        let text = |e: &VExpr| {
            self.src
                .text
                .get(e.span())
                .unwrap_or("?")
                .trim()
                .to_string()
        };
        match c {
            VCond::And { left, right, .. } => {
                let a = self.condition(left, shown);
                let b = self.condition(right, shown);
                Ok(a? && b?)
            }
            VCond::Or { left, right, .. } => {
                let a = self.condition(left, shown);
                let b = self.condition(right, shown);
                Ok(a? || b?)
            }
            VCond::Not { cond, .. } => Ok(!self.condition(cond, shown)?),
            VCond::Compare {
                op,
                left,
                right,
                span,
            } => {
                let (l, r) = (self.eval(left), self.eval(right));
                let (l, r) = match (l, r) {
                    (Ok(l), Ok(r)) => (l, r),
                    (l, r) => {
                        let mut d = l.err().unwrap_or_default();
                        d.extend(r.err().unwrap_or_default());
                        return Err(d);
                    }
                };
                let ord = match (&l, &r) {
                    (Quantity::Number(a), Quantity::Number(b)) => a.partial_cmp(b),
                    (Quantity::Time(ta, a), Quantity::Time(tb, b)) if ta == tb => Some(a.cmp(b)),
                    (Quantity::Text(a), Quantity::Text(b))
                        if matches!(op, BinOp::Eq | BinOp::Ne) =>
                    {
                        Some(a.cmp(b))
                    }
                    _ => {
                        return Err(vec![self.err(
                            "type",
                            format!("cannot compare {} with {}", l.kind(), r.kind()),
                            span.clone(),
                            "mismatched",
                        )])
                    }
                };
                let Some(ord) = ord else {
                    return Err(vec![self.err(
                        "type",
                        "cannot compare these values".into(),
                        span.clone(),
                        "",
                    )]);
                };
                use std::cmp::Ordering::*;
                let holds = match op {
                    BinOp::Eq => ord == Equal,
                    BinOp::Ne => ord != Equal,
                    BinOp::Lt => ord == Less,
                    BinOp::Le => ord != Greater,
                    BinOp::Gt => ord == Greater,
                    _ => ord != Less,
                };
                shown.push(format!(
                    "{} {} {}: {} {} {} is {}",
                    text(left),
                    op.symbol(),
                    text(right),
                    l.figure(),
                    op.symbol(),
                    r.figure(),
                    if holds { "true" } else { "false" }
                ));
                Ok(holds)
            }
            VCond::About {
                left,
                right,
                tolerance,
                span,
            } => {
                let (l, r) = (self.eval(left)?, self.eval(right)?);
                let (Quantity::Number(a), Quantity::Number(b)) = (&l, &r) else {
                    return Err(vec![self.err(
                        "type",
                        "`about` compares numbers".into(),
                        span.clone(),
                        "",
                    )]);
                };
                let allowed = if tolerance.relative {
                    tolerance.amount * b.abs()
                } else {
                    tolerance.amount
                };
                let holds = (a - b).abs() <= allowed * (1.0 + 1e-12);
                let tol = if tolerance.relative {
                    format!(
                        "{}%",
                        crescendo_data::format::number(tolerance.amount * 100.0, None)
                    )
                } else {
                    Quantity::Number(tolerance.amount).figure()
                };
                shown.push(format!(
                    "{} about {} within {tol}: {} is {} {} (difference {})",
                    text(left),
                    text(right),
                    l.figure(),
                    if holds { "within" } else { "not within" },
                    format_args!("{tol} of {}", r.figure()),
                    Quantity::Number((a - b).abs()).figure()
                ));
                Ok(holds)
            }
        }
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

/// Default number of decimals for a figure without `.N`: fewer as numbers
/// grow (common practice: about three significant digits for small values,
/// whole numbers from 100 up).
fn default_decimals(v: f64) -> usize {
    let a = v.abs();
    if a >= 100.0 {
        0
    } else if a >= 10.0 {
        1
    } else {
        2
    }
}

fn strip_zeros(s: String) -> String {
    if !s.contains('.') {
        return s;
    }
    let t = s.trim_end_matches('0').trim_end_matches('.');
    t.to_string()
}

/// Format a quantity with a format spec. Rounding is half away from zero on
/// the decimal digits (see `crescendo_data::format::number`).
pub fn format_quantity(q: &Quantity, spec: &FormatSpec) -> String {
    match q {
        Quantity::Text(t) => t.clone(),
        Quantity::Time(ColType::Month | ColType::Date, t)
            if matches!(spec.style, NumberStyle::Quarter | NumberStyle::Year) =>
        {
            // the period of a month or a day, in the story's year
            let (y, m) = match q {
                Quantity::Time(ColType::Month, m) => {
                    (time::month_year(*t), time::month_of_year(*m))
                }
                _ => {
                    let (y, m, _) = time::civil_from_days(*t);
                    (y, m)
                }
            };
            let fiscal = crescendo_data::locale::current().fiscal;
            if spec.style == NumberStyle::Quarter {
                fiscal.quarter_label(y, m)
            } else {
                fiscal.year_label(y, m)
            }
        }
        Quantity::Time(ColType::Month, m) => time::month_label(*m),
        Quantity::Time(ColType::Date, d) => time::date_iso(*d),
        Quantity::Time(_, y) => y.to_string(),
        Quantity::Number(v) => {
            let (scaled, suffix) = match spec.style {
                NumberStyle::Percent => (v * 100.0, "%"),
                _ => (*v, ""),
            };
            let body = if spec.style == NumberStyle::Compact && spec.decimals.is_none() {
                crescendo_data::format::compact_ascii(scaled.abs())
            } else if spec.style == NumberStyle::Compact {
                let (div, unit) = match scaled.abs() {
                    a if a >= 1e9 => (1e9, "B"),
                    a if a >= 1e6 => (1e6, "M"),
                    a if a >= 1e3 => (1e3, "k"),
                    _ => (1.0, ""),
                };
                format!(
                    "{}{unit}",
                    crescendo_data::format::number_ascii(scaled.abs() / div, spec.decimals)
                )
            } else {
                match spec.decimals {
                    Some(d) => crescendo_data::format::number_ascii(scaled.abs(), Some(d)),
                    None => strip_zeros(crescendo_data::format::number_ascii(
                        scaled.abs(),
                        Some(default_decimals(scaled)),
                    )),
                }
            };
            let is_zero = body
                .chars()
                .all(|c| matches!(c, '0' | '.' | ',' | 'k' | 'M' | 'B' | 'T'));
            // the locale's symbols and groups, after the digits are chosen
            let body = crescendo_data::locale::localize_number(body);
            let sign = if scaled < 0.0 && !is_zero {
                "-"
            } else if spec.sign && scaled > 0.0 && !is_zero {
                "+"
            } else {
                ""
            };
            format!("{sign}{body}{suffix}")
        }
    }
}

/// A text with its quotes resolved.
pub struct Resolved {
    pub text: String,
    /// The raw text as written, when it quoted values.
    pub template: Option<String>,
    /// Value names quoted, with the figure as printed.
    pub quoted: Vec<(String, String)>,
    /// Every value name the text depends on (transitively).
    pub depends: BTreeSet<String>,
}

/// Resolve the quotes of a story text.
pub fn resolve_text(ev: &Evaluator, s: &Str, diags: &mut Vec<Diagnostic>) -> Resolved {
    let template = match crescendo_lang::parser::parse_template(ev.src, s) {
        Ok(t) => t,
        Err(d) => {
            diags.extend(d);
            return Resolved {
                text: s.value.clone(),
                template: None,
                quoted: Vec::new(),
                depends: BTreeSet::new(),
            };
        }
    };
    if template.is_plain() {
        return Resolved {
            text: s.value.clone(),
            template: None,
            quoted: Vec::new(),
            depends: BTreeSet::new(),
        };
    }
    let mut text = String::new();
    let mut quoted = Vec::new();
    let mut names = BTreeSet::new();
    for part in &template.parts {
        match part {
            TextPart::Literal(l) => text.push_str(l),
            TextPart::Quote { expr, format, span } => {
                names_in(expr, &mut names);
                match ev.eval(expr) {
                    Ok(q) => {
                        let fig = format_quantity(&q, format);
                        let key = ev
                            .src
                            .text
                            .get(span.start + 1..span.end - 1)
                            .unwrap_or("")
                            .to_string();
                        let key = key.split(':').next().unwrap_or("").trim().to_string();
                        quoted.push((key, fig.clone()));
                        text.push_str(&fig);
                    }
                    Err(d) => {
                        diags.extend(d);
                        text.push('?');
                    }
                }
            }
        }
    }
    let raw = ev
        .src
        .text
        .get(s.span.start + 1..s.span.end.saturating_sub(1))
        .unwrap_or(&s.value)
        .to_string();
    Resolved {
        text,
        template: Some(raw),
        quoted,
        depends: ev.values.closure(&names),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec(sign: bool, decimals: Option<usize>, style: NumberStyle) -> FormatSpec {
        FormatSpec {
            sign,
            decimals,
            style,
        }
    }

    /// Format table. Rounding is half away from zero on the decimal digits
    /// as written (2.675 → 2.68, though 2.675 is stored a hair below), the
    /// rule a reader checking by hand expects.
    #[test]
    fn format_table() {
        use NumberStyle::*;
        let n = Quantity::Number;
        let cases: &[(Quantity, FormatSpec, &str)] = &[
            (n(2.3456), spec(false, None, Plain), "2.35"),
            (n(2.0), spec(false, None, Plain), "2"),
            (n(20.5), spec(false, None, Plain), "20.5"),
            (n(12345.678), spec(false, None, Plain), "12,346"),
            (n(2.3), spec(false, Some(2), Plain), "2.30"),
            (n(2.675), spec(false, Some(2), Plain), "2.68"),
            (n(-2.5), spec(false, Some(0), Plain), "-3"),
            (n(0.5), spec(false, Some(0), Plain), "1"),
            (n(0.123), spec(false, None, Percent), "12.3%"),
            (n(0.12), spec(false, Some(0), Percent), "12%"),
            (n(0.125), spec(true, Some(0), Percent), "+13%"),
            (n(-0.031), spec(true, Some(0), Percent), "-3%"),
            (n(-0.001), spec(true, Some(0), Percent), "0%"),
            (n(0.0), spec(true, None, Plain), "0"),
            (n(12_300.0), spec(false, None, Compact), "12.3k"),
            (n(4_500_000.0), spec(false, None, Compact), "4.5M"),
            (n(4_560_000.0), spec(false, Some(1), Compact), "4.6M"),
            (n(-12_300.0), spec(true, None, Compact), "-12.3k"),
            (n(1.05), spec(true, Some(1), Plain), "+1.1"),
            (
                Quantity::Time(ColType::Month, 2024 * 12 + 6),
                spec(false, None, Plain),
                "Jul 2024",
            ),
            (
                Quantity::Time(ColType::Year, 2024),
                spec(false, None, Plain),
                "2024",
            ),
            (
                Quantity::Text("Loop".into()),
                spec(false, None, Plain),
                "Loop",
            ),
        ];
        for (q, s, want) in cases {
            assert_eq!(format_quantity(q, s), *want, "{q:?} {s:?}");
        }
    }
}
