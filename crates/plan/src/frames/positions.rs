//! Positions written as values: `reference mean_visits "Average"`,
//! `band opened to closed`, `moment opened "Evening swims begin"`. The
//! value (or simple expression of values) is computed on every build and
//! turned into the literal it stands for, so the annotation follows
//! refreshed data exactly as if its figure had been written.

use std::collections::BTreeSet;

use crescendo_data::{time, ColType};
use crescendo_lang::ast::{Position, Str};

use crate::context::{Ctx, Outcome};
use crate::scope::Scope;
use crate::values::{names_in, Quantity};

/// The literal a position stands for: a value is computed, a written
/// number or quoted time is returned as it is.
pub(crate) fn literal(cx: &mut Ctx, scope: &Scope, p: &Position) -> Outcome<Position> {
    let Position::Value(e) = p else {
        return Ok(p.clone());
    };
    let span = e.span();
    let q = match scope.evaluator(cx.src).eval(e) {
        Ok(q) => q,
        Err(d) => {
            cx.extend(d)?;
            return Err(cx.error("annotation", "this value has no result", span, "here"));
        }
    };
    let text = |value: String| {
        Position::Text(Str {
            value,
            span: span.clone(),
        })
    };
    Ok(match q {
        Quantity::Number(value) if value.is_finite() => Position::Number {
            value,
            span: span.clone(),
        },
        Quantity::Number(_) => {
            return Err(cx.error(
                "annotation",
                "this value is not a finite number",
                span.clone(),
                "no position",
            ))
        }
        Quantity::Time(ColType::Month, m) => text(time::month_iso(m)),
        Quantity::Time(ColType::Year, y) => text(y.to_string()),
        Quantity::Time(_, d) => text(time::date_iso(d)),
        Quantity::Text(s) => text(s),
    })
}

/// The number a `reference` stands at: written, or a value's.
pub(crate) fn measure(cx: &mut Ctx, scope: &Scope, p: &Position) -> Outcome<f64> {
    match literal(cx, scope, p)? {
        Position::Number { value, .. } => Ok(value),
        other => Err(cx.error_with_help(
            "annotation",
            "a reference stands at a number of the measure",
            other.span(),
            "not a number",
            "write a number (`reference 100 \"Target\"`) or a value that is one",
        )),
    }
}

/// The value names a position depends on, transitively (none for a
/// literal): a failed claim about one marks the frame.
pub(crate) fn names(scope: &Scope, p: &Position, out: &mut BTreeSet<String>) {
    if let Position::Value(e) = p {
        let mut direct = BTreeSet::new();
        names_in(e, &mut direct);
        out.extend(scope.values.closure(&direct));
    }
}
