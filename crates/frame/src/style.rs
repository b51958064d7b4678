//! The validated contents of a house-style file (`style "house.toml"`):
//! what the renderer and the lint apply over the theme. Parsing and
//! validation (located errors in the TOML) live in the planner
//! (`crescendo_plan::style`).

use serde::{Deserialize, Serialize};

/// The smallest text size a style may set. Below 14 px text is hard to read
/// when projected; the lint's `text-small` rule says so (a print deck may
/// allow it with a reason).
pub const MIN_TEXT_SIZE: f64 = 10.0;
/// The largest text size a style may set.
pub const MAX_TEXT_SIZE: f64 = 72.0;

/// The validated contents of a house-style file. Colours are `#RRGGBB`
/// (upper-case); sizes and margins are px.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct HouseStyle {
    /// The style file as named (relative to the story).
    pub file: String,
    /// The CSS font stack for the SVG text, ready to write
    /// (`'DejaVu Sans', Verdana, sans-serif`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub font_family: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub headline_size: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub takeaway_size: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub label_size: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub source_size: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub accent: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub page: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub headline: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub takeaway: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub small_text: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub context: Option<String>,
    /// The second, lighter context grey, `#RRGGBB`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub context_light: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub context_labels: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub baseline: Option<String>,
    /// Gridlines (`gridlines`), `#RRGGBB`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub grid: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub margin_sides: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub margin_top: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub margin_bottom: Option<f64>,
}
