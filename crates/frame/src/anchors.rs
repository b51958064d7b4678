//! Where things were said in the story, for diagnostics about a finished
//! plan (the clarity lint). Kept beside the plan, not in it: the renderer
//! never needs story positions.

use std::ops::Range;

use crate::model::Orientation;

/// A byte range in the story source.
pub type Span = Range<usize>;

/// `allow RULE "reason"`.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Allowance {
    pub rule: String,
    pub rule_span: Span,
    pub reason: String,
}

/// Positions that concern one frame.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct FrameAnchors {
    /// The whole `frame` item.
    pub frame: Span,
    pub headline: Span,
    /// The chart statement of the frame's build-up sequence.
    pub chart: Span,
    /// The view the chart draws.
    pub view: String,
    /// `ordered`, when given.
    pub ordered: Option<Span>,
    /// `horizontal` or `vertical`, when given.
    pub orientation: Option<Span>,
    /// For bars: the orientation the planner's rule picks for their
    /// category names when neither `horizontal` nor `vertical` is given.
    pub orientation_by_rule: Option<Orientation>,
    /// The spotlight statement in effect.
    pub spotlight: Option<Span>,
    pub x_title: Option<Span>,
    pub y_title: Option<Span>,
    /// The `y range` statement in effect.
    pub range: Option<Span>,
    /// The `split` statement in effect.
    pub split: Option<Span>,
    /// The `gridlines` statement in effect (none after `gridlines off`).
    pub gridlines: Option<Span>,
    pub takeaway: Option<Span>,
    pub notes: Option<Span>,
    /// Allowances written inside this frame.
    pub allows: Vec<Allowance>,
    /// The chart's measure counts rows (`count` in its view).
    pub measure_is_count: bool,
    /// A line over text categories.
    pub x_is_text: bool,
    /// `cite VALUE` statements in effect: the value's name and where.
    pub cites: Vec<(String, Span)>,
    /// `callout` statements in effect, in the order written (the renderer
    /// numbers a frame's callouts in this order).
    pub callouts: Vec<Span>,
    /// `moment` statements in effect, in the order written.
    pub moments: Vec<Span>,
}

/// Positions that concern the whole story.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Anchors {
    pub title: Option<Span>,
    pub conclusion: Option<Span>,
    pub source: Option<Span>,
    pub byline: Option<Span>,
    pub accent: Option<Span>,
    /// The `style "file"` statement.
    pub style: Option<Span>,
    /// Story-wide allowances.
    pub allows: Vec<Allowance>,
    /// One entry per planned frame, in order.
    pub frames: Vec<FrameAnchors>,
    /// The end of the file (for findings about something missing).
    pub end: Span,
}
