//! The view engine: runs resolved, type-checked [`Step`]s over a [`Table`].
//!
//! The planner resolves names and checks types before a view runs, so the
//! engine trusts the steps' column indices and types. It still never panics:
//! an out-of-range column reads as missing, and an ill-typed operation yields
//! `Missing` (or `false` in a predicate).
//!
//! # Expressions
//!
//! * Arithmetic (`+ - * /`, unary minus) works on numbers; a `year` operand
//!   counts as its number. Any missing operand gives `Missing`; division by zero
//!   (and any other non-finite result) gives `Missing`.
//! * Comparisons work between numbers, between texts (byte order, exact
//!   equality), between values of the same time kind, and between a year and a
//!   number. A comparison with a missing operand is `false` for every operator,
//!   `!=` included. Values of unrelated kinds are never equal (`=` is false,
//!   `!=` true, ordering comparisons false).
//! * `and`, `or`, `not` work on booleans; anything that is not a true boolean
//!   (a missing comparison, say) counts as false, so `not (x > 3)` is true when
//!   `x` is missing.
//! * `v in (a, b, ...)` is true when `v` equals one of the values (the same
//!   equality as `=`); a missing `v` is never in the list.
//!
//! # Sums too large for a number
//!
//! A sum whose exact total is beyond the largest double (±1.8e308) is
//! written as an infinite number, the one place the engine makes one, so
//! the planner can report it where the sum was asked for ([`overflow`]);
//! a mean is always within its values' range and is computed without
//! overflowing (see [`Sum`]).
//!
//! # Steps
//!
//! See [`run_view`] and the doc of each step's function.

use std::cmp::Ordering;

pub(crate) use crate::groups::encode_key;
use crate::groups::KeyIndex;
use crate::hash::hash_bytes;
use crate::model::{
    AggFn, Aggregate, ArithOp, Cell, CmpOp, ColType, Column, Expr, Step, Table, Value, Values,
};
pub(crate) use crate::sum::Sum;

/// Run `steps` in order over `input` and return the resulting table.
///
/// * `Keep(pred)`: keeps the rows where `pred` is true (see module docs:
///   missing compares as false). Row order is kept.
/// * `Group { keys, aggregates }`: see [`group`].
/// * `Derive { name, expr }`: appends a `number` column named `name` holding
///   `expr` for every row (`Missing` where the expression is missing or not a
///   number).
/// * `Sort { keys }`: stable sort; see [`sort`].
/// * `Top { key, by, n, rest }`: see [`top`].
pub fn run_view(input: &Table, steps: &[Step]) -> Table {
    // a clone shares the cells (see `crate::column`)
    let mut table = input.clone();
    for step in steps {
        table = match step {
            Step::Keep(pred) => keep(&table, pred),
            Step::Group { keys, aggregates } => group(&table, keys, aggregates),
            Step::Derive { name, expr } => derive(table, name, expr),
            Step::Sort { keys } => sort(&table, keys),
            Step::Top { key, by, n, rest } => top(&table, *key, *by, *n, rest),
        };
    }
    table
}

/// A number too large for a double that a step wrote (a sum, see the module
/// docs): the first one, row by row.
#[derive(Clone, Debug, PartialEq)]
pub struct Overflow {
    /// Index of the output column that holds it.
    pub column: usize,
    /// Its row in the output.
    pub row: usize,
    /// `+1.0` or `-1.0`: the direction of the overflow.
    pub sign: f64,
}

/// The first sum in `t` that was too large for a number, if any.
pub fn overflow(t: &Table) -> Option<Overflow> {
    for row in 0..row_count(t) {
        for (column, c) in t.columns.iter().enumerate() {
            if let Cell::Number(x) = c.values.cell(row) {
                if x.is_infinite() {
                    return Some(Overflow {
                        column,
                        row,
                        sign: x.signum(),
                    });
                }
            }
        }
    }
    None
}

/// Number of rows of a table (the length of its first column).
pub(crate) fn row_count(t: &Table) -> usize {
    t.columns.first().map_or(0, |c| c.values.len())
}

/// The cell at `(col, row)`, or `Missing` when out of range.
fn cell(t: &Table, col: usize, row: usize) -> Cell<'_> {
    t.columns
        .get(col)
        .map_or(Cell::Missing, |c| c.values.cell(row))
}

/// A table with the same columns holding the given rows, in that order.
fn take_rows(t: &Table, rows: &[usize]) -> Table {
    Table {
        columns: t
            .columns
            .iter()
            .map(|c| Column {
                name: c.name.clone(),
                ty: c.ty,
                values: c.values.gather(rows),
            })
            .collect(),
    }
}

// ---------------------------------------------------------------- expressions

/// The numeric value of a number (or year) cell.
pub(crate) fn num_of(c: Cell<'_>) -> Option<f64> {
    match c {
        Cell::Number(x) => Some(x),
        Cell::Year(y) => Some(f64::from(y)),
        _ => None,
    }
}

fn finite(x: f64) -> Value {
    if x.is_finite() {
        Value::Number(x)
    } else {
        Value::Missing
    }
}

fn finite_cell<'a>(x: f64) -> Cell<'a> {
    if x.is_finite() {
        Cell::Number(x)
    } else {
        Cell::Missing
    }
}

/// Evaluate a value expression on one row, whose cells `row` gives by
/// column index. A boolean expression used as a value (which type-checking
/// rules out) gives `Missing`.
pub(crate) fn eval<'a, R: Fn(usize) -> Cell<'a>>(row: &R, e: &'a Expr) -> Cell<'a> {
    match e {
        Expr::Col(c) => row(*c),
        Expr::Lit(v) => v.cell(),
        Expr::Neg(a) => match num_of(eval(row, a)) {
            Some(x) => finite_cell(-x),
            None => Cell::Missing,
        },
        Expr::Arith(first, rest) => {
            // left to right; a missing operand, a division by zero or a
            // result out of range makes the whole chain missing
            let Some(mut x) = num_of(eval(row, first)) else {
                return Cell::Missing;
            };
            for (op, b) in rest {
                let Some(y) = num_of(eval(row, b)) else {
                    return Cell::Missing;
                };
                let v = match op {
                    ArithOp::Add => x + y,
                    ArithOp::Sub => x - y,
                    ArithOp::Mul => x * y,
                    ArithOp::Div if y == 0.0 => return Cell::Missing,
                    ArithOp::Div => x / y,
                };
                if !v.is_finite() {
                    return Cell::Missing;
                }
                x = v;
            }
            Cell::Number(x)
        }
        // a bucket that gives text is only ever a whole `add` (see
        // `derive`); the others are cells again
        Expr::Bucket { bucket, of, .. } => match bucket.apply(eval(row, of)) {
            Value::Date(d) => Cell::Date(d),
            Value::Month(m) => Cell::Month(m),
            Value::Year(y) => Cell::Year(y),
            _ => Cell::Missing,
        },
        Expr::YearQuarter(y, q) => match crate::bucket::year_quarter(eval(row, y), eval(row, q)) {
            Some(m) => Cell::Month(m),
            None => Cell::Missing,
        },
        Expr::Cmp(..) | Expr::And(..) | Expr::Or(..) | Expr::Not(..) | Expr::In(..) => {
            Cell::Missing
        }
    }
}

/// Order of two non-missing cells of comparable kinds; `None` otherwise.
pub(crate) fn compare_cells(a: Cell<'_>, b: Cell<'_>) -> Option<Ordering> {
    match (a, b) {
        (Cell::Number(x), Cell::Number(y)) => Some(x.total_cmp(&y)),
        (Cell::Text(x), Cell::Text(y)) => Some(x.as_bytes().cmp(y.as_bytes())),
        (Cell::Date(x), Cell::Date(y))
        | (Cell::Month(x), Cell::Month(y))
        | (Cell::Year(x), Cell::Year(y)) => Some(x.cmp(&y)),
        (Cell::Year(x), Cell::Number(y)) => Some(f64::from(x).total_cmp(&y)),
        (Cell::Number(x), Cell::Year(y)) => Some(x.total_cmp(&f64::from(y))),
        _ => None,
    }
}

/// `a op b` with the module's rules: missing gives false.
fn compare_op(op: CmpOp, a: Cell<'_>, b: Cell<'_>) -> bool {
    if matches!(a, Cell::Missing) || matches!(b, Cell::Missing) {
        return false;
    }
    match compare_cells(a, b) {
        Some(o) => match op {
            CmpOp::Eq => o == Ordering::Equal,
            CmpOp::Ne => o != Ordering::Equal,
            CmpOp::Lt => o == Ordering::Less,
            CmpOp::Le => o != Ordering::Greater,
            CmpOp::Gt => o == Ordering::Greater,
            CmpOp::Ge => o != Ordering::Less,
        },
        None => op == CmpOp::Ne,
    }
}

/// Evaluate a predicate on one row (see [`eval`]). A value expression used
/// as a predicate (which type-checking rules out) is false.
pub(crate) fn truth<'a, R: Fn(usize) -> Cell<'a>>(row: &R, e: &'a Expr) -> bool {
    match e {
        Expr::Cmp(op, a, b) => compare_op(*op, eval(row, a), eval(row, b)),
        Expr::And(parts) => parts.iter().all(|p| truth(row, p)),
        Expr::Or(parts) => parts.iter().any(|p| truth(row, p)),
        Expr::Not(a) => !truth(row, a),
        Expr::In(a, list) => {
            let v = eval(row, a);
            list.iter()
                .any(|item| compare_op(CmpOp::Eq, v, item.cell()))
        }
        Expr::Col(_)
        | Expr::Lit(_)
        | Expr::Neg(_)
        | Expr::Arith(..)
        | Expr::Bucket { .. }
        | Expr::YearQuarter(..) => false,
    }
}

/// The cells of row `row` of `t`, for [`eval`] and [`truth`].
pub(crate) fn row_of<'a>(t: &'a Table, row: usize) -> impl Fn(usize) -> Cell<'a> + 'a {
    move |c| cell(t, c, row)
}

// ---------------------------------------------------------------------- steps

/// Keep the rows where `pred` is true, in order.
fn keep(t: &Table, pred: &Expr) -> Table {
    let rows: Vec<usize> = (0..row_count(t))
        .filter(|&r| truth(&row_of(t, r), pred))
        .collect();
    take_rows(t, &rows)
}

/// Append a column holding `expr` for each row: a number column, or the
/// type of a time bucket ([`Expr::value_type`]).
fn derive(mut t: Table, name: &str, expr: &Expr) -> Table {
    let ty = expr.value_type();
    let values = match expr {
        Expr::Bucket { bucket, of, .. } => (0..row_count(&t))
            .map(|r| bucket.apply(eval(&row_of(&t, r), of)))
            .collect(),
        Expr::YearQuarter(..) => (0..row_count(&t))
            .map(|r| eval(&row_of(&t, r), expr).to_value())
            .collect(),
        _ => (0..row_count(&t))
            .map(|r| match num_of(eval(&row_of(&t, r), expr)) {
                Some(x) => Cell::Number(x),
                None => Cell::Missing,
            })
            .collect(),
    };
    t.columns.push(Column {
        name: name.to_owned(),
        ty,
        values,
    });
    t
}

/// A sum as a cell value: missing without terms; an infinite number when
/// too large (see the module docs).
pub(crate) fn sum_value(total: Option<f64>) -> Value {
    match total {
        None => Value::Missing,
        Some(x) if x.is_nan() => Value::Number(f64::INFINITY),
        Some(x) => Value::Number(x),
    }
}

/// Partition `rows` by the cells of `cols`, in order of first appearance.
fn partition(t: &Table, cols: &[usize], rows: impl Iterator<Item = usize>) -> Parts {
    // number each row's key (interned once, see `crate::groups`), then
    // place the rows group by group, each group's rows in their order
    let mut index = KeyIndex::default();
    let mut ids: Vec<(usize, usize)> = Vec::new();
    let mut key = Vec::new();
    for r in rows {
        key.clear();
        for &c in cols {
            encode_key(&mut key, cell(t, c, r));
        }
        ids.push((r, index.id(hash_bytes(&key), &key).0));
    }
    let groups = index.len();
    drop(index);
    let mut starts = vec![0usize; groups + 1];
    for &(_, g) in &ids {
        starts[g + 1] += 1;
    }
    for g in 0..groups {
        starts[g + 1] += starts[g];
    }
    let mut next = starts.clone();
    let mut placed = vec![0usize; ids.len()];
    for (r, g) in ids {
        placed[next[g]] = r;
        next[g] += 1;
    }
    Parts {
        rows: placed,
        starts,
    }
}

/// Rows partitioned into groups: group `g`'s rows, in their order, are
/// `rows[starts[g]..starts[g + 1]]` (one allocation for all groups).
struct Parts {
    rows: Vec<usize>,
    starts: Vec<usize>,
}

impl Parts {
    fn len(&self) -> usize {
        self.starts.len().saturating_sub(1)
    }

    fn get(&self, g: usize) -> &[usize] {
        match (self.starts.get(g), self.starts.get(g + 1)) {
            (Some(&a), Some(&b)) => self.rows.get(a..b).unwrap_or(&[]),
            _ => &[],
        }
    }

    fn iter(&self) -> impl Iterator<Item = &[usize]> + '_ {
        (0..self.len()).map(|g| self.get(g))
    }

    /// All rows as one group.
    fn one(n: usize) -> Parts {
        Parts {
            rows: (0..n).collect(),
            starts: vec![0, n],
        }
    }
}

/// Group rows by `keys` and compute `aggregates` per group.
///
/// * One output row per distinct combination of key cells, in order of first
///   appearance; a missing key cell is a key value of its own. With no keys
///   the whole table is one group, so the output always has exactly one row
///   (even for an empty input, where counts are 0 and other results missing).
/// * Output columns: the keys (same name and type), then one column per
///   aggregate named `Aggregate::name`.
/// * `sum`, `mean`, `median`, `min`, `max`, `first`, `last` skip missing cells
///   of their own column (so missing values are handled per column, not per
///   row) and give `Missing` when the group has no non-missing cell.
/// * `count` of a column counts its non-missing cells; `count` of rows counts
///   rows. Both are numbers and never missing.
/// * `sum` is exact (see [`Sum`]; infinite when too large for a number);
///   `mean` is that sum over the count; `median` of an even count is the
///   mean of the two middle values.
/// * `min`/`max`/`first`/`last` keep the input column's type and work on any
///   type (texts by byte order, times by date).
fn group(t: &Table, keys: &[usize], aggregates: &[Aggregate]) -> Table {
    let n = row_count(t);
    let groups = if keys.is_empty() {
        Parts::one(n)
    } else {
        partition(t, keys, 0..n)
    };
    let firsts: Vec<usize> = groups.iter().filter_map(|g| g.first().copied()).collect();
    let mut out = Table {
        columns: keys
            .iter()
            .map(|&k| match t.columns.get(k) {
                Some(c) => Column {
                    name: c.name.clone(),
                    ty: c.ty,
                    values: c.values.gather(&firsts),
                },
                None => Column {
                    name: String::new(),
                    ty: ColType::Text,
                    values: Values::missing(firsts.len()),
                },
            })
            .collect(),
    };
    for agg in aggregates {
        let in_ty = agg
            .column
            .and_then(|c| t.columns.get(c))
            .map_or(ColType::Number, |c| c.ty);
        let ty = match agg.func {
            AggFn::Min | AggFn::Max | AggFn::First | AggFn::Last => in_ty,
            AggFn::Sum | AggFn::Mean | AggFn::Median | AggFn::Count => ColType::Number,
        };
        let values = groups
            .iter()
            .map(|rows| aggregate(t, agg.func, agg.column, rows))
            .collect();
        out.columns.push(Column {
            name: agg.name.clone(),
            ty,
            values,
        });
    }
    out
}

/// One aggregate over the given rows.
fn aggregate(t: &Table, func: AggFn, column: Option<usize>, rows: &[usize]) -> Value {
    let Some(col) = column else {
        // Only `count` has no column; anything else has nothing to read.
        return match func {
            AggFn::Count => Value::Number(rows.len() as f64),
            _ => Value::Missing,
        };
    };
    let cells = rows
        .iter()
        .map(|&r| cell(t, col, r))
        .filter(|v| !matches!(v, Cell::Missing));
    let number = |x: Option<f64>| x.map_or(Value::Missing, finite);
    match func {
        AggFn::Count => Value::Number(cells.count() as f64),
        AggFn::Sum => sum_value(sum_of(cells).total()),
        AggFn::Mean => number(sum_of(cells).mean()),
        AggFn::Median => {
            let mut xs: Vec<f64> = cells.filter_map(num_of).collect();
            xs.sort_by(f64::total_cmp);
            let m = xs.len();
            number(match m {
                0 => None,
                _ if m % 2 == 1 => Some(xs[m / 2]),
                _ => Some(xs[m / 2 - 1] / 2.0 + xs[m / 2] / 2.0),
            })
        }
        AggFn::Min => extreme(cells, Ordering::Less),
        AggFn::Max => extreme(cells, Ordering::Greater),
        AggFn::First => {
            let mut cells = cells;
            cells.next().map_or(Value::Missing, Cell::to_value)
        }
        AggFn::Last => {
            let mut cells = cells;
            cells.next_back().map_or(Value::Missing, Cell::to_value)
        }
    }
}

pub(crate) fn sum_of<'a>(cells: impl Iterator<Item = Cell<'a>>) -> Sum {
    let mut s = Sum::default();
    for x in cells.filter_map(num_of) {
        s.add(x);
    }
    s
}

/// The first value that is strictly more `want` than every other (the first
/// of equal extremes wins).
fn extreme<'a>(cells: impl Iterator<Item = Cell<'a>>, want: Ordering) -> Value {
    let mut best: Option<Cell<'a>> = None;
    for v in cells {
        best = match best {
            Some(b) if compare_cells(v, b) != Some(want) => Some(b),
            _ => Some(v),
        };
    }
    best.map_or(Value::Missing, Cell::to_value)
}

/// Stable sort by `keys` in order (`true` = descending).
///
/// Missing cells sort last for every key regardless of direction; texts sort
/// by byte order, numbers by value, times chronologically. Rows that tie on
/// every key keep their input order.
fn sort(t: &Table, keys: &[(usize, bool)]) -> Table {
    // by precomputed codes when every key column has them (the same order)
    if let Some(rows) = crate::order::sorted_rows(t, keys, row_count(t)) {
        return take_rows(t, &rows);
    }
    let mut rows: Vec<usize> = (0..row_count(t)).collect();
    rows.sort_by(|&a, &b| {
        for &(col, desc) in keys {
            let (x, y) = (cell(t, col, a), cell(t, col, b));
            let o = match (x, y) {
                (Cell::Missing, Cell::Missing) => Ordering::Equal,
                (Cell::Missing, _) => Ordering::Greater,
                (_, Cell::Missing) => Ordering::Less,
                _ => {
                    let o = compare_cells(x, y).unwrap_or(Ordering::Equal);
                    if desc {
                        o.reverse()
                    } else {
                        o
                    }
                }
            };
            if o != Ordering::Equal {
                return o;
            }
        }
        Ordering::Equal
    });
    take_rows(t, &rows)
}

/// Keep the `n` largest categories of column `key`, folding the rest.
///
/// * Categories are the distinct cells of `key` (a missing cell is a category
///   of its own), ranked by the total of column `by` over their rows (exact
///   sum, missing cells skipped; a category whose `by` cells are all missing
///   ranks below every other). Ties are broken by first appearance.
/// * A category whose text already equals `rest` is never kept: it is part of
///   the rest. If there are at most `n` other categories, the table is returned
///   unchanged.
/// * The rows of the kept categories stay as they are, in their order. Every
///   other row gets `key = rest` (a text), and those rows are folded into one
///   row per combination of the table's non-number columns (`key` included),
///   in order of first appearance of the combination, summing every number
///   column (`Missing` when all its cells in the combination are missing;
///   infinite when too large, as a group's sum).
///   The folded rows follow the kept rows.
fn top(t: &Table, key: usize, by: usize, n: usize, rest: &str) -> Table {
    crate::order::top_by_ids(t, key, by, n, rest)
        .unwrap_or_else(|| top_by_cells(t, key, by, n, rest))
}

/// [`top`] of any table, cell by cell.
pub(crate) fn top_by_cells(t: &Table, key: usize, by: usize, n: usize, rest: &str) -> Table {
    let rows = row_count(t);
    let is_rest = |v: Cell<'_>| matches!(v, Cell::Text(s) if s == rest);
    let cats = partition(t, &[key], (0..rows).filter(|&r| !is_rest(cell(t, key, r))));
    if cats.len() <= n {
        return t.clone();
    }
    let ranked: Vec<(usize, Option<f64>)> = cats
        .iter()
        .enumerate()
        .map(|(i, rs)| (i, sum_of(rs.iter().map(|&r| cell(t, by, r))).total()))
        .collect();
    // Equal totals keep first-appearance order (as a stable sort).
    let mut kept_row = vec![false; rows];
    for &(i, _) in &crate::order::first_ranked(ranked, n) {
        for &r in cats.get(i) {
            kept_row[r] = true;
        }
    }
    let kept: Vec<usize> = (0..rows).filter(|&r| kept_row[r]).collect();
    let mut out = take_rows(t, &kept);

    // Fold the rest: relabel, then group by every non-number column.
    let mut relabeled = take_rows(t, &(0..rows).filter(|&r| !kept_row[r]).collect::<Vec<_>>());
    let folded = row_count(&relabeled);
    if let Some(c) = relabeled.columns.get_mut(key) {
        c.values = (0..folded).map(|_| Cell::Text(rest)).collect();
    }
    let dims: Vec<usize> = (0..relabeled.columns.len())
        .filter(|&c| c == key || relabeled.columns[c].ty != ColType::Number)
        .collect();
    let folds = partition(&relabeled, &dims, 0..folded);
    for rs in folds.iter() {
        for (c, col) in out.columns.iter_mut().enumerate() {
            let v = if dims.contains(&c) {
                rs.first()
                    .map_or(Value::Missing, |&r| cell(&relabeled, c, r).to_value())
            } else {
                sum_value(sum_of(rs.iter().map(|&r| cell(&relabeled, c, r))).total())
            };
            col.values.push(v);
        }
    }
    out
}

#[cfg(test)]
mod tests;
