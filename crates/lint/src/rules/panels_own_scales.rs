//! `panels-own-scales`: small multiples compared on different scales.

use crescendo_diag::Severity;
use crescendo_frame::Chart;

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("panels-own-scales", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        if let Chart::Panels(p) = &f.chart {
            if !p.common_scale {
                out.push(Finding {
                    frame: Some(i),
                    span: a.split.clone().unwrap_or(a.chart.clone()),
                    label: "each panel on its own scale".into(),
                    message: "panels on different scales look comparable but are not".into(),
                    fix: "remove `free`; use `trim` to let each panel keep its own extent".into(),
                });
            }
        }
    }
}
