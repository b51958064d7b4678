//! `bars-off-zero`: a bar axis that does not start at zero.

use crescendo_diag::Severity;
use crescendo_frame::Chart;

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("bars-off-zero", Severity::Error, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        if let Chart::Bars(b) = &f.chart {
            let [lo, hi] = b.value.domain;
            if lo > 0.0 || hi < 0.0 {
                out.push(Finding {
                    frame: Some(i),
                    span: a.range.clone().unwrap_or(a.chart.clone()),
                    label: "the bars' axis starts here, not at zero".into(),
                    message: "bars on an axis that does not start at zero exaggerate differences"
                        .into(),
                    fix:
                        "remove `y range`, or draw a dot plot or line for differences near the top"
                            .into(),
                });
            }
        }
    }
}
