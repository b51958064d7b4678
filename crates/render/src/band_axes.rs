//! The frame around a band chart (bars, stacked and grouped bars, dot
//! plots), for either orientation: where the axis titles, the value axis
//! and the category names go, and the plot between them. Bars and parts
//! lay out their frame here and then draw their marks through one
//! [`crate::band::Band`] transform.

use crate::axis::{self, Place};
use crate::band::Band;
use crate::canvas::Canvas;
use crate::kit::Obstacles;
use crate::layout::{self, map, max_width, Region};
use crate::metrics::{self, line_height, text_width};
use crate::theme::Theme;
use crate::RenderError;
use crescendo_frame::{Axis, Orientation};

/// Space between a label column and the plot.
pub(crate) const PAD: f64 = 12.0;

/// Where a band chart is drawn: the canvas, the theme and the chart's
/// region, which each orientation's drawer and its frame share.
#[derive(Clone, Copy)]
pub(crate) struct Surface<'a> {
    pub canvas: &'a Canvas,
    pub theme: &'a Theme,
    pub region: Region,
}

/// The frame of upright bands (vertical bars): value ticks in a column at
/// the left, the value title above, category names under the bands and
/// the category title under them.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Upright {
    /// The top of the plot area, below the value title.
    pub top: f64,
    /// The right edge of the tick column.
    pub tick_right: f64,
    /// The plot's left and right edges.
    pub plot: (f64, f64),
    /// The width of one category band.
    pub band: f64,
    /// The width and line count of a category name.
    pub name_width: f64,
    pub name_lines: usize,
    /// The top of the category names.
    pub names_top: f64,
}

/// The columns of upright bands, which depend on the region's left and
/// right edges and gutters only: the tick column's width, the plot's left
/// and right edges, a band's width and a category name's width and lines.
pub(crate) struct UprightColumns {
    pub tick_w: f64,
    pub plot: (f64, f64),
    pub band: f64,
    pub name_width: f64,
    pub name_lines: usize,
}

/// [`UprightColumns`] of [`upright`] bands.
pub(crate) fn upright_columns(
    theme: &Theme,
    region: Region,
    value: &Axis,
    names: &[&str],
    beside: f64,
) -> UprightColumns {
    let ticks = layout::visible_ticks(value);
    let tick_w = region.tick_column(max_width(
        ticks.iter().map(|(_, l)| l.as_str()),
        theme.label_size,
        false,
    ));
    let plot_left = if tick_w > 0.0 {
        region.left + tick_w + PAD
    } else {
        region.left
    };
    // the deck's label gutter holds the plot's right edge still
    let own = if beside > 0.0 {
        beside + layout::PART_NAMES_PAD
    } else {
        0.0
    };
    let plot_right = region.right - own.max(region.label_gutter);
    let band = (plot_right - plot_left) / names.len().max(1) as f64;
    let name_width = band - 8.0;
    let two_lines = names
        .iter()
        .any(|n| text_width(&metrics::normalize(n), theme.label_size, false) > name_width);
    let name_lines = if two_lines { 2 } else { 1 };

    UprightColumns {
        tick_w,
        plot: (plot_left, plot_right),
        band,
        name_width,
        name_lines,
    }
}

/// Lays out and titles upright bands: `names` are the category names,
/// `beside` the width of a column of labels kept right of the plot (none
/// when 0).
pub(crate) fn upright(
    on: Surface,
    obstacles: &mut Obstacles,
    value: &Axis,
    category_title: Option<&str>,
    names: &[&str],
    beside: f64,
) -> Result<Upright, RenderError> {
    let (canvas, theme, region) = (on.canvas, on.theme, on.region);
    let lh = line_height(theme.label_size);
    let step = theme.label_step();
    let UprightColumns {
        tick_w,
        plot: (plot_left, plot_right),
        band,
        name_width,
        name_lines,
    } = upright_columns(theme, region, value, names, beside);
    let top = axis::title_above(canvas, obstacles, theme, region, value.title.as_deref())?;
    let mut bottom = region.bottom;
    if let Some(title) = category_title {
        bottom -= lh;
        let plot = (plot_left, plot_right);
        axis::title_centred(canvas, obstacles, theme, title, plot, bottom)?;
        bottom -= 6.0;
    }
    Ok(Upright {
        top,
        tick_right: region.left + tick_w,
        plot: (plot_left, plot_right),
        band,
        name_width,
        name_lines,
        names_top: bottom - (name_lines - 1) as f64 * step - lh,
    })
}

impl Upright {
    /// The plot from `top` to `bottom` (values run upwards), the value ticks
    /// in the column and the gridlines across it; returns the bands (the
    /// counterpart of [`Lying::plot`]).
    pub fn plot_bands(
        &self,
        on: Surface,
        obstacles: &mut Obstacles,
        value: &Axis,
        vmap: impl Fn(f64) -> f64 + Copy,
        (top, bottom): (f64, f64),
    ) -> Result<Band, RenderError> {
        let (canvas, theme) = (on.canvas, on.theme);
        let (left, right) = self.plot;
        canvas.plot((left, top), (right, bottom))?;
        let size = theme.label_size;
        let place = Place::Column {
            right: self.tick_right,
        };
        axis::ticks(canvas, obstacles, theme, size, value, vmap, place)?;
        let zero = Some(vmap(0.0));
        let across = axis::Across::Rows;
        axis::gridlines(canvas, theme, value, vmap, left, right, across, zero)?;
        Ok(Band {
            orientation: Orientation::Vertical,
            start: left,
            size: self.band,
        })
    }
}

/// The frame of lying bands (horizontal bars, dot rows): the category
/// title above, an optional row of names under it, the value ticks and
/// title under the plot.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Lying {
    /// The top of the row of names under the category title.
    pub names_row_top: f64,
    /// The plot's top and bottom edges.
    pub plot_top: f64,
    pub plot_bottom: f64,
    /// The top of the value title, when there is one, and of the ticks.
    pub value_title_top: Option<f64>,
    pub tick_top: f64,
}

/// Lays out lying bands and draws the category title: `names_row` is the
/// height kept for a row of names above the plot (0 for none).
pub(crate) fn lying(
    on: Surface,
    obstacles: &mut Obstacles,
    (category_title, value_titled): (Option<&str>, bool),
    names_row: f64,
) -> Result<Lying, RenderError> {
    let (canvas, theme, region) = (on.canvas, on.theme, on.region);
    let lh = line_height(theme.label_size);
    let mut top = axis::title_above(canvas, obstacles, theme, region, category_title)?;
    let names_row_top = top;
    if names_row > 0.0 {
        top += names_row;
    }
    let (value_title_top, tick_top, plot_bottom) =
        axis::bottom_rows(region.bottom, lh, value_titled);
    Ok(Lying {
        names_row_top,
        plot_top: top,
        plot_bottom,
        value_title_top,
        tick_top,
    })
}

/// The category-name column left of lying bands and the plot right of it.
#[derive(Clone, Copy, Debug)]
pub(crate) struct NameColumn {
    /// The height of one band.
    pub band: f64,
    /// The column's width and how many lines a name may take.
    pub width: f64,
    pub lines: usize,
    /// The column's right edge (names are right-aligned on it).
    pub right: f64,
    /// The plot's left and right edges.
    pub plot: (f64, f64),
}

impl Lying {
    /// The name column for `names` (bold-measured when `bold`): at most
    /// [`layout::NAME_COLUMN_SHARE`] of the region, at least the deck's
    /// gutter; the plot ends at the deck's label gutter.
    pub fn names<'a>(
        &self,
        theme: &Theme,
        region: Region,
        names: impl ExactSizeIterator<Item = &'a str>,
        bold: bool,
    ) -> NameColumn {
        let band = (self.plot_bottom - self.plot_top) / names.len().max(1) as f64;
        let cap = (region.right - region.left) * layout::NAME_COLUMN_SHARE;
        let widest = max_width(names, theme.label_size, bold);
        let step = theme.label_step();
        let (width, lines) = crate::band::name_column(widest, (cap, region.gutter), band, step);
        let right = region.left + width;
        NameColumn {
            band,
            width,
            lines,
            right,
            plot: (right + PAD, region.right - region.label_gutter),
        }
    }

    /// Draws the plot right of the name column `col`, the value title and
    /// ticks under it (kept right of the region's left edge), `value`'s
    /// `domain` running `values` across, and gridlines down the plot (none
    /// at zero, where the baseline goes); returns the bands, one a name
    /// from the top of the plot.
    pub fn plot(
        &self,
        on: Surface,
        obstacles: &mut Obstacles,
        col: &NameColumn,
        (value, domain): (&Axis, [f64; 2]),
        (value_left, value_right): (f64, f64),
    ) -> Result<Band, RenderError> {
        let (canvas, theme) = (on.canvas, on.theme);
        let (plot_left, plot_right) = col.plot;
        let vmap = |v: f64| map(v, domain, value_left, value_right);
        canvas.plot((plot_left, self.plot_top), (plot_right, self.plot_bottom))?;
        let row = axis::Row {
            top: self.tick_top,
            lo: on.region.left,
            hi: plot_right,
            gap: 12.0,
            fit: axis::Fit::AsWritten,
            keep_left: false,
        };
        let under = axis::Under {
            title: self
                .value_title_top
                .map(|t| (t, plot_right - plot_left, (value_left + value_right) / 2.0)),
            row,
            across: (self.plot_top, self.plot_bottom),
            skip_zero: true,
        };
        axis::under(canvas, obstacles, theme, value, vmap, under)?;
        Ok(Band {
            orientation: Orientation::Horizontal,
            start: self.plot_top,
            size: col.band,
        })
    }
}
