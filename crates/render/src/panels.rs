//! Small multiples: a grid of panels, at most four to a row, each with its
//! bold title over a small line or bar chart. With a common scale every
//! panel has the same units per pixel and the same tick positions, and the
//! value labels are written once at the start of each row. Trimmed panels
//! keep the units per pixel but stop at their own extent, so their plots
//! differ in height (or length) with their bottoms (or starts) aligned. The
//! focus panel's marks are in the accent, the others grey; a hidden panel
//! keeps its cell empty.
//!
//! Panels name no series of their own: the panel title is the label.

use crate::axis::{self, Place};
use crate::band::Band;
use crate::canvas::{Align, Canvas, Label};
use crate::fit;
use crate::kit::{muted_label, Obstacles};
use crate::layout::{self, map, max_width, Region};
use crate::line;
use crate::metrics::{self, line_height, text_width};
use crate::place;
use crate::theme::{Rgb, Theme};
use crate::{Drawn, RenderError};
use crescendo_frame::{Axis, BarChart, Chart, LineChart, Orientation, Panel, PanelChart, Role};

/// Panels per row at most.
const MAX_COLUMNS: usize = 4;
/// Space between panels across and down.
const GAP_X: f64 = 36.0;
const GAP_Y: f64 = 18.0;

/// Space between tick labels and the plot.
const PAD: f64 = 8.0;

/// What every panel of a grid draws along its measure.
fn value_axis(chart: &Chart) -> Option<&Axis> {
    match chart {
        Chart::Line(l) => Some(&l.y),
        Chart::Bars(b) => Some(&b.value),
        _ => None,
    }
}

fn value_domain(chart: &Chart) -> [f64; 2] {
    match chart {
        Chart::Bars(b) => {
            let [a, c] = b.value.domain;
            [a.min(c).min(0.0), a.max(c).max(0.0)]
        }
        Chart::Line(l) => l.y.domain,
        _ => [0.0, 1.0],
    }
}

fn horizontal(chart: &Chart) -> bool {
    matches!(chart, Chart::Bars(b) if b.orientation == Orientation::Horizontal)
}

fn mark_colour(theme: &Theme, panel: Role, own: Role) -> Option<Rgb> {
    match (panel, own) {
        (Role::Hidden, _) | (_, Role::Hidden) => None,
        (Role::Focus, _) | (_, Role::Focus) => Some(theme.accent),
        _ => Some(theme.context),
    }
}

/// The grid's axis titles: the measure's (at the top left) and the other
/// axis' (centred at the bottom), taken from the first panel.
pub(crate) fn titles(chart: &PanelChart) -> (Option<String>, Option<String>) {
    let Some(first) = chart.panels.first().map(|p| &p.chart) else {
        return (None, None);
    };
    match first {
        Chart::Line(l) => (l.y.title.clone(), l.x.title.clone()),
        Chart::Bars(b) if horizontal(first) => (b.category_title.clone(), b.value.title.clone()),
        Chart::Bars(b) => (b.value.title.clone(), b.category_title.clone()),
        _ => (None, None),
    }
}

pub(crate) fn draw(canvas: &Canvas, theme: &Theme, chart: &PanelChart, region: Region) -> Drawn {
    let n = chart.panels.len();
    if n == 0 {
        return Ok(());
    }
    for p in &chart.panels {
        let axis = value_axis(&p.chart)
            .ok_or_else(|| RenderError::new("a panel holds a line or bar chart only"))?;
        layout::check_axis(axis, "panel value")?;
        if let Chart::Line(l) = &p.chart {
            layout::check_axis(&l.x, "panel x")?;
        }
    }
    let first = &chart.panels[0].chart;
    let across_bars = horizontal(first);
    let lh = line_height(theme.label_size);
    let slh = line_height(theme.source_size);
    let mut obstacles = Obstacles::default();
    let cols = n.min(MAX_COLUMNS);
    let rows = n.div_ceil(cols);

    // Axis titles once for the grid: the measure's at the top left, the
    // other axis' centred at the bottom.
    let (measure_title, other_title) = titles(chart);
    let measure = measure_title.as_deref();
    let top = axis::title_above(canvas, &mut obstacles, theme, region, measure)?;
    let mut bottom = region.bottom;
    let other_top = other_title.as_ref().map(|_| {
        bottom -= lh;
        let t = bottom;
        bottom -= 6.0;
        t
    });

    // The lead column left of each plot: y ticks (lines, vertical bars) or
    // category names (horizontal bars). With one common, untrimmed scale
    // the ticks are written only in the first column.
    let lead_w = lead_width(theme, chart, across_bars, region, cols);
    let lead = if lead_w > 0.0 { lead_w + PAD } else { 0.0 };
    let shared_ticks = chart.common_scale && !chart.trimmed && !across_bars;
    // The panels subdivide the deck's plot rectangle: the first plot
    // starts at the deck's left plot edge (when its own lead column fits
    // in the deck's gutter), the last ends at the deck's right one.
    let deck_left = region.left + region.gutter + crate::band_axes::PAD;
    let start = if region.gutter > 0.0 {
        (deck_left - lead).max(region.left)
    } else {
        region.left
    };
    let end = region.right - region.label_gutter;
    let width = end - start;
    let plot_w = if shared_ticks {
        (width - lead - (cols - 1) as f64 * GAP_X) / cols as f64
    } else {
        (width - cols as f64 * lead - (cols - 1) as f64 * GAP_X) / cols as f64
    }
    .max(1.0);
    let plot_left = |col: usize| {
        if shared_ticks {
            start + lead + col as f64 * (plot_w + GAP_X)
        } else {
            start + col as f64 * (lead + plot_w + GAP_X) + lead
        }
    };
    canvas.plot((plot_left(0), top), (plot_left(cols - 1) + plot_w, bottom))?;
    let row_h = ((bottom - top - (rows - 1) as f64 * GAP_Y) / rows as f64).max(1.0);
    // Trimmed panels: the same units per pixel, each cut to its extent.
    let max_span = widest_span(chart);

    for (i, panel) in chart.panels.iter().enumerate() {
        let (row, col) = (i / cols, i % cols);
        let cell_top = top + row as f64 * (row_h + GAP_Y);
        let cell_bottom = cell_top + row_h;
        let left = plot_left(col);
        let right = left + plot_w;
        if panel.role != Role::Hidden {
            let span = (left, right); // at its own plot's left edge
            panel_title(canvas, theme, panel, span, cell_top, &mut obstacles)?;
        }
        let plot_top = cell_top + lh + 8.0 + slh / 2.0;
        let tick_top = cell_bottom - slh;
        let plot_bottom = tick_top - 6.0;
        let dom = value_domain(&panel.chart);
        let share = if chart.trimmed && max_span > 0.0 {
            ((dom[1] - dom[0]).abs() / max_span).clamp(0.0, 1.0)
        } else {
            1.0
        };
        let ticks_here = !shared_ticks || col == 0;
        let g = Geom {
            left,
            right: if across_bars {
                left + plot_w * share
            } else {
                right
            },
            top: if across_bars {
                plot_top
            } else {
                plot_bottom - (plot_bottom - plot_top) * share
            },
            bottom: plot_bottom,
            tick_top,
            lead_right: left - PAD,
            lead_w,
        };
        match &panel.chart {
            Chart::Line(l) => {
                let at = (dom, ticks_here);
                line_panel(canvas, theme, l, panel.role, at, &g, &mut obstacles)?;
            }
            Chart::Bars(b) => {
                let (how, at) = ((panel.role, across_bars), (dom, ticks_here));
                panel_bars(canvas, theme, b, how, at, &g, &mut obstacles)?;
            }
            _ => {}
        }
    }
    if let (Some(t), Some(title)) = (other_top, other_title.as_deref()) {
        let span = (region.left, region.right);
        axis::title_centred(canvas, &mut obstacles, theme, title, span, t)?;
    }
    Ok(())
}

/// A line chart in one panel: its ticks, gridlines, baseline and lines
/// (context first, focus on top).
fn line_panel(
    canvas: &Canvas,
    theme: &Theme,
    l: &LineChart,
    role: Role,
    (dom, ticks_here): ([f64; 2], bool),
    g: &Geom,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    value_ticks(canvas, theme, &l.y, dom, g, ticks_here, obstacles)?;
    x_ticks(canvas, theme, &l.x, g, obstacles)?;
    let xmap = |x: f64| map(x, l.x.domain, g.left, g.right);
    let ymap = |y: f64| map(y, dom, g.bottom, g.top);
    axis::gridlines(
        canvas,
        theme,
        &l.y,
        ymap,
        g.left,
        g.right,
        axis::Across::Rows,
        Some(g.bottom),
    )?;
    baseline(canvas, theme, g, false)?;
    let target = (2.0 * (g.right - g.left)).max(3.0) as usize;
    for pass in [Role::Context, Role::Focus] {
        for s in &l.series {
            let Some(color) = mark_colour(theme, role, s.role) else {
                continue;
            };
            let is_focus = color == theme.accent;
            if is_focus != (pass == Role::Focus) {
                continue;
            }
            let w = if is_focus {
                theme.focus_stroke.min(3)
            } else {
                theme.context_stroke
            };
            line::draw_runs(canvas, &line::runs(s, &xmap, &ymap), target, color, w)?;
        }
    }
    Ok(())
}

/// Bars in one panel, through one band transform. Lying bars (`across`):
/// value ticks along the bottom, category names in the lead column, bars
/// rightwards from zero. Upright bars: value ticks in the lead column,
/// names under the bars, bars upwards from zero.
fn panel_bars(
    canvas: &Canvas,
    theme: &Theme,
    b: &BarChart,
    (role, across): (Role, bool),
    (dom, ticks_here): ([f64; 2], bool),
    g: &Geom,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    let slh = line_height(theme.source_size);
    let size = theme.source_size;
    let (lo, hi) = if across {
        (g.left, g.right)
    } else {
        (g.bottom, g.top)
    };
    let vmap = |v: f64| map(v, dom, lo, hi);
    // the bands run across the values, between these edges, and so do
    // the gridlines
    let (start, end, lines) = if across {
        (g.top, g.bottom, axis::Across::Columns)
    } else {
        (g.left, g.right, axis::Across::Rows)
    };
    if !across {
        value_ticks(canvas, theme, &b.value, dom, g, ticks_here, obstacles)?;
    }
    let zero = Some(vmap(0.0));
    axis::gridlines(canvas, theme, &b.value, vmap, start, end, lines, zero)?;
    if across {
        // Value ticks along the bottom of every panel.
        let row = axis::Row {
            top: g.tick_top,
            lo: g.left,
            hi: g.right,
            gap: 8.0,
            fit: axis::Fit::AsWritten,
            keep_left: true,
        };
        axis::ticks(
            canvas,
            obstacles,
            theme,
            size,
            &b.value,
            vmap,
            Place::Row(row),
        )?;
    }
    let band = (end - start) / b.bars.len().max(1) as f64;
    let bands = Band {
        orientation: if across {
            Orientation::Horizontal
        } else {
            Orientation::Vertical
        },
        start,
        size: band,
    };
    let fit = if across { g.lead_w } else { band - 4.0 };
    let texts: Vec<String> = (b.bars.iter())
        .map(|bar| fit::one(canvas, &metrics::normalize(&bar.label), (size, false), fit))
        .collect::<Result<_, _>>()?;
    let spans: Vec<(f64, f64)> = (texts.iter().enumerate())
        .map(|(k, text)| {
            let c = bands.centre(k);
            let half = if across {
                slh / 2.0
            } else {
                text_width(text, size, false) / 2.0
            };
            (c - half, c + half)
        })
        .collect();
    let keep = layout::thin(&spans, if across { 0.0 } else { 6.0 });
    for (k, (bar, text)) in b.bars.iter().zip(&texts).enumerate() {
        let c = bands.centre(k);
        if keep.get(k).copied().unwrap_or(false) {
            let (x, top, align) = if across {
                (g.lead_right, c - slh / 2.0, Align::End)
            } else {
                (c, g.tick_top, Align::Middle)
            };
            let label = muted_label(theme, size, text, x, top, align);
            place::settle(canvas, theme.baseline, obstacles, &label, (&[], None))?;
        }
        let (Some(color), Some(v)) = (
            mark_colour(theme, role, bar.role),
            bar.value.filter(|v| v.is_finite()),
        ) else {
            continue;
        };
        let w = (band * 0.62).min(if across { 40.0 } else { 60.0 });
        let thick = (c - w / 2.0, c + w / 2.0);
        bands.mark(canvas, thick, (vmap(0.0), vmap(v)), color)?;
    }
    let baseline = (theme.baseline, theme.baseline_stroke);
    bands.rule(canvas, (start, end), vmap(0.0), baseline.0, baseline.1)
}

/// The width of the lead column left of each plot: the widest category
/// name of horizontal bars (at most 40% of a column), else the widest tick
/// label of any panel's value axis.
fn lead_width(
    theme: &Theme,
    chart: &PanelChart,
    across_bars: bool,
    region: Region,
    cols: usize,
) -> f64 {
    if across_bars {
        let widest = chart
            .panels
            .iter()
            .filter_map(|p| match &p.chart {
                Chart::Bars(b) => Some(max_width(
                    b.bars.iter().map(|b| b.label.as_str()),
                    theme.source_size,
                    false,
                )),
                _ => None,
            })
            .fold(0.0, f64::max);
        widest.min((region.right - region.left) / cols as f64 * 0.4)
    } else {
        chart
            .panels
            .iter()
            .filter_map(|p| value_axis(&p.chart))
            .map(|a| {
                max_width(
                    layout::visible_ticks(a).iter().map(|(_, l)| l.as_str()),
                    theme.source_size,
                    false,
                )
            })
            .fold(0.0, f64::max)
    }
}

/// A panel's title at the top of its cell, bold, in the accent when the
/// panel is in focus, cut to fit `x..right`.
pub(crate) fn panel_title(
    canvas: &Canvas,
    theme: &Theme,
    panel: &Panel,
    (x, right): (f64, f64),
    top: f64,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    let title = metrics::normalize(&panel.title);
    let text = fit::one(canvas, &title, (theme.label_size, true), right - x)?;
    let focus = panel.role == Role::Focus;
    let label = Label {
        text: &text,
        x,
        top,
        size: theme.label_size,
        bold: true,
        color: if focus { theme.accent } else { theme.takeaway },
        align: Align::Start,
    };
    place::settle(canvas, theme.baseline, obstacles, &label, (&[], None))
}

/// The widest value domain of any panel (trimmed panels keep its units
/// per pixel).
fn widest_span(chart: &PanelChart) -> f64 {
    chart
        .panels
        .iter()
        .map(|p| {
            let d = value_domain(&p.chart);
            (d[1] - d[0]).abs()
        })
        .fold(0.0, f64::max)
}

/// One panel's plot rectangle and where its labels go.
struct Geom {
    left: f64,
    right: f64,
    top: f64,
    bottom: f64,
    tick_top: f64,
    lead_right: f64,
    lead_w: f64,
}

fn baseline(canvas: &Canvas, theme: &Theme, g: &Geom, _: bool) -> Result<(), RenderError> {
    canvas.line(
        (g.left, g.bottom),
        (g.right, g.bottom),
        theme.baseline,
        theme.baseline_stroke,
    )
}

/// Value ticks right-aligned in the lead column (only where `show`).
fn value_ticks(
    canvas: &Canvas,
    theme: &Theme,
    axis: &Axis,
    dom: [f64; 2],
    g: &Geom,
    show: bool,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    if !show {
        return Ok(());
    }
    let ymap = |v: f64| map(v, dom, g.bottom, g.top);
    let place = Place::Column {
        right: g.lead_right,
    };
    axis::ticks(
        canvas,
        obstacles,
        theme,
        theme.source_size,
        axis,
        ymap,
        place,
    )
}

/// X ticks centred under their positions, thinned to fit the panel.
fn x_ticks(
    canvas: &Canvas,
    theme: &Theme,
    axis: &Axis,
    g: &Geom,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    let row = axis::Row {
        top: g.tick_top,
        lo: g.left,
        hi: g.right,
        gap: 10.0,
        fit: axis::Fit::Ellipsize(g.right - g.left),
        keep_left: false,
    };
    let xmap = |v: f64| map(v, axis.domain, g.left, g.right);
    let size = theme.source_size;
    axis::ticks(canvas, obstacles, theme, size, axis, xmap, Place::Row(row))
}
