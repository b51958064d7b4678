//! `bars-cramped-labels`: vertical bars with long category names.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, Orientation};

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("bars-cramped-labels", Severity::Warning, check);

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
