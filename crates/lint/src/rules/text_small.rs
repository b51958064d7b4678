//! `text-small`: text too small to read when projected.

use crescendo_diag::Severity;

use crate::{Finding, Input, Rule};

/// Common practice for projected slides: nothing under 16 px on a 720 px
/// high frame, the size of the default source note
/// ([`crescendo_look::theme::SOURCE_SIZE`]; from memory of presentation
/// guidance).
const MIN: f64 = crescendo_look::theme::SOURCE_SIZE;

pub static RULE: Rule = Rule::new("text-small", Severity::Warning, check);

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
