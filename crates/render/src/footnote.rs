//! The claims footnote (`footnote claims`): the plan's lines, in the
//! source note's small type, above the source note. The band it takes is
//! the same on every frame of the deck (one grid), as tall as the longest
//! footnote; a claim that fails is drawn in the accent colour.

use crate::canvas::{Align, Canvas, Label};
use crate::metrics;
use crate::theme::Theme;
use crate::RenderError;
use crescendo_frame::FramePlan;

/// Most footnote lines a frame draws; past that the last line counts the
/// claims left out.
const MAX_LINES: usize = 3;

/// The footnote's lines as drawn: each claim on one line (cut with an
/// ellipsis at the text column), at most [`MAX_LINES`].
pub(crate) fn lines(theme: &Theme, frame: &FramePlan) -> Vec<(String, bool)> {
    let fit = |s: &str| metrics::ellipsize(s, theme.source_size, false, theme.text_column());
    let notes = &frame.claim_notes;
    let mut out: Vec<(String, bool)> = (notes.iter().take(MAX_LINES))
        .map(|n| (fit(n), n.starts_with("Fails")))
        .collect();
    if notes.len() > MAX_LINES {
        let more = notes.len() - (MAX_LINES - 1);
        let failing = notes[MAX_LINES - 1..]
            .iter()
            .any(|n| n.starts_with("Fails"));
        out[MAX_LINES - 1] = (format!("… and {more} more claims (see deck.json)"), failing);
    }
    out
}

/// Lines the footnote band holds on every frame: the longest footnote of
/// the deck's frames.
pub(crate) fn band(theme: &Theme, frames: &[&FramePlan]) -> usize {
    frames
        .iter()
        .map(|f| lines(theme, f).len())
        .max()
        .unwrap_or(0)
}

/// Draws `frame`'s footnote from `top`, one line every `pitch` px.
pub(crate) fn draw(
    canvas: &Canvas,
    theme: &Theme,
    frame: &FramePlan,
    top: f64,
    pitch: f64,
) -> Result<(), RenderError> {
    let notes = &frame.claim_notes;
    for (i, (text, fails)) in lines(theme, frame).iter().enumerate() {
        // a claim cut to the text column is noted for the lint (the line
        // that counts the claims left out is not a claim)
        let counted = notes.len() > MAX_LINES && i == MAX_LINES - 1;
        if let Some(full) = notes.get(i).filter(|_| !counted) {
            crate::fit::note(canvas, full, std::slice::from_ref(text))?;
        }
        canvas.text(&Label {
            text,
            x: theme.margin_x,
            top: top + i as f64 * pitch,
            size: theme.source_size,
            bold: *fails,
            color: if *fails { theme.accent } else { theme.muted },
            align: Align::Start,
        })?;
    }
    Ok(())
}
