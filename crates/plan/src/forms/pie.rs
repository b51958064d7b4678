//! Pies: shares of a whole, largest slice first.

use crescendo_data::stats;
use crescendo_lang::ast::{ChartStmt, OptName};

use crate::context::{Ctx, Outcome};
use crate::forms::form::FormPlanner;
use crate::forms::grid;
use crate::forms::options::{column, Opt};
use crate::forms::spec::{self, ChartSpec};
use crate::model::*;
use crate::sequence::SeqState;

pub(crate) struct Pie;

pub(crate) const OPTIONS: &[Opt] = &[column(OptName::Category), column(OptName::Value)];

impl FormPlanner for Pie {
    fn chart(&self, cx: &mut Ctx, spec: &ChartSpec, c: &ChartStmt) -> Outcome<SeqState> {
        let grid = grid::cells(cx, spec, c)?;
        let mut slices: Vec<(String, f64)> = Vec::new();
        for (i, (label, _)) in grid.cats.iter().enumerate() {
            match grid.values[i].first().copied().flatten() {
                Some(v) if v < 0.0 => {
                    return Err(cx.error_with_help(
                        "chart-type",
                        format!("a pie shows parts of a whole, but \"{label}\" is negative"),
                        c.span.clone(),
                        "negative slice",
                        "use bars for values that can be negative",
                    ));
                }
                Some(v) => slices.push((label.clone(), v)),
                None => {}
            }
        }
        let total = stats::total(slices.iter().map(|s| s.1));
        if total <= 0.0 {
            return Err(cx.error(
                "empty-view",
                "the slices add up to nothing",
                c.span.clone(),
                "nothing to draw",
            ));
        }
        // largest first, a folded "other" slice last
        slices.sort_by(|a, b| b.1.total_cmp(&a.1));
        if let Some(rest) = &spec.rest {
            if let Some(k) = slices.iter().position(|s| s.0 == *rest) {
                let r = slices.remove(k);
                slices.push(r);
            }
        }
        let names = slices.iter().map(|s| s.0.clone()).collect();
        let chart = Chart::Pie(PieChart {
            slices: slices
                .into_iter()
                .map(|(label, value)| {
                    let share = value / total;
                    Slice {
                        label,
                        value,
                        share,
                        share_label: crate::numbers::share_label(share),
                        role: Role::Context,
                    }
                })
                .collect(),
        });
        Ok(spec.state(
            chart,
            names,
            spec.table.columns[spec.x].name.clone(),
            spec::anchors(c, spec),
        ))
    }
}
