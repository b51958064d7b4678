//! Notes on line charts: light bands over an x range (drawn under the data,
//! named at their top left), reference lines across the plot at a value
//! (named at their right end), value labels at the ends of the focus lines,
//! and callouts: a short text near a data point with a leader line, put
//! where it covers the fewest other labels and lines.

use crate::canvas::{Align, Label};
use crate::fit;
use crate::kit::{self, faint_fill, rect, Obstacles, Rect};
use crate::line_layout::LinePlot;
use crate::mark_notes;
use crate::metrics::{self, line_height, text_width};
use crate::place::{self, Pick};
use crate::theme::Theme;
use crate::RenderError;
use crescendo_frame::{Annotation, Role};
use crescendo_look::display::Part;

/// Widest a callout's text may be before it wraps (at 16 px labels;
/// [`Theme::label_scaled`]).
const CALLOUT_WIDTH: f64 = 260.0;
/// Most lines a callout may take.
const CALLOUT_LINES: usize = 3;

/// Draws the bands and reference lines, under the data.
pub(crate) fn draw_under(on: LinePlot<'_>) -> Result<(), RenderError> {
    let (canvas, theme, chart, l) = (on.canvas, on.theme, on.chart, on.l);
    crate::moments::draw_under(on)?;
    let (xm, ym) = (l.xmap(chart), l.ymap(chart));
    for a in &chart.annotations {
        match a {
            Annotation::Band { from, to, .. } if from.is_finite() && to.is_finite() => {
                let x0 = xm(from.min(*to)).clamp(l.plot_left, l.plot_right);
                let x1 = xm(from.max(*to)).clamp(l.plot_left, l.plot_right);
                canvas.group(Part::Tint, || {
                    canvas.rect((x0, l.plot_top), (x1, l.plot_bottom), faint_fill(theme))
                })?;
            }
            Annotation::Reference { value, .. } if value.is_finite() => {
                let y = ym(*value);
                if y >= l.plot_top - 0.5 && y <= l.plot_bottom + 0.5 {
                    canvas.line((l.plot_left, y), (l.plot_right, y), theme.context, 1)?;
                }
            }
            _ => {}
        }
    }
    Ok(())
}

/// The placer's pick ([`crate::place::pick`]): the first candidate free of
/// marks and text when `first_free`, else the best-scoring one.
fn choose(cands: &[Rect], obstacles: &Obstacles, bounds: &Rect, first_free: bool) -> Option<Rect> {
    let how = if first_free {
        Pick::FirstFree
    } else {
        Pick::Fewest
    };
    place::pick(cands, obstacles, bounds, how)
}

/// Draws the texts of the notes: band names, reference names, end values
/// and callouts, avoiding every text already in `obstacles` and, as far as
/// possible, the line segments in it.
pub(crate) fn draw_over(on: LinePlot<'_>, obstacles: &mut Obstacles) -> Result<(), RenderError> {
    crate::moments::draw_over(on, obstacles)?;
    band_names(on, obstacles)?;
    reference_names(on, obstacles)?;
    end_values(on, obstacles)?;
    callouts(on, obstacles)
}

/// Band names at the top left inside the band, a row lower if taken.
fn band_names(on: LinePlot<'_>, obstacles: &mut Obstacles) -> Result<(), RenderError> {
    let (theme, chart, l) = (on.theme, on.chart, on.l);
    let xm = l.xmap(chart);
    let lh = line_height(theme.label_size);
    for a in &chart.annotations {
        let Annotation::Band {
            from,
            to,
            text: Some(text),
        } = a
        else {
            continue;
        };
        if !from.is_finite() || !to.is_finite() {
            continue;
        }
        let x0 = xm(from.min(*to)).clamp(l.plot_left, l.plot_right);
        let x1 = xm(from.max(*to)).clamp(l.plot_left, l.plot_right);
        // a name cut to the band's room
        let room = (x1 - x0 - 12.0).max(120.0).min(l.plot_width());
        put_name(on, obstacles, (text, room), |w| {
            (0..4)
                .map(|k| {
                    let top = l.plot_top + 6.0 + k as f64 * theme.label_step();
                    rect(x0 + 6.0, top, x0 + 6.0 + w, top + lh)
                })
                .collect()
        })?;
    }
    Ok(())
}

/// Reference names at the right end, above the line (else below, else at
/// the left end).
fn reference_names(on: LinePlot<'_>, obstacles: &mut Obstacles) -> Result<(), RenderError> {
    let (theme, chart, l) = (on.theme, on.chart, on.l);
    let ym = l.ymap(chart);
    let lh = line_height(theme.label_size);
    for a in &chart.annotations {
        let Annotation::Reference { value, text } = a else {
            continue;
        };
        if !value.is_finite() {
            continue;
        }
        let y = ym(*value);
        if y < l.plot_top - 0.5 || y > l.plot_bottom + 0.5 {
            continue;
        }
        obstacles
            .segments
            .push(((l.plot_left, y), (l.plot_right, y)));
        let above = y - 4.0 - lh;
        let below = y + 4.0;
        // a name cut to half the plot
        put_name(on, obstacles, (text, l.plot_width() / 2.0), |w| {
            vec![
                rect(l.plot_right - w, above, l.plot_right, above + lh),
                rect(l.plot_right - w, below, l.plot_right, below + lh),
                rect(l.plot_left, above, l.plot_left + w, above + lh),
                rect(l.plot_left, below, l.plot_left + w, below + lh),
            ]
        })?;
    }
    Ok(())
}

/// Cuts the name `full` to `room` and puts it at the first free spot of
/// `spots(width of the cut name)` inside the notes' area (else the best):
/// a cut is noted for the lint.
fn put_name(
    on: LinePlot<'_>,
    obstacles: &mut Obstacles,
    (full, room): (&str, f64),
    spots: impl FnOnce(f64) -> Vec<Rect>,
) -> Result<(), RenderError> {
    let size = on.theme.label_size;
    let text = metrics::ellipsize(&metrics::normalize(full), size, false, room);
    let cands = spots(text_width(&text, size, false));
    let area = on.l.note_bounds(on.theme);
    if let Some(r) = choose(&cands, obstacles, &area, true) {
        fit::note(on.canvas, full, std::slice::from_ref(&text))?;
        kit::put(on.canvas, obstacles, &plain(on.theme, &text, r))?;
    }
    Ok(())
}

/// Values at the first and last point of the focus lines (of every
/// visible line when none is in focus), as the plan wrote them.
fn end_values(on: LinePlot<'_>, obstacles: &mut Obstacles) -> Result<(), RenderError> {
    let (canvas, theme, chart, l) = (on.canvas, on.theme, on.chart, on.l);
    let (xm, ym) = (l.xmap(chart), l.ymap(chart));
    let lh = line_height(theme.label_size);
    let area = l.note_bounds(theme);
    if chart.end_labels {
        for s in &chart.series {
            if s.end_values.is_empty() {
                continue;
            }
            let finite = || {
                s.points.iter().filter_map(|p| {
                    p.y.filter(|y| y.is_finite() && p.x.is_finite())
                        .map(|y| (p.x, y))
                })
            };
            let ends = [finite().next(), finite().next_back()];
            let (color, bold) = if s.role == Role::Focus {
                (theme.accent, true)
            } else {
                (theme.context_text, false)
            };
            for (k, end) in ends.iter().enumerate() {
                let Some((x, y)) = *end else { continue };
                if k == 1 && ends[0] == ends[1] {
                    continue;
                }
                let Some(text) = s.end_values.get(k) else {
                    continue;
                };
                let w = text_width(text, theme.label_size, bold);
                let p = (xm(x), ym(y));
                let d = 8.0;
                let side = if k == 0 { p.0 + d } else { p.0 - d - w };
                let cands = [
                    rect(p.0 - w / 2.0, p.1 - d - lh, p.0 + w / 2.0, p.1 - d),
                    rect(p.0 - w / 2.0, p.1 + d, p.0 + w / 2.0, p.1 + d + lh),
                    rect(side, p.1 - d - lh, side + w, p.1 - d),
                    rect(side, p.1 + d, side + w, p.1 + d + lh),
                    rect(side, p.1 - lh / 2.0, side + w, p.1 + lh / 2.0),
                ];
                if let Some(r) = choose(&cands, obstacles, &area, false) {
                    kit::put(
                        canvas,
                        obstacles,
                        &Label {
                            text,
                            x: r.x0,
                            top: r.y0,
                            size: theme.label_size,
                            bold,
                            color,
                            align: Align::Start,
                        },
                    )?;
                }
            }
        }
    }
    Ok(())
}

/// Callouts, last: they have the most freedom. Each is drawn in a
/// [`Part::Note`] group that says when it could only go over data or
/// found no room (the lint warns, naming the frame).
fn callouts(on: LinePlot<'_>, obstacles: &mut Obstacles) -> Result<(), RenderError> {
    let (canvas, theme, chart, l) = (on.canvas, on.theme, on.chart, on.l);
    let (xm, ym) = (l.xmap(chart), l.ymap(chart));
    let area = l.note_bounds(theme);
    let plot_w = l.plot_width();
    let callouts = chart.annotations.iter().filter_map(|a| match a {
        Annotation::Callout { x, y, text } => Some((x, y, text)),
        _ => None,
    });
    for (k, (x, y, text)) in callouts.enumerate() {
        if !x.is_finite() || !y.is_finite() {
            continue;
        }
        let lines = metrics::wrap(
            text,
            theme.label_size,
            false,
            theme.label_scaled(CALLOUT_WIDTH).min(plot_w),
            CALLOUT_LINES,
        );
        if lines.is_empty() {
            continue;
        }
        let (w, h) = mark_notes::block_size(theme, &lines);
        let p = (xm(*x), ym(*y));
        // nearest free spot around the point (clear of lines, marks and
        // text) whose leader crosses no other line or mark (a leader over
        // a peak points at the wrong line), else the nearest free spot,
        // else the one crossing the fewest
        let cands = place::around(p, w, h, &[22.0, 44.0, 76.0, 120.0, 170.0]);
        let lead = |r: &Rect| place::leader(p, r);
        let chosen = place::pick_led(&cands, obstacles, &area, lead)
            .or_else(|| choose(&cands, obstacles, &area, true));
        mark_notes::put_callout(canvas, theme, obstacles, (k, text, &lines), p, chosen)?;
    }
    Ok(())
}

fn plain<'a>(theme: &Theme, text: &'a str, r: Rect) -> Label<'a> {
    Label {
        text,
        x: r.x0,
        top: r.y0,
        size: theme.label_size,
        bold: false,
        color: theme.muted,
        align: Align::Start,
    }
}
