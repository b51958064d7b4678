//! crescendo-render: lays [`FramePlan`]s out as display lists, writes them
//! as clean SVG with plotters, and assembles the self-contained HTML deck.
//!
//! The renderer owns all geometry: text measurement with the bundled DejaVu
//! Sans ([`metrics`]), margins, label placement and de-overlapping. Layout
//! draws on a [`canvas::Canvas`] that records a [`DisplayList`]; [`svg`]
//! writes it. The renderer formats nothing (every drawn string is in the
//! plan), never reads the story and never writes files; callers get values
//! back.
//!
//! Layout that positions the chart depends only on what every frame of a
//! build-up sequence shares (axes, all series and bar names, the tallest
//! headline block of the sequence), so axes stay still from frame to frame.

#![warn(missing_docs)]

mod annotate;
mod axis;
mod band;
mod band_axes;
mod bars;
pub mod canvas;
mod cite;
mod deck_words;
mod dots;
mod figures;
mod fit;
mod footnote;
mod html;
pub mod inspect;
mod kit;
pub mod layout;
mod line;
mod line_layout;
pub mod lttb;
mod mark_notes;
mod moments;
mod panels;
mod part_names;
mod part_slots;
mod parts;
mod pie;
mod place;
pub mod plugin;
mod rooms;
mod scatter;
mod scatter_grid;
pub mod svg;
mod table;
pub mod theme;

use crescendo_frame::{Chart, DeckPlan, FramePlan};
use crescendo_look::display::Part;
use std::fmt;

pub use crescendo_look::display::DisplayList;
pub use crescendo_look::metrics;
pub use html::{
    escape as html_escape, policy_without_scripts, render_deck_html, render_deck_html_with,
    with_extra_script,
};
pub use lttb::lttb;
pub use theme::{Rgb, Theme};

/// Why a frame could not be drawn.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RenderError {
    /// Human-readable explanation.
    pub message: String,
}

/// What every drawer returns: nothing, or why the frame cannot be drawn.
pub(crate) type Drawn = Result<(), RenderError>;

impl RenderError {
    /// Builds an error from a message.
    pub fn new(message: impl Into<String>) -> Self {
        Self {
            message: message.into(),
        }
    }
}

impl fmt::Display for RenderError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for RenderError {}

/// Renders one frame of `deck` as a complete 1280×720 SVG document.
///
/// `deck` supplies the theme, the fallback source note and the other frames
/// of `frame`'s build-up sequence (so the layout is shared across it).
/// Identical input gives identical bytes.
pub fn render_frame(deck: &DeckPlan, frame: &FramePlan) -> Result<String, RenderError> {
    render_frame_with(deck, frame, None)
}

/// [`render_frame`] for decks with plugin charts: `plugins` draws them.
pub fn render_frame_with(
    deck: &DeckPlan,
    frame: &FramePlan,
    plugins: Option<&dyn plugin::PluginDrawer>,
) -> Result<String, RenderError> {
    let theme = theme::effective(deck)?;
    let list = lay_out(deck, frame, &theme, plugins)?;
    let description = list.description.as_deref().unwrap_or(&frame.description);
    svg::write(&list, &theme, frame.number, &frame.headline, description)
}

/// Lays one frame out without writing SVG: every item it draws, positioned,
/// with its role ([`DisplayList`]). [`render_frame_with`] writes exactly
/// this list as SVG.
pub fn display_list(
    deck: &DeckPlan,
    frame: &FramePlan,
    plugins: Option<&dyn plugin::PluginDrawer>,
) -> Result<DisplayList, RenderError> {
    lay_out(deck, frame, &theme::effective(deck)?, plugins)
}

fn lay_out(
    deck: &DeckPlan,
    frame: &FramePlan,
    theme: &Theme,
    plugins: Option<&dyn plugin::PluginDrawer>,
) -> Result<DisplayList, RenderError> {
    let mut plugin_description = None;
    let canvas = canvas::Canvas::new();
    if let Some(page) = theme.background {
        // A dark theme or a house style with a page colour paints the
        // whole canvas first.
        canvas.group(Part::Page, || {
            canvas.rect(
                (0.0, 0.0),
                (f64::from(canvas::WIDTH), f64::from(canvas::HEIGHT)),
                page,
            )
        })?;
    }
    let region = layout::draw_page(&canvas, theme, deck, frame)?;
    canvas.group(Part::Chart, || {
        // the deck's plot top and bottom ([`rooms`])
        let plot_region = rooms::fit(deck, frame, theme, region);
        match &frame.chart {
            Chart::Line(chart) => line::draw(&canvas, theme, chart, plot_region)?,
            Chart::Bars(chart) => bars::draw(&canvas, theme, chart, plot_region)?,
            Chart::Parts(chart) => parts::draw(&canvas, theme, chart, plot_region)?,
            Chart::Dots(chart) => dots::draw(&canvas, theme, chart, plot_region)?,
            Chart::Scatter(chart) => scatter::draw(&canvas, theme, chart, plot_region)?,
            Chart::Figures(chart) => figures::draw(&canvas, theme, chart, plot_region)?,
            Chart::Table(chart) => table::draw(&canvas, theme, chart, plot_region)?,
            Chart::Pie(chart) => pie::draw(&canvas, theme, chart, plot_region)?,
            Chart::Panels(chart) if scatter_grid::all_scatters(chart) => {
                scatter_grid::draw(&canvas, theme, chart, plot_region)?
            }
            Chart::Panels(chart) => panels::draw(&canvas, theme, chart, plot_region)?,
            Chart::Plugin(chart) => {
                plugin_description = plugin::draw(&canvas, theme, chart, plot_region, plugins)?;
            }
        }
        mark_notes::draw(&canvas, theme, &frame.mark_notes, region)?;
        cite::draw(&canvas, theme, frame, region)?;
        Ok(())
    })?;
    // A plugin's own description of its panel says more than the planner's
    // generic one.
    let description = plugin_description.map(|d| match &frame.takeaway {
        Some(t) => format!("{d} Takeaway: {t}"),
        None => d,
    });
    Ok(DisplayList {
        items: canvas.finish(),
        description,
    })
}

#[cfg(test)]
mod forms_tests;
#[cfg(test)]
mod tests;
