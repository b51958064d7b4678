//! `axes-shift`: an axis that changes within a build-up sequence.

use crescendo_diag::Severity;
use crescendo_frame::{Axis, Chart};

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("axes-shift", Severity::Warning, check);

/// The measure's axis of a chart, if it has one.
fn value_axis(chart: &Chart) -> Option<&Axis> {
    match chart {
        Chart::Line(l) => Some(&l.y),
        Chart::Bars(b) => Some(&b.value),
        Chart::Parts(p) => Some(&p.value),
        Chart::Dots(d) => Some(&d.value),
        Chart::Scatter(s) => Some(&s.y),
        Chart::Panels(p) => p.panels.first().and_then(|x| value_axis(&x.chart)),
        Chart::Figures(_) | Chart::Table(_) | Chart::Pie(_) | Chart::Plugin(_) => None,
    }
}

fn check(input: &Input, out: &mut Vec<Finding>) {
    let all: Vec<_> = frames(input).collect();
    for w in all.windows(2) {
        let ((_, prev, _), (i, f, a)) = (w[0], w[1]);
        if prev.sequence != f.sequence {
            continue;
        }
        let (Some(pa), Some(na)) = (value_axis(&prev.chart), value_axis(&f.chart)) else {
            continue;
        };
        if pa.domain != na.domain {
            out.push(Finding {
                frame: Some(i),
                span: a.range.clone().unwrap_or(a.headline.clone()),
                label: "the axis changes here".into(),
                message: "the measure's axis rescales in the middle of a build-up sequence".into(),
                fix:
                    "set the range where the chart starts, or start a new chart for the zoomed view"
                        .into(),
            });
        }
    }
}
