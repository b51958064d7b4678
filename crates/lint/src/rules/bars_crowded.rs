//! `bars-crowded`: too many bars to compare.

use crescendo_diag::Severity;
use crescendo_frame::Chart;

use super::util::crowded;
use crate::{Finding, Input, Rule};

const MAX_BARS: usize = 15;

pub static RULE: Rule = Rule::new("bars-crowded", Severity::Advice, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, a, n) in crowded(input, |c| matches!(c, Chart::Bars(_)), MAX_BARS) {
        out.push(Finding {
            frame: Some(i),
            span: a.chart.clone(),
            label: format!("{n} bars"),
            message: format!("{n} bars are more than an audience can compare"),
            fix: "keep the largest with `| top 10 ... rest \"Other\"`".into(),
        });
    }
}
