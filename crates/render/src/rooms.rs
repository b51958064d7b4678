//! The plot's top and bottom edges, one pair for the whole deck.
//!
//! Each form keeps some room between the chart region's top and its plot
//! (an axis title, a row of names, a line for values above the bars) and
//! some below it (ticks, category names, an axis title). The deck's plot
//! sits as far down and ends as far up as the most any chart frame of the
//! deck needs, so every chart frame has the same plot rectangle: a form
//! gets a region whose top and bottom are moved in by the difference
//! between the deck's room and its own, and its own layout then puts the
//! plot exactly on the deck's edges.

use crate::axis;
use crate::band::VALUE_GAP;
use crate::band_axes;
use crate::layout::{self, Region};
use crate::metrics::line_height;
use crate::part_names;
use crate::scatter_grid;
use crate::theme::Theme;
use crescendo_frame::{Chart, DeckPlan, FramePlan, Orientation, PartsMode};

/// Room a form keeps above and below its plot.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
struct Rooms {
    top: f64,
    bottom: f64,
}

/// The region `frame`'s chart is drawn in: `region` with its top and
/// bottom moved in so that the chart's plot lands on the deck's plot
/// edges (unchanged for forms without a plot rectangle).
pub(crate) fn fit(deck: &DeckPlan, frame: &FramePlan, theme: &Theme, region: Region) -> Region {
    let Some(own) = rooms(&frame.chart, theme, region) else {
        return region;
    };
    let most = layout::grid_frames(deck, frame)
        .iter()
        .filter_map(|f| rooms(&f.chart, theme, region))
        .fold(Rooms::default(), |a, b| Rooms {
            top: a.top.max(b.top),
            bottom: a.bottom.max(b.bottom),
        });
    // never past the middle of the region, however much a form asks
    let half = (region.bottom - region.top) / 2.0;
    let top = region.top + (most.top.min(half) - own.top).max(0.0);
    let bottom = region.bottom - (most.bottom.min(half) - own.bottom).max(0.0);
    Region {
        top,
        bottom,
        ..region
    }
}

/// The room `chart` keeps above and below its plot in `region`; `None`
/// for forms without a plot rectangle (figures, tables, pies, plugins).
fn rooms(chart: &Chart, theme: &Theme, region: Region) -> Option<Rooms> {
    let lh = line_height(theme.label_size);
    let title = |t: bool| if t { lh + 8.0 } else { 0.0 };
    // ticks (and a title) under the plot, as [`axis::bottom_rows`] sets them
    let under = |titled: bool| -axis::bottom_rows(0.0, lh, titled).2;
    let rooms = match chart {
        Chart::Line(l) => Rooms {
            top: title(l.y.title.is_some()) + lh / 2.0,
            bottom: under(l.x.title.is_some()),
        },
        Chart::Scatter(s) => Rooms {
            top: title(s.y.title.is_some()) + lh / 2.0,
            bottom: under(s.x.title.is_some()),
        },
        Chart::Bars(b) if b.orientation == Orientation::Vertical => {
            let names: Vec<&str> = b.bars.iter().map(|b| b.label.as_str()).collect();
            let below = b.value.domain[0].min(b.value.domain[1]) < 0.0;
            let upright = Upright {
                value_titled: b.value.title.is_some(),
                category_titled: b.category_title.is_some(),
                names: &names,
                beside: 0.0,
                values_above: true,
                values_below: below,
            };
            upright.rooms(theme, region, &b.value)
        }
        Chart::Bars(b) => Rooms {
            top: title(b.category_title.is_some()),
            bottom: under(b.value.title.is_some()),
        },
        Chart::Parts(p) if p.orientation == Orientation::Vertical => {
            let stacked = p.mode == PartsMode::Stacked;
            let names: Vec<&str> = p.categories.iter().map(|c| c.label.as_str()).collect();
            let part_names = part_names::names(theme, p);
            let beside = if stacked {
                layout::max_width(
                    part_names.iter().map(String::as_str),
                    theme.label_size,
                    true,
                )
            } else {
                0.0
            };
            let below = p.value.domain[0].min(p.value.domain[1]) < 0.0;
            let upright = Upright {
                value_titled: p.value.title.is_some(),
                category_titled: p.category_title.is_some(),
                names: &names,
                beside,
                values_above: stacked,
                values_below: below && stacked,
            };
            upright.rooms(theme, region, &p.value)
        }
        Chart::Parts(p) => {
            let stacked = p.mode == PartsMode::Stacked;
            Rooms {
                top: title(p.category_title.is_some()) + if stacked { lh + 12.0 } else { 0.0 },
                bottom: under(p.value.title.is_some()),
            }
        }
        Chart::Dots(d) => Rooms {
            top: title(d.category_title.is_some())
                + if d.series.len() > 1 { lh + 6.0 } else { 0.0 },
            bottom: under(d.value.title.is_some()),
        },
        Chart::Panels(p) if scatter_grid::all_scatters(p) => {
            let first = p.panels.iter().find_map(|q| match &q.chart {
                Chart::Scatter(s) => Some(s),
                _ => None,
            })?;
            // each row: the panel title, then a whole scatter
            Rooms {
                top: lh + 6.0 + title(first.y.title.is_some()) + lh / 2.0,
                bottom: under(first.x.title.is_some()),
            }
        }
        Chart::Panels(p) => {
            let (measure, other) = crate::panels::titles(p);
            Rooms {
                top: title(measure.is_some()),
                bottom: if other.is_some() { lh + 6.0 } else { 0.0 },
            }
        }
        _ => return None,
    };
    Some(rooms)
}

/// What decides the rooms of upright bands (vertical bars and parts).
struct Upright<'a> {
    value_titled: bool,
    category_titled: bool,
    names: &'a [&'a str],
    beside: f64,
    /// A line of values (or totals) above the bars, else half a line.
    values_above: bool,
    /// A line of values under bars below zero.
    values_below: bool,
}

impl Upright<'_> {
    /// As [`band_axes::upright`] and the forms' plots under it lay them out.
    fn rooms(&self, theme: &Theme, region: Region, value: &crescendo_frame::Axis) -> Rooms {
        let lh = line_height(theme.label_size);
        let cols = band_axes::upright_columns(theme, region, value, self.names, self.beside);
        let title = if self.value_titled { lh + 8.0 } else { 0.0 };
        let above = if self.values_above {
            lh + VALUE_GAP
        } else {
            lh / 2.0 + 2.0
        };
        let category = if self.category_titled { lh + 6.0 } else { 0.0 };
        let names = (cols.name_lines - 1) as f64 * theme.label_step() + lh;
        let below = if self.values_below {
            lh + VALUE_GAP
        } else {
            0.0
        };
        Rooms {
            top: title + above,
            bottom: category + names + 10.0 + below,
        }
    }
}
