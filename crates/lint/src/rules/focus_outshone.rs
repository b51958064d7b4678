//! `focus-outshone`: context marks as strong as the spotlight, or stronger.

use crescendo_diag::Severity;
use crescendo_look::theme::{lightness, LIGHTNESS_STEP};
use crescendo_look::Rgb;

use super::util::colour_span;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("focus-outshone", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    let t = input.theme;
    let mut seen: Vec<Rgb> = vec![t.accent];
    for (what, grey) in [
        ("context grey", t.context),
        ("second context grey", t.context_light),
    ] {
        seen.push(grey);
        outshines(input, None, what, grey, out);
    }
    for (i, list) in input.displays.iter().enumerate() {
        let marks = list.marks();
        if !marks.iter().any(|m| m.color == t.accent) {
            continue;
        }
        for mark in marks {
            // page-coloured cuts between segments and slices are gaps
            if seen.contains(&mark.color) || mark.color == t.page {
                continue;
            }
            seen.push(mark.color);
            outshines(input, Some(i), "context mark", mark.color, out);
        }
    }
}

fn outshines(input: &Input, frame: Option<usize>, what: &str, grey: Rgb, out: &mut Vec<Finding>) {
    let t = input.theme;
    let step = t.recession(grey);
    if step >= LIGHTNESS_STEP {
        return;
    }
    let way = if t.light_page() { "lighter" } else { "dimmer" };
    out.push(Finding {
        frame,
        span: colour_span(input, frame),
        label: format!(
            "{what} {} at L* {:.1}, the accent {} at L* {:.1}",
            grey.hex(),
            lightness(grey),
            t.accent.hex(),
            lightness(t.accent)
        ),
        message: if step < 0.0 {
            let other = if t.light_page() { "darker" } else { "brighter" };
            format!(
                "the {what} {} is {:.1} L* {other} than the spotlight {}, so it outweighs it; it needs to be {LIGHTNESS_STEP:.0} L* {way}",
                grey.hex(),
                -step,
                t.accent.hex()
            )
        } else {
            format!(
                "the {what} {} is only {step:.1} L* {way} than the spotlight {}; it needs {LIGHTNESS_STEP:.0}",
                grey.hex(),
                t.accent.hex()
            )
        },
        fix: format!("make the accent stronger or the grey {way}, {LIGHTNESS_STEP:.0} L* apart"),
    });
}
