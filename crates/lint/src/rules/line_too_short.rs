//! `line-too-short`: a line with only one or two points.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, Role};

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("line-too-short", Severity::Advice, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        let Chart::Line(l) = &f.chart else { continue };
        let lengths: Vec<usize> = l
            .series
            .iter()
            .filter(|s| s.role != Role::Hidden)
            .map(|s| s.points.iter().filter(|p| p.y.is_some()).count())
            .collect();
        if !lengths.is_empty() && lengths.iter().all(|&n| n < 3) {
            out.push(Finding {
                frame: Some(i),
                span: a.chart.clone(),
                label: "two points or fewer per line".into(),
                message: "a line through two points shows a single slope, not a trend".into(),
                fix: "draw bars for a comparison of two periods".into(),
            });
        }
    }
}
