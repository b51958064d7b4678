//! `text-faint`: text colours below the WCAG contrast minimum.

use crescendo_diag::Severity;

use super::util::{look_span, rgb8};
use crate::colour::contrast_ratio;
use crate::{Finding, Input, Rule};

/// WCAG 2.x SC 1.4.3 (AA): 4.5:1 for normal text, 3:1 for large text.
const NORMAL: f64 = 4.5;

pub static RULE: Rule = Rule::new("text-faint", Severity::Error, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    let t = input.theme;
    let page = rgb8(t.page);
    let texts = [
        ("headline", t.headline, 3.0),
        ("takeaway", t.takeaway, NORMAL),
        ("tick and source", t.muted, NORMAL),
        ("context label", t.context_text, NORMAL),
        ("accent (spotlight labels)", t.accent, NORMAL),
    ];
    for (what, colour, minimum) in texts {
        let ratio = contrast_ratio(rgb8(colour), page);
        if ratio < minimum {
            out.push(Finding {
                frame: None,
                span: look_span(input),
                label: format!(
                    "{what} text {} is {ratio:.2}:1 on {}",
                    colour.hex(),
                    t.page.hex()
                ),
                message: format!(
                    "{what} text is too faint: {ratio:.2}:1, below the {minimum}:1 minimum"
                ),
                fix: format!("use a darker colour for the {what} text (WCAG 2.x SC 1.4.3)"),
            });
        }
    }
}
