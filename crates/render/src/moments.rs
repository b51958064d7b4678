//! Moments on a line chart's time axis (`moment`): a dashed line at a
//! time, or a light band over a period, drawn under the data; its short
//! label goes through the label placer ([`crate::place`]) beside the top of
//! the line, on whichever side is clear of the data, a row lower when both
//! are taken.

use crate::kit::{self, faint_fill, Obstacles, Rect};
use crate::line_layout::LinePlot;
use crate::metrics::{self, line_height, text_width};
use crate::place::{self, Pick};
use crate::RenderError;
use crescendo_frame::{Annotation, LineChart};
use crescendo_look::display::{NoteOf, Part};

/// Length of a dash and of the gap after it, in px.
const DASH: (f64, f64) = (6.0, 4.0);
/// Space between the marker's line and its label, in px.
const GAP: f64 = 6.0;
/// Rows down from the top of the plot a label may move to.
const ROWS: usize = 8;

/// The moments of a chart as (number, from, to, text), finite only; the
/// number counts every moment of the chart, in the order written.
fn moments(chart: &LineChart) -> impl Iterator<Item = (usize, f64, Option<f64>, &str)> {
    (chart.annotations.iter())
        .filter_map(|a| match a {
            Annotation::Moment { from, to, text } => Some((*from, *to, text.as_str())),
            _ => None,
        })
        .enumerate()
        .filter(|(_, (from, to, _))| from.is_finite() && to.is_none_or(f64::is_finite))
        .map(|(k, (from, to, text))| (k, from, to, text))
}

/// The dashes of a vertical line at `x` from `top` to `bottom`.
fn dashes(x: f64, top: f64, bottom: f64) -> Vec<((f64, f64), (f64, f64))> {
    let mut out = Vec::new();
    let mut y = top;
    while y < bottom {
        let end = (y + DASH.0).min(bottom);
        out.push(((x, y), (x, end)));
        y = end + DASH.1;
    }
    out
}

/// Draws the moments' lines and bands, under the data.
pub(crate) fn draw_under(on: LinePlot<'_>) -> Result<(), RenderError> {
    let (canvas, theme, chart, l) = (on.canvas, on.theme, on.chart, on.l);
    let xm = l.xmap(chart);
    for (_, from, to, _) in moments(chart) {
        let x0 = xm(from).clamp(l.plot_left, l.plot_right);
        match to {
            Some(to) => {
                let x1 = xm(to).clamp(l.plot_left, l.plot_right);
                canvas.group(Part::Tint, || {
                    canvas.rect((x0, l.plot_top), (x1, l.plot_bottom), faint_fill(theme))
                })?;
            }
            None => {
                for (a, b) in dashes(x0, l.plot_top, l.plot_bottom) {
                    canvas.line(a, b, theme.muted, 1)?;
                }
            }
        }
    }
    Ok(())
}

/// Candidate boxes for a label `w` × `h` beside the top of a marker at
/// `x`: right then left of it, one row lower at a time.
fn candidates(x: f64, w: f64, h: f64, top: f64, step: f64) -> Vec<Rect> {
    (0..ROWS)
        .flat_map(|k| {
            let y0 = top + k as f64 * step;
            [x + GAP, x - GAP - w].map(|x0| Rect {
                x0,
                y0,
                x1: x0 + w,
                y1: y0 + h,
            })
        })
        .collect()
}

/// Records each marker line so labels keep off it, then places the
/// moments' labels (before any other note, so the story's named times get
/// the best spots), each in a [`Part::Note`] group that says when it could
/// only go over data or found no room (the lint warns, naming the frame).
pub(crate) fn draw_over(on: LinePlot<'_>, obstacles: &mut Obstacles) -> Result<(), RenderError> {
    let (canvas, theme, chart, l) = (on.canvas, on.theme, on.chart, on.l);
    let xm = l.xmap(chart);
    let area = l.note_bounds(theme);
    let lh = line_height(theme.label_size);
    let room = l.plot_width() * 0.4;
    // every marker line first: no moment's label may cross another's line
    for (_, from, to, _) in moments(chart) {
        if to.is_none() {
            let x = xm(from).clamp(l.plot_left, l.plot_right);
            obstacles
                .segments
                .push(((x, l.plot_top), (x, l.plot_bottom)));
        }
    }
    for (k, from, _, text) in moments(chart) {
        let x = xm(from).clamp(l.plot_left, l.plot_right);
        let full = text;
        let text = metrics::ellipsize(&metrics::normalize(text), theme.label_size, false, room);
        let w = text_width(&text, theme.label_size, false);
        let top = l.plot_top + 2.0;
        let cands = candidates(x, w, lh, top, theme.label_step());
        let chosen = place::pick(&cands, obstacles, &area, Pick::FirstFree);
        if chosen.is_some() {
            // a name cut to its room is noted for the lint
            crate::fit::note(canvas, full, std::slice::from_ref(&text))?;
        }
        let part = place::note_part(NoteOf::Moment(k), chosen, obstacles);
        canvas.group(part, || match chosen {
            Some(r) => {
                let style = (theme.label_size, false, theme.takeaway);
                kit::put_in(canvas, obstacles, &text, &r, style)
            }
            None => Ok(()),
        })?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dashes_cover_the_line_with_gaps() {
        let d = dashes(10.0, 0.0, 25.0);
        assert_eq!(
            d,
            vec![
                ((10.0, 0.0), (10.0, 6.0)),
                ((10.0, 10.0), (10.0, 16.0)),
                ((10.0, 20.0), (10.0, 25.0))
            ]
        );
    }

    #[test]
    fn labels_try_both_sides_before_moving_down() {
        let c = candidates(100.0, 40.0, 20.0, 0.0, 22.0);
        assert_eq!(c.len(), 2 * ROWS);
        assert_eq!((c[0].x0, c[0].y0), (106.0, 0.0));
        assert_eq!((c[1].x1, c[1].y0), (94.0, 0.0));
        assert_eq!(c[2].y0, 22.0);
    }
}
