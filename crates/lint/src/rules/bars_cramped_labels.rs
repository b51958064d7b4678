//! `bars-cramped-labels`: vertical bars with long category names.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, Orientation};

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "bars-cramped-labels",
    severity: Severity::Warning,
    summary: "vertical bars with category names too long to sit under them",
    doc: Doc {
        before: "bars t: category team, value tickets, vertical   # long team names",
        after: concat!(
            "bars t: category team, value tickets, horizontal\n",
            "# (without either word such bars turn horizontal by themselves)",
        ),
        why: "Long or many names under narrow vertical bars get broken over lines or cut, and\n\
              readers tilt their heads to match names to bars. Horizontal bars give every name a\n\
              line of its own, left-aligned and level (common practice; crescendo never rotates\n\
              text).",
    },
    check,
};

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        let (Chart::Bars(b), Some(span)) = (&f.chart, &a.orientation) else {
            continue;
        };
        // Forced vertical where the planner's own rule turns them.
        if b.orientation == Orientation::Vertical
            && a.orientation_by_rule == Some(Orientation::Horizontal)
        {
            let longest = b
                .bars
                .iter()
                .map(|b| b.label.chars().count())
                .max()
                .unwrap_or(0);
            out.push(Finding {
                frame: Some(i),
                span: span.clone(),
                label: "forced vertical".into(),
                message: format!(
                    "{} vertical bars with names up to {longest} characters long will not fit their labels",
                    b.bars.len()
                ),
                fix: "remove `vertical` and let the bars run horizontally".into(),
            });
        }
    }
}
