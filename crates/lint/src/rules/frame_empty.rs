//! `frame-empty`: a frame with everything hidden.

use crescendo_diag::Severity;

use super::util::{frames, roles, visible};
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("frame-empty", Severity::Warning, check);

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
