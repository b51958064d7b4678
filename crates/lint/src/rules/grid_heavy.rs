//! `grid-heavy`: gridlines drawn as strongly as the data.

use crescendo_diag::Severity;
use crescendo_frame::Chart;

use super::util::{frames, rgb8};
use crate::colour::contrast_ratio;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("grid-heavy", Severity::Warning, check);

/// Whether a chart draws gridlines along its measure's axis.
fn has_grid(chart: &Chart) -> bool {
    match chart {
        Chart::Line(l) => l.y.grid,
        Chart::Bars(b) => b.value.grid,
        Chart::Parts(p) => p.value.grid,
        Chart::Dots(d) => d.value.grid,
        Chart::Scatter(s) => s.y.grid,
        Chart::Panels(p) => p.panels.iter().any(|x| has_grid(&x.chart)),
        Chart::Figures(_) | Chart::Table(_) | Chart::Pie(_) | Chart::Plugin(_) => false,
    }
}

fn check(input: &Input, out: &mut Vec<Finding>) {
    let t = input.theme;
    let page = rgb8(t.page);
    let grid = contrast_ratio(rgb8(t.grid), page);
    let context = contrast_ratio(rgb8(t.context), page);
    if grid < context {
        return;
    }
    // One finding per `gridlines` statement, in the frame that says it.
    let mut reported = Vec::new();
    for (i, f, a) in frames(input) {
        if !has_grid(&f.chart) {
            continue;
        }
        let span = a.gridlines.clone().unwrap_or(a.chart.clone());
        if reported.contains(&span) {
            continue;
        }
        reported.push(span.clone());
        out.push(Finding {
            frame: Some(i),
            span,
            label: format!(
                "grid {} is {grid:.2}:1 on {}, context grey {} is {context:.2}:1",
                t.grid.hex(),
                t.page.hex(),
                t.context.hex()
            ),
            message: "gridlines are drawn as strongly as the data".into(),
            fix: "set a light `grid` grey in the house style's [greys] (about #ECECEC on white), \
                  or remove `gridlines`"
                .into(),
        });
    }
}
