//! `axis-untitled`: an axis of numbers with no title.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, ScaleKind};

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("axis-untitled", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        if let Chart::Line(l) = &f.chart {
            if l.x.scale == ScaleKind::Linear && l.x.title.is_none() {
                out.push(Finding {
                    frame: Some(i),
                    span: a.chart.clone(),
                    label: "x runs over plain numbers".into(),
                    message: "the x axis shows numbers but says nothing about what they are".into(),
                    fix: "add `x title \"...\"` with the quantity and its unit".into(),
                });
            }
        }
    }
}
