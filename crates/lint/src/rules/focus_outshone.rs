//! `focus-outshone`: context marks as strong as the spotlight, or stronger.

use crescendo_diag::Severity;
use crescendo_look::theme::{lightness, LIGHTNESS_STEP};
use crescendo_look::Rgb;

use super::util::colour_span;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "focus-outshone",
    severity: Severity::Warning,
    summary: "a context grey is not clearly lighter (dimmer on a dark page) than the spotlight",
    doc: Doc {
        before: "accent \"#D08A3C\"   # a light orange: the grey bars look darker than it",
        after: "accent \"#8E3005\"   # a deep rust: 20 L* darker than both greys",
        why: "The eye goes to the strongest mark first. On a light page the darkest mark is the\n\
              strongest, on a dark page the brightest; when a context grey is as dark as the\n\
              accent (as bright, on a dark page) the context bars dominate and the spotlight\n\
              disappears, and in greyscale print or for readers who cannot tell the hue it is\n\
              gone entirely. The rule asks every context grey of the theme and house style, and\n\
              every other colour a frame draws as a mark beside the accent, to sit at least 20\n\
              CIELAB L* (CIE 15) lighter than the accent on a light page and dimmer on a dark\n\
              page (the step is common practice, chosen by us).",
    },
    check,
};

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
