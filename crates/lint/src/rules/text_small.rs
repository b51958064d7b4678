//! `text-small`: text too small to read when projected.

use crescendo_diag::Severity;

use crate::{Doc, Finding, Input, Rule};

/// Common practice for projected slides: nothing under 16 px on a 720 px
/// high frame, the size of the default source note
/// ([`crescendo_look::theme::SOURCE_SIZE`]; from memory of presentation
/// guidance).
const MIN: f64 = crescendo_look::theme::SOURCE_SIZE;

pub static RULE: Rule = Rule {
    name: "text-small",
    severity: Severity::Warning,
    summary: "text is too small to read when the deck is projected",
    doc: Doc {
        before: "style \"small.toml\"   # its [sizes] set labels = 12",
        after: "style \"fine.toml\"   # labels = 20: 16 px or more for every text",
        why: "A projected frame is read from across a room: labels, tick values and source notes\n\
              set below 16 px on the 1280 × 720 frame become unreadable at the back, and the\n\
              audience stops reading the chart to squint at it (common practice: keep every text\n\
              large enough for the last row). For a deck meant only for print, allow the rule with\n\
              that reason.",
    },
    check,
};

fn check(input: &Input, out: &mut Vec<Finding>) {
    let t = input.theme;
    for (what, size) in [
        ("headline", t.headline_size),
        ("takeaway", t.takeaway_size),
        ("label", t.label_size),
        ("source note", t.source_size),
    ] {
        if size < MIN {
            out.push(Finding {
                frame: None,
                span: input
                    .anchors
                    .style
                    .clone()
                    .or_else(|| input.anchors.title.clone())
                    .unwrap_or(0..0),
                label: format!("{what} text at {size} px"),
                message: format!("{what} text at {size} px is too small to read when projected"),
                fix: "use 16 px or more, or allow this for a print-only deck".into(),
            });
        }
    }
}
