//! `headline-cut`: a headline too long for its two lines.

use crescendo_diag::Severity;
use crescendo_render::metrics;

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "headline-cut",
    severity: Severity::Warning,
    summary: "a headline does not fit in two lines and is cut short",
    doc: Doc {
        flags: "A headline that needs more than two lines at headline size, so the frame shows\n\
                it cut off with an ellipsis.",
        why: "The headline is the sentence the audience reads first, often the only one. Cut,\n\
              it loses its verb or its number; long, it pushes the chart down and competes with\n\
              it (common practice: one short sentence that states the point).",
        example: "frame \"In the third quarter of the year the share of follow-up appointments that ... \" { ... }",
        instead: "Shorten the headline to the point and move the detail into `takeaway`.",
    },
    check,
};

fn check(input: &Input, out: &mut Vec<Finding>) {
    // The effective theme: a house style may change the size and margins.
    let width = input.theme.text_column();
    let size = input.theme.headline_size;
    for (i, f, a) in frames(input) {
        let lines = metrics::wrap(&f.headline, size, true, width, usize::MAX);
        if lines.len() > 2 {
            out.push(Finding {
                frame: Some(i),
                span: a.headline.clone(),
                label: format!("needs {} lines", lines.len()),
                message: "this headline is too long for two lines and will be cut off".into(),
                fix: "shorten it to the point and move the detail into `takeaway`".into(),
            });
        }
    }
}
