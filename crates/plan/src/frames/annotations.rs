//! Annotations of line charts: `callout`, `band`, `reference` and
//! `label ends`.

use crescendo_data::{format, time};
use crescendo_lang::ast::{Position, Span, Str, Text};

use crate::context::{Ctx, Outcome};
use crate::frames::positions;
use crate::model::*;
use crate::scope::Scope;
use crate::sequence::SeqState;

/// The line chart a statement annotates; reports any other chart.
pub(super) fn line_of<'s>(
    cx: &mut Ctx,
    st: &'s mut SeqState,
    span: &Span,
    what: &str,
) -> Outcome<&'s mut LineChart> {
    match &mut st.chart {
        Chart::Line(l) => Ok(l),
        _ => Err(cx.error_with_help(
            "annotation",
            format!("`{what}` annotates line charts"),
            span.clone(),
            "this frame's chart is not a line",
            "start a line chart, or state the point in the takeaway",
        )),
    }
}

/// The x axis of the line chart a statement annotates.
fn x_axis_of(cx: &mut Ctx, st: &mut SeqState, span: &Span, what: &str) -> Outcome<Axis> {
    Ok(line_of(cx, st, span, what)?.x.clone())
}

/// Read a position along a line chart's x axis.
pub(super) fn x_position(cx: &mut Ctx, axis: &Axis, p: &Position) -> Outcome<f64> {
    let found = match (axis.scale, p) {
        (ScaleKind::Months, Position::Text(s)) => time::parse_month(&s.value)
            .map(f64::from)
            .ok_or_else(|| format!("\"{}\" is not a month: write YYYY-MM", s.value)),
        (ScaleKind::Days, Position::Text(s)) => time::parse_date(&s.value)
            .map(f64::from)
            .ok_or_else(|| format!("\"{}\" is not a date: write YYYY-MM-DD", s.value)),
        (ScaleKind::Years, Position::Text(s)) => time::parse_year(&s.value)
            .map(f64::from)
            .ok_or_else(|| format!("\"{}\" is not a year: write YYYY", s.value)),
        (ScaleKind::Years | ScaleKind::Linear, Position::Number { value, .. }) => Ok(*value),
        (ScaleKind::Categories, Position::Text(s)) => axis
            .ticks
            .iter()
            .find(|t| t.label == s.value)
            .map(|t| t.value)
            .ok_or_else(|| format!("\"{}\" is not a category of this chart", s.value)),
        (_, Position::Number { .. }) => {
            Err("this axis runs over time, and this is a number: write the time in quotes, or name a value that is a time".into())
        }
        (_, Position::Value(_)) => Err("this value was not computed".into()),
        (_, Position::Text(s)) => Err(format!(
            "this axis runs over numbers: write {} without quotes",
            s.value
        )),
    };
    found.map_err(|msg| cx.error("annotation", msg, p.span(), "not a position on this axis"))
}

/// `callout AT [on "Series"] "text"`.
pub(crate) fn callout(
    cx: &mut Ctx,
    scope: &Scope,
    st: &mut SeqState,
    at: &Position,
    on: &Option<Str>,
    text: &Text,
    span: &Span,
) -> Outcome<()> {
    let resolved = scope.text(cx, text).text;
    let x_axis = x_axis_of(cx, st, span, "callout")?;
    let at = &positions::literal(cx, scope, at)?;
    let x = x_position(cx, &x_axis, at)?;
    let series = callout_series(cx, st, on, span)?;
    let line = line_of(cx, st, span, "callout")?;
    let y = line.series.iter().find(|s| s.name == series).and_then(|s| {
        s.points
            .iter()
            .find(|p| (p.x - x).abs() < 1e-9)
            .and_then(|p| p.y)
    });
    let Some(y) = y else {
        return Err(cx.error(
            "annotation",
            format!("\"{series}\" has no value at this point"),
            at.span(),
            "no data here",
        ));
    };
    line.annotations.push(Annotation::Callout {
        x,
        y,
        text: resolved,
    });
    Ok(())
}

/// The series a callout points at: named, or the only one in focus or
/// visible.
fn callout_series(cx: &mut Ctx, st: &SeqState, on: &Option<Str>, span: &Span) -> Outcome<String> {
    let candidates: Vec<String> = match on {
        Some(name) => {
            if !st.names.contains(&name.value) {
                return Err(cx.error(
                    "unknown-series",
                    format!("no series named \"{}\" in this chart", name.value),
                    name.span.clone(),
                    "not a series of this chart",
                ));
            }
            vec![name.value.clone()]
        }
        None if !st.spotlight.is_empty() => st.spotlight.iter().cloned().collect(),
        None => st
            .names
            .iter()
            .filter(|n| !st.hidden.contains(*n))
            .cloned()
            .collect(),
    };
    match <[String; 1]>::try_from(candidates) {
        Ok([one]) => Ok(one),
        Err(candidates) => Err(cx.error_with_help(
            "annotation",
            format!(
                "which series does this callout point at? ({} are shown)",
                candidates.len()
            ),
            span.clone(),
            "ambiguous",
            "write `callout AT on \"Series\" \"text\"`",
        )),
    }
}

/// `band FROM to TO ["text"]`.
pub(crate) fn band(
    cx: &mut Ctx,
    scope: &Scope,
    st: &mut SeqState,
    from: &Position,
    to: &Position,
    text: &Option<Text>,
    span: &Span,
) -> Outcome<()> {
    let x_axis = x_axis_of(cx, st, span, "band")?;
    let (from, to) = (
        positions::literal(cx, scope, from)?,
        positions::literal(cx, scope, to)?,
    );
    let (a, b) = (
        x_position(cx, &x_axis, &from)?,
        x_position(cx, &x_axis, &to)?,
    );
    if a >= b {
        return Err(cx.error(
            "annotation",
            "a band must run forward: its start before its end",
            span.clone(),
            "empty band",
        ));
    }
    let label = text.as_ref().map(|t| scope.text(cx, t).text);
    line_of(cx, st, span, "band")?
        .annotations
        .push(Annotation::Band {
            from: a,
            to: b,
            text: label,
        });
    Ok(())
}

/// `reference VALUE "text"`.
pub(crate) fn reference(
    cx: &mut Ctx,
    scope: &Scope,
    st: &mut SeqState,
    value: &Position,
    text: &Text,
    span: &Span,
) -> Outcome<()> {
    let label = scope.text(cx, text).text;
    let value = positions::measure(cx, scope, value)?;
    let line = line_of(cx, st, span, "reference")?;
    let [lo, hi] = line.y.domain;
    if value < lo || value > hi {
        let (lo_s, hi_s) = (format::number(lo, None), format::number(hi, None));
        return Err(cx.error_with_help(
            "annotation",
            format!(
                "the reference {} lies outside the axis ({lo_s} to {hi_s})",
                format::number(value, None)
            ),
            span.clone(),
            "off the chart",
            "widen the axis with `y range`, or leave the reference out",
        ));
    }
    line.annotations
        .push(Annotation::Reference { value, text: label });
    Ok(())
}

/// `label ends`.
pub(crate) fn label_ends(cx: &mut Ctx, st: &mut SeqState, span: &Span) -> Outcome<()> {
    line_of(cx, st, span, "label ends")?.end_labels = true;
    Ok(())
}
