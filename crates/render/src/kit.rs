//! Small shared pieces for the chart forms: colour steps derived from the
//! theme, text boxes and obstacle scoring for label placement, horizontal
//! de-overlapping of labels of different widths, and plain x/y axes.

use crate::canvas::{Align, Canvas, Label};
use crate::layout::{self, fit_label_at, map, max_width, Region};
use crate::metrics::{self, line_height, text_width};
use crate::theme::{Rgb, Theme};
use crate::RenderError;
use crescendo_frame::Axis;
use crescendo_look::display::Part;

/// Linear blend from `a` (t = 0) to `b` (t = 1) in sRGB, rounded.
pub(crate) fn mix(a: Rgb, b: Rgb, t: f64) -> Rgb {
    let t = t.clamp(0.0, 1.0);
    let c = |x: u8, y: u8| (f64::from(x) + (f64::from(y) - f64::from(x)) * t).round() as u8;
    Rgb(c(a.0, b.0), c(a.1, b.1), c(a.2, b.2))
}

/// `n` distinct greys around the theme's context grey, from darker (index
/// 0) to lighter, for context parts that must be told apart.
///
/// The steps run from the context grey blended 45% toward the headline ink
/// to the context grey blended 40% toward the page. On the light theme the
/// lightest steps fall below 3:1 against the page (#8C8C8C itself is 3.4:1);
/// that is accepted for segments that touch darker neighbours and carry a
/// direct label, since no lighter grey can reach 3:1 and still differ from
/// its neighbours.
pub(crate) fn context_greys(theme: &Theme, n: usize) -> Vec<Rgb> {
    let dark = mix(theme.context, theme.headline, 0.45);
    let light = mix(theme.context, theme.page, 0.40);
    match n {
        0 => Vec::new(),
        1 => vec![theme.context],
        _ => (0..n)
            .map(|i| mix(dark, light, i as f64 / (n - 1) as f64))
            .collect(),
    }
}

/// A very light fill for bands and shaded rows.
pub(crate) fn faint_fill(theme: &Theme) -> Rgb {
    mix(theme.page, theme.context, 0.14)
}

pub(crate) use crescendo_look::display::Rect;

/// The box of one line of text as the display list measures it.
pub(crate) fn text_rect(text: &str, x: f64, top: f64, size: f64, bold: bool, align: Align) -> Rect {
    crescendo_look::display::text_box(text, x, top, size, bold, align)
}

/// The box a [`Label`] occupies.
pub(crate) fn label_rect(l: &Label<'_>) -> Rect {
    text_rect(l.text, l.x, l.top, l.size, l.bold, l.align)
}

/// What a new label should avoid: texts already placed and line segments.
#[derive(Clone, Debug, Default)]
pub(crate) struct Obstacles {
    /// Boxes of texts already drawn (or reserved).
    pub boxes: Vec<Rect>,
    /// Line segments of the marks.
    pub segments: Vec<((f64, f64), (f64, f64))>,
}

impl Obstacles {
    /// True if `r` (grown by a 2 px safety margin) touches no text box.
    pub fn clear_of_text(&self, r: &Rect) -> bool {
        let g = r.grow(2.0);
        self.boxes.iter().all(|b| g.overlap(b) == 0.0)
    }

    /// Penalty of putting a label at `r`: overlapping text weighs far more
    /// than crossing a line.
    pub fn score(&self, r: &Rect) -> f64 {
        let g = r.grow(2.0);
        let text: f64 = self.boxes.iter().map(|b| g.overlap(b)).sum();
        let lines = self
            .segments
            .iter()
            .filter(|(a, b)| r.hit_by(*a, *b))
            .count();
        text * 1000.0 + lines as f64 * 50.0
    }

    /// Adds the segments of a polyline.
    pub fn add_polyline(&mut self, pts: &[(f64, f64)]) {
        for w in pts.windows(2) {
            self.segments.push((w[0], w[1]));
        }
    }
}

/// Draws `label` and records its box.
pub(crate) fn put(
    canvas: &Canvas,
    obstacles: &mut Obstacles,
    label: &Label<'_>,
) -> Result<(), RenderError> {
    if label.text.is_empty() {
        return Ok(());
    }
    obstacles.boxes.push(label_rect(label));
    canvas.text(label)
}

/// Places labels of different widths along one line as close as possible
/// to their wanted centres, `gap` apart and inside `lo..=hi`. Labels keep
/// their order (sorted by wanted centre). Returns the centres; when they
/// cannot all fit, they are packed from `lo`.
pub(crate) fn spread_widths(
    wanted: &[f64],
    widths: &[f64],
    gap: f64,
    lo: f64,
    hi: f64,
) -> Vec<f64> {
    let n = wanted.len().min(widths.len());
    let mut c: Vec<f64> = (0..n).map(|i| wanted[i]).collect();
    // Push right, left to right.
    for i in 0..n {
        let min = if i == 0 {
            lo + widths[0] / 2.0
        } else {
            c[i - 1] + widths[i - 1] / 2.0 + gap + widths[i] / 2.0
        };
        c[i] = c[i].max(min);
    }
    // Pull back inside on the right, right to left.
    for i in (0..n).rev() {
        let max = if i + 1 == n {
            hi - widths[i] / 2.0
        } else {
            c[i + 1] - widths[i + 1] / 2.0 - gap - widths[i] / 2.0
        };
        c[i] = c[i].min(max);
    }
    // If the left end was pushed out, the row is too wide: pack from `lo`.
    if n > 0 && c[0] - widths[0] / 2.0 < lo - 1e-9 {
        let mut x = lo;
        for i in 0..n {
            c[i] = x + widths[i] / 2.0;
            x += widths[i] + gap;
        }
    }
    c
}

/// Geometry of a plain x/y plot: y ticks right-aligned at the left, an
/// optional y title above them, x ticks and an optional x title below.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct XyLayout {
    /// Left edge of the region (where the y title starts).
    pub left: f64,
    pub y_title_top: Option<f64>,
    pub x_title_top: Option<f64>,
    pub tick_right: f64,
    pub plot_left: f64,
    pub plot_right: f64,
    pub plot_top: f64,
    pub plot_bottom: f64,
    pub x_tick_top: f64,
    /// Tick label size.
    pub size: f64,
}

/// Space between tick labels and the plot.
pub(crate) const PAD: f64 = 12.0;

/// Lays out an x/y plot in `region`, leaving `right_reserve` px free at the
/// right; `y_ticks` false drops the tick column (small multiples).
pub(crate) fn xy_layout(
    x: &Axis,
    y: &Axis,
    region: Region,
    right_reserve: f64,
    size: f64,
    y_ticks: bool,
) -> XyLayout {
    let lh = line_height(size);
    let mut top = region.top;
    let y_title_top = y.title.as_ref().map(|_| {
        let t = top;
        top += lh + 8.0;
        t
    });
    let mut bottom = region.bottom;
    let x_title_top = x.title.as_ref().map(|_| {
        bottom -= lh;
        let t = bottom;
        bottom -= 4.0;
        t
    });
    let x_tick_top = bottom - lh;
    let ticks = layout::visible_ticks(y);
    let tick_w = if y_ticks {
        max_width(ticks.iter().map(|(_, l)| l.as_str()), size, false)
    } else {
        0.0
    };
    XyLayout {
        left: region.left,
        y_title_top,
        x_title_top,
        tick_right: region.left + tick_w,
        plot_left: if tick_w > 0.0 {
            region.left + tick_w + PAD
        } else {
            region.left
        },
        plot_right: region.right - right_reserve,
        plot_top: top + lh / 2.0,
        plot_bottom: x_tick_top - 8.0,
        x_tick_top,
        size,
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
/// them) and baseline of an x/y plot; records the text boxes in `obstacles`. `y_ticks` false leaves the y labels out (the
/// plot keeps its place).
pub(crate) fn draw_xy_axes(
    canvas: &Canvas,
    theme: &Theme,
    x: &Axis,
    y: &Axis,
    l: &XyLayout,
    y_ticks: bool,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    let lh = line_height(l.size);
    let size = l.size;
    fn muted<'a>(
        theme: &Theme,
        size: f64,
        text: &'a str,
        x: f64,
        top: f64,
        align: Align,
    ) -> Label<'a> {
        muted_label(theme, size, text, x, top, align)
    }
    if let (Some(top), Some(title)) = (l.y_title_top, y.title.as_deref()) {
        let text = fit_one(title, l.plot_right - l.left, l.size);
        put(
            canvas,
            obstacles,
            &muted(theme, size, &text, l.left, top, Align::Start),
        )?;
    }
    if let (Some(top), Some(title)) = (l.x_title_top, x.title.as_deref()) {
        let text = fit_one(title, l.plot_right - l.plot_left, l.size);
        put(
            canvas,
            obstacles,
            &muted(
                theme,
                size,
                &text,
                (l.plot_left + l.plot_right) / 2.0,
                top,
                Align::Middle,
            ),
        )?;
    }
    let ymap = |v: f64| map(v, y.domain, l.plot_bottom, l.plot_top);
    let xmap = |v: f64| map(v, x.domain, l.plot_left, l.plot_right);
    if y_ticks {
        let ticks = layout::visible_ticks(y);
        let spans: Vec<(f64, f64)> = ticks
            .iter()
            .map(|(v, _)| (ymap(*v) - lh / 2.0, ymap(*v) + lh / 2.0))
            .collect();
        for ((v, text), keep) in ticks.iter().zip(layout::thin(&spans, 2.0)) {
            if keep {
                put(
                    canvas,
                    obstacles,
                    &muted(
                        theme,
                        size,
                        text,
                        l.tick_right,
                        ymap(*v) - lh / 2.0,
                        Align::End,
                    ),
                )?;
            }
        }
    }
    let width = l.plot_right - l.plot_left;
    let x_ticks: Vec<(f64, f64, String)> = layout::visible_ticks(x)
        .into_iter()
        .map(|(v, text)| {
            let text = metrics::ellipsize(&text, l.size, false, width.max(0.0));
            let w = text_width(&text, l.size, false);
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
    let wanted = layout::visible_ticks(x)
        .iter()
        .map(|(_, text)| text_width(text, l.size, false))
        .collect();
    canvas.group(Part::XTicks { wanted }, || {
        for ((centre, _, text), keep) in x_ticks.iter().zip(layout::thin(&spans, 12.0)) {
            if keep {
                put(
                    canvas,
                    obstacles,
                    &muted(theme, size, text, *centre, l.x_tick_top, Align::Middle),
                )?;
            }
        }
        Ok(())
    })?;
    gridlines(
        canvas,
        theme,
        y,
        ymap,
        l.plot_left,
        l.plot_right,
        Across::Rows,
        Some(l.plot_bottom),
    )?;
    canvas.line(
        (l.plot_left, l.plot_bottom),
        (l.plot_right, l.plot_bottom),
        theme.baseline,
        theme.baseline_stroke,
    )
}

/// One line of text fitted into `width` at `size`.
pub(crate) fn fit_one(text: &str, width: f64, size: f64) -> String {
    fit_label_at(size, text, width.max(0.0), 1, false).join(" ")
}

/// A muted (tick, title, category) label.
pub(crate) fn muted_label<'a>(
    theme: &Theme,
    size: f64,
    text: &'a str,
    x: f64,
    top: f64,
    align: Align,
) -> Label<'a> {
    Label {
        text,
        x,
        top,
        size,
        bold: false,
        color: theme.muted,
        align,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn greys_run_dark_to_light_and_differ() {
        let g = context_greys(&crate::theme::CLEAR, 4);
        assert_eq!(g.len(), 4);
        for w in g.windows(2) {
            assert!(w[0].relative_luminance() < w[1].relative_luminance());
        }
        assert_eq!(
            context_greys(&crate::theme::CLEAR, 1),
            vec![crate::theme::CLEAR.context]
        );
    }

    #[test]
    fn spread_widths_separates_and_stays_inside() {
        let c = spread_widths(&[50.0, 52.0, 54.0], &[40.0, 20.0, 40.0], 4.0, 0.0, 200.0);
        assert!(c[0] - 20.0 >= 0.0);
        assert!(c[0] + 20.0 + 4.0 <= c[1] - 10.0 + 1e-9);
        assert!(c[1] + 10.0 + 4.0 <= c[2] - 20.0 + 1e-9);
        let c = spread_widths(&[195.0], &[40.0], 4.0, 0.0, 200.0);
        assert_eq!(c, vec![180.0]);
    }
}
