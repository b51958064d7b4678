//! Bars: one bar per category (plain), or parts of each bar stacked or
//! grouped (`stack COL`, `group COL`; see `parts.rs`).

use crescendo_data::{ColType, Value};
use crescendo_lang::ast::{ChartStmt, OptName};

use crate::context::{Ctx, Outcome};
use crate::forms::form::FormPlanner;
use crate::forms::options::{column, flag, Opt};
use crate::forms::spec::{self, ChartSpec};
use crate::forms::{orientation, parts};
use crate::labels::{display, humanize, position};
use crate::model::*;
use crate::scale;
use crate::sequence::SeqState;

pub(crate) struct Bars;

pub(crate) const OPTIONS: &[Opt] = &[
    column(OptName::Category),
    column(OptName::Value),
    flag(OptName::Ordered),
    flag(OptName::Horizontal),
    flag(OptName::Vertical),
    column(OptName::Stack),
    column(OptName::Group),
];

impl FormPlanner for Bars {
    fn chart(&self, cx: &mut Ctx, spec: &ChartSpec, c: &ChartStmt) -> Outcome<SeqState> {
        if spec.parts_mode.is_some() {
            return parts::chart(cx, spec, c);
        }
        let t = &spec.table;
        let (xcol, ycol) = (&t.columns[spec.x], &t.columns[spec.y]);
        let rows = rows(cx, spec, c)?;
        let vals: Vec<f64> = rows.iter().filter_map(|r| r.1).collect();
        if vals.is_empty() {
            return Err(spec.no_values(cx, c));
        }
        let lo = vals.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = vals.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let value = scale::linear_axis(lo.min(0.0), hi.max(0.0), true, Some(humanize(&ycol.name)));
        let names: Vec<String> = rows.iter().map(|r| r.0.clone()).collect();
        let by_rule = orientation::by_rule(&names, xcol.ty.is_time());
        let bars = rows
            .iter()
            .map(|(label, v, _)| Bar {
                label: label.clone(),
                value: *v,
                value_label: v.map_or_else(|| "no data".to_string(), scale::value_label),
                role: Role::Context,
            })
            .collect();
        let chart = Chart::Bars(BarChart {
            orientation: spec.orientation.unwrap_or(by_rule),
            category_title: None,
            value,
            bars,
        });
        let mut anchors = spec::category_anchors(c, spec);
        anchors.orientation = c
            .opts
            .iter()
            .rev()
            .find(|o| matches!(o.name, OptName::Horizontal | OptName::Vertical))
            .map(|o| o.span.clone());
        anchors.orientation_by_rule = Some(by_rule);
        Ok(spec.state(chart, names, xcol.name.clone(), anchors))
    }
}

/// The bars in display order: (label, value, row). Ordinal categories keep
/// their order; others run largest first, missing values last, ties in
/// data order, a folded "other" row at the end. Reports a category given
/// twice.
fn rows(
    cx: &mut Ctx,
    spec: &ChartSpec,
    c: &ChartStmt,
) -> Outcome<Vec<(String, Option<f64>, usize)>> {
    let t = &spec.table;
    let (xcol, ycol) = (&t.columns[spec.x], &t.columns[spec.y]);
    let mut rows: Vec<(String, Option<f64>, usize)> = Vec::new();
    for r in 0..xcol.values.len() {
        let label = display(&xcol.values.value(r));
        if rows.iter().any(|(l, _, _)| *l == label) {
            return Err(cx.error_with_help(
                "duplicate-point",
                format!(
                    "bars need one row per category, but `{}` has several rows for \"{}\"",
                    spec.table_name, label
                ),
                c.span.clone(),
                "in this chart",
                format!("group the view first, e.g. `| by {}: ...`", xcol.name),
            ));
        }
        let v = match &ycol.values.value(r) {
            Value::Number(v) => Some(*v),
            _ => None,
        };
        rows.push((label, v, r));
    }
    if spec.ordered {
        if xcol.ty.is_time() || xcol.ty == ColType::Number {
            rows.sort_by(|a, b| {
                let pa = position(&xcol.values.value(a.2)).unwrap_or(f64::INFINITY);
                let pb = position(&xcol.values.value(b.2)).unwrap_or(f64::INFINITY);
                pa.total_cmp(&pb)
            });
        }
        return Ok(rows);
    }
    // Largest first; missing values last; ties keep data order.
    rows.sort_by(|a, b| match (a.1, b.1) {
        (Some(x), Some(y)) => y.total_cmp(&x),
        (Some(_), None) => std::cmp::Ordering::Less,
        (None, Some(_)) => std::cmp::Ordering::Greater,
        (None, None) => std::cmp::Ordering::Equal,
    });
    // The folded "other" row is not a category to rank.
    if let Some(rest) = &spec.rest {
        if let Some(i) = rows.iter().position(|r| r.0 == *rest) {
            let r = rows.remove(i);
            rows.push(r);
        }
    }
    Ok(rows)
}
