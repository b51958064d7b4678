//! `marks-contrast`: lines and bars too faint against the background.

use crescendo_diag::Severity;

use super::util::{look_span, rgb8};
use crate::colour::contrast_ratio;
use crate::{Doc, Finding, Input, Rule};

/// WCAG 2.1 SC 1.4.11 (Non-text Contrast): 3:1.
const MINIMUM: f64 = 3.0;

pub static RULE: Rule = Rule {
    name: "marks-contrast",
    severity: Severity::Warning,
    summary: "lines or bars are too faint against the background (WCAG 2.1 3:1)",
    doc: Doc {
        flags: "A mark colour (the accent for the spotlight, the grey for context) with a\n\
                contrast ratio below 3:1 against the background.",
        why: "WCAG 2.1 success criterion 1.4.11 (Non-text Contrast) asks for 3:1 for the\n\
              parts of graphics needed to understand the content. Lines and bars below it\n\
              fade on projectors and for readers with low vision.",
        example: "accent \"#B8D8F0\"   # a pale blue: lines and bars fade on white",
        instead: "Choose a darker accent; keep context grey at 3:1 or more and let weight and\n\
                  colour, not faintness, carry the emphasis.",
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
