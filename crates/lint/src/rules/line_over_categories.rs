//! `line-over-categories`: a line drawn across categories with no order.

use crescendo_diag::Severity;

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("line-over-categories", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        if a.x_is_text && matches!(f.chart, crescendo_frame::Chart::Line(_)) {
            out.push(Finding {
                frame: Some(i),
                span: a.chart.clone(),
                label: "x holds text categories".into(),
                message: "a line across unordered categories suggests a trend that is not there"
                    .into(),
                fix: "draw bars instead: `bars VIEW: category COLUMN, value COLUMN`".into(),
            });
        }
    }
}
