//! `axis-untitled`: an axis of numbers with no title.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, ScaleKind};

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "axis-untitled",
    severity: Severity::Warning,
    summary: "an axis of plain numbers has no title",
    doc: Doc {
        before: concat!(
            "line d: x km, y cost   # x runs over bare numbers\n",
            "y title \"Cost per delivery\"",
        ),
        after: concat!(
            "line d: x km, y cost\n",
            "y title \"Cost per delivery\"\n",
            "x title \"Distance from the depot (km)\"   # the quantity and its unit",
        ),
        why: "Dates, months and years explain themselves; a row of bare numbers does not. Without\n\
              a title the audience cannot tell whether 10, 20, 30 are ages, kilometres or percent,\n\
              and the presenter ends up explaining the axis instead of the point (common practice:\n\
              title every axis that is not self-evident).",
    },
    check,
};

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
