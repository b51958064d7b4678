//! `headline-cut`: a headline too long for its two lines.

use crescendo_diag::Severity;
use crescendo_look::Part;

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "headline-cut",
    severity: Severity::Warning,
    summary: "a headline does not fit in two lines and is cut short",
    doc: Doc {
        before: "frame \"In every month of the year the North area recorded more cases than the South and the East together, and the gap widened in the second half of the year as well\" {",
        after: "frame \"North had the most cases every month\" {   # the detail goes in `takeaway`",
        why: "The headline is the sentence the audience reads first, often the only one. One that\n\
              needs more than two lines at headline size is cut with an ellipsis: it loses its\n\
              verb or its number; long, it pushes the chart down and competes with it (common\n\
              practice: one short sentence that states the point).",
    },
    check,
};

fn check(input: &Input, out: &mut Vec<Finding>) {
    // The headline as laid out with the effective theme (a house style may
    // change the size and margins): how many lines it needs.
    for (i, _, a) in frames(input) {
        let Some(list) = input.displays.get(i) else {
            continue;
        };
        let headline = list.groups(|p| matches!(p, Part::Headline { .. }));
        let Some((Part::Headline { needed }, _)) = headline.first() else {
            continue;
        };
        if *needed > 2 {
            out.push(Finding {
                frame: Some(i),
                span: a.headline.clone(),
                label: format!("needs {needed} lines"),
                message: "this headline is too long for two lines and will be cut off".into(),
                fix: "shorten it to the point and move the detail into `takeaway`".into(),
            });
        }
    }
}
