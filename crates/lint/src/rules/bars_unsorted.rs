//! `bars-unsorted`: nominal categories left in data order.

use crescendo_diag::Severity;
use crescendo_frame::Chart;

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "bars-unsorted",
    severity: Severity::Advice,
    summary: "bars over unordered categories are not sorted by value",
    doc: Doc {
        before: "bars t: category team, value tickets, ordered   # kept in the file's order",
        after: concat!(
            "bars t: category team, value tickets   # largest first\n",
            "# or keep `ordered` and allow the rule, saying why that order matters",
        ),
        why: "With categories that have no natural order, sorting by value turns a search into a\n\
              glance: the ranking, the largest and the smallest are read off directly, and\n\
              neighbours are the ones worth comparing (common practice). Bars drawn in the data's\n\
              order make the audience hunt for the ranking; keep that order only when it means\n\
              something (a scale, a sequence).",
    },
    check,
};

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
