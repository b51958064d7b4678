//! crescendo-render: draws [`FramePlan`]s as clean SVG with plotters and
//! assembles the self-contained HTML deck.
//!
//! The renderer owns all geometry: text measurement with the bundled DejaVu
//! Sans ([`metrics`]), margins, label placement and de-overlapping. It never
//! reads the story and never writes files; callers get strings back.
//!
//! Layout that positions the chart depends only on what every frame of a
//! build-up sequence shares (axes, all series and bar names, the tallest
//! headline block of the sequence), so axes stay still from frame to frame.

#![warn(missing_docs)]

mod annotate;
mod bars;
pub mod canvas;
mod dots;
mod figures;
mod html;
pub mod inspect;
mod kit;
pub mod layout;
mod line;
pub mod lttb;
pub mod metrics;
mod panels;
mod parts;
mod pie;
pub mod plugin;
mod scatter;
mod table;
pub mod theme;

use crescendo_plan::{Chart, DeckPlan, FramePlan};
use std::fmt;

pub use html::{render_deck_html, with_extra_script};
pub use lttb::lttb;
pub use theme::{Rgb, Theme};

/// Why a frame could not be drawn.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RenderError {
    /// Human-readable explanation.
    pub message: String,
}

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
    // numbers the renderer formats itself follow the deck's locale
    crescendo_data::locale::scoped(deck.conventions(), || draw_frame(deck, frame, plugins))
}

fn draw_frame(
    deck: &DeckPlan,
    frame: &FramePlan,
    plugins: Option<&dyn plugin::PluginDrawer>,
) -> Result<String, RenderError> {
    let theme = &theme::effective(deck)?;
    let mut plugin_description = None;
    let mut buf = String::new();
    {
        let canvas = canvas::Canvas::new(&mut buf)?;
        if let Some(page) = theme.background {
            // A dark theme or a house style with a page colour paints the
            // whole canvas first.
            canvas.rect(
                (0.0, 0.0),
                (f64::from(canvas::WIDTH), f64::from(canvas::HEIGHT)),
                page,
            )?;
        }
        let region = layout::draw_page(&canvas, theme, deck, frame)?;
        match &frame.chart {
            Chart::Line(chart) => line::draw(&canvas, theme, chart, region)?,
            Chart::Bars(chart) => bars::draw(&canvas, theme, chart, region)?,
            Chart::Parts(chart) => parts::draw(&canvas, theme, chart, region)?,
            Chart::Dots(chart) => dots::draw(&canvas, theme, chart, region)?,
            Chart::Scatter(chart) => scatter::draw(&canvas, theme, chart, region)?,
            Chart::Figures(chart) => figures::draw(&canvas, theme, chart, region)?,
            Chart::Table(chart) => table::draw(&canvas, theme, chart, region)?,
            Chart::Pie(chart) => pie::draw(&canvas, theme, chart, region)?,
            Chart::Panels(chart) => panels::draw(&canvas, theme, chart, region)?,
            Chart::Plugin(chart) => {
                plugin_description = plugin::draw(&canvas, theme, chart, region, plugins)?;
            }
        }
        canvas.finish()?;
    }
    // A house style's font stack and sizes, written as the style says.
    let buf = theme::restyle_svg(buf, theme);
    match plugin_description {
        // A plugin's own description of its panel says more than the
        // planner's generic one.
        Some(d) => {
            let mut f = frame.clone();
            f.description = match &frame.takeaway {
                Some(t) => format!("{d} Takeaway: {t}"),
                None => d,
            };
            Ok(with_text_alternative(&buf, &f))
        }
        None => Ok(with_text_alternative(&buf, frame)),
    }
}

/// Give the SVG a title (the headline) and a description (the frame's text
/// alternative generated from the data), exposed to screen readers as an
/// image with a name and a description.
fn with_text_alternative(svg: &str, frame: &FramePlan) -> String {
    let Some(start) = svg.find("<svg") else {
        return svg.to_string();
    };
    let Some(close) = svg[start..].find('>').map(|i| start + i) else {
        return svg.to_string();
    };
    let n = frame.number;
    let mut out = String::with_capacity(svg.len() + frame.description.len() + 256);
    out.push_str(&svg[..close]);
    out.push_str(&format!(
        " role=\"img\" aria-labelledby=\"frame-{n}-title\" aria-describedby=\"frame-{n}-desc\">\n<title id=\"frame-{n}-title\">{}</title>\n<desc id=\"frame-{n}-desc\">{}</desc>",
        html::escape(&frame.headline),
        html::escape(&frame.description)
    ));
    out.push_str(&svg[close + 1..]);
    out
}

#[cfg(test)]
mod forms_tests;
#[cfg(test)]
mod tests;
