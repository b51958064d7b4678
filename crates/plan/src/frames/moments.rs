//! `moment AT [to UNTIL] "text"`: a time or a period the story names,
//! marked on a line chart's time axis. The renderer draws a dashed line
//! (a light band for a period) and puts the label where it covers no data.

use crescendo_data::time;
use crescendo_lang::ast::{Position, Span};

use crate::context::{Ctx, Outcome};
use crate::frames::annotations::{line_of, x_position};
use crate::frames::positions;
use crate::model::*;
use crate::scope::Scope;
use crate::sequence::SeqState;

/// Plans a moment on the current line chart; `text` is already resolved.
pub(crate) fn moment(
    cx: &mut Ctx,
    scope: &Scope,
    st: &mut SeqState,
    (at, until): (&Position, Option<&Position>),
    text: String,
    span: &Span,
) -> Outcome<()> {
    let axis = line_of(cx, st, span, "moment")?.x.clone();
    if !matches!(
        axis.scale,
        ScaleKind::Days | ScaleKind::Months | ScaleKind::Years
    ) {
        return Err(cx.error_with_help(
            "annotation",
            "`moment` marks a time, but this chart's x axis does not run over time",
            span.clone(),
            "no time axis here",
            "use `callout` for a point, or `band` for a range of this axis",
        ));
    }
    let at_lit = positions::literal(cx, scope, at)?;
    let from = x_position(cx, &axis, &at_lit)?;
    let to = match until {
        Some(u) => {
            let lit = positions::literal(cx, scope, u)?;
            let to = x_position(cx, &axis, &lit)?;
            if to <= from {
                return Err(cx.error(
                    "annotation",
                    "a period must run forward: its start before its end",
                    span.clone(),
                    "empty period",
                ));
            }
            Some(to)
        }
        None => None,
    };
    let [lo, hi] = axis.domain;
    if from < lo || from > hi || to.is_some_and(|t| t > hi) {
        // the ends as a story writes a time
        let shown = |v: f64| match axis.scale {
            ScaleKind::Months => time::month_iso(v.round() as i32),
            ScaleKind::Days => time::date_iso(v.round() as i32),
            _ => format!("{}", v.round()),
        };
        return Err(cx.error_with_help(
            "annotation",
            format!(
                "this moment lies outside the time the chart shows ({} to {})",
                shown(lo),
                shown(hi)
            ),
            at.span(),
            "off the chart",
            "mark a time inside the chart, or widen the data the view keeps",
        ));
    }
    if text.trim().is_empty() {
        return Err(cx.error(
            "annotation",
            "a moment needs a short label saying what happened",
            span.clone(),
            "empty label",
        ));
    }
    line_of(cx, st, span, "moment")?
        .annotations
        .push(Annotation::Moment { from, to, text });
    Ok(())
}
