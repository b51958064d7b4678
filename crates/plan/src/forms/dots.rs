//! Dot plots: a dot per category (and per series), on a value axis that
//! need not start at zero.

use crescendo_lang::ast::{ChartStmt, OptName};

use crate::context::{Ctx, Outcome};
use crate::forms::form::FormPlanner;
use crate::forms::grid;
use crate::forms::options::{column, flag, Opt};
use crate::forms::spec::{self, ChartSpec};
use crate::labels::humanize;
use crate::model::*;
use crate::scale;
use crate::sequence::SeqState;

pub(crate) struct Dots;

pub(crate) const OPTIONS: &[Opt] = &[
    column(OptName::Category),
    column(OptName::Value),
    column(OptName::Series),
    flag(OptName::Ordered),
];

impl FormPlanner for Dots {
    fn chart(&self, cx: &mut Ctx, spec: &ChartSpec, c: &ChartStmt) -> Outcome<SeqState> {
        let grid = grid::cells(cx, spec, c)?;
        let order = grid::order(spec, &grid);
        let values = grid.present();
        let (Some(lo), Some(hi)) = (
            values.iter().copied().reduce(f64::min),
            values.iter().copied().reduce(f64::max),
        ) else {
            return Err(cx.error(
                "empty-view",
                "there are no values to draw",
                c.span.clone(),
                "nothing to draw",
            ));
        };
        let t = &spec.table;
        let val = &t.columns[spec.y];
        // Dots mark positions, not lengths: the axis need not start at zero
        // (common practice; Cleveland & McGill 1984 rank position first).
        let value = scale::padded_axis(lo, hi, Some(humanize(&val.name)));
        let rows: Vec<DotRow> = order
            .iter()
            .map(|&i| DotRow {
                label: grid.cats[i].0.clone(),
                values: grid.values[i].clone(),
                role: Role::Context,
            })
            .collect();
        let names = if grid.keys.len() > 1 {
            grid.keys.clone()
        } else {
            rows.iter().map(|r| r.label.clone()).collect()
        };
        let key_name = match spec.extra {
            Some(e) => t.columns[e].name.clone(),
            None => t.columns[spec.x].name.clone(),
        };
        let chart = Chart::Dots(DotChart {
            category_title: None,
            value,
            series: grid.parts(),
            rows,
        });
        let anchors = spec::category_anchors(c, spec);
        Ok(spec.state(chart, names, key_name, anchors))
    }
}
