//! The frame plan: the one contract between what a story means and how it is
//! drawn. Pure data (serde), semantic rather than pixels: the renderer decides
//! geometry (text measurement, label placement, margins).

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

/// Built-in theme names the renderer must support.
pub const THEMES: &[&str] = &["clear"];

/// The whole deck, in frame order.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DeckPlan {
    pub title: String,
    pub byline: Option<String>,
    /// Source note printed at the bottom left of every frame.
    pub source: Option<String>,
    /// One of [`THEMES`].
    pub theme: String,
    /// The sentence the story builds to.
    pub conclusion: Option<String>,
    /// `#RRGGBB` replacing the theme's accent (the story's house colour).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub accent: Option<String>,
    /// The house style named by `style "file.toml"`, validated.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub style: Option<crate::style::HouseStyle>,
    /// Every named value, formatted plainly (name → figure).
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub values: BTreeMap<String, String>,
    /// Every claim and whether it held on this build.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub claims: Vec<ClaimPlan>,
    pub frames: Vec<FramePlan>,
}

/// A checked claim.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ClaimPlan {
    /// The sentence the claim protects.
    pub sentence: String,
    /// The condition as written.
    pub condition: String,
    pub holds: bool,
    /// Each comparison with its operands' values.
    pub detail: Vec<String>,
}

/// One frame (slide).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FramePlan {
    /// 1-based position in the deck.
    pub number: usize,
    /// File-name-safe slug of the headline (`[a-z0-9-]`, at most 48 chars).
    pub slug: String,
    /// 1-based index of the build-up sequence this frame belongs to; a new
    /// chart statement starts a new sequence. Frames of one sequence share
    /// their axes exactly.
    pub sequence: usize,
    pub headline: String,
    pub takeaway: Option<String>,
    /// Speaker notes (not drawn in the SVG; carried to the deck).
    pub notes: Option<String>,
    pub source: Option<String>,
    /// A text alternative generated from the data, for screen readers.
    pub description: String,
    /// Values this frame's texts quote, with the figure as printed.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub quoted: BTreeMap<String, String>,
    /// The texts as written, for the fields that quote values
    /// (`headline`, `takeaway`, `notes`, `x_title`, `y_title`, `source`).
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub templates: BTreeMap<String, String>,
    /// Warnings drawn on the frame (a draft build with a failed claim).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub notices: Vec<String>,
    pub chart: Chart,
}

/// What a frame draws.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "form", rename_all = "snake_case")]
pub enum Chart {
    Line(LineChart),
    Bars(BarChart),
}

/// Emphasis role of a series or bar; the theme maps it to colour and weight.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Role {
    /// Drawn in the accent colour, heavier, with a bold label.
    Focus,
    /// Drawn grey and thin: there for comparison.
    Context,
    /// Not drawn in this frame, but still part of the scale domains.
    Hidden,
}

/// How positions map along an axis.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ScaleKind {
    /// Plain numbers.
    Linear,
    /// Days since 1970-01-01.
    Days,
    /// Months as `year * 12 + (month - 1)`.
    Months,
    /// Calendar years.
    Years,
    /// Text categories at 0, 1, 2, ...; each tick labels one category.
    Categories,
}

/// A positioned axis: domain and ticks are final; the renderer maps
/// `domain[0]..domain[1]` linearly onto the plot area.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Axis {
    pub title: Option<String>,
    pub scale: ScaleKind,
    pub domain: [f64; 2],
    pub ticks: Vec<Tick>,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Tick {
    pub value: f64,
    /// Already formatted: no trailing zeros, thousands separators.
    pub label: String,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LineChart {
    pub x: Axis,
    pub y: Axis,
    /// In a stable order (first appearance in the view).
    pub series: Vec<Series>,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Series {
    /// The series key value (or the measure name for a single series).
    pub name: String,
    /// Text of the direct label drawn at the end of the line.
    pub label: String,
    pub role: Role,
    /// Sorted by x. `y: None` is a missing value: the line breaks there.
    pub points: Vec<Point>,
}

#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Point {
    pub x: f64,
    pub y: Option<f64>,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Orientation {
    /// Bars rise from a horizontal baseline; categories along x.
    Vertical,
    /// Bars grow rightwards; categories down the left (for long names).
    Horizontal,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct BarChart {
    pub orientation: Orientation,
    pub category_title: Option<String>,
    /// The value axis; its domain always includes zero.
    pub value: Axis,
    /// In display order: left to right (vertical) or top to bottom
    /// (horizontal). Hidden bars keep their slot so nothing moves when they
    /// appear.
    pub bars: Vec<Bar>,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Bar {
    pub label: String,
    /// `None` for a missing value: the slot stays empty.
    pub value: Option<f64>,
    /// The value formatted for a direct label.
    pub value_label: String,
    pub role: Role,
}
