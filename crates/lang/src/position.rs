//! Positions of annotations as written (`callout`, `band`, `reference`,
//! `moment`).

use crate::ast::{Expr, Span, Str};

/// A position as written: a quoted time, a number, or a value (an
/// expression of values).
#[derive(Clone, Debug, PartialEq)]
pub enum Position {
    Text(Str),
    Number {
        value: f64,
        span: Span,
    },
    /// A value or an expression of values, computed on every build.
    Value(Expr),
}

impl Position {
    pub fn span(&self) -> Span {
        match self {
            Position::Text(s) => s.span.clone(),
            Position::Number { span, .. } => span.clone(),
            Position::Value(e) => e.span(),
        }
    }
}
