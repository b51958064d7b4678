//! Line charts: y ticks at the left without an axis line, a light baseline
//! (and light gridlines at the y ticks when the frame asks for them),
//! x ticks centred under their positions, grey context lines under a heavier
//! accent focus line, and direct labels at the right instead of a legend.
//! Bands and reference lines go under the data; their names, end values and
//! callouts go over it ([`crate::annotate`]). Lines with more than about two
//! points per pixel of plot width are thinned with LTTB ([`crate::lttb`]).

use crate::annotate;
use crate::axis::{self, Place};
use crate::canvas::{Align, Canvas, Label};
use crate::kit::{self, Obstacles};
use crate::layout::{self, map, Region};
use crate::line_layout::{end_rows, layout, needs_leader};
use crate::metrics::line_height;
use crate::theme::Theme;
use crate::{Drawn, RenderError};
use crescendo_frame::{LineChart, Role, Series};

pub(crate) fn draw(canvas: &Canvas, theme: &Theme, chart: &LineChart, region: Region) -> Drawn {
    layout::check_axis(&chart.x, "x")?;
    layout::check_axis(&chart.y, "y")?;
    let l = layout(chart, region, theme);
    let lh = line_height(theme.label_size);
    let full = theme.text_column();
    let xmap = |x: f64| map(x, chart.x.domain, l.plot_left, l.plot_right);
    let ymap = |y: f64| map(y, chart.y.domain, l.plot_bottom, l.plot_top);
    let mut obstacles = Obstacles::default();
    canvas.plot((l.plot_left, l.plot_top), (l.plot_right, l.plot_bottom))?;

    // Axis titles.
    if let (Some(top), Some(title)) = (l.y_title_top, chart.y.title.as_deref()) {
        let at = (l.tick_column_left, top);
        axis::title(canvas, &mut obstacles, theme, title, full, at, Align::Start)?;
    }
    if let (Some(top), Some(title)) = (l.x_title_top, chart.x.title.as_deref()) {
        let plot = (l.plot_left, l.plot_right);
        axis::title_centred(canvas, &mut obstacles, theme, title, plot, top)?;
    }

    // Y ticks, right-aligned in their column, thinned if crowded.
    let size = theme.label_size;
    let place = Place::Column {
        right: l.tick_column_right,
    };
    axis::ticks(canvas, &mut obstacles, theme, size, &chart.y, ymap, place)?;

    // X ticks, centred, the outermost clamped inside the plot.
    let row = axis::Row {
        top: l.x_tick_top,
        lo: l.plot_left,
        hi: l.plot_right,
        gap: 12.0,
        fit: axis::Fit::Capped(l.plot_width()),
        keep_left: false,
    };
    let place = Place::Row(row);
    axis::ticks(canvas, &mut obstacles, theme, size, &chart.x, xmap, place)?;

    // Gridlines, when asked for, under everything else in the plot, and
    // the baseline along its bottom.
    let plot = (l.plot_left, l.plot_right, l.plot_bottom);
    axis::rows_and_baseline(canvas, theme, &chart.y, ymap, plot)?;

    let on = crate::line_layout::LinePlot {
        canvas,
        theme,
        chart,
        l: &l,
    };
    annotate::draw_under(on)?;

    // Lines: context first, focus on top; a missing value breaks the line.
    let target = (2.0 * l.plot_width()).max(3.0) as usize;
    for pass in [Role::Context, Role::Focus] {
        for series in chart.series.iter().filter(|s| s.role == pass) {
            let (color, width) = match pass {
                Role::Focus => (theme.accent, theme.focus_stroke),
                _ => (theme.context, theme.context_stroke),
            };
            let drawn = draw_runs(canvas, &runs(series, &xmap, &ymap), target, color, width)?;
            for run in &drawn {
                obstacles.add_polyline(run);
            }
        }
    }

    // Direct labels, de-overlapped over every series (hidden ones too) so a
    // label never moves when another series appears; a label moved away
    // from its line's end gets a leader across the gap.
    for (wanted, centre, i) in end_rows(chart, theme, l.plot_top, l.plot_bottom) {
        let series = &chart.series[i];
        let (color, bold) = match series.role {
            Role::Hidden => continue,
            Role::Focus => (theme.accent, true),
            Role::Context => (theme.context_text, false),
        };
        // Fitted at bold width so the text is the same in every role.
        let how = (theme.label_size, true);
        let text = crate::fit::lines(canvas, &series.label, how, l.label_column_width, 1)?;
        let text = text.join(" ");
        if needs_leader(wanted, centre, theme) {
            let from = (l.plot_right + 4.0, wanted);
            let to = (l.label_column_left - 4.0, centre);
            canvas.line(from, to, theme.muted, 1)?;
            obstacles.segments.push((from, to));
        }
        kit::put(
            canvas,
            &mut obstacles,
            &Label {
                text: &text,
                x: l.label_column_left,
                top: centre - lh / 2.0,
                size: theme.label_size,
                bold,
                color,
                align: Align::Start,
            },
        )?;
    }
    annotate::draw_over(on, &mut obstacles)
}

/// The runs of a series in px: a missing (or non-finite) value ends a run.
pub(crate) fn runs(
    series: &Series,
    xmap: &impl Fn(f64) -> f64,
    ymap: &impl Fn(f64) -> f64,
) -> Vec<Vec<(f64, f64)>> {
    let mut run: Vec<(f64, f64)> = Vec::new();
    let mut out: Vec<Vec<(f64, f64)>> = Vec::new();
    for p in &series.points {
        match p.y.filter(|y| y.is_finite()) {
            Some(y) if p.x.is_finite() => run.push((xmap(p.x), ymap(y))),
            _ => out.push(std::mem::take(&mut run)),
        }
    }
    out.push(run);
    out.retain(|r| !r.is_empty());
    out
}

/// Draws the runs of one line, thinned with LTTB to about `target` points
/// when it has more; a run of one point becomes a dot so it does not
/// vanish. Returns the runs as drawn.
pub(crate) fn draw_runs(
    canvas: &Canvas,
    runs: &[Vec<(f64, f64)>],
    target: usize,
    color: crate::theme::Rgb,
    width: u32,
) -> Result<Vec<Vec<(f64, f64)>>, RenderError> {
    let runs = crate::lttb::downsample_runs(runs, target);
    for run in &runs {
        if run.len() == 1 {
            canvas.dot(run[0], width, color)?;
        } else {
            canvas.polyline(run, color, width)?;
        }
    }
    Ok(runs)
}
