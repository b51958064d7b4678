//! Dot plots: one row per category down the left, dots along one value axis
//! at the bottom, nothing joining a dot to the axis (so a dot never reads as
//! a bar). With several series the dots of a row are joined by a thin grey
//! line that shows their range, and the series are named directly above the
//! top row. Focus dots are in the accent, context dots grey; hidden rows and
//! series keep their place empty.

use crate::axis;
use crate::canvas::{Align, Canvas, Label};
use crate::fit;
use crate::kit::{self, spread_widths, Obstacles};
use crate::layout::{self, map, max_width, Region};
use crate::metrics::{self, line_height, text_width};
use crate::theme::Theme;
use crate::{Drawn, RenderError};
use crescendo_frame::{DotChart, DotRow, Role};

/// Dot radius in px (smaller when rows are tight).
const DOT: f64 = 6.0;
/// Space between the category column and the plot.
const PAD: f64 = 12.0;
/// Widest a series name may be (at 16 px labels; [`Theme::label_scaled`]).
const MAX_SERIES_LABEL: f64 = 240.0;

pub(crate) fn draw(canvas: &Canvas, theme: &Theme, chart: &DotChart, region: Region) -> Drawn {
    layout::check_axis(&chart.value, "value")?;
    let lh = line_height(theme.label_size);
    let mut obstacles = Obstacles::default();
    let cat = chart.category_title.as_deref();
    let mut top = axis::title_above(canvas, &mut obstacles, theme, region, cat)?;
    let several = chart.series.len() > 1;
    let series_row_top = top;
    if several {
        top += lh + 6.0;
    }
    let plot_top = top;
    let titled = chart.value.title.is_some();
    let (value_title_top, tick_top, plot_bottom) = axis::bottom_rows(region.bottom, lh, titled);

    let widest = max_width(
        chart.rows.iter().map(|r| r.label.as_str()),
        theme.label_size,
        true,
    );
    // at least the deck's gutter, so the plot starts where every other
    // frame's does
    let cap = (region.right - region.left) * layout::NAME_COLUMN_SHARE;
    let col_w = widest.min(cap).max(region.gutter);
    let right = region.right - region.label_gutter;
    let col_right = region.left + col_w;
    let n = chart.rows.len().max(1);
    let band = (plot_bottom - plot_top) / n as f64;
    let radius = DOT.min(band * 0.35).max(2.0);
    let value_left = col_right + PAD + DOT;
    let value_right = right - DOT;
    let vmap = |v: f64| map(v, chart.value.domain, value_left, value_right);
    canvas.plot((col_right + PAD, plot_top), (right, plot_bottom))?;

    let row = axis::Row {
        top: tick_top,
        lo: col_right + PAD,
        hi: right,
        gap: 12.0,
        fit: axis::Fit::AsWritten,
        keep_left: false,
    };
    let under = axis::Under {
        title: value_title_top.map(|t| {
            (
                t,
                value_right - value_left,
                (value_left + value_right) / 2.0,
            )
        }),
        row,
        across: (plot_top, plot_bottom),
        skip_zero: false,
    };
    axis::under(canvas, &mut obstacles, theme, &chart.value, vmap, under)?;
    canvas.line(
        (col_right + PAD, plot_bottom),
        (right, plot_bottom),
        theme.baseline,
        theme.baseline_stroke,
    )?;

    // Category labels, thinned if rows are tighter than a line of text.
    let centre = |i: usize| plot_top + (i as f64 + 0.5) * band;
    let spans: Vec<(f64, f64)> = (0..chart.rows.len())
        .map(|i| (centre(i) - lh / 2.0, centre(i) + lh / 2.0))
        .collect();
    let keep = layout::thin(&spans, 0.0);
    let any_focus_series = chart.series.iter().any(|s| s.role == Role::Focus);
    for (i, row) in chart.rows.iter().enumerate() {
        let y = centre(i);
        if keep.get(i).copied().unwrap_or(false) && row.role != Role::Hidden {
            // Fitted at bold width so the text is the same in every role.
            let how = (theme.label_size, true);
            let text = fit::lines(canvas, &row.label, how, col_w, 1)?.join(" ");
            let focus = row.role == Role::Focus;
            kit::put(
                canvas,
                &mut obstacles,
                &kit::mark_label(theme, &text, (col_right, y - lh / 2.0, Align::End), focus),
            )?;
        }
        if row.role != Role::Hidden {
            let focus_row = !any_focus_series && row.role == Role::Focus;
            row_marks(canvas, theme, chart, row, (y, radius), vmap, focus_row)?;
        }
        for (j, (s, v)) in chart.series.iter().zip(&row.values).enumerate() {
            let Some(v) = v.filter(|v| v.is_finite()) else {
                continue;
            };
            let (x, r) = (vmap(v), radius.max(4.0));
            if s.role == Role::Hidden || row.role == Role::Hidden {
                // its place is kept for the frame that shows it
                canvas.ghost((x - r, y - r), (x + r, y + r));
            } else {
                canvas.anchor((i, j), (x - r, y - r), (x + r, y + r));
                canvas.point(i, Some(j), (x, y));
            }
        }
    }

    // Series names above the top row, over each series' first dot.
    if several {
        let span = (col_right + PAD, region.right);
        name_series(
            canvas,
            theme,
            chart,
            vmap,
            span,
            series_row_top,
            &mut obstacles,
        )?;
    }
    Ok(())
}

/// The names of several series in a row at `top`, each over its first dot,
/// spread apart inside `lo..hi`.
fn name_series(
    canvas: &Canvas,
    theme: &Theme,
    chart: &DotChart,
    vmap: impl Fn(f64) -> f64,
    (lo, hi): (f64, f64),
    series_row_top: f64,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    let mut wanted: Vec<(f64, f64, usize, String)> = chart
        .series
        .iter()
        .enumerate()
        .filter_map(|(k, s)| {
            let x = chart
                .rows
                .iter()
                .find_map(|r| r.values.get(k).copied().flatten().filter(|v| v.is_finite()))
                .map(&vmap)?;
            let name = metrics::normalize(&s.name);
            let how = (theme.label_size, true);
            let room = theme.label_scaled(MAX_SERIES_LABEL);
            let text = fit::one(canvas, &name, how, room).ok()?;
            Some((x, text_width(&text, theme.label_size, true), k, text))
        })
        .collect();
    wanted.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.2.cmp(&b.2)));
    let centres = spread_widths(
        &wanted.iter().map(|w| w.0).collect::<Vec<_>>(),
        &wanted.iter().map(|w| w.1).collect::<Vec<_>>(),
        14.0,
        lo,
        hi,
    );
    for ((_, _, k, text), c) in wanted.iter().zip(centres) {
        let (color, bold) = match chart.series[*k].role {
            Role::Hidden => continue,
            Role::Focus => (theme.accent, true),
            Role::Context => (theme.context_text, false),
        };
        kit::put(
            canvas,
            obstacles,
            &Label {
                text,
                x: c,
                top: series_row_top,
                size: theme.label_size,
                bold,
                color,
                align: Align::Middle,
            },
        )?;
    }
    Ok(())
}

/// One row's marks: a light line over the range of its visible values
/// when it has several, then its dots, context first, focus on top
/// (`focus_row`: every dot of the row is in focus).
fn row_marks(
    canvas: &Canvas,
    theme: &Theme,
    chart: &DotChart,
    row: &DotRow,
    (y, radius): (f64, f64),
    vmap: impl Fn(f64) -> f64,
    focus_row: bool,
) -> Result<(), RenderError> {
    let range_color = theme.context_light;
    let visible: Vec<(f64, Role)> = chart
        .series
        .iter()
        .zip(&row.values)
        .filter(|(s, _)| s.role != Role::Hidden)
        .filter_map(|(s, v)| v.filter(|v| v.is_finite()).map(|v| (vmap(v), s.role)))
        .collect();
    if visible.len() > 1 {
        let lo = visible.iter().map(|v| v.0).fold(f64::INFINITY, f64::min);
        let hi = visible
            .iter()
            .map(|v| v.0)
            .fold(f64::NEG_INFINITY, f64::max);
        canvas.line((lo, y), (hi, y), range_color, 2)?;
    }
    // Context dots first, focus dots on top.
    for pass in [false, true] {
        for &(x, role) in &visible {
            let focus = role == Role::Focus || focus_row;
            if focus == pass {
                let color = if focus { theme.accent } else { theme.context };
                canvas.dot((x, y), radius.round() as u32, color)?;
            }
        }
    }
    Ok(())
}
