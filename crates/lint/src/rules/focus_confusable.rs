//! `focus-confusable`: spotlight and context colours that colour-vision
//! deficiencies merge.

use crescendo_diag::Severity;

use super::util::{look_span, rgb8};
use crate::colour::{distinguishable, Deficiency};
use crate::{Doc, Finding, Input, Rule};

/// Smallest CIEDE2000 difference accepted between focus and context marks.
pub const THRESHOLD: f64 = 12.0;

pub static RULE: Rule = Rule {
    name: "focus-confusable",
    severity: Severity::Warning,
    summary: "the spotlight colour is hard to tell from the grey under colour-vision deficiency",
    doc: Doc {
        before: "accent \"#9A7A9A\"   # a dusty mauve: close to the grey for deuteranopes",
        after:
            "accent \"#1D5FA8\"   # a deep blue: apart from the grey in lightness as well as hue",
        why:
            "Emphasis works only if every viewer sees the focus pop out. About 1 in 12 men and 1\n\
              in 200 women have a red-green colour-vision deficiency (common practice, from\n\
              memory). The rule simulates protanopia, deuteranopia and tritanopia with Machado,\n\
              Oliveira & Fernandes (2009) at full severity on linear RGB and compares the accent\n\
              with the context grey by CIEDE2000 (Sharma, Wu & Dalal 2005), flagging a difference\n\
              below 12 under normal vision or any of the three. A difference of about 1 is just\n\
              noticeable for large patches side by side; thin lines and small marks need several\n\
              times more (Szafir 2018 found size-dependent thresholds, from memory), so 12 is\n\
              chosen to keep the focus obvious, not merely noticeable.",
    },
    check,
};

fn name(d: Option<Deficiency>) -> &'static str {
    match d {
        None => "normal vision",
        Some(Deficiency::Protanopia) => "protanopia",
        Some(Deficiency::Deuteranopia) => "deuteranopia",
        Some(Deficiency::Tritanopia) => "tritanopia",
    }
}

fn check(input: &Input, out: &mut Vec<Finding>) {
    let t = input.theme;
    let d = distinguishable(rgb8(t.accent), rgb8(t.context));
    let (who, worst) = d.worst();
    if worst < THRESHOLD {
        out.push(Finding {
            frame: None,
            span: look_span(input),
            label: format!("ΔE00 {worst:.1} from the grey under {}", name(who)),
            message: format!(
                "the spotlight {} and the context grey {} differ by only ΔE00 {worst:.1} under {}",
                t.accent.hex(),
                t.context.hex(),
                name(who)
            ),
            fix: "choose an accent that differs from grey in lightness, not only in hue".into(),
        });
    }
}
