//! Fitting a label into its room with the cut noted: a label inside a
//! chart that must be cut with an ellipsis is recorded as a
//! [`Part::Cut`] in the display list, so the lint reports it (`text-cut`)
//! and no label is ever cut silently.

use crate::canvas::Canvas;
use crate::metrics;
use crate::RenderError;
use crescendo_look::display::Part;

/// Notes that `full` was drawn cut when `shown` is not all of it.
pub(crate) fn note(canvas: &Canvas, full: &str, shown: &[String]) -> Result<(), RenderError> {
    let cut = shown.last().is_some_and(|l| l.ends_with('…')) && !full.trim_end().ends_with('…');
    if cut {
        let full = metrics::normalize(full);
        canvas.group(Part::Cut { full }, || Ok(()))?;
    }
    Ok(())
}

/// `text` on one line at most `width` wide, cut with an ellipsis when it
/// must be, the cut noted.
pub(crate) fn one(
    canvas: &Canvas,
    text: &str,
    (size, bold): (f64, bool),
    width: f64,
) -> Result<String, RenderError> {
    let shown = metrics::ellipsize(text, size, bold, width);
    note(canvas, text, std::slice::from_ref(&shown))?;
    Ok(shown)
}

/// `text` as drawn on at most `lines` lines `width` wide at `size` px:
/// ellipsized on one line, else wrapped (the last line ellipsized).
pub(crate) fn shown(size: f64, text: &str, width: f64, lines: usize, bold: bool) -> Vec<String> {
    if lines <= 1 {
        let t = metrics::ellipsize(&metrics::normalize(text), size, bold, width);
        if t.is_empty() {
            Vec::new()
        } else {
            vec![t]
        }
    } else {
        metrics::wrap(text, size, bold, width, lines)
    }
}

/// `text` on at most `lines` lines `width` wide ([`shown`]), the cut
/// noted.
pub(crate) fn lines(
    canvas: &Canvas,
    text: &str,
    (size, bold): (f64, bool),
    width: f64,
    lines: usize,
) -> Result<Vec<String>, RenderError> {
    let shown = shown(size, text, width, lines, bold);
    note(canvas, text, &shown)?;
    Ok(shown)
}
