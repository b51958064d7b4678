//! `lines-tangle`: more lines than a reader can follow.

use crescendo_diag::Severity;
use crescendo_frame::Chart;

use super::util::crowded;
use crate::{Finding, Input, Rule};

/// More visible lines than this is a tangle.
const MAX_LINES: usize = 7;

pub static RULE: Rule = Rule::new("lines-tangle", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, a, n) in crowded(input, |c| matches!(c, Chart::Line(_)), MAX_LINES) {
        out.push(Finding {
            frame: Some(i),
            span: a.headline.clone(),
            label: format!("{n} lines at once"),
            message: format!("this frame draws {n} lines; past {MAX_LINES} they tangle"),
            fix: "hide most lines, spotlight the one that matters, or fold small ones with `top N`"
                .into(),
        });
    }
}
