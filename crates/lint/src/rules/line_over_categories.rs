//! `line-over-categories`: a line drawn across categories with no order.

use crescendo_diag::Severity;

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "line-over-categories",
    severity: Severity::Warning,
    summary: "a line joins categories that have no order",
    doc: Doc {
        flags: "A line chart whose x axis holds text categories (regions, products, teams)\n\
                rather than time or numbers.",
        why: "A line says \"from here to there\": readers see its slope as change between\n\
              neighbours. Between unordered categories that slope means nothing, and\n\
              reordering the categories would draw a different line from the same data\n\
              (common practice: lines for continuous or ordered data, bars for categories).",
        example: "frame \"Sales by region\" {\n  line by_region: x region, y sales\n}",
        instead: "Use `bars VIEW: category COLUMN, value COLUMN`; keep the line for time or\n\
                  other ordered values.",
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
