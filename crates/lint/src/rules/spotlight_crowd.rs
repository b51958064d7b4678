//! `spotlight-crowd`: several spotlights competing in one frame.

use crescendo_diag::Severity;

use super::util::{focused, frames};
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "spotlight-crowd",
    severity: Severity::Advice,
    summary: "more than one series or bar is spotlighted in a frame",
    doc: Doc {
        before: "spotlight \"North\", \"South\"",
        after: concat!(
            "spotlight \"North\"   # and \"South\" in the next frame\n",
            "# or, when the pair is the point, allow the rule and say so",
        ),
        why:
            "Colour and weight pop out pre-attentively only when one thing differs from the rest;\n\
              with several accented marks the eye has to search again, and none of them reads as\n\
              the point (common practice: one emphasis per frame).",
    },
    check,
};

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
