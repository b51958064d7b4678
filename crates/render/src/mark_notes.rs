//! Callouts on the marks of bars, stacked and grouped parts, dots, scatter
//! points and table cells (`callout` on any form but a line, whose notes are
//! [`crate::annotate`]). The form records where each mark was drawn
//! ([`crate::canvas::Canvas::point`]); once it has drawn everything, each
//! note goes through the label placer ([`crate::place`]) around its mark,
//! avoiding every text and data mark the form drew, inside the chart's
//! region, with a leader back to the mark when it had to move away.

use crate::canvas::Canvas;
use crate::kit::{self, Obstacles, Rect};
use crate::layout::Region;
use crate::metrics::{self, line_height, text_width};
use crate::place::{self, Pick};
use crate::theme::Theme;
use crate::RenderError;
use crescendo_frame::MarkNote;
use crescendo_look::display::{Item, NoteOf};

/// Widest a note's text may be before it wraps (at 16 px labels).
const WIDTH: f64 = 240.0;
/// Most lines a note may take.
const LINES: usize = 3;
/// Distances from the mark at which the placer tries the note.
const DISTANCES: [f64; 6] = [16.0, 32.0, 56.0, 90.0, 130.0, 180.0];

/// What the form drew, as the placer's obstacles: text boxes, the boxes of
/// bars, segments and dots, and data lines (2 px or more).
fn obstacles(canvas: &Canvas) -> Obstacles {
    let mut o = Obstacles::default();
    for item in canvas.drawn() {
        match item {
            Item::Text(t) => o.boxes.push(t.bounds()),
            Item::Rect { a, b, .. } => o.add_mark(a, b),
            Item::Dot { at, radius, .. } => {
                let r = f64::from(radius);
                o.add_mark((at.0 - r, at.1 - r), (at.0 + r, at.1 + r));
            }
            Item::Polyline { points, width, .. } if width >= 2 => o.add_polyline(&points),
            _ => {}
        }
    }
    o
}

/// Draws the notes of a frame on the marks its form recorded; a note whose
/// mark is not drawn (hidden) is left out. Each note is drawn in a
/// [`crescendo_look::Part::Note`] group that says when it could only go
/// over data or found no room (the lint warns, naming the frame).
pub(crate) fn draw(
    canvas: &Canvas,
    theme: &Theme,
    notes: &[MarkNote],
    region: Region,
) -> Result<(), RenderError> {
    if notes.is_empty() {
        return Ok(());
    }
    let mut obstacles = obstacles(canvas);
    let bounds = Rect {
        x0: region.left,
        y0: region.top,
        x1: region.right,
        y1: region.bottom,
    };
    for (k, note) in notes.iter().enumerate() {
        let Some(at) = canvas.point_of(note.item, note.part) else {
            continue;
        };
        let room = theme.label_scaled(WIDTH).min(bounds.x1 - bounds.x0);
        let lines = metrics::wrap(&note.text, theme.label_size, false, room, LINES);
        if lines.is_empty() {
            continue;
        }
        let (w, h) = block_size(theme, &lines);
        let cands = place::around(at, w, h, &DISTANCES);
        let chosen = place::pick(&cands, &obstacles, &bounds, Pick::FirstFree);
        put_callout(
            canvas,
            theme,
            &mut obstacles,
            (k, &note.text, &lines),
            at,
            chosen,
        )?;
    }
    Ok(())
}

/// The width and height of a note's wrapped lines in label text.
pub(crate) fn block_size(theme: &Theme, lines: &[String]) -> (f64, f64) {
    let w = (lines.iter())
        .map(|t| text_width(t, theme.label_size, false))
        .fold(0.0, f64::max);
    let h = (lines.len() - 1) as f64 * theme.label_step() + line_height(theme.label_size);
    (w, h)
}

/// Draws callout `k` (its `text` wrapped into `lines`) at `chosen`, with a
/// leader from near `at` to the nearest edge of the text block, in a
/// [`crescendo_look::display::Part::Note`] group that says when it covers
/// data or found no room; a text cut to fit is noted for the lint.
pub(crate) fn put_callout(
    canvas: &Canvas,
    theme: &Theme,
    obstacles: &mut Obstacles,
    (k, text, lines): (usize, &str, &[String]),
    at: (f64, f64),
    chosen: Option<Rect>,
) -> Result<(), RenderError> {
    if chosen.is_some() {
        crate::fit::note(canvas, text, lines)?;
    }
    let part = place::note_part(NoteOf::Callout(k), chosen, obstacles);
    canvas.group(part, || {
        let Some(r) = chosen else { return Ok(()) };
        if let Some((from, to)) = place::leader(at, &r) {
            canvas.line(from, to, theme.muted, 1)?;
            obstacles.segments.push((from, to));
        }
        let style = (theme.label_size, false, theme.takeaway);
        kit::put_lines(canvas, obstacles, lines, (&r, theme.label_step()), style)
    })
}
