//! `source-missing`: charts without a source note.

use crescendo_diag::Severity;

use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "source-missing",
    severity: Severity::Warning,
    summary: "the deck does not say where its numbers come from",
    doc: Doc {
        before: "story \"Cases by area in 2024\"   # and no `source` line",
        after: concat!(
            "story \"Cases by area in 2024\"\n",
            "source \"Case register, three areas, 2024 (invented)\"   # it may quote values too",
        ),
        why:
            "A chart without its source cannot be checked or trusted, and a deck shown again next\n\
              quarter must say which export it was built from (common practice: a source note at\n\
              the bottom of every chart).",
    },
    check,
};

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
