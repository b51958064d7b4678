//! `frame-empty`: a frame with everything hidden.

use crescendo_diag::Severity;

use super::util::{frames, roles, visible};
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "frame-empty",
    severity: Severity::Warning,
    summary: "a frame hides every series or bar",
    doc: Doc {
        flags: "A frame whose chart shows nothing because every series or bar is hidden.",
        why: "An empty plot with axes but no data puzzles the audience; if the frame sets up\n\
              the axes before the data arrives, say so, otherwise it is a slip in the\n\
              build-up (common practice: every frame adds something to look at).",
        example:
            "frame \"Riders\" {\n  line monthly: x month, y riders, series route\n  hide all\n}",
        instead:
            "Show the first series in this frame (`show \"...\"`), or allow the rule with the\n\
                  reason the empty axes are intended.",
    },
    check,
};

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        // forms with nothing to hide (figures) are never empty
        if !roles(&f.chart).is_empty() && visible(f) == 0 {
            out.push(Finding {
                frame: Some(i),
                span: a.headline.clone(),
                label: "nothing is visible".into(),
                message: "every series of this frame is hidden".into(),
                fix: "`show` at least one series here".into(),
            });
        }
    }
}
