//! Scatters: two measures against each other, with an optional
//! least-squares line.

use std::collections::BTreeSet;

use crescendo_data::{stats, ColType, Column};
use crescendo_lang::ast::{ChartStmt, OptName};

use crate::context::{Ctx, Outcome};
use crate::forms::form::FormPlanner;
use crate::forms::options::{column, flag, Opt};
use crate::forms::spec::{self, ChartSpec, SpecInput};
use crate::labels::{display, humanize, number, position};
use crate::model::*;
use crate::scale;
use crate::sequence::SeqState;

pub(crate) struct Scatter;

pub(crate) const OPTIONS: &[Opt] = &[
    column(OptName::X),
    column(OptName::Y),
    column(OptName::Label),
    column(OptName::Series),
    flag(OptName::Fit),
];

impl FormPlanner for Scatter {
    fn spec(&self, cx: &mut Ctx, input: &SpecInput) -> Outcome<ChartSpec> {
        let pick = |cx: &mut Ctx, n: OptName, what: &str| -> Outcome<(usize, ColType)> {
            match input.given(n) {
                Some(id) => input.lookup(cx, id),
                None => Err(input.missing(
                    cx,
                    n,
                    format!("which column runs along {what}?"),
                    format!("write `scatter {}: x COLUMN, y COLUMN`", input.view),
                )),
            }
        };
        let x = pick(cx, OptName::X, "x")?;
        let y = pick(cx, OptName::Y, "y")?;
        for (col, opt) in [(x, OptName::X), (y, OptName::Y)] {
            if !(col.1 == ColType::Number || col.1.is_time()) {
                let needed = "a scatter places numbers";
                return Err(input.not_a_number(cx, col, input.span_of(opt), needed));
            }
        }
        let series = input.optional(cx, input.given(OptName::Series))?;
        Ok(ChartSpec {
            extra: input.optional(cx, input.given(OptName::Label))?,
            series,
            fit: input.chosen.has(OptName::Fit),
            ..input.spec(x.0, y.0)
        })
    }

    fn chart(&self, cx: &mut Ctx, spec: &ChartSpec, c: &ChartStmt) -> Outcome<SeqState> {
        let t = &spec.table;
        let (xc, yc) = (&t.columns[spec.x], &t.columns[spec.y]);
        let labels = spec.extra.map(|e| &t.columns[e]);
        let points = points(spec);
        if points.len() < 2 {
            return Err(cx.error(
                "empty-view",
                format!(
                    "a scatter needs at least two points with both values; `{}` has {}",
                    spec.table_name,
                    points.len()
                ),
                c.span.clone(),
                "too few points",
            ));
        }
        let xs: Vec<f64> = points.iter().map(|p| p.x).collect();
        let ys: Vec<f64> = points.iter().map(|p| p.y).collect();
        let fit = match spec.fit {
            false => None,
            true => match stats::linear_fit(&xs, &ys) {
                Ok(f) => Some(Fit {
                    slope: f.slope,
                    intercept: f.intercept,
                    r: f.r,
                    label: String::new(), // written by `drawn`
                }),
                Err(e) => {
                    return Err(cx.error(
                        "value",
                        format!("the fitted line cannot be computed: {}", e.message()),
                        c.span.clone(),
                        "`fit` here",
                    ))
                }
            },
        };
        let (x, y) = (axis_of(xc, &xs), axis_of(yc, &ys));
        let names: Vec<String> = {
            let mut seen = BTreeSet::new();
            // Groups first, then the points' own labels, each once.
            let groups = points.iter().map(|p| &p.series);
            groups
                .chain(points.iter().map(|p| &p.label))
                .filter(|n| !n.is_empty() && seen.insert((*n).clone()))
                .cloned()
                .collect()
        };
        // `split` makes a panel of each group: of the `series` column when
        // there is one, else of each label.
        let groups = spec.series.map(|g| &t.columns[g]);
        let key_name = groups
            .or(labels)
            .map_or_else(|| yc.name.clone(), |l| l.name.clone());
        Ok(spec.state(
            Chart::Scatter(ScatterChart { x, y, points, fit }),
            names,
            key_name,
            spec::anchors(c, spec),
        ))
    }
}

/// The rows with both values, as points.
fn points(spec: &ChartSpec) -> Vec<ScatterPoint> {
    let t = &spec.table;
    let (xc, yc) = (&t.columns[spec.x], &t.columns[spec.y]);
    let labels = spec.extra.map(|e| &t.columns[e]);
    let groups = spec.series.map(|g| &t.columns[g]);
    let mut points = Vec::new();
    for r in 0..xc.values.len() {
        let (Some(x), Some(y)) = (
            position(&xc.values.value(r)),
            number(&yc.values.value(r)).or(position(&yc.values.value(r))),
        ) else {
            continue;
        };
        points.push(ScatterPoint {
            x,
            y,
            label: labels.map_or_else(String::new, |l| display(&l.values.value(r))),
            series: groups.map_or_else(String::new, |g| display(&g.values.value(r))),
            role: Role::Context,
        });
    }
    points
}

/// The axis of one of a scatter's columns.
fn axis_of(col: &Column, vs: &[f64]) -> Axis {
    let lo = vs.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = vs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    match col.ty {
        ColType::Month => scale::time_axis(ScaleKind::Months, lo, hi, None),
        ColType::Date => scale::time_axis(ScaleKind::Days, lo, hi, None),
        ColType::Year => scale::time_axis(ScaleKind::Years, lo, hi, None),
        _ => scale::padded_axis(lo, hi, Some(humanize(&col.name))),
    }
}
