//! `panels-own-scales`: small multiples compared on different scales.

use crescendo_diag::Severity;
use crescendo_frame::Chart;

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "panels-own-scales",
    severity: Severity::Warning,
    summary: "small multiples drawn on different scales",
    doc: Doc {
        before: "split area own scales   # each panel fitted to its own data",
        after: "split area trim   # one common scale, each panel cut to its own extent",
        why: "Small multiples invite the eye to compare panels side by side. With `own scales`,\n\
              equal heights mean different amounts, so a small series looks as large as a big one\n\
              and the comparison the layout offers is false (common practice: one common scale for\n\
              compared panels). `trim` keeps the same units per pixel in every panel.",
    },
    check,
};

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
