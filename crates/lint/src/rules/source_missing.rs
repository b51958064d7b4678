//! `source-missing`: charts without a source note.

use crescendo_diag::Severity;

use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "source-missing",
    severity: Severity::Warning,
    summary: "the deck does not say where its numbers come from",
    doc: Doc {
        flags: "A story without a `source` line.",
        why: "A chart without its source cannot be checked or trusted, and a deck shown\n\
              again next quarter must say which export it was built from (common practice:\n\
              a source note at the bottom of every chart).",
        example: "story \"Riders grew\"   # no `source \"...\"`",
        instead:
            "Add `source \"Ticket scans, Kestrel Bay ferry service, 2019–2024\"`; it may quote\n\
                  values, e.g. the last month in the data.",
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
