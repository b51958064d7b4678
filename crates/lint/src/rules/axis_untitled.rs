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
        flags: "A line chart whose x axis runs over plain numbers (not dates, months or years)\n\
                and has no `x title`.",
        why: "Dates explain themselves; a row of bare numbers does not. Without a title the\n\
              audience cannot tell whether 10, 20, 30 are ages, kilometres or percent, and\n\
              the presenter ends up explaining the axis instead of the point (common\n\
              practice: title every axis that is not self-evident).",
        example: "frame \"Cost rises with distance\" {\n  line by_distance: x km, y cost\n}",
        instead: "Add `x title \"Distance from depot (km)\"`, naming the quantity and its unit.",
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
