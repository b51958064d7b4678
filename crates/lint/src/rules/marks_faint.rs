//! `marks-faint`: lines, bars, segments, slices and dots too faint against
//! the background.

use crescendo_diag::Severity;
use crescendo_look::Rgb;

use super::util::{colour_span, rgb8};
use crate::colour::contrast_ratio;
use crate::{Finding, Input, Rule};

/// WCAG 2.1 SC 1.4.11 (Non-text Contrast): 3:1.
const MINIMUM: f64 = 3.0;

pub static RULE: Rule = Rule::new("marks-faint", Severity::Warning, check);

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
