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
    summary: "more than 7 lines in one frame, more than a reader can follow",
    doc: Doc {
        before: "line d: x month, y cases, series district   # 9 districts, all shown",
        after: concat!(
            "line d: x month, y cases, series district\n",
            "hide \"District 1\", \"District 2\"   # or build the lines up over frames",
        ),
        why:
            "Each extra line crosses the others; past a handful, readers can no longer follow one\n\
              line from start to end or match it to its label, and the direct labels at the right\n\
              crowd together (common practice; the limit of 7 echoes the usual advice to keep\n\
              distinct series few). Hide or grey the lines that are not the point, or group the\n\
              small series with `top N ... rest`.",
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
