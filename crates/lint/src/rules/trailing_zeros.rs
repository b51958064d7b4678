//! `trailing-zeros`: figures printed with zeros that carry no information.

use crescendo_diag::Severity;
use crescendo_frame::FramePlan;

use super::util::flag_quoted;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("trailing-zeros", Severity::Advice, check);

/// "20.0", "2.50%", "1.0k": a decimal point followed by digits ending in 0.
/// `separator` is the deck's decimal separator ("," in a `locale "de-DE"`
/// story, where "1.000" is a thousand).
fn has_trailing_zero(figure: &str, separator: &str) -> bool {
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

#[cfg(test)]
mod tests {
    #[test]
    fn trailing_zero_figures() {
        for (s, want) in [
            ("20.0%", true),
            ("2.50", true),
            ("1.0k", true),
            ("20%", false),
            ("2.5", false),
            ("100", false),
            ("Jul 2024", false),
        ] {
            assert_eq!(super::has_trailing_zero(s, "."), want, "{s}");
        }
        // a decimal comma: "12.300" is twelve thousand three hundred
        assert!(!super::has_trailing_zero("12.300", ","));
        assert!(super::has_trailing_zero("20,0 %", ","));
    }
}
