//! `measure-unnamed`: the measure's axis is titled only by a column name.

use crescendo_diag::Severity;

use crescendo_frame::{Chart, Orientation};

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("measure-unnamed", Severity::Advice, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    let mut seen_chart = Vec::new();
    for (i, f, a) in frames(input) {
        // forms without a measure axis need no title
        let has_axis = !matches!(
            f.chart,
            Chart::Figures(_) | Chart::Table(_) | Chart::Pie(_) | Chart::Plugin(_)
        );
        // once per sequence: the first frame of the chart
        if has_axis && a.y_title.is_none() && !seen_chart.contains(&a.chart) {
            seen_chart.push(a.chart.clone());
            let horizontal = matches!(
                &f.chart,
                Chart::Bars(b) if b.orientation == Orientation::Horizontal
            ) || matches!(
                &f.chart,
                Chart::Parts(p) if p.orientation == Orientation::Horizontal
            );
            if let (true, Some(x)) = (horizontal, &a.x_title) {
                // `x` and `y` name roles, not directions: on horizontal
                // bars the measure runs along the bottom but is `y`
                out.push(Finding {
                    frame: Some(i),
                    span: x.clone(),
                    label: "this titles the categories".into(),
                    message: "`x title` titles the category axis, also on horizontal bars; the \
                              measure along the bottom has no title"
                        .into(),
                    fix: "title the measure with `y title \"...\"` (x is the categories, y the \
                          measure, whichever way the bars point)"
                        .into(),
                });
                continue;
            }
            out.push(Finding {
                frame: Some(i),
                span: a.chart.clone(),
                label: "no `y title` for this chart".into(),
                message: "the measure is titled only by its column name".into(),
                fix: "add `y title \"...\"` saying what is measured, per what, in what unit".into(),
            });
        }
    }
}
