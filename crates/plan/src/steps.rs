//! Build-up steps beyond show, hide and spotlight: small multiples
//! (`split`), annotations (`callout`, `band`, `reference`, `label ends`),
//! light gridlines (`gridlines`), and the frames a `unfold` expands into.

use crescendo_data::{format, time};
use crescendo_lang::ast::{Position, SplitStmt, Str, Text};

use crate::build::{Planner, SeqState};
use crate::model::*;
use crate::scale;

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

/// What a frame statement needs from a line chart.
fn line_of<'s>(
    me: &mut Planner,
    st: &'s mut SeqState,
    span: &std::ops::Range<usize>,
    what: &str,
) -> Option<&'s mut LineChart> {
    match &mut st.chart {
        Chart::Line(l) => Some(l),
        _ => {
            me.error(
                "annotation",
                format!("`{what}` annotates line charts"),
                span.clone(),
                "this frame's chart is not a line",
            )
            .help = Some("start a line chart, or state the point in the takeaway".into());
            None
        }
    }
}

impl Planner<'_> {
    /// Read a position along a line chart's x axis.
    fn x_position(&mut self, axis: &Axis, p: &Position) -> Option<f64> {
        let bad = |me: &mut Self, msg: String| {
            me.error("annotation", msg, p.span(), "not a position on this axis");
            None
        };
        match (axis.scale, p) {
            (ScaleKind::Months, Position::Text(s)) => match time::parse_month(&s.value) {
                Some(m) => Some(f64::from(m)),
                None => bad(
                    self,
                    format!("\"{}\" is not a month: write YYYY-MM", s.value),
                ),
            },
            (ScaleKind::Days, Position::Text(s)) => match time::parse_date(&s.value) {
                Some(d) => Some(f64::from(d)),
                None => bad(
                    self,
                    format!("\"{}\" is not a date: write YYYY-MM-DD", s.value),
                ),
            },
            (ScaleKind::Years, Position::Text(s)) => match time::parse_year(&s.value) {
                Some(y) => Some(f64::from(y)),
                None => bad(self, format!("\"{}\" is not a year: write YYYY", s.value)),
            },
            (ScaleKind::Years | ScaleKind::Linear, Position::Number { value, .. }) => Some(*value),
            (ScaleKind::Categories, Position::Text(s)) => {
                match axis.ticks.iter().find(|t| t.label == s.value) {
                    Some(t) => Some(t.value),
                    None => bad(
                        self,
                        format!("\"{}\" is not a category of this chart", s.value),
                    ),
                }
            }
            (_, Position::Number { .. }) => bad(
                self,
                "this axis runs over time: write the time in quotes".into(),
            ),
            (_, Position::Text(s)) => bad(
                self,
                format!(
                    "this axis runs over numbers: write {} without quotes",
                    s.value
                ),
            ),
        }
    }

    /// `callout AT [on "Series"] "text"`.
    pub(crate) fn callout(
        &mut self,
        st: &mut SeqState,
        at: &Position,
        on: &Option<Str>,
        text: &Text,
        span: &std::ops::Range<usize>,
    ) -> Option<()> {
        let resolved = self.text(text).text;
        let x_axis = match &st.chart {
            Chart::Line(l) => l.x.clone(),
            _ => {
                line_of(self, st, span, "callout")?;
                return None;
            }
        };
        let x = self.x_position(&x_axis, at)?;
        // The series the callout points at: named, or the only one in focus
        // or visible.
        let candidates: Vec<String> = match on {
            Some(name) => {
                if !st.names.contains(&name.value) {
                    self.error(
                        "unknown-series",
                        format!("no series named \"{}\" in this chart", name.value),
                        name.span.clone(),
                        "not a series of this chart",
                    );
                    return None;
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
        if candidates.len() != 1 {
            self.error(
                "annotation",
                format!(
                    "which series does this callout point at? ({} are shown)",
                    candidates.len()
                ),
                span.clone(),
                "ambiguous",
            )
            .help = Some("write `callout AT on \"Series\" \"text\"`".into());
            return None;
        }
        let line = line_of(self, st, span, "callout")?;
        let y = line
            .series
            .iter()
            .find(|s| s.name == candidates[0])
            .and_then(|s| {
                s.points
                    .iter()
                    .find(|p| (p.x - x).abs() < 1e-9)
                    .and_then(|p| p.y)
            });
        let Some(y) = y else {
            self.error(
                "annotation",
                format!("\"{}\" has no value at this point", candidates[0]),
                at.span(),
                "no data here",
            );
            return None;
        };
        line.annotations.push(Annotation::Callout {
            x,
            y,
            text: resolved,
        });
        Some(())
    }

    /// `band FROM to TO ["text"]`.
    pub(crate) fn band(
        &mut self,
        st: &mut SeqState,
        from: &Position,
        to: &Position,
        text: &Option<Text>,
        span: &std::ops::Range<usize>,
    ) -> Option<()> {
        let x_axis = match &st.chart {
            Chart::Line(l) => l.x.clone(),
            _ => {
                line_of(self, st, span, "band")?;
                return None;
            }
        };
        let (a, b) = (
            self.x_position(&x_axis, from)?,
            self.x_position(&x_axis, to)?,
        );
        if a >= b {
            self.error(
                "annotation",
                "a band must run forward: its start before its end",
                span.clone(),
                "empty band",
            );
            return None;
        }
        let label = text.as_ref().map(|t| self.text(t).text);
        line_of(self, st, span, "band")?
            .annotations
            .push(Annotation::Band {
                from: a,
                to: b,
                text: label,
            });
        Some(())
    }

    /// `reference VALUE "text"`.
    pub(crate) fn reference(
        &mut self,
        st: &mut SeqState,
        value: f64,
        text: &Text,
        span: &std::ops::Range<usize>,
    ) -> Option<()> {
        let label = self.text(text).text;
        let line = line_of(self, st, span, "reference")?;
        let [lo, hi] = line.y.domain;
        if value < lo || value > hi {
            let (lo_s, hi_s) = (format::number(lo, None), format::number(hi, None));
            self.error(
                "annotation",
                format!(
                    "the reference {} lies outside the axis ({lo_s} to {hi_s})",
                    format::number(value, None)
                ),
                span.clone(),
                "off the chart",
            )
            .help = Some("widen the axis with `y range`, or leave the reference out".into());
            return None;
        }
        line.annotations
            .push(Annotation::Reference { value, text: label });
        Some(())
    }

    /// `label ends`.
    pub(crate) fn label_ends(
        &mut self,
        st: &mut SeqState,
        span: &std::ops::Range<usize>,
    ) -> Option<()> {
        line_of(self, st, span, "label ends")?.end_labels = true;
        Some(())
    }

    /// `gridlines` or `gridlines off`: light lines at the ticks of the
    /// measure's axis (`y` of a line or a scatter, `value` of bars, parts and
    /// dots, the inner charts' measure in panels). Kept in the sequence's
    /// chart, so they persist until `gridlines off` or a new chart.
    pub(crate) fn gridlines(
        &mut self,
        st: &mut SeqState,
        on: bool,
        span: &std::ops::Range<usize>,
    ) -> Option<()> {
        if !set_grid(&mut st.chart, on) {
            let form = match &st.chart {
                Chart::Figures(_) => "figures",
                Chart::Table(_) => "a table",
                Chart::Pie(_) => "a pie",
                Chart::Plugin(_) => "a plugin's chart",
                _ => "this chart",
            };
            self.error(
                "gridlines",
                format!("`gridlines` needs a measure's axis, and {form} has none"),
                span.clone(),
                "no axis to draw gridlines along",
            )
            .help = Some(
                "use gridlines with line, bars, dots or scatter charts (or their panels), \
                 or remove the statement"
                    .into(),
            );
            return None;
        }
        st.anchors.gridlines = on.then(|| span.clone());
        Some(())
    }

    /// `split KEY ...`: turn the current chart into small multiples, one
    /// panel per series (line charts) or per part (stacked or grouped bars),
    /// on the chart's own, common scale.
    pub(crate) fn split(&mut self, st: &mut SeqState, s: &SplitStmt) -> Option<()> {
        if s.key.name != st.key_name {
            self.error(
                "split",
                format!(
                    "this chart can be split by `{}`, not by `{}`",
                    st.key_name, s.key.name
                ),
                s.key.span.clone(),
                "not the chart's key",
            )
            .help = Some(format!("write `split {}`", st.key_name));
            return None;
        }
        // Each panel: the chart reduced to one series or part.
        let mut panels: Vec<(String, Chart, f64)> = match &st.chart {
            Chart::Line(l) => l
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
                .collect(),
            Chart::Parts(p) => (0..p.parts.len())
                .map(|i| {
                    let bars = p
                        .categories
                        .iter()
                        .map(|c| {
                            let v = c.values.get(i).copied().flatten();
                            Bar {
                                label: c.label.clone(),
                                value: v,
                                value_label: v
                                    .map_or_else(|| "no data".into(), |v| format::number(v, None)),
                                role: Role::Context,
                            }
                        })
                        .collect::<Vec<_>>();
                    let total = bars.iter().filter_map(|b| b.value).sum();
                    let chart = Chart::Bars(BarChart {
                        orientation: p.orientation,
                        category_title: p.category_title.clone(),
                        value: p.value.clone(),
                        bars,
                    });
                    (p.parts[i].name.clone(), chart, total)
                })
                .collect(),
            _ => {
                self.error(
                    "split",
                    "only line charts and stacked or grouped bars split into panels",
                    s.span.clone(),
                    "cannot split this chart",
                )
                .help = Some(
                    "split a line chart by its series, or bars by their `stack`/`group` column"
                        .into(),
                );
                return None;
            }
        };
        // Order the panels to build to the point: by the measure's last
        // value (lines) or total (bars).
        if let Some(by) = &s.by {
            if by.name != st.measure_name {
                self.error(
                    "split",
                    format!(
                        "panels are ordered by the chart's measure `{}`",
                        st.measure_name
                    ),
                    by.span.clone(),
                    "not the chart's measure",
                )
                .help = Some(format!(
                    "write `by {}`, or give the order with `order \"A\", \"B\"`",
                    st.measure_name
                ));
                return None;
            }
        }
        if !s.order.is_empty() {
            let mut ordered = Vec::new();
            for name in &s.order {
                match panels.iter().position(|p| p.0 == name.value) {
                    Some(i) => ordered.push(panels.remove(i)),
                    None => {
                        self.error(
                            "unknown-series",
                            format!("no panel named \"{}\"", name.value),
                            name.span.clone(),
                            "not a panel of this chart",
                        );
                        return None;
                    }
                }
            }
            ordered.append(&mut panels);
            panels = ordered;
        } else if let Some(desc) = s.descending {
            panels.sort_by(|a, b| {
                if desc {
                    b.2.total_cmp(&a.2)
                } else {
                    a.2.total_cmp(&b.2)
                }
            });
        }
        if s.trim && !s.free {
            // Cut each panel to its own extent on the common tick step, so
            // the units per pixel stay the same in every panel.
            for (_, chart, _) in &mut panels {
                if let Chart::Line(l) = chart {
                    let ys: Vec<f64> = l
                        .series
                        .iter()
                        .flat_map(|s| s.points.iter().filter_map(|p| p.y))
                        .collect();
                    let lo = ys.iter().copied().fold(f64::INFINITY, f64::min);
                    let hi = ys.iter().copied().fold(f64::NEG_INFINITY, f64::max);
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
            }
        }
        if s.free {
            // Each panel on its own scale: the lint flags this.
            for (_, chart, _) in &mut panels {
                match chart {
                    Chart::Line(l) => {
                        let ys: Vec<f64> = l
                            .series
                            .iter()
                            .flat_map(|s| s.points.iter().filter_map(|p| p.y))
                            .collect();
                        let lo = ys.iter().copied().fold(f64::INFINITY, f64::min);
                        let hi = ys.iter().copied().fold(f64::NEG_INFINITY, f64::max);
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
                    _ => {}
                }
            }
        }
        st.names = panels.iter().map(|p| p.0.clone()).collect();
        st.chart = Chart::Panels(PanelChart {
            key: s.key.name.clone(),
            common_scale: !s.free,
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
        Some(())
    }
}
