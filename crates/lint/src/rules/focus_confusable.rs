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
        flags: "An accent colour whose difference from the context grey falls below\n\
                CIEDE2000 12 for normal vision or under simulated protanopia, deuteranopia\n\
                or tritanopia.",
        why: "Emphasis works only if every viewer sees the focus pop out. About 1 in 12 men\n\
              and 1 in 200 women have a red-green colour-vision deficiency (common\n\
              practice, from memory). The check simulates dichromacy with Machado, Oliveira\n\
              & Fernandes (2009) at full severity on linear RGB and compares colours with\n\
              CIEDE2000 (Sharma, Wu & Dalal 2005). A difference of about 1 is just\n\
              noticeable for large patches side by side; thin lines and small marks need\n\
              several times more (Szafir 2018 found size-dependent thresholds, from memory),\n\
              so 12 is chosen to keep the focus obvious, not merely noticeable.",
        example: "accent \"#9A7A9A\"   # a dusty mauve: close to the grey for deuteranopes",
        instead: "Pick an accent that differs from grey in lightness as well as hue (a dark\n\
                  blue or a deep orange), so it stands out without relying on red-green.",
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
