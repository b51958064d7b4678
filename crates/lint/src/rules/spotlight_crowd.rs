//! `spotlight-crowd`: several spotlights competing in one frame.

use crescendo_diag::Severity;

use super::util::{focused, frames};
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("spotlight-crowd", Severity::Advice, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        let lit = focused(f);
        if lit.len() > 1 {
            out.push(Finding {
                frame: Some(i),
                span: a.spotlight.clone().unwrap_or(a.headline.clone()),
                label: format!("{} spotlights: {}", lit.len(), lit.join(", ")),
                message: format!("{} series compete for attention in one frame", lit.len()),
                fix: "spotlight one per frame, building up across frames".into(),
            });
        }
    }
}
