//! `trailing-zeros`: figures printed with zeros that carry no information.

use crescendo_diag::Severity;
use crescendo_frame::FramePlan;

use super::util::flag_quoted;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("trailing-zeros", Severity::Advice, check);

/// "20.0", "2.50%", "1.0k": a decimal point followed by digits ending in 0.
/// `separator` is the deck's decimal separator ("," in a `locale "de-DE"`
/// story, where "1.000" is a thousand).
pub(super) fn has_trailing_zero(figure: &str, separator: &str) -> bool {
    let core = figure.trim_end_matches(|c: char| !c.is_ascii_digit());
    match core.split_once(separator) {
        Some((_, frac)) => frac.chars().all(|c| c.is_ascii_digit()) && frac.ends_with('0'),
        None => false,
    }
}

fn check(input: &Input, out: &mut Vec<Finding>) {
    let plan = input.plan;
    let separator =
        crescendo_data::locale::Conventions::of(plan.locale.as_deref(), plan.fiscal_start)
            .locale
            .as_ref()
            .map_or_else(|| ".".to_string(), |l| l.decimal_separator());
    let zero_ended = |_: &FramePlan, figure: &str| has_trailing_zero(figure, &separator);
    flag_quoted(input, out, zero_ended, |name, figure| {
        (
            format!("\"{figure}\" ends in a zero that says nothing"),
            format!("quote `{name}` without `to N decimals`"),
        )
    });
}
