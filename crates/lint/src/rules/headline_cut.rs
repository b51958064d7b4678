//! `headline-cut`: a headline too long for its two lines.

use crescendo_diag::Severity;
use crescendo_look::Part;

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("headline-cut", Severity::Warning, check);

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
