//! `bars-crowded`: too many bars to compare.

use crescendo_diag::Severity;
use crescendo_frame::Chart;

use super::util::{frames, visible};
use crate::{Doc, Finding, Input, Rule};

const MAX_BARS: usize = 15;

pub static RULE: Rule = Rule {
    name: "bars-crowded",
    severity: Severity::Advice,
    summary: "more than 15 bars, more than the audience can compare",
    doc: Doc {
        before: "bars p: category product, value sales   # 20 products",
        after: concat!(
            "view top10 = p | top 10 product by sales rest \"Other products\"\n",
            "bars top10: category product, value sales",
        ),
        why:
            "Past a dozen or so bars the audience cannot take in the ranking, labels shrink, and\n\
              the one comparison that matters is lost among the rest (common practice). Keep the\n\
              largest and fold the rest into one bar, or spread the categories over a few frames.",
    },
    check,
};

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        let n = visible(f);
        if matches!(f.chart, Chart::Bars(_)) && n > MAX_BARS {
            out.push(Finding {
                frame: Some(i),
                span: a.chart.clone(),
                label: format!("{n} bars"),
                message: format!("{n} bars are more than an audience can compare"),
                fix: "keep the largest with `| top 10 ... rest \"Other\"`".into(),
            });
        }
    }
}
