//! Typed tables and the view-step IR that the planner produces.

use serde::{Deserialize, Serialize};

pub use crate::column::{Cells, Values};

/// A column's type, declared in the story or inferred from the CSV.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum ColType {
    Text,
    Number,
    /// `YYYY-MM-DD`, stored as days since 1970-01-01.
    Date,
    /// `YYYY-MM`, stored as `year * 12 + (month - 1)`.
    Month,
    /// `YYYY`, stored as the year.
    Year,
}

impl ColType {
    pub fn name(self) -> &'static str {
        match self {
            ColType::Text => "text",
            ColType::Number => "number",
            ColType::Date => "date",
            ColType::Month => "month",
            ColType::Year => "year",
        }
    }

    /// Time-like types are ordered and continuous (good for a line's x).
    pub fn is_time(self) -> bool {
        matches!(self, ColType::Date | ColType::Month | ColType::Year)
    }
}

/// One cell. Missing cells are `Missing`, never zero.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(untagged)]
pub enum Value {
    Missing,
    Number(f64),
    Text(String),
    /// Days since 1970-01-01.
    Date(i32),
    /// `year * 12 + (month - 1)`.
    Month(i32),
    Year(i32),
}

/// A borrowed cell: what the view engine evaluates expressions on, both over
/// a [`Table`] and over a CSV record while it streams (no text is copied).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Cell<'a> {
    Missing,
    Number(f64),
    Text(&'a str),
    Date(i32),
    Month(i32),
    Year(i32),
}

impl Value {
    /// This value as a borrowed [`Cell`].
    pub fn cell(&self) -> Cell<'_> {
        match self {
            Value::Missing => Cell::Missing,
            Value::Number(x) => Cell::Number(*x),
            Value::Text(s) => Cell::Text(s),
            Value::Date(d) => Cell::Date(*d),
            Value::Month(m) => Cell::Month(*m),
            Value::Year(y) => Cell::Year(*y),
        }
    }
}

impl Cell<'_> {
    /// An owned copy of this cell.
    pub fn to_value(self) -> Value {
        match self {
            Cell::Missing => Value::Missing,
            Cell::Number(x) => Value::Number(x),
            Cell::Text(s) => Value::Text(s.to_owned()),
            Cell::Date(d) => Value::Date(d),
            Cell::Month(m) => Value::Month(m),
            Cell::Year(y) => Value::Year(y),
        }
    }
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Column {
    pub name: String,
    pub ty: ColType,
    /// The cells, held by kind (see [`crate::column`]).
    pub values: Values,
}

/// A table: columns of equal length, rows in a stable order. Cloning a
/// table does not copy its cells (see [`crate::column`]).
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct Table {
    pub columns: Vec<Column>,
}

/// Comparison operators.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CmpOp {
    Eq,
    Ne,
    Lt,
    Le,
    Gt,
    Ge,
}

/// Arithmetic operators.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ArithOp {
    Add,
    Sub,
    Mul,
    Div,
}

/// A resolved, type-checked expression over one row. Column references are
/// indices into the input table of the step. A chain of operators
/// (`a + b - c`, `a and b and c`) is one node evaluated in a loop, so no
/// walk over an expression takes stack in proportion to a chain's length.
#[derive(Clone, Debug, PartialEq)]
pub enum Expr {
    Col(usize),
    Lit(Value),
    Neg(Box<Expr>),
    /// `a op b op c ...`, applied left to right.
    Arith(Box<Expr>, Vec<(ArithOp, Expr)>),
    Cmp(CmpOp, Box<Expr>, Box<Expr>),
    /// True when every part is (left to right, stopping at a false one).
    And(Vec<Expr>),
    /// True when some part is (left to right, stopping at a true one).
    Or(Vec<Expr>),
    Not(Box<Expr>),
    /// `expr in (v1, v2, ...)`.
    In(Box<Expr>, Vec<Value>),
    /// The time bucket of a date or month (`crate::bucket`); `ty` is the
    /// type it gives.
    Bucket {
        bucket: crate::bucket::Bucket,
        of: Box<Expr>,
        ty: ColType,
    },
    /// `year_quarter(year, quarter)`: the quarter as one time, the month
    /// it starts with (see [`crate::bucket::year_quarter`]).
    YearQuarter(Box<Expr>, Box<Expr>),
}

impl Expr {
    /// The type of a value expression: a bucket's, else a number.
    pub fn value_type(&self) -> ColType {
        match self {
            Expr::Bucket { ty, .. } => *ty,
            Expr::YearQuarter(..) => ColType::Month,
            _ => ColType::Number,
        }
    }

    /// `a op b`.
    pub fn arith(op: ArithOp, a: Expr, b: Expr) -> Expr {
        Expr::Arith(Box::new(a), vec![(op, b)])
    }
}

/// Aggregate functions of a group step.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AggFn {
    Sum,
    Mean,
    Median,
    Min,
    Max,
    /// Rows in the group (with no column) or non-missing cells (with one).
    Count,
    First,
    Last,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Aggregate {
    pub name: String,
    pub func: AggFn,
    /// Input column; `None` only for `Count` of rows.
    pub column: Option<usize>,
}

/// One step of a view, applied to the previous step's table.
#[derive(Clone, Debug, PartialEq)]
pub enum Step {
    /// Keep rows where the predicate is true (missing compares as false).
    Keep(Expr),
    /// One row per distinct key combination, in order of first appearance;
    /// output columns are the keys, then the aggregates.
    Group {
        keys: Vec<usize>,
        aggregates: Vec<Aggregate>,
    },
    /// Append a computed number column.
    Derive { name: String, expr: Expr },
    /// Stable sort by the keys in order; `true` = descending. Missing sorts last.
    Sort { keys: Vec<(usize, bool)> },
    /// Keep the `n` categories of `key` with the largest total of `by`; the
    /// rows of all other categories get `key = rest` and are folded into one
    /// row per combination of the remaining non-number columns, summing the
    /// number columns.
    Top {
        key: usize,
        by: usize,
        n: usize,
        rest: String,
    },
}
