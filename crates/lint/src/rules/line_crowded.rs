//! `line-crowded`: a line with far more points than its plot is wide.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, Role};
use crescendo_look::display::Item;

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

/// Points closer than this (in px, on average) cannot be told apart.
const MIN_GAP: f64 = 3.0;

pub static RULE: Rule = Rule {
    name: "line-crowded",
    severity: Severity::Warning,
    summary: "a line with far more points than the chart is wide enough to show apart",
    doc: Doc {
        before: "line ledger: x day, y amount, series branch   # 540 days",
        after: concat!(
            "view monthly = ledger\n",
            "  | add month = month(day)\n",
            "  | by month, branch: amount = sum(amount)\n",
            "line monthly: x month, y amount, series branch"
        ),
        why: "A line whose points are closer than a few pixels becomes a band of noise: day-to-day\n\
              swings hide the movement the story is about, and several such lines tangle into one\n\
              grey mass. The drawing thins such a line to what the pixels can hold, but the reader\n\
              still sees the noise. Sum or average the days into weeks or months with a time bucket\n\
              (`month(day)`, `week_start(day)`) first (common practice).",
    },
    check,
};

/// The width in px the frame's lines and gridlines span.
fn plot_width(input: &Input, frame: usize) -> Option<f64> {
    let list = input.displays.get(frame)?;
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for item in list.flat() {
        if let Item::Polyline { points, .. } = item {
            for (x, _) in points {
                lo = lo.min(*x);
                hi = hi.max(*x);
            }
        }
    }
    (hi > lo).then_some(hi - lo)
}

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        let Chart::Line(l) = &f.chart else { continue };
        let most = l
            .series
            .iter()
            .filter(|s| s.role != Role::Hidden)
            .map(|s| s.points.len())
            .max()
            .unwrap_or(0);
        let Some(width) = plot_width(input, i) else {
            continue;
        };
        let fits = (width / MIN_GAP).floor() as usize;
        if most > fits {
            out.push(Finding {
                frame: Some(i),
                span: a.chart.clone(),
                label: format!("{most} points on a line about {width:.0} px wide"),
                message: format!(
                    "a line of {most} points is more than this chart can show apart (about {fits})"
                ),
                fix: "group the rows by week or month first, e.g. `| add month = month(day)` then `| by month: …`".into(),
            });
        }
    }
}
