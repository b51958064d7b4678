//! Tables: every column of the view, rows in view order.

use std::collections::BTreeSet;

use crescendo_data::{ColType, Value};
use crescendo_lang::ast::{ChartStmt, OptName};

use crate::context::{Ctx, Outcome};
use crate::forms::form::FormPlanner;
use crate::forms::options::{column_text, Opt};
use crate::forms::spec::{self, ChartSpec, SpecInput};
use crate::labels::{display, humanize, number};
use crate::model::*;
use crate::sequence::SeqState;

pub(crate) struct Table;

/// A table takes header texts for its columns: `heading gdp "Output"`.
pub(crate) const OPTIONS: &[Opt] = &[column_text(OptName::Heading)];

/// The header text given for column `name` (`heading COL "Text"`), if any.
fn heading<'c>(c: &'c ChartStmt, name: &str) -> Option<&'c str> {
    c.opts
        .iter()
        .filter(|o| o.name == OptName::Heading)
        .find(|o| o.column.as_ref().is_some_and(|i| i.name == name))
        .and_then(|o| o.text.as_ref())
        .map(|t| t.value.as_str())
}

impl FormPlanner for Table {
    fn spec(&self, cx: &mut Ctx, input: &SpecInput) -> Outcome<ChartSpec> {
        // every heading names a column of the view (all errors at once)
        let cp = cx.checkpoint();
        for o in input.c.opts.iter().filter(|o| o.name == OptName::Heading) {
            if let Some(id) = &o.column {
                let _ = input.lookup(cx, id);
            }
        }
        cx.errors_since(cp)?;
        Ok(input.spec(0, 0))
    }

    fn chart(&self, _: &mut Ctx, spec: &ChartSpec, c: &ChartStmt) -> Outcome<SeqState> {
        let t = &spec.table;
        let n = spec.rows();
        let columns: Vec<TableColumn> = t
            .columns
            .iter()
            .map(|col| TableColumn {
                title: heading(c, &col.name).map_or_else(|| humanize(&col.name), str::to_string),
                numeric: col.ty == ColType::Number,
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
        let column_titles = t
            .columns
            .iter()
            .zip(&columns)
            .map(|(c, col)| (c.name.clone(), col.title.clone()))
            .collect();
        Ok(SeqState {
            names,
            measure_name: t.columns[spec.y].name.clone(),
            view_name: spec.table_name.clone(),
            key_name,
            column_titles,
            anchors: spec::anchors(c, spec),
            ..SeqState::new(Chart::Table(TableChart { columns, rows }))
        })
    }
}
