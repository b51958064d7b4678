//! Small multiples of a scatter: one panel per group of points on a grid
//! (two across for up to four panels, then three, then four), each a whole
//! scatter with its own fit on the axes the plan gave every panel. The
//! panels are cells of one size, so the same axes give the same units per
//! pixel and the eye can compare positions across panels. A hidden panel
//! keeps its cell empty; the focus panel's title is in the accent.

use crate::axis;
use crate::canvas::Canvas;
use crate::kit::Obstacles;
use crate::layout::{self, Region};
use crate::metrics::line_height;
use crate::panels::panel_title;
use crate::scatter;
use crate::theme::Theme;
use crate::{Drawn, RenderError};
use crescendo_frame::{Chart, PanelChart, Role};

/// Space between panels across and down.
const GAP_X: f64 = 40.0;
const GAP_Y: f64 = 20.0;

/// Panels per row for `n` panels: a near-square grid, at most four across.
fn columns(n: usize) -> usize {
    match n {
        0..=2 => n.max(1),
        3 | 4 => 2,
        5 | 6 | 9 => 3,
        _ => 4,
    }
}

/// Are these panels scatters (drawn here rather than as line or bar
/// panels)?
pub(crate) fn all_scatters(chart: &PanelChart) -> bool {
    !chart.panels.is_empty()
        && chart
            .panels
            .iter()
            .all(|p| matches!(p.chart, Chart::Scatter(_)))
}

pub(crate) fn draw(canvas: &Canvas, theme: &Theme, chart: &PanelChart, region: Region) -> Drawn {
    let n = chart.panels.len();
    let cols = columns(n);
    let rows = n.div_ceil(cols);
    // The grid subdivides the deck's plot rectangle: the first column's
    // plots start at the deck's left plot edge (the panels share their
    // axes, so their tick columns are one width), the last column's end at
    // its right edge; the rows' plots run from the deck's plot top to its
    // bottom ([`crate::rooms`]).
    let ticks = (layout::split_scatter_y(chart))
        .map(layout::visible_ticks)
        .unwrap_or_default();
    let tick_w = layout::max_width(
        ticks.iter().map(|(_, l)| l.as_str()),
        theme.label_size,
        false,
    );
    let lead = if tick_w > 0.0 {
        tick_w + axis::PAD
    } else {
        0.0
    };
    let start = if region.gutter > 0.0 {
        (region.left + region.gutter + axis::PAD - lead).max(region.left)
    } else {
        region.left
    };
    let end = region.right - region.label_gutter;
    let width = (end - start - GAP_X * (cols - 1) as f64) / cols as f64;
    let height = (region.bottom - region.top - GAP_Y * (rows - 1) as f64) / rows as f64;
    let lh = line_height(theme.label_size);
    if width < 120.0 || height < 3.0 * lh + 60.0 {
        return Err(RenderError::new(
            "too many scatter panels for the frame: split into fewer groups",
        ));
    }
    for (k, panel) in chart.panels.iter().enumerate() {
        if panel.role == Role::Hidden {
            continue;
        }
        let Chart::Scatter(sc) = &panel.chart else {
            continue;
        };
        let left = start + (k % cols) as f64 * (width + GAP_X);
        let top = region.top + (k / cols) as f64 * (height + GAP_Y);
        let mut obstacles = Obstacles::default();
        panel_title(
            canvas,
            theme,
            panel,
            (left, left + width),
            top,
            &mut obstacles,
        )?;
        let cell = Region {
            left,
            top: top + lh + 6.0,
            right: left + width,
            bottom: top + height,
            // panels size their own tick column, set left of `start`
            // above
            gutter: 0.0,
            label_gutter: 0.0,
        };
        scatter::draw(canvas, theme, sc, cell)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::columns;

    #[test]
    fn grids_are_near_square() {
        assert_eq!(columns(1), 1);
        assert_eq!(columns(2), 2);
        assert_eq!(columns(4), 2);
        assert_eq!(columns(6), 3);
        assert_eq!(columns(8), 4);
    }
}
