//! `line-over-categories`: a line drawn across categories with no order.

use crescendo_diag::Severity;

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "line-over-categories",
    severity: Severity::Warning,
    summary: "a line joins categories that have no order",
    doc: Doc {
        before: "line t: x team, y tickets   # teams have no order",
        after:
            "bars t: category team, value tickets   # lines stay for time and other ordered values",
        why: "A line says \"from here to there\": readers see its slope as change between\n\
              neighbours. Between text categories (regions, products, teams) that slope means\n\
              nothing, and reordering the categories would draw a different line from the same\n\
              data (common practice: lines for continuous or ordered data, bars for categories).",
    },
    check,
};

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
