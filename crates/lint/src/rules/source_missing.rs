//! `source-missing`: charts without a source note.

use crescendo_diag::Severity;

use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("source-missing", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    if input
        .plan
        .source
        .as_deref()
        .is_none_or(|s| s.trim().is_empty())
    {
        out.push(Finding {
            frame: None,
            span: input.anchors.title.clone().unwrap_or(0..0),
            label: "no `source` in this story".into(),
            message: "the frames carry no source note".into(),
            fix: "add `source \"...\"` naming the data and its period".into(),
        });
    }
}
