//! Line charts: y ticks at the left without an axis line, a light baseline,
//! x ticks centred under their positions, grey context lines under a heavier
//! accent focus line, and direct labels at the right instead of a legend.

use crate::canvas::{Align, Canvas, Label, WIDTH};
use crate::layout::{self, fit_label, label_step, map, max_width, Region, LABEL_SIZE, MARGIN_X};
use crate::metrics::{line_height, text_width};
use crate::theme::Theme;
use crate::RenderError;
use crescendo_plan::{LineChart, Role};

/// Widest direct-label column, in px; longer labels are cut with an ellipsis.
const MAX_LABEL_COLUMN: f64 = 280.0;
/// Space between tick labels or direct labels and the plot.
const PAD: f64 = 12.0;

/// Plot geometry of a line chart. Depends only on the axes and the names of
/// all series (hidden ones included), never on roles.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct LineLayout {
    pub y_title_top: Option<f64>,
    pub x_title_top: Option<f64>,
    pub tick_column_left: f64,
    pub tick_column_right: f64,
    pub label_column_left: f64,
    pub label_column_width: f64,
    pub plot_left: f64,
    pub plot_right: f64,
    pub plot_top: f64,
    pub plot_bottom: f64,
    pub x_tick_top: f64,
}

pub(crate) fn layout(chart: &LineChart, region: Region) -> LineLayout {
    let lh = line_height(LABEL_SIZE);
    let mut top = region.top;
    let y_title_top = chart.y.title.as_ref().map(|_| {
        let t = top;
        top += lh + 8.0;
        t
    });
    let plot_top = top + lh / 2.0;

    let mut bottom = region.bottom;
    let x_title_top = chart.x.title.as_ref().map(|_| {
        bottom -= lh;
        let t = bottom;
        bottom -= 4.0;
        t
    });
    let x_tick_top = bottom - lh;
    let plot_bottom = x_tick_top - 8.0;

    let y_ticks = layout::visible_ticks(&chart.y);
    let tick_w = max_width(y_ticks.iter().map(|(_, l)| l.as_str()), LABEL_SIZE, false);
    let tick_column_left = region.left;
    let tick_column_right = region.left + tick_w;
    let plot_left = if tick_w > 0.0 {
        tick_column_right + PAD
    } else {
        region.left
    };

    let label_w = max_width(
        chart.series.iter().map(|s| s.label.as_str()),
        LABEL_SIZE,
        true,
    )
    .min(MAX_LABEL_COLUMN);
    let plot_right = if label_w > 0.0 {
        region.right - label_w - PAD
    } else {
        region.right
    };
    LineLayout {
        y_title_top,
        x_title_top,
        tick_column_left,
        tick_column_right,
        label_column_left: plot_right + PAD,
        label_column_width: label_w,
        plot_left,
        plot_right,
        plot_top,
        plot_bottom,
        x_tick_top,
    }
}

pub(crate) fn draw(
    canvas: &Canvas<'_>,
    theme: &Theme,
    chart: &LineChart,
    region: Region,
) -> Result<(), RenderError> {
    layout::check_axis(&chart.x, "x")?;
    layout::check_axis(&chart.y, "y")?;
    let l = layout(chart, region);
    let lh = line_height(LABEL_SIZE);
    let full = WIDTH as f64 - 2.0 * MARGIN_X;
    let xmap = |x: f64| map(x, chart.x.domain, l.plot_left, l.plot_right);
    let ymap = |y: f64| map(y, chart.y.domain, l.plot_bottom, l.plot_top);

    // Axis titles.
    if let (Some(top), Some(title)) = (l.y_title_top, chart.y.title.as_deref()) {
        let text = fit_label(title, full, 1, false).join(" ");
        canvas.text(&Label {
            text: &text,
            x: l.tick_column_left,
            top,
            size: LABEL_SIZE,
            bold: false,
            color: theme.muted,
            align: Align::Start,
        })?;
    }
    if let (Some(top), Some(title)) = (l.x_title_top, chart.x.title.as_deref()) {
        let text = fit_label(title, l.plot_right - l.plot_left, 1, false).join(" ");
        canvas.text(&Label {
            text: &text,
            x: (l.plot_left + l.plot_right) / 2.0,
            top,
            size: LABEL_SIZE,
            bold: false,
            color: theme.muted,
            align: Align::Middle,
        })?;
    }

    // Y ticks, right-aligned in their column, thinned if crowded.
    let y_ticks = layout::visible_ticks(&chart.y);
    let spans: Vec<(f64, f64)> = y_ticks
        .iter()
        .map(|(v, _)| (ymap(*v) - lh / 2.0, ymap(*v) + lh / 2.0))
        .collect();
    for ((v, text), keep) in y_ticks.iter().zip(layout::thin(&spans, 2.0)) {
        if keep {
            canvas.text(&Label {
                text,
                x: l.tick_column_right,
                top: ymap(*v) - lh / 2.0,
                size: LABEL_SIZE,
                bold: false,
                color: theme.muted,
                align: Align::End,
            })?;
        }
    }

    // X ticks, centred, the outermost clamped inside the plot.
    let x_ticks: Vec<(f64, f64, String)> = layout::visible_ticks(&chart.x)
        .into_iter()
        .map(|(v, text)| {
            let w = text_width(&text, LABEL_SIZE, false).min(l.plot_right - l.plot_left);
            let centre = xmap(v)
                .max(l.plot_left + w / 2.0)
                .min(l.plot_right - w / 2.0);
            (centre, w, text)
        })
        .collect();
    let spans: Vec<(f64, f64)> = x_ticks
        .iter()
        .map(|(c, w, _)| (c - w / 2.0, c + w / 2.0))
        .collect();
    for ((centre, _, text), keep) in x_ticks.iter().zip(layout::thin(&spans, 12.0)) {
        if keep {
            canvas.text(&Label {
                text,
                x: *centre,
                top: l.x_tick_top,
                size: LABEL_SIZE,
                bold: false,
                color: theme.muted,
                align: Align::Middle,
            })?;
        }
    }

    // Baseline along the bottom of the plot.
    canvas.line(
        (l.plot_left, l.plot_bottom),
        (l.plot_right, l.plot_bottom),
        theme.baseline,
        theme.baseline_stroke,
    )?;

    // Lines: context first, focus on top; a missing value breaks the line.
    for pass in [Role::Context, Role::Focus] {
        for series in chart.series.iter().filter(|s| s.role == pass) {
            let (color, width) = match pass {
                Role::Focus => (theme.accent, theme.focus_stroke),
                _ => (theme.context, theme.context_stroke),
            };
            let mut run: Vec<(f64, f64)> = Vec::new();
            let mut runs: Vec<Vec<(f64, f64)>> = Vec::new();
            for p in &series.points {
                match p.y.filter(|y| y.is_finite()) {
                    Some(y) if p.x.is_finite() => run.push((xmap(p.x), ymap(y))),
                    _ => runs.push(std::mem::take(&mut run)),
                }
            }
            runs.push(run);
            for run in runs.iter().filter(|r| !r.is_empty()) {
                if run.len() == 1 {
                    // An isolated value would otherwise vanish.
                    canvas.dot(run[0], width, color)?;
                } else {
                    canvas.polyline(run, color, width)?;
                }
            }
        }
    }

    // Direct labels, de-overlapped over every series (hidden ones too) so a
    // label never moves when another series appears.
    let mut ends: Vec<(f64, usize)> = chart
        .series
        .iter()
        .enumerate()
        .filter_map(|(i, s)| {
            s.points
                .iter()
                .rev()
                .find_map(|p| p.y.filter(|y| y.is_finite()))
                .map(|y| (ymap(y), i))
        })
        .collect();
    ends.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    let wanted: Vec<f64> = ends.iter().map(|e| e.0).collect();
    let placed = layout::spread(&wanted, label_step(), l.plot_top, l.plot_bottom);
    for ((_, i), centre) in ends.iter().zip(placed) {
        let series = &chart.series[*i];
        let (color, bold) = match series.role {
            Role::Hidden => continue,
            Role::Focus => (theme.accent, true),
            Role::Context => (theme.context_text, false),
        };
        // Fitted at bold width so the text is the same in every role.
        let text = fit_label(&series.label, l.label_column_width, 1, true).join(" ");
        canvas.text(&Label {
            text: &text,
            x: l.label_column_left,
            top: centre - lh / 2.0,
            size: LABEL_SIZE,
            bold,
            color,
            align: Align::Start,
        })?;
    }
    Ok(())
}
