//! `marks-faint`: lines, bars, segments, slices and dots too faint against
//! the background.

use crescendo_diag::Severity;
use crescendo_look::Rgb;

use super::util::{colour_span, rgb8};
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
              checks the accent, both context greys of the theme and house style, and every\n\
              colour a frame actually draws as a mark: bars, stack segments, slices, dots,\n\
              start and total bars, data lines. Let weight and colour, not faintness, carry\n\
              the emphasis.",
    },
    check,
};

fn check(input: &Input, out: &mut Vec<Finding>) {
    let t = input.theme;
    let mut seen: Vec<Rgb> = Vec::new();
    for (what, colour) in [
        ("spotlight (accent)", t.accent),
        ("context grey", t.context),
        ("second context grey", t.context_light),
    ] {
        seen.push(colour);
        faint(input, None, what, colour, out);
    }
    for (i, list) in input.displays.iter().enumerate() {
        for mark in list.marks() {
            // page-coloured cuts between segments and slices are gaps
            if seen.contains(&mark.color) || mark.color == t.page {
                continue;
            }
            seen.push(mark.color);
            let what = if mark.fill { "fill" } else { "line" };
            faint(input, Some(i), what, mark.color, out);
        }
    }
}

fn faint(input: &Input, frame: Option<usize>, what: &str, colour: Rgb, out: &mut Vec<Finding>) {
    let page = input.theme.page;
    let ratio = contrast_ratio(rgb8(colour), rgb8(page));
    if ratio >= MINIMUM {
        return;
    }
    out.push(Finding {
        frame,
        span: colour_span(input, frame),
        label: format!("{what} {} is {ratio:.2}:1 on {}", colour.hex(), page.hex()),
        message: format!("{what} marks are too faint: {ratio:.2}:1, below 3:1"),
        fix: "use a darker colour for the marks (WCAG 2.1 SC 1.4.11)".into(),
    });
}
