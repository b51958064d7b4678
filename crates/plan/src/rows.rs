//! Row expressions: the expressions of a view's `keep` and `add` steps and
//! of a selection's `where`, checked against a table's columns and turned
//! into the engine's expressions. Names are columns; the functions of
//! values and `about` belong to values and claims and are refused here.

use std::sync::Arc;

use crescendo_data::bucket::Bucket;
use crescendo_data::{self as data, ArithOp, CmpOp, ColType, Table, Value};
use crescendo_diag::{Diagnostic, Source};
use crescendo_lang::ast::{self, BinOp, Expr, Ident, Link};

/// A column name and type.
pub type Schema = Vec<(String, ColType)>;

pub fn schema_of(t: &Table) -> Schema {
    t.columns.iter().map(|c| (c.name.clone(), c.ty)).collect()
}

/// Where columns are looked up: the columns, where they are ("in
/// `monthly`", "at this step of `monthly`", for messages), and why a
/// column is text (a note for type errors).
pub(crate) struct At<'a> {
    pub(crate) src: &'a Arc<Source>,
    pub(crate) schema: &'a Schema,
    pub(crate) place: &'a str,
    pub(crate) why: &'a dyn Fn(&str) -> Option<String>,
}

/// No note on why a column is text.
fn no_reason(_: &str) -> Option<String> {
    None
}

impl<'a> At<'a> {
    /// Columns with no note on why one is text.
    pub(crate) fn new(src: &'a Arc<Source>, schema: &'a Schema, place: &'a str) -> Self {
        At {
            src,
            schema,
            place,
            why: &no_reason,
        }
    }

    /// Find a column; reports unknown names with a suggestion.
    pub(crate) fn column(
        &self,
        id: &Ident,
        diags: &mut Vec<Diagnostic>,
    ) -> Option<(usize, ColType)> {
        let schema = self.schema;
        if let Some(i) = schema.iter().position(|(n, _)| *n == id.name) {
            return Some((i, schema[i].1));
        }
        let names = schema.iter().map(|(n, _)| n.as_str());
        let d = Diagnostic::error(
            "unknown-column",
            format!("no column named `{}` {}", id.name, self.place),
        )
        .at(self.src, id.span.clone(), "unknown column")
        .among(&id.name, "columns here", names);
        diags.push(d);
        None
    }

    /// A checker of row expressions against these columns.
    pub(crate) fn checker<'d>(&'d self, diags: &'d mut Vec<Diagnostic>) -> Checker<'d> {
        Checker { at: self, diags }
    }

    /// Type-check a row condition (a `where` of a value selection).
    pub(crate) fn condition(&self, expr: &Expr, diags: &mut Vec<Diagnostic>) -> Option<data::Expr> {
        let mut ck = self.checker(diags);
        match ck.check(expr)? {
            (e, Ty::Bool) => Some(e),
            (_, t) => {
                ck.err(
                    expr.span(),
                    format!("`where` needs a condition, but this is {}", t.describe()),
                    "not a condition",
                );
                None
            }
        }
    }
}

/// The type of an expression while checking it.
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum Ty {
    Col(ColType),
    Bool,
    /// A string literal: text, or a date/month/year when compared to one.
    TextLit(String),
}

impl Ty {
    pub(crate) fn describe(&self) -> String {
        match self {
            Ty::Col(c) => c.name().to_string(),
            Ty::Bool => "true/false".to_string(),
            Ty::TextLit(_) => "text".to_string(),
        }
    }
}

/// Checks row expressions against one table's columns.
pub(crate) struct Checker<'a> {
    pub(crate) at: &'a At<'a>,
    pub(crate) diags: &'a mut Vec<Diagnostic>,
}

impl Checker<'_> {
    pub(crate) fn err(&mut self, span: ast::Span, message: String, label: &str) {
        self.diags.push(Diagnostic::error("type", message).at(
            self.at.src,
            span,
            label.to_string(),
        ));
    }

    /// A literal coerced to `ty`, or an error at `span`.
    fn literal_as(&mut self, lit: &Expr, ty: ColType) -> Option<Value> {
        let span = lit.span();
        let parsed = |what: &str, write: &str, value: Option<Value>| match value {
            Some(v) => Ok(v),
            None => Err((
                format!("is not a {what} (write {write})"),
                format!("not a {what}"),
            )),
        };
        let result = match (lit, ty) {
            (Expr::Number { value, .. }, ColType::Number) => Ok(Value::Number(*value)),
            (Expr::Number { value, .. }, ColType::Year) if value.fract() == 0.0 => {
                Ok(Value::Year(*value as i32))
            }
            (Expr::Text(s), ColType::Text) => Ok(Value::Text(s.value.clone())),
            (Expr::Text(s), ColType::Month) => parsed(
                "month",
                "YYYY-MM",
                data::time::parse_month(&s.value).map(Value::Month),
            ),
            (Expr::Text(s), ColType::Date) => parsed(
                "date",
                "YYYY-MM-DD",
                data::time::parse_date(&s.value).map(Value::Date),
            ),
            (Expr::Text(s), ColType::Year) => parsed(
                "year",
                "YYYY",
                data::time::parse_year(&s.value).map(Value::Year),
            ),
            (_, ty) => {
                self.err(
                    span,
                    format!("this value cannot be compared with a {} column", ty.name()),
                    "wrong type",
                );
                return None;
            }
        };
        match (result, lit) {
            (Ok(v), _) => Some(v),
            (Err((message, label)), Expr::Text(s)) => {
                self.err(span, format!("\"{}\" {message}", s.value), &label);
                None
            }
            (Err(_), _) => None,
        }
    }

    /// The number side of a comparison with a year: a literal becomes a
    /// year (or an error when it is not a whole number); any other number
    /// expression is compared as it is.
    fn year_operand(&mut self, e: &Expr, checked: data::Expr) -> Option<data::Expr> {
        match e {
            Expr::Number { .. } => Some(data::Expr::Lit(self.literal_as(e, ColType::Year)?)),
            _ => Some(checked),
        }
    }

    /// Check `e` and turn it into the engine's expression, with its type;
    /// `None` once the problem is reported.
    pub(crate) fn check(&mut self, e: &Expr) -> Option<(data::Expr, Ty)> {
        match e {
            Expr::Name(id) => {
                let (i, t) = self.at.column(id, self.diags)?;
                Some((data::Expr::Col(i), Ty::Col(t)))
            }
            Expr::Number { value, .. } => Some((
                data::Expr::Lit(Value::Number(*value)),
                Ty::Col(ColType::Number),
            )),
            Expr::Text(s) => Some((
                data::Expr::Lit(Value::Text(s.value.clone())),
                Ty::TextLit(s.value.clone()),
            )),
            Expr::Neg { expr, span } => {
                let (x, t) = self.check(expr)?;
                if t != Ty::Col(ColType::Number) {
                    self.err(
                        span.clone(),
                        format!("`-` needs a number, not {}", t.describe()),
                        "not a number",
                    );
                    return None;
                }
                Some((data::Expr::Neg(Box::new(x)), t))
            }
            Expr::Not { expr, span } => {
                let (x, t) = self.check(expr)?;
                if t != Ty::Bool {
                    self.err(
                        span.clone(),
                        format!("`not` needs a condition, not {}", t.describe()),
                        "not a condition",
                    );
                    return None;
                }
                Some((data::Expr::Not(Box::new(x)), Ty::Bool))
            }
            Expr::In {
                expr,
                list,
                negated,
                span,
            } => self.membership(expr, list, *negated, span),
            Expr::Chain { first, rest, .. } => self.chain(first, rest),
            Expr::Compare {
                op,
                left,
                right,
                span,
            } => self.compare(*op, left, right, span),
            Expr::Call { func, args, span } if bucket_named(&func.name).is_some() => {
                self.bucket(func, args, span, false)
            }
            Expr::Call { func, args, span } if func.name == "year_quarter" => {
                self.year_quarter(args, span)
            }
            Expr::Call { func, span, .. } => {
                self.not_in_a_row(
                    span.clone(),
                    format!("`{}(...)` is a function of values, not of a row's cells", func.name),
                    "a value function",
                    "compute it in a `value`, or per group with `| by KEY: NAME = FUNCTION(COLUMN)`",
                );
                None
            }
            Expr::About { span, .. } => {
                self.not_in_a_row(
                    span.clone(),
                    "`about ... within` compares values in a claim, not a row's cells".into(),
                    "only in a claim",
                    "compare the cells with `>=` and `<=`",
                );
                None
            }
        }
    }

    /// The value of an `add` step: any row expression, and a time bucket
    /// that gives text (which only a whole `add` may compute).
    pub(crate) fn check_added(&mut self, e: &Expr) -> Option<(data::Expr, Ty)> {
        match e {
            Expr::Call { func, args, span } if bucket_named(&func.name).is_some() => {
                self.bucket(func, args, span, true)
            }
            _ => self.check(e),
        }
    }

    /// `month(day)`, `quarter(day)`, … (see [`BUCKETS`]): one date or month.
    fn bucket(
        &mut self,
        func: &Ident,
        args: &[ast::CallArg],
        span: &ast::Span,
        whole_add: bool,
    ) -> Option<(data::Expr, Ty)> {
        let (kind, takes) = bucket_named(&func.name)?;
        let [ast::CallArg::Value(arg)] = args else {
            self.err(
                span.clone(),
                format!("`{}(...)` takes one {takes} column", func.name),
                "one argument",
            );
            return None;
        };
        let fiscal = crescendo_data::locale::current().fiscal;
        let bucket = match kind {
            Kind::FiscalYear | Kind::FiscalQuarter if !fiscal.is_fiscal() => {
                self.diags.push(
                    Diagnostic::error(
                        "type",
                        format!("`{}(...)` needs the story's fiscal year", func.name),
                    )
                    .at(self.at.src, func.span.clone(), "no fiscal year")
                    .help("say when it starts at the top of the story, e.g. `fiscal year starts July`; for calendar periods use `year(...)` or `quarter(...)`"),
                );
                return None;
            }
            Kind::FiscalYear => Bucket::FiscalYear(fiscal),
            Kind::FiscalQuarter => Bucket::FiscalQuarter(fiscal),
            Kind::Plain(b) => b,
        };
        let (of, t) = self.check(arg)?;
        let result = match &t {
            Ty::Col(c) => bucket.result(*c),
            _ => None,
        };
        let Some(ty) = result else {
            self.err(
                arg.span(),
                format!(
                    "`{}(...)` takes a {takes}, but this is {}",
                    func.name,
                    t.describe()
                ),
                &format!("not a {takes}"),
            );
            return None;
        };
        if ty == ColType::Text && !whole_add {
            self.not_in_a_row(
                span.clone(),
                format!("`{}(...)` gives a text label, which only an `add` step can compute", func.name),
                "only in `add`",
                &format!("add it as a column first, e.g. `| add period = {}(...)`, then compare or group by `period`", func.name),
            );
            return None;
        }
        let e = data::Expr::Bucket {
            bucket,
            of: Box::new(of),
            ty,
        };
        Some((e, Ty::Col(ty)))
    }

    /// `year_quarter(YEAR, QUARTER)`: a year column (or whole numbers) and a
    /// quarter column (numbers 1 to 4, or texts `Q1` to `Q4`) as one
    /// quarterly time, a month (`crescendo_data::bucket::year_quarter`).
    fn year_quarter(
        &mut self,
        args: &[ast::CallArg],
        span: &ast::Span,
    ) -> Option<(data::Expr, Ty)> {
        let [ast::CallArg::Value(y), ast::CallArg::Value(q)] = args else {
            self.err(
                span.clone(),
                "`year_quarter(...)` takes a year column and a quarter column".into(),
                "two arguments",
            );
            return None;
        };
        let (ye, yt) = self.check(y)?;
        let (qe, qt) = self.check(q)?;
        if !matches!(yt, Ty::Col(ColType::Year | ColType::Number)) {
            let msg = format!(
                "the year of `year_quarter` must be a year or number column, but this is {}",
                yt.describe()
            );
            self.err(y.span(), msg, "not a year");
            return None;
        }
        if !matches!(qt, Ty::Col(ColType::Number | ColType::Text)) {
            let msg = format!("the quarter of `year_quarter` must be a number (1 to 4) or text (`Q1` to `Q4`) column, but this is {}", qt.describe());
            self.err(q.span(), msg, "not a quarter");
            return None;
        }
        let e = data::Expr::YearQuarter(Box::new(ye), Box::new(qe));
        Some((e, Ty::Col(ColType::Month)))
    }

    fn not_in_a_row(&mut self, span: ast::Span, message: String, label: &str, help: &str) {
        self.diags.push(
            Diagnostic::error("syntax", message)
                .at(self.at.src, span, label.to_string())
                .help(help.to_string()),
        );
    }

    /// `expr [not] in (literals)`.
    fn membership(
        &mut self,
        expr: &Expr,
        list: &[Expr],
        negated: bool,
        span: &ast::Span,
    ) -> Option<(data::Expr, Ty)> {
        let (x, t) = self.check(expr)?;
        let Ty::Col(ty) = t else {
            self.err(
                span.clone(),
                "`in` needs a column on its left".into(),
                "not a column",
            );
            return None;
        };
        let mut values = Vec::new();
        for l in list {
            values.push(self.literal_as(l, ty)?);
        }
        let inn = data::Expr::In(Box::new(x), values);
        let e = if negated {
            data::Expr::Not(Box::new(inn))
        } else {
            inn
        };
        Some((e, Ty::Bool))
    }

    /// Operators of one level, applied left to right: the operands are
    /// checked in order, and each operator checks the operands it joins.
    /// The engine's expression is one node for the whole chain.
    fn chain(&mut self, first: &Expr, rest: &[Link]) -> Option<(data::Expr, Ty)> {
        let (head, first_ty) = self.check(first)?;
        let mut operands = Vec::with_capacity(rest.len());
        for (k, link) in rest.iter().enumerate() {
            let (r, rt) = self.check(&link.operand)?;
            if k == 0 {
                self.operand(link.op, &first_ty, first)?;
            }
            self.operand(link.op, &rt, &link.operand)?;
            operands.push((link.op, r));
        }
        Some(match rest.first().map(|l| l.op) {
            Some(BinOp::And) => (data::Expr::And(all(head, operands)), Ty::Bool),
            Some(BinOp::Or) => (data::Expr::Or(all(head, operands)), Ty::Bool),
            Some(_) => (
                data::Expr::Arith(
                    Box::new(head),
                    operands
                        .into_iter()
                        .map(|(op, e)| (arith_op(op), e))
                        .collect(),
                ),
                Ty::Col(ColType::Number),
            ),
            None => (head, first_ty),
        })
    }

    /// Check that `side`, of type `t`, fits operator `op` of a chain.
    fn operand(&mut self, op: BinOp, t: &Ty, side: &Expr) -> Option<()> {
        let logic = matches!(op, BinOp::And | BinOp::Or);
        let (wanted, message, label) = if logic {
            (Ty::Bool, "joins conditions", "not a condition")
        } else {
            (Ty::Col(ColType::Number), "needs numbers", "not a number")
        };
        if *t == wanted {
            return Some(());
        }
        self.err(
            side.span(),
            format!("`{}` {message}, but this is {}", op.symbol(), t.describe()),
            label,
        );
        if let (false, Expr::Name(id)) = (logic, side) {
            if let Some(n) = (self.at.why)(&id.name) {
                if let Some(d) = self.diags.last_mut() {
                    d.notes.push(n);
                }
            }
        }
        None
    }

    /// `a op b` for a comparison operator.
    fn compare(
        &mut self,
        op: BinOp,
        left: &Expr,
        right: &Expr,
        span: &ast::Span,
    ) -> Option<(data::Expr, Ty)> {
        let cop = match op {
            BinOp::Eq => CmpOp::Eq,
            BinOp::Ne => CmpOp::Ne,
            BinOp::Lt => CmpOp::Lt,
            BinOp::Le => CmpOp::Le,
            BinOp::Gt => CmpOp::Gt,
            _ => CmpOp::Ge,
        };
        let (l, lt) = self.check(left)?;
        let (r, rt) = self.check(right)?;
        let (l, r) = match (&lt, &rt) {
            (Ty::Col(a), Ty::Col(b)) if a == b => (l, r),
            // Years compare with numbers (the engine does this); a number
            // literal must be a whole year.
            (Ty::Col(ColType::Year), Ty::Col(ColType::Number)) => (l, self.year_operand(right, r)?),
            (Ty::Col(ColType::Number), Ty::Col(ColType::Year)) => (self.year_operand(left, l)?, r),
            (Ty::Col(c), Ty::TextLit(_)) => (l, data::Expr::Lit(self.literal_as(right, *c)?)),
            (Ty::TextLit(_), Ty::Col(c)) => (data::Expr::Lit(self.literal_as(left, *c)?), r),
            (Ty::TextLit(_), Ty::TextLit(_)) => (l, r),
            _ => {
                self.err(
                    span.clone(),
                    format!("cannot compare {} with {}", lt.describe(), rt.describe()),
                    "mismatched types",
                );
                return None;
            }
        };
        Some((data::Expr::Cmp(cop, Box::new(l), Box::new(r)), Ty::Bool))
    }
}

/// What a time-bucket function computes.
#[derive(Clone, Copy)]
enum Kind {
    Plain(Bucket),
    /// Fiscal buckets take the story's `fiscal year starts` month.
    FiscalYear,
    FiscalQuarter,
}

/// The time-bucket functions of row expressions: name, bucket, what they
/// take (for messages).
const BUCKETS: &[(&str, Kind, &str)] = &[
    ("month", Kind::Plain(Bucket::Month), "date"),
    ("quarter", Kind::Plain(Bucket::Quarter), "date or month"),
    ("year", Kind::Plain(Bucket::Year), "date or month"),
    ("fiscal_quarter", Kind::FiscalQuarter, "date or month"),
    ("fiscal_year", Kind::FiscalYear, "date or month"),
    ("week", Kind::Plain(Bucket::Week), "date"),
    ("week_start", Kind::Plain(Bucket::WeekStart), "date"),
    ("weekday", Kind::Plain(Bucket::Weekday), "date"),
];

fn bucket_named(name: &str) -> Option<(Kind, &'static str)> {
    BUCKETS
        .iter()
        .find(|(n, _, _)| *n == name)
        .map(|(_, k, t)| (*k, *t))
}

/// The first expression and the operands after it, in order.
fn all(first: data::Expr, rest: Vec<(BinOp, data::Expr)>) -> Vec<data::Expr> {
    std::iter::once(first)
        .chain(rest.into_iter().map(|(_, e)| e))
        .collect()
}

fn arith_op(op: BinOp) -> ArithOp {
    match op {
        BinOp::Add => ArithOp::Add,
        BinOp::Sub => ArithOp::Sub,
        BinOp::Mul => ArithOp::Mul,
        _ => ArithOp::Div,
    }
}

/// The positions of the rows of `table` that `cond` keeps, in order: the
/// condition runs through the view engine on a copy that carries the row
/// numbers.
pub fn kept_rows(table: &Table, cond: data::Expr) -> Vec<usize> {
    let n = table.columns.first().map_or(0, |c| c.values.len());
    let mut t = table.clone();
    t.columns.push(data::Column {
        name: "\u{0}row".into(),
        ty: ColType::Number,
        values: (0..n).map(|i| Value::Number(i as f64)).collect(),
    });
    let kept = data::run_view(&t, &[data::Step::Keep(cond)]);
    kept.columns
        .last()
        .map(|c| {
            c.values
                .iter()
                .filter_map(|v| match v {
                    Value::Number(x) => Some(x as usize),
                    _ => None,
                })
                .collect()
        })
        .unwrap_or_default()
}
