//! The one axis component: tick labels of an axis, in a column beside the
//! plot (right-aligned) or in a row under it (centred under their
//! positions), thinned so no two touch. Every chart form and every panel
//! draws its ticks through it.

use crate::canvas::{Align, Canvas};
use crate::fit;
use crate::kit::{self, muted_label, put, Obstacles, Rect};
use crate::layout::{self, map, max_width, Region};
use crate::metrics::{self, line_height, text_width};
use crate::theme::Theme;
use crate::RenderError;
use crescendo_frame::Axis;
use crescendo_look::display::Part;

/// How a tick label is fitted into the row.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Fit {
    /// As written.
    AsWritten,
    /// Cut with an ellipsis to this width.
    Ellipsize(f64),
    /// As written, but counted at most this wide when placing it.
    Capped(f64),
}

/// Where a row of tick labels goes.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Row {
    /// Top of the labels.
    pub top: f64,
    /// The leftmost and rightmost a label may reach.
    pub lo: f64,
    pub hi: f64,
    /// Least space between two labels kept.
    pub gap: f64,
    pub fit: Fit,
    /// A label wider than `lo..hi` keeps its left edge at `lo` (else its
    /// right edge at `hi`).
    pub keep_left: bool,
}

/// Where the tick labels of an axis go.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Place {
    /// In a column, right-aligned at `right`, each centred on its
    /// position, thinned 2 px apart.
    Column { right: f64 },
    /// In a row, centred under their positions, the outermost moved inside
    /// `row.lo..row.hi`, thinned `row.gap` apart. The group records the
    /// width of every label the axis asked for.
    Row(Row),
}

/// The tick labels of `axis` at their positions `at(value)`, placed as
/// `place` says.
#[allow(clippy::too_many_arguments)]
pub(crate) fn ticks(
    canvas: &Canvas,
    obstacles: &mut Obstacles,
    theme: &Theme,
    size: f64,
    axis: &Axis,
    at: impl Fn(f64) -> f64,
    place: Place,
) -> Result<(), RenderError> {
    let ticks = layout::visible_ticks(axis);
    let row = match place {
        Place::Row(row) => row,
        Place::Column { right } => {
            let lh = line_height(size);
            let spans: Vec<(f64, f64)> = ticks
                .iter()
                .map(|(v, _)| (at(*v) - lh / 2.0, at(*v) + lh / 2.0))
                .collect();
            for ((v, text), keep) in ticks.iter().zip(layout::thin(&spans, 2.0)) {
                if keep {
                    let top = at(*v) - lh / 2.0;
                    let label = muted_label(theme, size, text, right, top, Align::End);
                    kit::put(canvas, obstacles, &label)?;
                }
            }
            return Ok(());
        }
    };
    let wanted = (ticks.iter())
        .map(|(_, text)| text_width(text, size, false))
        .collect();
    let placed = in_row(ticks, size, at, row);
    let spans: Vec<(f64, f64)> = placed
        .iter()
        .map(|(c, w, _, _)| (c - w / 2.0, c + w / 2.0))
        .collect();
    let keep = layout::thin(&spans, row.gap);
    canvas.group(Part::XTicks { wanted }, || {
        for ((c, _, text, _), keep) in placed.iter().zip(&keep) {
            if *keep {
                let label = muted_label(theme, size, text, *c, row.top, Align::Middle);
                kit::put(canvas, obstacles, &label)?;
            }
        }
        Ok(())
    })?;
    // a tick label cut to its room is noted for the lint
    for ((_, _, text, full), keep) in placed.iter().zip(&keep) {
        if *keep {
            crate::fit::note(canvas, full, std::slice::from_ref(text))?;
        }
    }
    Ok(())
}

/// Each tick label fitted as `row.fit` says and centred under its
/// position, moved inside the row: `(centre, width, text, full text)`.
fn in_row(
    ticks: Vec<(f64, String)>,
    size: f64,
    at: impl Fn(f64) -> f64,
    row: Row,
) -> Vec<(f64, f64, String, String)> {
    ticks
        .into_iter()
        .map(|(v, full)| {
            let text = full.clone();
            let (text, w) = match row.fit {
                Fit::AsWritten => {
                    let w = text_width(&text, size, false);
                    (text, w)
                }
                Fit::Ellipsize(width) => {
                    let text = metrics::ellipsize(&text, size, false, width);
                    let w = text_width(&text, size, false);
                    (text, w)
                }
                Fit::Capped(width) => {
                    let w = text_width(&text, size, false).min(width);
                    (text, w)
                }
            };
            let hi = if row.keep_left {
                row.hi.max(row.lo + w)
            } else {
                row.hi
            };
            let centre = at(v).max(row.lo + w / 2.0).min(hi - w / 2.0);
            (centre, w, text, full)
        })
        .collect()
}

/// Geometry of a plain x/y plot: y ticks right-aligned at the left, an
/// optional y title above them, x ticks and an optional x title below.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct XyLayout {
    /// Where the y title starts: the region's left edge, and its top.
    pub y_title_at: Option<(f64, f64)>,
    pub x_title_top: Option<f64>,
    pub tick_right: f64,
    /// The plot area.
    pub plot: Rect,
    pub x_tick_top: f64,
}

/// Space between tick labels and the plot.
pub(crate) const PAD: f64 = 12.0;

/// Lays out an x/y plot in `region`, its labels `size` px, leaving
/// `right_reserve` px free at the right.
pub(crate) fn xy_layout(
    x: &Axis,
    y: &Axis,
    region: Region,
    right_reserve: f64,
    size: f64,
) -> XyLayout {
    let lh = line_height(size);
    let mut top = region.top;
    let y_title_top = y.title.as_ref().map(|_| {
        let t = top;
        top += lh + 8.0;
        t
    });
    let (x_title_top, x_tick_top, plot_bottom) = bottom_rows(region.bottom, lh, x.title.is_some());
    let ticks = layout::visible_ticks(y);
    let tick_w = region.tick_column(max_width(
        ticks.iter().map(|(_, l)| l.as_str()),
        size,
        false,
    ));
    let plot_left = if tick_w > 0.0 {
        region.left + tick_w + PAD
    } else {
        region.left
    };
    let plot_right = region.right - right_reserve;
    XyLayout {
        y_title_at: y_title_top.map(|top| (region.left, top)),
        x_title_top,
        tick_right: region.left + tick_w,
        plot: kit::rect(plot_left, top + lh / 2.0, plot_right, plot_bottom),
        x_tick_top,
    }
}

/// Which way gridlines run across the plot.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Across {
    /// Horizontal lines at the measure's ticks on a vertical axis.
    Rows,
    /// Vertical lines at the measure's ticks on a horizontal axis.
    Columns,
}

/// Light gridlines (`gridlines`) at each visible tick of the measure's
/// axis: 1 px in the theme's grid colour, from `from` to `to` across the
/// plot, where `at` maps a value to its position along the axis. Drawn
/// before the data so they stay under it; a tick on the baseline (`skip`,
/// the baseline's position) gets none, since the baseline is drawn there.
/// Nothing is drawn when the axis does not ask for gridlines.
#[allow(clippy::too_many_arguments)]
pub(crate) fn gridlines(
    canvas: &Canvas,
    theme: &Theme,
    axis: &Axis,
    at: impl Fn(f64) -> f64,
    from: f64,
    to: f64,
    across: Across,
    skip: Option<f64>,
) -> Result<(), RenderError> {
    if !axis.grid {
        return Ok(());
    }
    for (v, _) in layout::visible_ticks(axis) {
        let p = at(v);
        if !p.is_finite() || skip.is_some_and(|s| (s - p).abs() < 0.5) {
            continue;
        }
        let (a, b) = match across {
            Across::Rows => ((from, p), (to, p)),
            Across::Columns => ((p, from), (p, to)),
        };
        canvas.line(a, b, theme.grid, 1)?;
    }
    Ok(())
}

/// Draws the titles, tick labels, gridlines (when the y axis asks for
/// them) and baseline of an x/y plot at the theme's label size; records
/// the text boxes in `obstacles`.
pub(crate) fn draw_xy_axes(
    canvas: &Canvas,
    theme: &Theme,
    x: &Axis,
    y: &Axis,
    l: &XyLayout,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    let size = theme.label_size;
    if let (Some(at), Some(text)) = (l.y_title_at, y.title.as_deref()) {
        let width = l.plot.x1 - at.0;
        title(canvas, obstacles, theme, text, width, at, Align::Start)?;
    }
    if let (Some(top), Some(text)) = (l.x_title_top, x.title.as_deref()) {
        let plot = (l.plot.x0, l.plot.x1);
        title_centred(canvas, obstacles, theme, text, plot, top)?;
    }
    let ymap = |v: f64| map(v, y.domain, l.plot.y1, l.plot.y0);
    let xmap = |v: f64| map(v, x.domain, l.plot.x0, l.plot.x1);
    let place = Place::Column {
        right: l.tick_right,
    };
    ticks(canvas, obstacles, theme, size, y, ymap, place)?;
    let width = l.plot.x1 - l.plot.x0;
    let x_row = Row {
        top: l.x_tick_top,
        lo: l.plot.x0,
        hi: l.plot.x1,
        gap: 12.0,
        fit: Fit::Ellipsize(width.max(0.0)),
        keep_left: false,
    };
    ticks(canvas, obstacles, theme, size, x, xmap, Place::Row(x_row))?;
    let plot = (l.plot.x0, l.plot.x1, l.plot.y1);
    rows_and_baseline(canvas, theme, y, ymap, plot)
}

/// An axis title: one muted line at the label size, fitted into `width`,
/// placed at `(x, top)` by `align`.
#[allow(clippy::too_many_arguments)]
pub(crate) fn title(
    canvas: &Canvas,
    obstacles: &mut Obstacles,
    theme: &Theme,
    title: &str,
    width: f64,
    (x, top): (f64, f64),
    align: Align,
) -> Result<(), RenderError> {
    let text = fit::lines(canvas, title, (theme.label_size, false), width.max(0.0), 1)?.join(" ");
    let label = muted_label(theme, theme.label_size, &text, x, top, align);
    put(canvas, obstacles, &label)
}

/// The title of an axis above a plot, at the top left of `region` over
/// its whole width, when there is one. Returns the top of what follows.
pub(crate) fn title_above(
    canvas: &Canvas,
    obstacles: &mut Obstacles,
    theme: &Theme,
    region: Region,
    text: Option<&str>,
) -> Result<f64, RenderError> {
    let mut top = region.top;
    if let Some(text) = text {
        let (width, at) = (region.right - region.left, (region.left, top));
        title(canvas, obstacles, theme, text, width, at, Align::Start)?;
        top += line_height(theme.label_size) + 8.0;
    }
    Ok(top)
}

/// The title of an axis centred over `left..right`, its top at `top`.
pub(crate) fn title_centred(
    canvas: &Canvas,
    obstacles: &mut Obstacles,
    theme: &Theme,
    text: &str,
    (left, right): (f64, f64),
    top: f64,
) -> Result<(), RenderError> {
    let at = ((left + right) / 2.0, top);
    title(
        canvas,
        obstacles,
        theme,
        text,
        right - left,
        at,
        Align::Middle,
    )
}

/// Gridlines across an x/y plot at the ticks of `y` (when asked for) and
/// the baseline along the plot's bottom.
pub(crate) fn rows_and_baseline(
    canvas: &Canvas,
    theme: &Theme,
    y: &Axis,
    ymap: impl Fn(f64) -> f64,
    (left, right, bottom): (f64, f64, f64),
) -> Result<(), RenderError> {
    gridlines(
        canvas,
        theme,
        y,
        ymap,
        left,
        right,
        Across::Rows,
        Some(bottom),
    )?;
    canvas.line(
        (left, bottom),
        (right, bottom),
        theme.baseline,
        theme.baseline_stroke,
    )
}

/// A value axis under horizontal bands (bars, parts, dots).
#[derive(Clone, Copy, Debug)]
pub(crate) struct Under {
    /// Where the axis title goes, when there is one: its top, the width it
    /// may take and the centre it is set on.
    pub title: Option<(f64, f64, f64)>,
    /// The tick labels.
    pub row: Row,
    /// The gridlines' extent across the bands.
    pub across: (f64, f64),
    /// No gridline at zero (the baseline is drawn there).
    pub skip_zero: bool,
}

/// Draws a value axis under horizontal bands: its title, its tick labels in
/// a row and, when asked for, gridlines across the bands.
pub(crate) fn under(
    canvas: &Canvas,
    obstacles: &mut Obstacles,
    theme: &Theme,
    axis: &Axis,
    vmap: impl Fn(f64) -> f64 + Copy,
    u: Under,
) -> Result<(), RenderError> {
    if let (Some((top, width, centre)), Some(text)) = (u.title, axis.title.as_deref()) {
        let at = (centre, top);
        title(canvas, obstacles, theme, text, width, at, Align::Middle)?;
    }
    let size = theme.label_size;
    ticks(
        canvas,
        obstacles,
        theme,
        size,
        axis,
        vmap,
        Place::Row(u.row),
    )?;
    let skip = u.skip_zero.then(|| vmap(0.0));
    let (from, to) = u.across;
    gridlines(canvas, theme, axis, vmap, from, to, Across::Columns, skip)
}

/// The rows under a plot, from the `bottom` of the region up: an axis
/// title when `titled`, then the tick labels. Returns the title's top, the
/// ticks' top and the plot's bottom.
pub(crate) fn bottom_rows(bottom: f64, lh: f64, titled: bool) -> (Option<f64>, f64, f64) {
    let mut bottom = bottom;
    let title_top = titled.then(|| {
        bottom -= lh;
        let t = bottom;
        bottom -= 4.0;
        t
    });
    let tick_top = bottom - lh;
    (title_top, tick_top, tick_top - 8.0)
}
