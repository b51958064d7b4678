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
        flags: "Bars over text categories drawn in the data's order (`ordered`) when that\n\
                order is not by value.",
        why: "With categories that have no natural order, sorting by value turns a search\n\
              into a glance: the ranking, the largest and the smallest are read off\n\
              directly, and neighbours are the ones worth comparing (common practice).\n\
              Keep the data order only when it means something (a scale, a sequence).",
        example: "bars by_team: category team, value tickets, ordered",
        instead:
            "Drop `ordered` so the bars are sorted largest first, or allow the rule with the\n\
                  reason the order matters.",
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
