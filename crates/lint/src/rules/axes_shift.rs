//! `axes-shift`: an axis that changes within a build-up sequence.

use crescendo_diag::Severity;
use crescendo_frame::{Axis, Chart};

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "axes-shift",
    severity: Severity::Warning,
    summary: "an axis moves between frames of one build-up sequence",
    doc: Doc {
        flags: "A `y range` given part-way through a sequence of frames, so the measure's axis\n\
                rescales from one frame to the next while the chart stays the same.",
        why: "Across a build-up the audience compares each frame with the one before. If the\n\
              scale moves, unchanged data appears to jump, and real changes are hidden by the\n\
              rescaling (common practice: fix the axes over the whole sequence; crescendo\n\
              computes them over all of its frames for that reason).",
        example: "frame \"Context\" { line monthly: x month, y riders }\nframe \"Zoom in\" { y range 4000 to 6000 }",
        instead: "Give the range in the frame that starts the sequence, or start a new sequence\n\
                  with its own chart statement, so the change of scale is visible as a new chart.",
    },
    check,
};

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
