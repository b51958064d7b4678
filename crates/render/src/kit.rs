//! Small shared pieces for the chart forms: colour steps derived from the
//! theme, text boxes (label placement itself is [`crate::place`]), and
//! horizontal de-overlapping of labels of different widths.

use crate::canvas::{Align, Canvas, Label};
use crate::theme::{Rgb, Theme};
use crate::RenderError;

/// Linear blend from `a` (t = 0) to `b` (t = 1) in sRGB, rounded.
pub(crate) fn mix(a: Rgb, b: Rgb, t: f64) -> Rgb {
    let t = t.clamp(0.0, 1.0);
    let c = |x: u8, y: u8| (f64::from(x) + (f64::from(y) - f64::from(x)) * t).round() as u8;
    Rgb(c(a.0, b.0), c(a.1, b.1), c(a.2, b.2))
}

/// The context greys of `n` context parts that must be told apart: the
/// theme's one context grey and its lighter second grey, alternating, so
/// neighbours differ and no grey ever outweighs the accent (both stay at
/// least [`crate::theme::LIGHTNESS_STEP`] L* from it and 3:1 on the page;
/// the page-coloured cuts and the direct labels carry the rest).
pub(crate) fn context_greys(theme: &Theme, n: usize) -> Vec<Rgb> {
    (0..n)
        .map(|i| {
            if i % 2 == 0 {
                theme.context
            } else {
                theme.context_light
            }
        })
        .collect()
}

/// A very light fill for bands and shaded rows.
pub(crate) fn faint_fill(theme: &Theme) -> Rgb {
    mix(theme.page, theme.context, 0.14)
}

pub(crate) use crescendo_look::display::Rect;

/// The box a [`Label`] occupies.
pub(crate) fn label_rect(l: &Label<'_>) -> Rect {
    l.bounds()
}

pub(crate) use crate::place::{rect, Obstacles};

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

/// Draws `text` with its top left at `spot` (where the placer put it),
/// and records its box.
pub(crate) fn put_in(
    canvas: &Canvas,
    obstacles: &mut Obstacles,
    text: &str,
    spot: &Rect,
    (size, bold, color): (f64, bool, Rgb),
) -> Result<(), RenderError> {
    let label = Label {
        text,
        x: spot.x0,
        top: spot.y0,
        size,
        bold,
        color,
        align: Align::Start,
    };
    put(canvas, obstacles, &label)
}

/// Draws the lines of a note, one under the other `step` apart, from the
/// top left of `spot`, and records their boxes.
pub(crate) fn put_lines<S: AsRef<str>>(
    canvas: &Canvas,
    obstacles: &mut Obstacles,
    lines: &[S],
    (spot, step): (&Rect, f64),
    style: (f64, bool, Rgb),
) -> Result<(), RenderError> {
    for (k, line) in lines.iter().enumerate() {
        let top = spot.y0 + k as f64 * step;
        let at = Rect { y0: top, ..*spot };
        put_in(canvas, obstacles, line.as_ref(), &at, style)?;
    }
    Ok(())
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

/// The name or value of a mark at the label size: bold in the accent
/// colour when the mark is in focus, else plain and muted.
pub(crate) fn mark_label<'a>(
    theme: &Theme,
    text: &'a str,
    (x, top, align): (f64, f64, Align),
    focus: bool,
) -> Label<'a> {
    Label {
        text,
        x,
        top,
        size: theme.label_size,
        bold: focus,
        color: if focus { theme.accent } else { theme.muted },
        align,
    }
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
    fn greys_alternate_the_themes_two_greys() {
        let t = &crate::theme::CLEAR;
        let g = context_greys(t, 4);
        assert_eq!(
            g,
            vec![t.context, t.context_light, t.context, t.context_light]
        );
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
