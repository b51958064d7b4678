//! Helpers shared by the rules (not a rule).

use crescendo_frame::anchors::{FrameAnchors, Span};
use crescendo_frame::{Chart, FramePlan, Role};

use crate::colour::Rgb8;
use crate::{Finding, Input};

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

/// The named things of a frame's chart with their roles: series, bars,
/// parts, rows, points, slices or panels.
pub fn roles(chart: &Chart) -> Vec<(&str, Role)> {
    match chart {
        Chart::Line(l) => l.series.iter().map(|s| (s.name.as_str(), s.role)).collect(),
        Chart::Bars(b) => b.bars.iter().map(|b| (b.label.as_str(), b.role)).collect(),
        Chart::Parts(p) => p.parts.iter().map(|s| (s.name.as_str(), s.role)).collect(),
        Chart::Dots(d) if d.series.len() > 1 => {
            d.series.iter().map(|s| (s.name.as_str(), s.role)).collect()
        }
        Chart::Dots(d) => d.rows.iter().map(|r| (r.label.as_str(), r.role)).collect(),
        Chart::Scatter(s) => s
            .points
            .iter()
            .map(|p| (p.label.as_str(), p.role))
            .collect(),
        // Figures are the message themselves: nothing competes among them.
        Chart::Figures(_) => Vec::new(),
        Chart::Table(t) => t
            .rows
            .iter()
            .map(|r| (r.cells.first().map_or("", String::as_str), r.role))
            .collect(),
        Chart::Pie(p) => p
            .slices
            .iter()
            .map(|s| (s.label.as_str(), s.role))
            .collect(),
        Chart::Panels(p) => p
            .panels
            .iter()
            .map(|x| (x.title.as_str(), x.role))
            .collect(),
        Chart::Plugin(p) => p
            .request
            .roles
            .iter()
            .map(|(n, r)| {
                let role = match r {
                    crescendo_plugin::Role::Focus => Role::Focus,
                    _ => Role::Context,
                };
                (n.as_str(), role)
            })
            .chain(p.request.hidden.iter().map(|n| (n.as_str(), Role::Hidden)))
            .collect(),
    }
}

/// Visible (not hidden) series, bars, parts, rows, slices or panels.
pub fn visible(frame: &FramePlan) -> usize {
    roles(&frame.chart)
        .iter()
        .filter(|(_, r)| *r != Role::Hidden)
        .count()
}

/// The things in focus in a frame.
pub fn focused(frame: &FramePlan) -> Vec<&str> {
    let mut out: Vec<&str> = roles(&frame.chart)
        .into_iter()
        .filter(|(_, r)| *r == Role::Focus)
        .map(|(n, _)| n)
        .collect();
    if let Chart::Table(t) = &frame.chart {
        out.extend(
            t.rows
                .iter()
                .filter(|r| r.focus_cell.is_some() && r.role != Role::Focus)
                .map(|r| r.cells.first().map_or("", String::as_str)),
        );
    }
    // Points that share a label (a scatter's set name) are one spotlight.
    let mut seen = std::collections::BTreeSet::new();
    out.retain(|n| seen.insert(*n));
    out
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

/// Where a finding about frame `i` points: its headline, or the look's
/// place when the frame has no anchors.
/// Where a finding about colours points: the frame that draws them, or
/// the story's look (accent, theme, style) for the whole deck.
pub fn colour_span(input: &Input, frame: Option<usize>) -> Span {
    match frame {
        Some(i) => frame_span(input, i),
        None => look_span(input),
    }
}

pub fn frame_span(input: &Input, i: usize) -> Span {
    input
        .anchors
        .frames
        .get(i)
        .map_or_else(|| look_span(input), |fa| fa.headline.clone())
}

/// A theme colour as an 8-bit colour for the colour science.
pub fn rgb8(c: crescendo_look::Rgb) -> Rgb8 {
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

/// A finding on each figure a frame quotes that `flagged` picks, on the
/// text that quotes it; `said` gives the message and the fix from the
/// value's name and the figure.
pub fn flag_quoted(
    input: &Input,
    out: &mut Vec<Finding>,
    flagged: impl Fn(&FramePlan, &str) -> bool,
    said: impl Fn(&str, &str) -> (String, String),
) {
    for (i, f, a) in frames(input) {
        for (name, figure) in &f.quoted {
            if flagged(f, figure) {
                let (message, fix) = said(name, figure);
                out.push(Finding {
                    frame: Some(i),
                    span: quoting_span(f, a, name),
                    label: format!("`{name}` prints as {figure}"),
                    message,
                    fix,
                });
            }
        }
    }
}

/// The frames whose chart `is_form` picks and that show more than `max`
/// marks, with their anchors and the number shown.
pub fn crowded<'a>(
    input: &'a Input,
    is_form: fn(&Chart) -> bool,
    max: usize,
) -> impl Iterator<Item = (usize, &'a FrameAnchors, usize)> {
    frames(input).filter_map(move |(i, f, a)| {
        let n = visible(f);
        (is_form(&f.chart) && n > max).then_some((i, a, n))
    })
}
