//! Helpers shared by the rules (not a rule).

use crescendo_plan::anchors::{FrameAnchors, Span};
use crescendo_plan::{Chart, FramePlan, Role};

use crate::colour::Rgb8;
use crate::Input;

/// Frames with their anchors, by index.
pub fn frames<'a>(
    input: &'a Input,
) -> impl Iterator<Item = (usize, &'a FramePlan, &'a FrameAnchors)> {
    input
        .plan
        .frames
        .iter()
        .zip(&input.anchors.frames)
        .enumerate()
        .map(|(i, (f, a))| (i, f, a))
}

/// Visible (not hidden) series or bars of a frame.
pub fn visible(frame: &FramePlan) -> usize {
    match &frame.chart {
        Chart::Line(l) => l.series.iter().filter(|s| s.role != Role::Hidden).count(),
        Chart::Bars(b) => b.bars.iter().filter(|b| b.role != Role::Hidden).count(),
    }
}

/// Focus series or bars of a frame.
pub fn focused(frame: &FramePlan) -> Vec<&str> {
    match &frame.chart {
        Chart::Line(l) => l
            .series
            .iter()
            .filter(|s| s.role == Role::Focus)
            .map(|s| s.name.as_str())
            .collect(),
        Chart::Bars(b) => b
            .bars
            .iter()
            .filter(|b| b.role == Role::Focus)
            .map(|b| b.label.as_str())
            .collect(),
    }
}

/// The story-wide place for a finding about the deck's look: the accent
/// statement if there is one, else the title.
pub fn look_span(input: &Input) -> Span {
    input
        .anchors
        .accent
        .clone()
        .or_else(|| input.anchors.title.clone())
        .unwrap_or(0..0)
}

/// A theme colour as an 8-bit colour for the colour science.
pub fn rgb8(c: crescendo_render::Rgb) -> Rgb8 {
    Rgb8 {
        r: c.0,
        g: c.1,
        b: c.2,
    }
}

/// The first line of the frame item that quotes `name`, or the headline.
pub fn quoting_span(frame: &FramePlan, fa: &FrameAnchors, name: &str) -> Span {
    let quotes = |field: &str| frame.templates.get(field).is_some_and(|t| t.contains(name));
    if quotes("takeaway") {
        fa.takeaway.clone().unwrap_or(fa.headline.clone())
    } else if quotes("notes") {
        fa.notes.clone().unwrap_or(fa.headline.clone())
    } else {
        fa.headline.clone()
    }
}
