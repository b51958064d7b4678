//! `marks-faint`: lines and bars too faint against the background.

use crescendo_diag::Severity;

use super::util::{look_span, rgb8};
use crate::colour::contrast_ratio;
use crate::{Doc, Finding, Input, Rule};

/// WCAG 2.1 SC 1.4.11 (Non-text Contrast): 3:1.
const MINIMUM: f64 = 3.0;

pub static RULE: Rule = Rule {
    name: "marks-faint",
    severity: Severity::Warning,
    summary: "lines or bars too faint against the background (WCAG 2.1 3:1)",
    doc: Doc {
        before: "accent \"#B8D8F0\"   # a pale blue: 1.5:1 on white",
        after: "accent \"#1D5FA8\"   # a deep blue: 6.4:1 on white",
        why: "Faint lines and bars fade on projectors and for readers with low vision, and the\n\
              spotlight stops standing out. WCAG 2.1 success criterion 1.4.11 (Non-text Contrast)\n\
              asks for 3:1 for the parts of graphics needed to understand the content; the rule\n\
              checks the accent (the spotlight) and the context grey. Let weight and colour, not\n\
              faintness, carry the emphasis.",
    },
    check,
};

fn check(input: &Input, out: &mut Vec<Finding>) {
    let t = input.theme;
    for (what, colour) in [
        ("spotlight (accent)", t.accent),
        ("context grey", t.context),
    ] {
        let ratio = contrast_ratio(rgb8(colour), rgb8(t.page));
        if ratio < MINIMUM {
            out.push(Finding {
                frame: None,
                span: look_span(input),
                label: format!(
                    "{what} {} is {ratio:.2}:1 on {}",
                    colour.hex(),
                    t.page.hex()
                ),
                message: format!("{what} marks are too faint: {ratio:.2}:1, below 3:1"),
                fix: "use a darker colour for the marks (WCAG 2.1 SC 1.4.11)".into(),
            });
        }
    }
}
