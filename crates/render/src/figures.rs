//! Figures: one or two numbers set very large, each with a caption under it,
//! left-aligned in the chart region, centred on its height, and side by
//! side when there are two. A
//! focus figure is in the accent, a context figure in the headline ink; a
//! hidden figure keeps its column empty.

use crate::canvas::{Align, Canvas, Label};
use crate::fit;
use crate::layout::Region;
use crate::metrics::{self, line_height, text_width};
use crate::theme::Theme;
use crate::Drawn;
use crescendo_frame::{FigureChart, Role};

/// Size of a figure when it fits its column, in px (bold). (120 cannot be
/// written exactly through plotters' `size / 1.24`; 118 can.)
pub(crate) const FIGURE_SIZE: f64 = 118.0;
/// Smallest size a long figure is shrunk to before it is cut.
const MIN_FIGURE_SIZE: f64 = 48.0;
/// Caption size in px with the default 24 px takeaway: captions are set
/// this much larger than the theme's takeaway ([`caption_size`]).
pub(crate) const CAPTION_SIZE: f64 = 26.0;
/// Line pitch of a caption beyond its size (32 px for 26 px captions).
const CAPTION_LEADING: f64 = 6.0;
const CAPTION_LINES: usize = 3;
/// Space between the two columns.
const COLUMN_GAP: f64 = 72.0;
/// Space between a figure and its caption.
const FIGURE_TO_CAPTION: f64 = 10.0;

/// The caption size for `theme`: 2 px over its takeaway size, lowered to
/// the nearest whole size the SVG states exactly (never below the
/// takeaway, which the SVG always states exactly).
pub(crate) fn caption_size(theme: &Theme) -> f64 {
    let mut size = theme.takeaway_size + (CAPTION_SIZE - crate::layout::TAKEAWAY_SIZE);
    while size > theme.takeaway_size && crate::svg::requested_size(size) / 1.24 != size {
        size -= 1.0;
    }
    size.max(theme.takeaway_size)
}

pub(crate) fn draw(canvas: &Canvas, theme: &Theme, chart: &FigureChart, region: Region) -> Drawn {
    let n = chart.figures.len();
    if n == 0 {
        return Ok(());
    }
    let width = region.right - region.left;
    let column = ((width - (n - 1) as f64 * COLUMN_GAP) / n as f64).max(1.0);
    // One size for every figure (the widest decides), in whole px so the
    // SVG states it exactly; it depends on the texts only, never on roles.
    let widest = chart
        .figures
        .iter()
        .map(|f| text_width(&metrics::normalize(&f.text), 1.0, true))
        .fold(0.0, f64::max);
    let mut size = if widest > 0.0 {
        (column / widest)
            .floor()
            .clamp(MIN_FIGURE_SIZE, FIGURE_SIZE)
    } else {
        FIGURE_SIZE
    };
    // The largest whole size at most that which the SVG states exactly.
    while size > MIN_FIGURE_SIZE && crate::svg::requested_size(size) / 1.24 != size {
        size -= 1.0;
    }
    let caption_size = caption_size(theme);
    let caption_step = caption_size + CAPTION_LEADING;
    let captions: Vec<Vec<String>> = chart
        .figures
        .iter()
        .map(|f| metrics::wrap(&f.caption, caption_size, false, column, CAPTION_LINES))
        .collect();
    let caption_lines = captions.iter().map(Vec::len).max().unwrap_or(0);
    let block = line_height(size)
        + if caption_lines > 0 {
            FIGURE_TO_CAPTION
                + (caption_lines - 1) as f64 * caption_step
                + line_height(caption_size)
        } else {
            0.0
        };
    // On the grid: the block's middle on the middle of the chart region
    // (the plot rectangle of the chart frames), so the figure sits where
    // the data sits on the frames around it and no band of the frame is
    // left empty.
    let top = region.top + ((region.bottom - region.top - block) / 2.0).max(0.0);
    for (i, (figure, caption)) in chart.figures.iter().zip(&captions).enumerate() {
        let color = match figure.role {
            Role::Hidden => continue,
            Role::Focus => theme.accent,
            Role::Context => theme.headline,
        };
        let left = region.left + i as f64 * (column + COLUMN_GAP);
        let text = fit::one(
            canvas,
            &metrics::normalize(&figure.text),
            (size, true),
            column,
        )?;
        canvas.text(&Label {
            text: &text,
            x: left,
            top,
            size,
            bold: true,
            color,
            align: Align::Start,
        })?;
        let caption_top = top + line_height(size) + FIGURE_TO_CAPTION;
        fit::note(canvas, &figure.caption, caption)?;
        for (k, line) in caption.iter().enumerate() {
            canvas.text(&Label {
                text: line,
                x: left,
                top: caption_top + k as f64 * caption_step,
                size: caption_size,
                bold: false,
                color: theme.takeaway,
                align: Align::Start,
            })?;
        }
    }
    Ok(())
}
