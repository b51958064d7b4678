//! The frame plan: the one contract between what a story means and how it is
//! drawn. Pure data (serde), semantic rather than pixels: the renderer decides
//! geometry (text measurement, label placement, margins).

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

/// The whole deck, in frame order.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct DeckPlan {
    pub title: String,
    pub byline: Option<String>,
    /// Source note printed at the bottom left of every frame.
    pub source: Option<String>,
    /// One of the built-in themes (`crescendo_look::THEMES`).
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
    /// Every named number value, exact (the shortest digits that read back
    /// to the same double), beside its figure in `values`: machine outputs
    /// carry the exact number.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub exact: BTreeMap<String, f64>,
    /// Every claim and whether it held on this build.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub claims: Vec<ClaimPlan>,
    pub frames: Vec<FramePlan>,
    /// The audience's locale (`locale "de-DE"`): the renderer writes the
    /// numbers it formats itself (data labels) in it.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub locale: Option<String>,
    /// The first month of the fiscal year (`fiscal year starts July`: 7).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fiscal_start: Option<u32>,
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
    /// The room left before the claim flips, as a share: for `a > b` (and
    /// `>=`, `<`, `<=`) the distance between the sides over the size of
    /// the right-hand side; for `a about b within T` the part of the
    /// tolerance not used. Negative when it fails; the least of
    /// comparisons joined by `and`; `None` where no share can be given
    /// (`or`, `not`, `=`, texts, times, a zero right-hand side). Used by
    /// `crescendo review`; not written to the manifest.
    #[serde(skip)]
    pub margin: Option<f64>,
    /// The values the claim rests on, directly or through other values
    /// (for `crescendo review`; not written to the manifest).
    #[serde(skip)]
    pub rests_on: Vec<String>,
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
    /// Callouts on the marks of forms other than lines (bars, parts, dots,
    /// scatter points, table cells), in story order.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub mark_notes: Vec<MarkNote>,
    /// `footnote claims`: one line per claim the frame's texts rest on,
    /// with its operands' figures and whether it holds, as drawn in small
    /// type above the source note. Empty unless asked for.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub claim_notes: Vec<String>,
    pub chart: Chart,
    /// `cite VALUE`: values whose evidence is drawn on the chart.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub cites: Vec<crate::Cite>,
}

/// A callout on one mark of a chart that is not a line chart.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MarkNote {
    /// The bar, category, dot row, scatter point or table row, by its index
    /// in the chart's display order.
    pub item: usize,
    /// The part (stacked or grouped bars), series (dots) or column (table)
    /// within it; `None` for the whole bar, stack or row.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub part: Option<usize>,
    pub text: String,
}

/// What a frame draws.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "form", rename_all = "snake_case")]
pub enum Chart {
    Line(LineChart),
    Bars(BarChart),
    /// Stacked or grouped bars: several parts per category.
    Parts(PartsChart),
    /// A dot plot: dots on one common scale, one row per category.
    Dots(DotChart),
    Scatter(ScatterChart),
    /// One or two large figures with captions.
    Figures(FigureChart),
    Table(TableChart),
    Pie(PieChart),
    /// Small multiples: one panel per value of a key.
    Panels(PanelChart),
    /// A form drawn by a plugin named with `use plugin`.
    Plugin(PluginChart),
}

/// A chart a plugin draws: everything it needs except the plot area, which
/// the renderer fills in.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PluginChart {
    /// The name the story gave the plugin (`use plugin ... as NAME`).
    pub plugin: String,
    /// The plugin's name for itself, and its version.
    pub plugin_name: String,
    pub plugin_version: String,
    pub form: String,
    /// The request (its `area` is filled in by the renderer).
    pub request: crescendo_plugin::Request,
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
    /// `gridlines`: light lines across the plot at this axis's ticks (only
    /// ever set on the measure's axis; off by default).
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub grid: bool,
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
    /// Callouts, bands and reference lines, in story order.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub annotations: Vec<Annotation>,
    /// `label ends`: value labels at the first and last point of every
    /// focus series (and of every visible series when nothing is in focus).
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub end_labels: bool,
}

/// A note drawn on a chart, in data coordinates.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Annotation {
    /// A short text at a data point with a leader line to it.
    Callout { x: f64, y: f64, text: String },
    /// A light shaded band over an x range, with an optional label at its top.
    Band {
        from: f64,
        to: f64,
        text: Option<String>,
    },
    /// A line across the plot at a value of the measure, with its label.
    Reference { value: f64, text: String },
    /// A time the story names (`moment`): a dashed line across the plot at
    /// `from`, or a light band from `from` to `to` for a period, with a
    /// short label placed clear of the data.
    Moment {
        from: f64,
        #[serde(default, skip_serializing_if = "Option::is_none")]
        to: Option<f64>,
        text: String,
    },
}

/// Stacked parts share one bar; grouped parts stand side by side.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PartsMode {
    Stacked,
    Grouped,
}

/// Bars split into parts (segments of one bar, or bars side by side).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PartsChart {
    pub mode: PartsMode,
    pub orientation: Orientation,
    pub category_title: Option<String>,
    /// Starts at zero; for stacked bars it spans the largest total.
    pub value: Axis,
    /// The parts in stacking order (first = on the baseline), with roles.
    pub parts: Vec<Part>,
    /// Categories in display order; `values[i]` belongs to `parts[i]`.
    pub categories: Vec<PartCategory>,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Part {
    pub name: String,
    pub role: Role,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PartCategory {
    pub label: String,
    pub values: Vec<Option<f64>>,
    /// Formatted total (stacked) for a label at the end of the bar.
    pub total_label: String,
    pub role: Role,
}

/// A dot plot: categories down the side, dots along one value axis.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DotChart {
    pub category_title: Option<String>,
    pub value: Axis,
    /// The series of dots (one when the view has no series column).
    pub series: Vec<Part>,
    /// Rows in display order; `values[i]` belongs to `series[i]`.
    pub rows: Vec<DotRow>,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DotRow {
    pub label: String,
    pub values: Vec<Option<f64>>,
    pub role: Role,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ScatterChart {
    pub x: Axis,
    pub y: Axis,
    pub points: Vec<ScatterPoint>,
    /// The least-squares line `y = intercept + slope * x`, drawn over the
    /// x domain of the points, when asked for with `fit`.
    pub fit: Option<Fit>,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ScatterPoint {
    pub x: f64,
    pub y: f64,
    /// Direct label (drawn for focus points, and for every point when
    /// there are few).
    pub label: String,
    /// The group the point belongs to (`series COLUMN`), which `split`
    /// makes a panel of; empty without one.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub series: String,
    pub role: Role,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Fit {
    pub slope: f64,
    pub intercept: f64,
    /// Pearson correlation of the points, for the fit's label.
    pub r: Option<f64>,
    /// The fit's label as drawn (`fit: r = 0.82`).
    pub label: String,
}

/// One or two figures as large text: when a single number is the message.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FigureChart {
    pub figures: Vec<Figure>,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Figure {
    /// The figure as printed (quoted values resolved), e.g. "2.3×".
    pub text: String,
    pub caption: String,
    pub role: Role,
}

/// A table for looking up values.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TableChart {
    pub columns: Vec<TableColumn>,
    pub rows: Vec<TableRow>,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TableColumn {
    pub title: String,
    /// Numbers are right-aligned.
    pub numeric: bool,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TableRow {
    /// Formatted cells, one per column.
    pub cells: Vec<String>,
    pub role: Role,
    /// The cell (column index) in focus, for a spotlight on one cell.
    pub focus_cell: Option<usize>,
    /// Light shading that groups rows (alternate groups of rows).
    pub shaded: bool,
}

/// A pie: allowed, but linted (angles and areas compare poorly).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PieChart {
    /// Slices clockwise from twelve o'clock, largest first.
    pub slices: Vec<Slice>,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Slice {
    pub label: String,
    pub value: f64,
    /// Fraction of the total.
    pub share: f64,
    /// The share formatted as a percentage.
    pub share_label: String,
    pub role: Role,
}

/// Small multiples: the same chart once per value of a key.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PanelChart {
    /// The key the panels split by.
    pub key: String,
    /// One common scale in every panel (same units per pixel, ticks lined
    /// up). `false` only with `own scales`, which the lint flags.
    pub common_scale: bool,
    /// `trim`: each panel cut to its own extent, keeping the same units per
    /// pixel (panel heights then differ).
    pub trimmed: bool,
    /// Panels in display order (left to right, then down).
    pub panels: Vec<Panel>,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Panel {
    pub title: String,
    pub role: Role,
    /// A line or bar chart; its axes carry the panel's (common) scale.
    pub chart: Chart,
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
    /// `label ends`: the values at the first and the last point with a
    /// value, as drawn (formatted like the y ticks); empty without
    /// `label ends`, and one entry when both ends are the same point.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub end_values: Vec<String>,
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
