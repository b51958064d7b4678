//! Values, claims and texts that quote them.
//!
//! A value is computed from a selection of a view's rows (`last`, `mean`,
//! `growth`, `slope`, ...; see `functions.rs`) or from other values by
//! arithmetic. A claim is a condition over values with the sentence it
//! protects; every build checks every claim. Texts quote values in braces:
//! `"{multiple to 1 decimal}× as many"`.
//!
//! Values, claims and quoted values are written in the one expression
//! grammar; what a value may not hold (quoted text, conditions) and what a
//! claim must hold (comparisons) is checked here, as the expressions are
//! evaluated. A chain of operators (`a + b + c`) is evaluated in a loop.

use std::collections::{BTreeMap, BTreeSet};
use std::sync::Arc;

use crescendo_data::{time, ColType};
use crescendo_diag::{closest, Diagnostic, Source};
use crescendo_lang::ast::{
    span_from, BinOp, Expr, FormatSpec, Ident, Link, NumberStyle, Selection, Span, Text, TextPart,
    Tolerance,
};
use crescendo_lang::visit::{walk_expr, Visit};

use crate::tables::Tables;

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
        match self {
            // a date in a message or manifest stays ISO (machine form)
            Quantity::Time(ColType::Date, d) => time::date_iso(*d),
            _ => format_quantity(self, &FormatSpec::default()),
        }
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
    /// Each value's definition (for `cite`, which draws where it came from).
    pub exprs: BTreeMap<String, Expr>,
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

/// Names referenced by a value expression or a claim's condition (the
/// columns of its selections aside).
pub fn names_in(e: &Expr, out: &mut BTreeSet<String>) {
    struct Names<'o>(&'o mut BTreeSet<String>);
    impl<'a> Visit<'a> for Names<'_> {
        fn visit_expr(&mut self, e: &'a Expr) {
            if let Expr::Name(i) = e {
                self.0.insert(i.name.clone());
            }
            walk_expr(self, e);
        }
        fn visit_selection(&mut self, _: &'a Selection) {}
    }
    Names(out).visit_expr(e);
}

/// A value computed, or why it cannot be.
pub type Computed = Result<Quantity, Vec<Diagnostic>>;

/// Evaluates value expressions against the story's tables.
pub struct Evaluator<'a> {
    pub src: &'a Arc<Source>,
    pub tables: &'a Tables,
    pub values: &'a Values,
}

/// The diagnostics of two results, the left's first.
fn both_errors<A, B>(
    l: Result<A, Vec<Diagnostic>>,
    r: Result<B, Vec<Diagnostic>>,
) -> Vec<Diagnostic> {
    let mut d = l.err().unwrap_or_default();
    d.extend(r.err().unwrap_or_default());
    d
}

impl Evaluator<'_> {
    pub(crate) fn err(
        &self,
        code: &'static str,
        msg: String,
        span: Span,
        label: &str,
    ) -> Diagnostic {
        Diagnostic::error(code, msg).at(self.src, span, label.to_string())
    }

    /// Evaluate a value expression; errors are returned located.
    pub fn eval(&self, e: &Expr) -> Computed {
        match e {
            Expr::Number { value, .. } => Ok(Quantity::Number(*value)),
            Expr::Name(id) => self.name(id),
            Expr::Neg { expr, span } => match self.eval(expr)? {
                Quantity::Number(n) => Ok(Quantity::Number(-n)),
                q => Err(vec![self.err(
                    "type",
                    format!("`-` needs a number, but this is {}", q.kind()),
                    span.clone(),
                    "not a number",
                )]),
            },
            Expr::Chain { first, rest, .. } if !e.is_condition() => self.arithmetic(first, rest),
            Expr::Call { func, args, span } => self.call(&func.name, &func.span, args, span),
            Expr::Text(s) => Err(vec![self
                .err(
                    "syntax",
                    "quoted text cannot be used in a value expression".into(),
                    s.span.clone(),
                    "not a value expression",
                )
                .help("values are numbers, value names and functions of views, e.g. `last(VIEW.COLUMN)`")]),
            _ => Err(vec![self
                .err(
                    "type",
                    "a value is a number, a time or a text, but this is a condition".into(),
                    e.span(),
                    "a condition",
                )
                .help("conditions belong in a `claim` or after `where`")]),
        }
    }

    /// The value of a name.
    fn name(&self, id: &Ident) -> Computed {
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
        } else if let Some(s) = closest(&id.name, self.values.by_name.keys().map(String::as_str)) {
            d = d.help(format!("did you mean `{s}`?"));
        } else {
            d = d.help("define it first with `value NAME = ...`");
        }
        Err(vec![d])
    }

    /// `a + b - c` or `a * b / c`, left to right in a loop. Every operand
    /// is evaluated, so that each problem is reported.
    fn arithmetic(&self, first: &Expr, rest: &[Link]) -> Computed {
        let mut acc = self.eval(first);
        let mut left_end = first;
        for link in rest {
            let r = self.eval(&link.operand);
            acc = match (acc, r) {
                (Ok(l), Ok(r)) => self.binary(link.op, (l, first, left_end), (r, &link.operand)),
                (l, r) => Err(both_errors(l, r)),
            };
            left_end = &link.operand;
        }
        acc
    }

    /// `l op r` for an arithmetic operator: `l` is the value of the part of
    /// the chain from `first` to `left_end`, `r` that of `right`.
    fn binary(
        &self,
        op: BinOp,
        (l, first, left_end): (Quantity, &Expr, &Expr),
        (r, right): (Quantity, &Expr),
    ) -> Computed {
        let span = span_from(first, right);
        let (Quantity::Number(a), Quantity::Number(b)) = (&l, &r) else {
            let (bad, q) = if matches!(l, Quantity::Number(_)) {
                (right.span(), &r)
            } else {
                (span_from(first, left_end), &l)
            };
            return Err(vec![self.err(
                "type",
                format!("`{}` needs numbers, but this is {}", op.symbol(), q.kind()),
                bad,
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
                            span,
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
                span,
                "",
            )]);
        }
        Ok(Quantity::Number(v))
    }

    /// Evaluate a claim's condition. Returns whether it holds and, for the
    /// message, each comparison with its operands' values.
    pub fn condition(&self, c: &Expr, shown: &mut Vec<String>) -> Result<bool, Vec<Diagnostic>> {
        match c {
            Expr::Chain { first, rest, .. } if c.is_condition() => {
                // every part is evaluated (for the message); the first
                // error wins
                let mut acc = self.condition(first, shown);
                for link in rest {
                    let b = self.condition(&link.operand, shown);
                    acc = match (acc, b) {
                        (Ok(a), Ok(b)) if link.op == BinOp::And => Ok(a && b),
                        (Ok(a), Ok(b)) => Ok(a || b),
                        (Err(e), _) | (Ok(_), Err(e)) => Err(e),
                    };
                }
                acc
            }
            Expr::Not { expr, .. } => Ok(!self.condition(expr, shown)?),
            Expr::Compare {
                op,
                left,
                right,
                span,
            } => self.compare(*op, left, right, span, shown),
            Expr::About {
                left,
                right,
                tolerance,
                span,
            } => self.about(left, right, tolerance, span, shown),
            Expr::In { span, .. } => Err(vec![self
                .err(
                    "syntax",
                    "`in` tests the cells of a row; a claim compares values".into(),
                    span.clone(),
                    "not in a claim",
                )
                .help("write `a = 1 or a = 2`")]),
            _ => Err(vec![self
                .err(
                    "syntax",
                    "a claim needs a comparison, such as `a > b` or `a about b within 5%`".into(),
                    c.span(),
                    "not a comparison",
                )
                .help("join comparisons with `and`, `or` and `not`")]),
        }
    }

    /// The source text of an expression, for messages.
    fn text_of(&self, e: &Expr) -> String {
        self.src
            .text
            .get(e.span())
            .unwrap_or("?")
            .trim()
            .to_string()
    }

    /// `left op right` in a claim.
    fn compare(
        &self,
        op: BinOp,
        left: &Expr,
        right: &Expr,
        span: &Span,
        shown: &mut Vec<String>,
    ) -> Result<bool, Vec<Diagnostic>> {
        let text = |e: &Expr| self.text_of(e);
        let (l, r) = (self.eval(left), self.eval(right));
        let (l, r) = match (l, r) {
            (Ok(l), Ok(r)) => (l, r),
            (l, r) => {
                return Err(both_errors(l, r));
            }
        };
        let ord = match (&l, &r) {
            (Quantity::Number(a), Quantity::Number(b)) => a.partial_cmp(b),
            (Quantity::Time(ta, a), Quantity::Time(tb, b)) if ta == tb => Some(a.cmp(b)),
            (Quantity::Text(a), Quantity::Text(b)) if matches!(op, BinOp::Eq | BinOp::Ne) => {
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
        // numbers with the digits that show them apart
        let (ls, rs) = match (&l, &r) {
            (Quantity::Number(a), Quantity::Number(b)) => crate::numbers::apart(*a, *b),
            _ => (l.figure(), r.figure()),
        };
        shown.push(format!(
            "{} {} {}: {ls} {} {rs} is {}",
            text(left),
            op.symbol(),
            text(right),
            op.symbol(),
            if holds { "true" } else { "false" }
        ));
        Ok(holds)
    }

    /// `left about right within tolerance` in a claim.
    fn about(
        &self,
        left: &Expr,
        right: &Expr,
        tolerance: &Tolerance,
        span: &Span,
        shown: &mut Vec<String>,
    ) -> Result<bool, Vec<Diagnostic>> {
        let text = |e: &Expr| self.text_of(e);
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
        // the tolerance as written; operands and difference with the
        // digits that show them apart (the difference from what is allowed)
        let tol = crate::numbers::tolerance(tolerance.amount, tolerance.relative);
        let (ls, rs) = crate::numbers::apart(*a, *b);
        let (diff, _) = crate::numbers::apart((a - b).abs(), allowed);
        shown.push(format!(
            "{} about {} within {tol}: {ls} is {} {tol} of {rs} (difference {diff})",
            text(left),
            text(right),
            if holds { "within" } else { "not within" },
        ));
        Ok(holds)
    }
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
        // a quoted date reads like the axis's dates in the story's locale
        // (ISO without a locale)
        Quantity::Time(ColType::Date, d) => time::date_text(*d),
        Quantity::Time(_, y) => y.to_string(),
        Quantity::Number(v) => crate::numbers::figure(*v, spec),
    }
}

/// Why `format` cannot print `q` (the message and the help), or `None`:
/// `as quarter` and `as year` need a month or a date; a sign, decimals,
/// `as percent` and `as compact` need a number.
fn format_misfit(q: &Quantity, format: &FormatSpec) -> Option<(String, String)> {
    let period = match format.style {
        NumberStyle::Quarter => Some("quarter"),
        NumberStyle::Year => Some("year"),
        _ => None,
    };
    let numeric = format.sign
        || format.decimals.is_some()
        || matches!(format.style, NumberStyle::Percent | NumberStyle::Compact);
    let kind = match q {
        Quantity::Number(_) => "a number".to_string(),
        Quantity::Time(t, _) => format!("a {}", t.name()),
        Quantity::Text(_) => "a text".to_string(),
    };
    match (q, period) {
        (Quantity::Time(ColType::Month | ColType::Date, _), Some(_)) => None,
        (_, Some(word)) => Some((
            format!("`as {word}` needs a month or a date, and this value is {kind}"),
            format!("drop `as {word}`"),
        )),
        (Quantity::Number(_), None) => None,
        (_, None) if numeric => Some((
            format!("this value is {kind}, and only a number takes a number format"),
            "quote it without a format".to_string(),
        )),
        _ => None,
    }
}

/// A text with its quotes resolved.
pub struct Resolved {
    pub text: String,
    /// The raw text as written, when it quoted values.
    pub template: Option<String>,
    /// Value names quoted, with the figure as printed.
    pub quoted: Vec<(String, String)>,
    /// Each quoted number with its figure (labels of the same quantity
    /// print the same way, `numbers::write_labels`).
    pub numbers: Vec<crate::numbers::Quoted>,
    /// Every value name the text depends on (transitively).
    pub depends: BTreeSet<String>,
}

/// Resolve the quotes of a story text (its parts were read by the parser).
pub fn resolve_text(ev: &Evaluator, s: &Text, diags: &mut Vec<Diagnostic>) -> Resolved {
    let template = &s.template;
    if template.is_plain() {
        return Resolved {
            text: s.value.clone(),
            template: None,
            quoted: Vec::new(),
            numbers: Vec::new(),
            depends: BTreeSet::new(),
        };
    }
    let mut text = String::new();
    let mut quoted = Vec::new();
    let mut numbers = Vec::new();
    let mut names = BTreeSet::new();
    for part in &template.parts {
        match part {
            TextPart::Literal(l) => text.push_str(l),
            TextPart::Quote {
                expr,
                format,
                written,
                span,
            } => {
                names_in(expr, &mut names);
                match ev.eval(expr) {
                    Ok(q) => {
                        if let Some((message, help)) = format_misfit(&q, format) {
                            diags.push(
                                Diagnostic::error("format", message)
                                    .at(ev.src, span.clone(), "this format")
                                    .help(help),
                            );
                            text.push('?');
                            continue;
                        }
                        let fig = crate::numbers::drawn(format_quantity(&q, format));
                        // the expression as written, without its format
                        let key = ev.src.text.get(written.clone()).unwrap_or("").to_string();
                        if let Quantity::Number(value) = q {
                            numbers.push(crate::numbers::Quoted {
                                value,
                                figure: fig.clone(),
                                style: format.style,
                                sign: format.sign,
                            });
                        }
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
        numbers,
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

    /// A quoted date reads like the axis's dates: CLDR's medium date
    /// pattern of the locale (CLDR 49 as shipped in ICU4X 2.4's compiled
    /// data: de "dd.MM.y", fr "d MMM y", es "d MMM y", en "MMM d, y");
    /// ISO without a locale; the machine figure stays ISO.
    #[test]
    fn quoted_dates_follow_the_locale() {
        use crescendo_data::locale::{scoped, Conventions};
        let d = Quantity::Time(ColType::Date, time::days_from_civil(2024, 6, 20));
        let plain = FormatSpec::default();
        for (tag, want) in [
            ("de-DE", "20.06.2024"),
            ("fr-FR", "20 juin 2024"),
            ("es-ES", "20 jun 2024"),
            ("en-US", "Jun 20, 2024"),
        ] {
            let got = scoped(Conventions::of(Some(tag), None), || {
                (format_quantity(&d, &plain), d.figure())
            });
            assert_eq!(got.0, want, "{tag}");
            assert_eq!(got.1, "2024-06-20", "{tag}: machine form");
        }
        assert_eq!(format_quantity(&d, &plain), "2024-06-20");
    }
}
