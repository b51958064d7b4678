//! `lines-tangle`: more lines than a reader can follow.

use crescendo_diag::Severity;
use crescendo_frame::Chart;

use super::util::{frames, visible};
use crate::{Doc, Finding, Input, Rule};

/// More visible lines than this is a tangle.
const MAX_LINES: usize = 7;

pub static RULE: Rule = Rule {
    name: "lines-tangle",
    severity: Severity::Warning,
    summary: "more lines in one frame than a reader can follow",
    doc: Doc {
        flags: "A line chart showing more than 7 lines at once.",
        why: "Each extra line crosses the others; past a handful, readers can no longer follow\n\
              one line from start to end or match it to its label, and the direct labels at\n\
              the right crowd together (common practice; the limit of 7 echoes the usual\n\
              advice to keep distinct series few).",
        example:
            "frame \"All 12 districts\" {\n  line monthly: x month, y cases, series district\n}",
        instead:
            "Show a few lines and grey the rest with `hide` and `spotlight`, build the frame\n\
                  up over several frames, or group the small series with `top N ... rest`.",
    },
    check,
};

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        let n = visible(f);
        if matches!(f.chart, Chart::Line(_)) && n > MAX_LINES {
            out.push(Finding {
                frame: Some(i),
                span: a.headline.clone(),
                label: format!("{n} lines at once"),
                message: format!("this frame draws {n} lines; past {MAX_LINES} they tangle"),
                fix: "hide most lines, spotlight the one that matters, or fold small ones with `top N`".into(),
            });
        }
    }
}
