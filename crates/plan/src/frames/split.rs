//! `split KEY ...`: small multiples, one panel per series (line charts) or
//! per part (stacked or grouped bars), per group of points (scatters, each
//! panel with its own fit), on the chart's own common scale
//! (`trim` cuts each panel to its extent on the common step; `own scales`
//! gives each panel its own scale, which the lint flags).

use crescendo_data::stats;
use crescendo_lang::ast::SplitStmt;

use crate::context::{Ctx, Outcome};
use crate::model::*;
use crate::scale;
use crate::sequence::SeqState;

/// Most panels of a split scatter: each is a whole plot with its axes, so
/// more would leave each too small to read (two rows of four).
const MAX_SCATTER_PANELS: usize = 8;

/// A panel: its title, its chart, and what orders it (the measure's last
/// value for lines, the total for bars).
type PanelDraft = (String, Chart, f64);

/// Turn the current chart into small multiples.
pub(crate) fn split(cx: &mut Ctx, st: &mut SeqState, s: &SplitStmt) -> Outcome<()> {
    if s.key.name != st.key_name {
        return Err(cx.error_with_help(
            "split",
            format!(
                "this chart can be split by `{}`, not by `{}`",
                st.key_name, s.key.name
            ),
            s.key.span.clone(),
            "not the chart's key",
            format!("write `split {}`", st.key_name),
        ));
    }
    let mut panels = panels(cx, &st.chart, s)?;
    order(cx, st, s, &mut panels)?;
    if s.trim && !s.own_scales {
        for (_, chart, _) in &mut panels {
            trim(chart);
        }
    }
    if s.own_scales {
        for (_, chart, _) in &mut panels {
            own_scale(chart);
        }
    }
    st.names = panels.iter().map(|p| p.0.clone()).collect();
    st.chart = Chart::Panels(PanelChart {
        key: s.key.name.clone(),
        common_scale: !s.own_scales,
        trimmed: s.trim,
        panels: panels
            .into_iter()
            .map(|(title, chart, _)| Panel {
                title,
                role: Role::Context,
                chart,
            })
            .collect(),
    });
    Ok(())
}

/// Each panel: the chart reduced to one series or part.
fn panels(cx: &mut Ctx, chart: &Chart, s: &SplitStmt) -> Outcome<Vec<PanelDraft>> {
    match chart {
        Chart::Line(l) => Ok(l
            .series
            .iter()
            .map(|series| {
                let last = series
                    .points
                    .iter()
                    .rev()
                    .find_map(|p| p.y)
                    .unwrap_or(f64::NEG_INFINITY);
                let mut one = l.clone();
                one.series = vec![series.clone()];
                (series.name.clone(), Chart::Line(one), last)
            })
            .collect()),
        Chart::Parts(p) => Ok((0..p.parts.len()).map(|i| part_panel(p, i)).collect()),
        Chart::Scatter(sc) => {
            let panels = scatter_panels(sc);
            if panels.iter().all(|p| p.0.is_empty()) {
                return Err(cx.error_with_help(
                    "split",
                    "this scatter has no groups to split into panels",
                    s.span.clone(),
                    "no groups",
                    "name the column that groups the points: `scatter VIEW: x A, y B, series GROUP`",
                ));
            }
            if panels.len() > MAX_SCATTER_PANELS {
                return Err(cx.error_with_help(
                    "split",
                    format!(
                        "a scatter splits into at most {MAX_SCATTER_PANELS} panels, and `{}` has {} groups",
                        s.key.name,
                        panels.len()
                    ),
                    s.span.clone(),
                    "too many panels",
                    "keep fewer groups in the view (`keep`), or spotlight one group instead of splitting",
                ));
            }
            Ok(panels)
        }
        _ => Err(cx.error_with_help(
            "split",
            "only line charts, scatters and stacked or grouped bars split into panels",
            s.span.clone(),
            "cannot split this chart",
            "split a line chart by its series, a scatter by its `series` column, \
                 or bars by their `stack`/`group` column",
        )),
    }
}

/// A scatter's panels: one per group (per label without a `series`
/// column), in order of first appearance, each on the whole chart's axes
/// and with its own fit when the chart has one. A panel whose fit cannot
/// be computed (one point, all x equal) is drawn without it. Ordered by
/// the mean of y.
fn scatter_panels(sc: &ScatterChart) -> Vec<PanelDraft> {
    let group = |p: &ScatterPoint| {
        if p.series.is_empty() {
            p.label.clone()
        } else {
            p.series.clone()
        }
    };
    let mut names: Vec<String> = Vec::new();
    for p in &sc.points {
        let g = group(p);
        if !names.contains(&g) {
            names.push(g);
        }
    }
    names
        .into_iter()
        .map(|name| {
            let points: Vec<ScatterPoint> = sc
                .points
                .iter()
                .filter(|p| group(p) == name)
                .cloned()
                .collect();
            let xs: Vec<f64> = points.iter().map(|p| p.x).collect();
            let ys: Vec<f64> = points.iter().map(|p| p.y).collect();
            let fit = sc.fit.as_ref().and_then(|_| {
                stats::linear_fit(&xs, &ys).ok().map(|f| Fit {
                    slope: f.slope,
                    intercept: f.intercept,
                    r: f.r,
                    label: String::new(),
                })
            });
            let mean_y = stats::mean(&ys).unwrap_or(f64::NEG_INFINITY);
            let chart = Chart::Scatter(ScatterChart {
                x: sc.x.clone(),
                y: sc.y.clone(),
                points,
                fit,
            });
            (name, chart, mean_y)
        })
        .collect()
}

/// The panel of part `i` of stacked or grouped bars: plain bars.
fn part_panel(p: &PartsChart, i: usize) -> PanelDraft {
    let bars = p
        .categories
        .iter()
        .map(|c| {
            let v = c.values.get(i).copied().flatten();
            Bar {
                label: c.label.clone(),
                value: v,
                value_label: v.map_or_else(|| "no data".into(), crate::numbers::label),
                role: Role::Context,
            }
        })
        .collect::<Vec<_>>();
    let total = stats::total(bars.iter().filter_map(|b| b.value));
    let chart = Chart::Bars(BarChart {
        orientation: p.orientation,
        category_title: p.category_title.clone(),
        value: p.value.clone(),
        bars,
    });
    (p.parts[i].name.clone(), chart, total)
}

/// Order the panels to build to the point: as listed (`order "A", "B"`),
/// or by the measure's last value or total (`by MEASURE asc|desc`).
fn order(cx: &mut Ctx, st: &SeqState, s: &SplitStmt, panels: &mut Vec<PanelDraft>) -> Outcome<()> {
    if let Some(by) = s.by.as_ref().filter(|by| by.name != st.measure_name) {
        return Err(cx.error_with_help(
            "split",
            format!(
                "panels are ordered by the chart's measure `{}`",
                st.measure_name
            ),
            by.span.clone(),
            "not the chart's measure",
            format!(
                "write `by {}`, or give the order with `order \"A\", \"B\"`",
                st.measure_name
            ),
        ));
    }
    if !s.order.is_empty() {
        let mut ordered = Vec::new();
        for name in &s.order {
            let Some(i) = panels.iter().position(|p| p.0 == name.value) else {
                return Err(cx.error(
                    "unknown-series",
                    format!("no panel named \"{}\"", name.value),
                    name.span.clone(),
                    "not a panel of this chart",
                ));
            };
            ordered.push(panels.remove(i));
        }
        ordered.append(panels);
        *panels = ordered;
    } else if let Some(desc) = s.descending {
        panels.sort_by(|a, b| {
            if desc {
                b.2.total_cmp(&a.2)
            } else {
                a.2.total_cmp(&b.2)
            }
        });
    }
    Ok(())
}

/// The measure's values of a line chart, and their range.
fn ys(l: &LineChart) -> (f64, f64) {
    let ys: Vec<f64> = l
        .series
        .iter()
        .flat_map(|s| s.points.iter().filter_map(|p| p.y))
        .collect();
    let lo = ys.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = ys.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    (lo, hi)
}

/// Cut a line panel to its own extent on the common tick step, so the
/// units per pixel stay the same in every panel.
fn trim(chart: &mut Chart) {
    let Chart::Line(l) = chart else { return };
    let (lo, hi) = ys(l);
    let step =
        l.y.ticks
            .get(1)
            .zip(l.y.ticks.first())
            .map(|(b, a)| b.value - a.value);
    if let (true, Some(step)) = (lo.is_finite(), step.filter(|s| *s > 0.0)) {
        let a = ((lo / step).floor() * step).max(l.y.domain[0]);
        let b = ((hi / step).ceil() * step).min(l.y.domain[1]);
        l.y.ticks
            .retain(|t| t.value >= a - step * 1e-9 && t.value <= b + step * 1e-9);
        l.y.domain = [a, b];
    }
}

/// Put a panel on its own scale.
fn own_scale(chart: &mut Chart) {
    match chart {
        Chart::Line(l) => {
            let (lo, hi) = ys(l);
            if lo.is_finite() {
                let grid = l.y.grid;
                l.y = scale::linear_axis(lo, hi, false, l.y.title.clone());
                l.y.grid = grid;
            }
        }
        Chart::Bars(b) => {
            let vs: Vec<f64> = b.bars.iter().filter_map(|b| b.value).collect();
            let lo = vs.iter().copied().fold(0.0, f64::min);
            let hi = vs.iter().copied().fold(0.0, f64::max);
            let grid = b.value.grid;
            b.value = scale::linear_axis(lo, hi, true, b.value.title.clone());
            b.value.grid = grid;
        }
        Chart::Scatter(sc) => {
            let xs: Vec<f64> = sc.points.iter().map(|p| p.x).collect();
            let ys: Vec<f64> = sc.points.iter().map(|p| p.y).collect();
            for (axis, vs) in [(&mut sc.x, xs), (&mut sc.y, ys)] {
                let lo = vs.iter().copied().fold(f64::INFINITY, f64::min);
                let hi = vs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
                if lo.is_finite() && axis.scale == ScaleKind::Linear {
                    let grid = axis.grid;
                    *axis = scale::linear_axis(lo, hi, false, axis.title.clone());
                    axis.grid = grid;
                }
            }
        }
        _ => {}
    }
}
