//! `line-crowded`: a line with far more points than its plot is wide.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, Role};
use crescendo_look::display::Item;

use super::util::frames;
use crate::{Finding, Input, Rule};

/// Points closer than this (in px, on average) cannot be told apart.
const MIN_GAP: f64 = 3.0;

pub static RULE: Rule = Rule::new("line-crowded", Severity::Warning, check);

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
