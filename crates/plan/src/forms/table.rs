//! Tables: every column of the view, rows in view order.

use std::collections::BTreeSet;

use crescendo_data::{ColType, Value};
use crescendo_lang::ast::ChartStmt;

use crate::context::{Ctx, Outcome};
use crate::forms::form::FormPlanner;
use crate::forms::options::Opt;
use crate::forms::spec::{self, ChartSpec, SpecInput};
use crate::labels::{display, humanize, number};
use crate::model::*;
use crate::sequence::SeqState;

pub(crate) struct Table;

/// A table takes no options.
pub(crate) const OPTIONS: &[Opt] = &[];

impl FormPlanner for Table {
    fn spec(&self, _: &mut Ctx, input: &SpecInput) -> Outcome<ChartSpec> {
        Ok(input.spec(0, 0))
    }

    fn chart(&self, _: &mut Ctx, spec: &ChartSpec, c: &ChartStmt) -> Outcome<SeqState> {
        let t = &spec.table;
        let n = spec.rows();
        let columns: Vec<TableColumn> = t
            .columns
            .iter()
            .map(|c| TableColumn {
                title: humanize(&c.name),
                numeric: c.ty == ColType::Number,
            })
            .collect();
        // Per column, one number of decimals (the figures line up), enough
        // for three significant digits of each value (the number policy).
        let decimals: Vec<usize> = t
            .columns
            .iter()
            .map(|c| crate::numbers::column_decimals(c.values.iter().filter_map(|v| number(&v))))
            .collect();
        let first = t.columns.first();
        let mut rows = Vec::with_capacity(n);
        let mut group = 0usize;
        for r in 0..n {
            // Rows sharing their first cell with the row above form a group;
            // alternate groups are lightly shaded (otherwise alternate rows).
            if r > 0 {
                let same = first.is_some_and(|c| c.values.value(r) == c.values.value(r - 1));
                if !same {
                    group += 1;
                }
            }
            let cells = t
                .columns
                .iter()
                .zip(&decimals)
                .map(|(c, d)| match &c.values.value(r) {
                    Value::Number(v) => crate::numbers::cell(*v, *d),
                    Value::Missing => "–".to_string(),
                    other => display(other),
                })
                .collect();
            rows.push(TableRow {
                cells,
                role: Role::Context,
                focus_cell: None,
                shaded: group % 2 == 1,
            });
        }
        let names: Vec<String> = {
            let mut seen = BTreeSet::new();
            rows.iter()
                .filter_map(|r: &TableRow| r.cells.first().cloned())
                .filter(|k| seen.insert(k.clone()))
                .collect()
        };
        let key_name = first.map_or_else(String::new, |c| c.name.clone());
        Ok(SeqState {
            names,
            measure_name: t.columns[spec.y].name.clone(),
            view_name: spec.table_name.clone(),
            key_name,
            anchors: spec::anchors(c, spec),
            ..SeqState::new(Chart::Table(TableChart { columns, rows }))
        })
    }
}
