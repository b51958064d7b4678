//! Stacked and grouped bars: each category's bar split into parts.

use crescendo_data::stats;
use crescendo_lang::ast::ChartStmt;

use crate::context::{Ctx, Outcome};
use crate::forms::spec::{self, ChartSpec};
use crate::forms::{grid, orientation};
use crate::labels::humanize;
use crate::model::*;
use crate::scale;
use crate::sequence::SeqState;

/// The chart of a new sequence of stacked or grouped bars.
pub(crate) fn chart(cx: &mut Ctx, spec: &ChartSpec, c: &ChartStmt) -> Outcome<SeqState> {
    let grid = grid::cells(cx, spec, c)?;
    let mode = spec.parts_mode.unwrap_or(PartsMode::Grouped);
    let order = grid::order(spec, &grid);
    let values = grid.present();
    if values.is_empty() {
        return Err(cx.error(
            "empty-view",
            "there are no values to draw",
            c.span.clone(),
            "nothing to draw",
        ));
    }
    let (lo, hi) = match mode {
        PartsMode::Stacked => {
            // positive parts stack up, negative parts stack down
            let ups = grid
                .values
                .iter()
                .map(|r| stats::total(r.iter().flatten().copied().filter(|v| *v > 0.0)));
            let downs = grid
                .values
                .iter()
                .map(|r| stats::total(r.iter().flatten().copied().filter(|v| *v < 0.0)));
            (downs.fold(0.0, f64::min), ups.fold(0.0, f64::max))
        }
        PartsMode::Grouped => (
            values.iter().copied().fold(0.0, f64::min),
            values.iter().copied().fold(0.0, f64::max),
        ),
    };
    let t = &spec.table;
    let val = &t.columns[spec.y];
    let value = scale::linear_axis(lo, hi, true, Some(humanize(&val.name)));
    let labels: Vec<String> = order.iter().map(|&i| grid.cats[i].0.clone()).collect();
    let by_rule = orientation::by_rule(&labels, t.columns[spec.x].ty.is_time());
    let categories = order
        .iter()
        .map(|&i| PartCategory {
            label: grid.cats[i].0.clone(),
            values: grid.values[i].clone(),
            // a category whose parts are all missing has no total
            total_label: if grid.values[i].iter().all(Option::is_none) {
                "no data".to_string()
            } else {
                scale::value_label(stats::total(grid.values[i].iter().flatten().copied()))
            },
            role: Role::Context,
        })
        .collect();
    let key_name = spec
        .extra
        .map_or(val.name.clone(), |e| t.columns[e].name.clone());
    let chart = Chart::Parts(PartsChart {
        mode,
        orientation: spec.orientation.unwrap_or(by_rule),
        category_title: None,
        value,
        parts: grid.parts(),
        categories,
    });
    let mut anchors = spec::category_anchors(c, spec);
    anchors.orientation_by_rule = Some(by_rule);
    Ok(spec.state(chart, grid.keys, key_name, anchors))
}
