//! `bars-unsorted`: nominal categories left in data order.

use crescendo_diag::Severity;
use crescendo_frame::Chart;

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("bars-unsorted", Severity::Advice, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        let (Chart::Bars(b), Some(span)) = (&f.chart, &a.ordered) else {
            continue;
        };
        let values: Vec<f64> = b.bars.iter().filter_map(|b| b.value).collect();
        let falling = values.windows(2).all(|w| w[0] >= w[1]);
        let rising = values.windows(2).all(|w| w[0] <= w[1]);
        // Numbers or times as categories are ordinal by nature.
        if a.x_is_text && !falling && !rising {
            out.push(Finding {
                frame: Some(i),
                span: span.clone(),
                label: "keeps the data's order".into(),
                message: "these categories have no order of their own, and the bars are not sorted"
                    .into(),
                fix: "remove `ordered` to sort the bars by value".into(),
            });
        }
    }
}
