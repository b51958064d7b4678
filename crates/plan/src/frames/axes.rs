//! Statements about the axes: `y range FROM to TO` (`x range` too for
//! scatters) and
//! `gridlines` / `gridlines off`. Both hold for the rest of the sequence.

use crescendo_data::format;
use crescendo_lang::ast::{AxisName, Span};

use crate::context::{Ctx, Outcome};
use crate::model::*;
use crate::scale;
use crate::sequence::SeqState;

/// `y range FROM to TO` (and `x range` for scatters): fix an axis for the
/// rest of the sequence. The data must fit inside it; ticks are chosen
/// within it. Small multiples take it in every panel, so they keep one
/// scale.
pub(crate) fn range(
    cx: &mut Ctx,
    st: &mut SeqState,
    axis: AxisName,
    from: f64,
    to: f64,
    span: &Span,
) -> Outcome<()> {
    if from >= to {
        return Err(cx.error(
            "axis-range",
            format!(
                "the range must rise: {} to {}",
                format::number(from, None),
                format::number(to, None)
            ),
            span.clone(),
            "empty range",
        ));
    }
    let mut targets = Vec::new();
    if let Err(why) = ranged_axes(&mut st.chart, axis, &mut targets) {
        let (message, help) = why;
        return Err(cx.error_with_help(
            "axis-range",
            message,
            span.clone(),
            "not for this chart",
            help,
        ));
    }
    let values: Vec<f64> = targets
        .iter()
        .flat_map(|(_, v)| v.iter().copied())
        .collect();
    let lo = values.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if lo < from || hi > to {
        return Err(cx.error_with_help(
            "axis-range",
            format!(
                "the range {} to {} would cut off data: the values run from {} to {}",
                format::number(from, None),
                format::number(to, None),
                format::number(lo, None),
                format::number(hi, None)
            ),
            span.clone(),
            "data outside this range",
            "widen the range, or leave it out to fit the axis to the data",
        ));
    }
    for (axis, _) in targets {
        let fitted = scale::linear_axis(from, to, false, axis.title.clone());
        axis.ticks = fitted
            .ticks
            .into_iter()
            .filter(|t| t.value >= from - 1e-9 * (to - from) && t.value <= to + 1e-9 * (to - from))
            .collect();
        axis.domain = [from, to];
    }
    st.anchors.range = Some(span.clone());
    Ok(())
}

/// A refusal: the message and its help.
type Refusal = (String, String);

/// The axes `x range` or `y range` sets in `chart` (every panel's), each
/// with the values it must hold.
fn ranged_axes<'c>(
    chart: &'c mut Chart,
    name: AxisName,
    out: &mut Vec<(&'c mut Axis, Vec<f64>)>,
) -> Result<(), Refusal> {
    let x = name == AxisName::X;
    match chart {
        Chart::Line(l) if !x => {
            let v = l
                .series
                .iter()
                .flat_map(|s| s.points.iter().filter_map(|p| p.y))
                .collect();
            out.push((&mut l.y, v));
        }
        Chart::Bars(b) if !x => {
            let v = b.bars.iter().filter_map(|b| b.value).collect();
            out.push((&mut b.value, v));
        }
        Chart::Dots(d) if !x => {
            let v = d
                .rows
                .iter()
                .flat_map(|r| r.values.iter().flatten().copied())
                .collect();
            out.push((&mut d.value, v));
        }
        Chart::Scatter(s) => {
            let (axis, v): (&mut Axis, Vec<f64>) = if x {
                (&mut s.x, s.points.iter().map(|p| p.x).collect())
            } else {
                (&mut s.y, s.points.iter().map(|p| p.y).collect())
            };
            if axis.scale != ScaleKind::Linear {
                return Err((
                    format!(
                        "the scatter's {} axis is a time axis, and a range takes numbers",
                        if x { "x" } else { "y" }
                    ),
                    "leave the range out: a time axis spans its data".into(),
                ));
            }
            out.push((axis, v));
        }
        Chart::Panels(p) => {
            for panel in &mut p.panels {
                ranged_axes(&mut panel.chart, name, out)?;
            }
        }
        Chart::Line(_) | Chart::Bars(_) | Chart::Dots(_) => {
            return Err((
                "only the measure's axis can be given a range here".into(),
                "write `y range FROM to TO`; the other axis spans the data \
                 (scatters take `x range` too)"
                    .into(),
            ))
        }
        _ => {
            return Err((
                "only line, bar, dot and scatter charts take a range".into(),
                "remove the range, or draw the data as one of those charts".into(),
            ))
        }
    }
    Ok(())
}

/// Set `grid` on the measure's axis of a chart (of every panel's chart);
/// `false` when the chart has no measure's axis.
fn set_grid(chart: &mut Chart, on: bool) -> bool {
    match chart {
        Chart::Line(l) => l.y.grid = on,
        Chart::Bars(b) => b.value.grid = on,
        Chart::Parts(p) => p.value.grid = on,
        Chart::Dots(d) => d.value.grid = on,
        Chart::Scatter(s) => s.y.grid = on,
        Chart::Panels(p) => {
            let mut all = !p.panels.is_empty();
            for panel in &mut p.panels {
                all &= set_grid(&mut panel.chart, on);
            }
            return all;
        }
        Chart::Figures(_) | Chart::Table(_) | Chart::Pie(_) | Chart::Plugin(_) => return false,
    }
    true
}

/// `gridlines` or `gridlines off`: light lines at the ticks of the
/// measure's axis (`y` of a line or a scatter, `value` of bars, parts and
/// dots, the inner charts' measure in panels). Kept in the sequence's
/// chart, so they persist until `gridlines off` or a new chart.
pub(crate) fn gridlines(cx: &mut Ctx, st: &mut SeqState, on: bool, span: &Span) -> Outcome<()> {
    if !set_grid(&mut st.chart, on) {
        let form = match &st.chart {
            Chart::Figures(_) => "figures",
            Chart::Table(_) => "a table",
            Chart::Pie(_) => "a pie",
            Chart::Plugin(_) => "a plugin's chart",
            _ => "this chart",
        };
        return Err(cx.error_with_help(
            "gridlines",
            format!("`gridlines` needs a measure's axis, and {form} has none"),
            span.clone(),
            "no axis to draw gridlines along",
            "use gridlines with line, bars, dots or scatter charts (or their panels), \
             or remove the statement",
        ));
    }
    st.anchors.gridlines = on.then(|| span.clone());
    Ok(())
}
