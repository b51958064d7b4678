//! `frame-empty`: a frame with everything hidden.

use crescendo_diag::Severity;

use super::util::{frames, roles, visible};
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "frame-empty",
    severity: Severity::Warning,
    summary: "a frame hides every series or bar",
    doc: Doc {
        before: "line by_area: x month, y cases, series area\nhide all",
        after: concat!(
            "line by_area: x month, y cases, series area\n",
            "hide all\n",
            "show \"North\"   # or allow the rule, saying the empty axes are meant",
        ),
        why:
            "An empty plot with axes but no data puzzles the audience: it looks like a fault. If\n\
              the frame sets up the axes before the data arrives, say so; otherwise it is a slip\n\
              in the build-up (common practice: every frame adds something to look at).",
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
