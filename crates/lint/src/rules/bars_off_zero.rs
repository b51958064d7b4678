//! `bars-off-zero`: a bar axis that does not start at zero.

use crescendo_diag::Severity;
use crescendo_frame::Chart;

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "bars-off-zero",
    severity: Severity::Error,
    summary: "a bar chart's value axis does not start at zero",
    doc: Doc {
        before: concat!(
            "bars t: category team, value tickets\n",
            "y title \"Open tickets\"\n",
            "y range 50 to 600",
        ),
        after: concat!(
            "bars t: category team, value tickets\n",
            "y title \"Open tickets\"\n",
            "# no range: the bars start at zero (or show the gaps as `dots`, which need no zero)",
        ),
        why: "A bar encodes its value by its length. Cut the axis and the lengths no longer\n\
              compare: with the axis starting at 50, a bar for 60 next to one for 90 looks four\n\
              times shorter instead of a third shorter. Length is judged accurately only from a\n\
              common baseline (Cleveland & McGill 1984, position and length judgements), and a\n\
              truncated bar axis is one of the best-documented ways a chart misleads (common\n\
              practice).",
    },
    check,
};

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        if let Chart::Bars(b) = &f.chart {
            let [lo, hi] = b.value.domain;
            if lo > 0.0 || hi < 0.0 {
                out.push(Finding {
                    frame: Some(i),
                    span: a.range.clone().unwrap_or(a.chart.clone()),
                    label: "the bars' axis starts here, not at zero".into(),
                    message: "bars on an axis that does not start at zero exaggerate differences"
                        .into(),
                    fix:
                        "remove `y range`, or draw a dot plot or line for differences near the top"
                            .into(),
                });
            }
        }
    }
}
