//! `mention-unmarked`: the headline or takeaway names a series, category
//! or period the chart shows, yet the frame neither spotlights nor marks
//! it, so the reader must hunt for what the sentence is about.

use crescendo_diag::Severity;
use crescendo_frame::{Annotation, Chart, CiteShape, FramePlan, Role, ScaleKind};

use super::util::{focused, frames};
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("mention-unmarked", Severity::Advice, check);

const MONTHS: [&str; 12] = [
    "January",
    "February",
    "March",
    "April",
    "May",
    "June",
    "July",
    "August",
    "September",
    "October",
    "November",
    "December",
];

/// Whether `text` holds `name` as whole words (no letter or digit joined
/// to either end).
pub(super) fn names(text: &str, name: &str) -> bool {
    let name = name.trim();
    if name.chars().count() < 2 {
        return false;
    }
    let joined = |c: Option<char>| c.is_some_and(char::is_alphanumeric);
    text.match_indices(name).any(|(at, _)| {
        !joined(text[..at].chars().next_back()) && !joined(text[at + name.len()..].chars().next())
    })
}

/// The things of a chart a text may name, visible ones only, in kinds
/// (series; bars; parts and their categories; rows; points).
fn named_things(chart: &Chart) -> Vec<Vec<(&str, Role)>> {
    let kinds: Vec<Vec<(&str, Role)>> = match chart {
        Chart::Line(l) => vec![l.series.iter().map(|s| (s.name.as_str(), s.role)).collect()],
        Chart::Bars(b) => vec![b.bars.iter().map(|b| (b.label.as_str(), b.role)).collect()],
        Chart::Parts(p) => vec![
            p.parts.iter().map(|s| (s.name.as_str(), s.role)).collect(),
            (p.categories.iter())
                .map(|c| (c.label.as_str(), c.role))
                .collect(),
        ],
        Chart::Dots(d) => vec![
            d.series.iter().map(|s| (s.name.as_str(), s.role)).collect(),
            d.rows.iter().map(|r| (r.label.as_str(), r.role)).collect(),
        ],
        Chart::Scatter(s) => vec![s
            .points
            .iter()
            .map(|p| (p.label.as_str(), p.role))
            .collect()],
        _ => Vec::new(),
    };
    (kinds.into_iter())
        .map(|k| {
            (k.into_iter())
                .filter(|(n, r)| *r != Role::Hidden && !n.trim().is_empty())
                .collect()
        })
        .collect()
}

/// Months ("April 2023", "Apr 2023") a text names, as month indexes
/// (`year * 12 + month - 1`, the plan's month scale).
pub(super) fn months_named(text: &str) -> Vec<(f64, String)> {
    let words: Vec<&str> = text
        .split(|c: char| !c.is_alphanumeric())
        .filter(|w| !w.is_empty())
        .collect();
    let mut out = Vec::new();
    for w in words.windows(2) {
        let Some(m) = MONTHS
            .iter()
            .position(|full| w[0] == *full || (w[0].len() == 3 && full.starts_with(w[0])))
        else {
            continue;
        };
        let Some(y) = w[1]
            .parse::<i32>()
            .ok()
            .filter(|y| (1000..=9999).contains(y))
        else {
            continue;
        };
        out.push((f64::from(y * 12 + m as i32), format!("{y:04}-{:02}", m + 1)));
    }
    out
}

/// Whether a line chart marks the month `m`: a moment or band over it, a
/// callout in it, or it is where the data starts or ends ("since January
/// 2023" names the chart's own extent, not an event in it).
fn month_marked(chart: &Chart, m: f64) -> bool {
    let Chart::Line(l) = chart else { return false };
    let xs =
        || (l.series.iter()).flat_map(|s| s.points.iter().filter(|p| p.y.is_some()).map(|p| p.x));
    let first = xs().fold(f64::INFINITY, f64::min);
    let last = xs().fold(f64::NEG_INFINITY, f64::max);
    if (m - first).abs() < 0.5 || (m - last).abs() < 0.5 {
        return true;
    }
    l.annotations.iter().any(|a| match a {
        Annotation::Moment { from, to, .. } => match to {
            Some(to) => *from <= m && m <= *to,
            None => (*from - m).abs() < 0.5,
        },
        Annotation::Band { from, to, .. } => *from <= m && m <= *to,
        Annotation::Callout { x, .. } => (*x - m).abs() < 0.5,
        _ => false,
    })
}

/// The names of mark `item` (and its `part`) of a chart: a bar, a category
/// and its part, a dot row and its series, a line's series, a point.
fn mark_names(chart: &Chart, item: usize, part: Option<usize>) -> [Option<&str>; 2] {
    match chart {
        Chart::Bars(b) => [b.bars.get(item).map(|b| b.label.as_str()), None],
        Chart::Parts(p) => [
            p.categories.get(item).map(|c| c.label.as_str()),
            part.and_then(|j| p.parts.get(j)).map(|s| s.name.as_str()),
        ],
        Chart::Dots(d) => [
            d.rows.get(item).map(|r| r.label.as_str()),
            part.and_then(|j| d.series.get(j)).map(|s| s.name.as_str()),
        ],
        Chart::Line(l) => [l.series.get(item).map(|s| s.name.as_str()), None],
        Chart::Scatter(s) => [s.points.get(item).map(|p| p.label.as_str()), None],
        _ => [None, None],
    }
}

/// The names of the marks the frame's callouts point at and its `cite`s
/// draw evidence on (bars, categories, parts, rows, series, points).
fn noted(frame: &FramePlan) -> Vec<&str> {
    let notes = (frame.mark_notes.iter()).map(|n| (n.item, n.part));
    let cited = frame.cites.iter().flat_map(|c| match &c.shape {
        CiteShape::Between { from, to } | CiteShape::Change { from, to } => vec![*from, *to],
        CiteShape::Part { marks } => marks.clone(),
        CiteShape::One { mark } => vec![*mark],
        CiteShape::Path { .. } => Vec::new(),
    });
    let parted = matches!(frame.chart, Chart::Parts(_) | Chart::Dots(_));
    let cited = cited.map(|m| (m.item, parted.then_some(m.part)));
    (notes.chain(cited))
        .flat_map(|(item, part)| mark_names(&frame.chart, item, part))
        .flatten()
        .collect()
}

/// The spotlight that would mark `name` beside what is in focus already.
fn spotlight_with(frame: &FramePlan, name: &str) -> String {
    let list: Vec<String> = (focused(frame).into_iter())
        .chain([name])
        .map(|n| format!("\"{n}\""))
        .collect();
    format!("spotlight {}", list.join(", "))
}

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        let texts = [
            Some((f.headline.as_str(), &a.headline)),
            f.takeaway.as_deref().zip(a.takeaway.as_ref()),
        ];
        let things = named_things(&f.chart);
        let noted = noted(f);
        let months_axis = matches!(&f.chart, Chart::Line(l) if l.x.scale == ScaleKind::Months);
        for (text, span) in texts.into_iter().flatten() {
            let mut found: Vec<(String, String)> = Vec::new();
            // a text that names half the things or more speaks of them
            // together, not of one singled out
            for kind in &things {
                let named: Vec<&(&str, Role)> =
                    kind.iter().filter(|(n, _)| names(text, n)).collect();
                if kind.len() > 1 && named.len() * 2 < kind.len() {
                    for (name, role) in named {
                        if *role != Role::Focus && !noted.contains(name) {
                            found.push((format!("\"{name}\""), spotlight_with(f, name)));
                        }
                    }
                }
            }
            if months_axis {
                for (m, iso) in months_named(text) {
                    if !month_marked(&f.chart, m) {
                        let said = format!("the month {iso}");
                        found.push((said, format!("moment \"{iso}\" \"what happened\"")));
                    }
                }
            }
            found.dedup();
            for (what, fix) in found {
                out.push(Finding {
                    frame: Some(i),
                    span: span.clone(),
                    label: format!("names {what}"),
                    message: format!("the text names {what}, but the chart does not mark it"),
                    fix: format!("mark it: `{fix}` (or a `callout` on it)"),
                });
            }
        }
    }
}
