//! The syntax tree of a text with quoted values, `"up {change as percent}"`,
//! and of the format a quote asks for (re-exported from [`crate::ast`]).

use crate::ast::{Expr, Span};

/// The most decimals a quoted value may ask for (`{x to 12 decimals}`).
pub const MAX_DECIMALS: usize = 12;

/// How a quoted value is printed: `{change as signed percent to 1 decimal}`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct FormatSpec {
    /// `signed`: always print a sign (+12%, -3%).
    pub sign: bool,
    /// `to N decimals`: exactly N decimals (trailing zeros kept), at most
    /// [`MAX_DECIMALS`]. `None`: a few decimals, trailing zeros dropped.
    pub decimals: Option<usize>,
    pub style: NumberStyle,
}

/// The style of a [`FormatSpec`]: the word after `as`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum NumberStyle {
    /// `number`, or no `as`.
    #[default]
    Plain,
    /// `percent`: a fraction shown as a percentage (0.123 → 12.3%).
    Percent,
    /// `compact`: 12.3k, 4.5M.
    Compact,
    /// `quarter`: the quarter of a month or date ("2024 Q4"; in a fiscal
    /// year "FY2025 Q2").
    Quarter,
    /// `year`: the year of a month or date ("2024"; in a fiscal year
    /// "FY2025").
    Year,
}

impl FormatSpec {
    /// The format as it is written after a quoted value's expression
    /// (` as signed percent to 1 decimal`, with its leading space), empty
    /// for the default.
    pub fn words(&self) -> String {
        let style = match self.style {
            NumberStyle::Plain => "",
            NumberStyle::Percent => "percent",
            NumberStyle::Compact => "compact",
            NumberStyle::Quarter => "quarter",
            NumberStyle::Year => "year",
        };
        let mut out = String::new();
        match (self.sign, style) {
            (false, "") => {}
            (true, "") => out.push_str(" as signed number"),
            (true, s) => out.push_str(&format!(" as signed {s}")),
            (false, s) => out.push_str(&format!(" as {s}")),
        }
        if let Some(n) = self.decimals {
            let unit = if n == 1 { "decimal" } else { "decimals" };
            out.push_str(&format!(" to {n} {unit}"));
        }
        out
    }
}

/// One piece of a text that may quote values.
#[derive(Clone, Debug, PartialEq)]
pub enum TextPart {
    Literal(String),
    /// `{EXPRESSION as STYLE to N decimals}`; `span` covers the braces,
    /// `written` the expression as written (parentheses included).
    Quote {
        expr: Expr,
        format: FormatSpec,
        span: Span,
        written: Span,
    },
}

/// A text with its quoted values, e.g. `"now {multiple to 1 decimal}× as many"`.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Template {
    pub parts: Vec<TextPart>,
}

impl Template {
    /// True when the text quotes no values.
    pub fn is_plain(&self) -> bool {
        self.parts.iter().all(|p| matches!(p, TextPart::Literal(_)))
    }
}
