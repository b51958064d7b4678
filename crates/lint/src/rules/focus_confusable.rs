//! `focus-confusable`: spotlight and context colours that colour-vision
//! deficiencies merge.

use crescendo_diag::Severity;

use super::util::{look_span, rgb8};
use crate::colour::{distinguishable, Deficiency};
use crate::{Finding, Input, Rule};

/// Smallest CIEDE2000 difference accepted between focus and context marks.
pub const THRESHOLD: f64 = 12.0;

pub static RULE: Rule = Rule::new("focus-confusable", Severity::Warning, check);

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
