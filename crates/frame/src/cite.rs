//! `cite VALUE`: the evidence of a named value, drawn on the frame's chart
//! from the rows the value was computed from. The planner says which marks
//! (by their place in the chart's lists) and what to draw; the renderer
//! finds the marks' positions and places the figure.

use serde::{Deserialize, Serialize};

/// One cited value.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Cite {
    /// The value's name, as the story wrote it.
    pub value: String,
    /// The figure, printed as the frame's texts print the value.
    pub figure: String,
    pub shape: CiteShape,
}

/// What is drawn, by the value's function and the chart's form.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum CiteShape {
    /// A ratio or a difference of two marks: a bracket between them.
    Between { from: MarkRef, to: MarkRef },
    /// A change along a line: a from–to marker between two points.
    Change { from: MarkRef, to: MarkRef },
    /// A share: the marks of the part emphasised.
    Part { marks: Vec<MarkRef> },
    /// One row (max, min, last, a category's value): the mark emphasised.
    One { mark: MarkRef },
    /// Growth or slope: the compound or fitted path drawn lightly over the
    /// series, in data coordinates (x, y) of the chart's axes.
    Path { points: Vec<(f64, f64)> },
}

/// A mark of the chart by its place in the plan's lists: a bar
/// (`item` = bar, `part` 0), a part of stacked or grouped bars (category,
/// part), a dot (row, series), a point of a line (series, point), a
/// scatter point (point, 0) or a slice (slice, 0).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
pub struct MarkRef {
    pub item: usize,
    pub part: usize,
}
