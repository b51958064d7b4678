//! Planning the chart forms beyond plain lines and bars: stacked and grouped
//! bars, dot plots, scatters, pies and tables.

use std::collections::BTreeSet;

use crescendo_data::{format, stats, ColType, Value};
use crescendo_lang::ast::{ChartForm, ChartStmt};

use crate::anchors::FrameAnchors;
use crate::build::{
    decimals_for, display, humanize, position, round_to, ChartSpec, Planner, SeqState,
};
use crate::model::*;
use crate::scale;

/// Long names, or many of them, read better down the side than squeezed
/// under narrow bars (common practice); the same rule as plain bars.
fn orientation_for(labels: &[String], time_like: bool, forced: Option<Orientation>) -> Orientation {
    if let Some(o) = forced {
        return o;
    }
    let longest = labels.iter().map(|l| l.chars().count()).max().unwrap_or(0);
    if !time_like && (longest * labels.len() > 110 || longest > 24 || labels.len() > 12) {
        Orientation::Horizontal
    } else {
        Orientation::Vertical
    }
}

/// A value label with the precision the axis's ticks suggest.
fn value_label(v: f64, axis: &Axis) -> String {
    let step = axis
        .ticks
        .get(1)
        .zip(axis.ticks.first())
        .map_or(1.0, |(b, a)| b.value - a.value);
    format::number(round_to(v, decimals_for(step)), None)
}

fn number(v: &Value) -> Option<f64> {
    match v {
        Value::Number(n) => Some(*n),
        _ => None,
    }
}

impl Planner<'_> {
    /// Build the chart of a new sequence for the forms handled here.
    pub(crate) fn new_form(&mut self, spec: ChartSpec, c: &ChartStmt) -> Option<SeqState> {
        let t = &spec.table;
        let rows = t.columns.first().map_or(0, |c| c.values.len());
        if rows == 0 {
            self.error(
                "empty-view",
                format!("`{}` has no rows to draw", spec.table_name),
                c.view.span.clone(),
                "empty",
            )
            .help = Some("check the view's `keep` conditions against the data".into());
            return None;
        }
        let mut anchors = FrameAnchors {
            chart: c.span.clone(),
            view: spec.table_name.clone(),
            measure_is_count: spec.measure_is_count,
            ordered: c
                .opts
                .iter()
                .find(|o| o.name == crescendo_lang::ast::OptName::Ordered)
                .map(|o| o.span.clone()),
            ..FrameAnchors::default()
        };
        let (chart, names, key_name) = match c.form {
            ChartForm::Table => self.table(&spec)?,
            ChartForm::Scatter => self.scatter(&spec, c)?,
            ChartForm::Pie => self.pie(&spec, c)?,
            ChartForm::Dots => self.dots(&spec, c)?,
            _ => {
                anchors.x_is_text = t.columns[spec.x].ty == ColType::Text;
                self.parts(&spec, c)?
            }
        };
        if matches!(c.form, ChartForm::Dots) {
            anchors.x_is_text = t.columns[spec.x].ty == ColType::Text;
        }
        Some(SeqState {
            chart,
            names,
            hidden: BTreeSet::new(),
            spotlight: BTreeSet::new(),
            x_title: None,
            y_title: None,
            cells: BTreeSet::new(),
            measure_name: t.columns[spec.y].name.clone(),
            view_name: spec.table_name.clone(),
            key_name,
            anchors,
        })
    }

    /// Category rows of a (category, value[, extra]) chart: the category
    /// labels in first-appearance order, and for each the extra key's value
    /// → the measure. Reports a category/extra pair given twice.
    #[allow(clippy::type_complexity)]
    fn cells(
        &mut self,
        spec: &ChartSpec,
        c: &ChartStmt,
    ) -> Option<(Vec<(String, usize)>, Vec<String>, Vec<Vec<Option<f64>>>)> {
        let t = &spec.table;
        let cat = &t.columns[spec.x];
        let val = &t.columns[spec.y];
        let extra = spec.extra.map(|e| &t.columns[e]);
        let mut cats: Vec<(String, usize)> = Vec::new();
        let mut keys: Vec<String> = Vec::new();
        let mut grid: Vec<Vec<Option<f64>>> = Vec::new();
        let mut seen: BTreeSet<(usize, usize)> = BTreeSet::new();
        for r in 0..cat.values.len() {
            let label = display(&cat.values.value(r));
            let ci = match cats.iter().position(|(l, _)| *l == label) {
                Some(i) => i,
                None => {
                    cats.push((label.clone(), r));
                    grid.push(vec![None; keys.len()]);
                    cats.len() - 1
                }
            };
            let key = extra.map_or_else(|| humanize(&val.name), |e| display(&e.values.value(r)));
            let ki = match keys.iter().position(|k| *k == key) {
                Some(i) => i,
                None => {
                    keys.push(key.clone());
                    for row in &mut grid {
                        row.push(None);
                    }
                    keys.len() - 1
                }
            };
            if !seen.insert((ci, ki)) {
                let what = match extra {
                    Some(e) => format!("\"{label}\" and {} \"{key}\"", e.name),
                    None => format!("\"{label}\""),
                };
                self.error(
                    "duplicate-point",
                    format!("`{}` has several rows for {what}", spec.table_name),
                    c.span.clone(),
                    "in this chart",
                )
                .help = Some(format!(
                    "group the view first, e.g. `| by {}{}: ...`",
                    cat.name,
                    extra.map_or(String::new(), |e| format!(", {}", e.name))
                ));
                return None;
            }
            grid[ci][ki] = number(&val.values.value(r));
        }
        Some((cats, keys, grid))
    }

    /// Order category rows: by the given key order when ordinal, else by the
    /// total of each row, largest first, with a folded "other" row last.
    fn order_rows(
        &self,
        spec: &ChartSpec,
        cats: &[(String, usize)],
        grid: &[Vec<Option<f64>>],
    ) -> Vec<usize> {
        let t = &spec.table;
        let cat = &t.columns[spec.x];
        let mut order: Vec<usize> = (0..cats.len()).collect();
        if spec.ordered {
            if cat.ty.is_time() || cat.ty == ColType::Number {
                order.sort_by(|a, b| {
                    let pa = position(&cat.values.value(cats[*a].1)).unwrap_or(f64::INFINITY);
                    let pb = position(&cat.values.value(cats[*b].1)).unwrap_or(f64::INFINITY);
                    pa.total_cmp(&pb)
                });
            }
        } else {
            let total = |i: usize| grid[i].iter().flatten().sum::<f64>();
            order.sort_by(|a, b| total(*b).total_cmp(&total(*a)));
            if let Some(rest) = &spec.rest {
                if let Some(k) = order.iter().position(|&i| cats[i].0 == *rest) {
                    let r = order.remove(k);
                    order.push(r);
                }
            }
        }
        order
    }

    /// Stacked or grouped bars.
    fn parts(&mut self, spec: &ChartSpec, c: &ChartStmt) -> Option<(Chart, Vec<String>, String)> {
        let (cats, keys, grid) = self.cells(spec, c)?;
        let mode = spec.parts_mode.unwrap_or(PartsMode::Grouped);
        let order = self.order_rows(spec, &cats, &grid);
        let values: Vec<f64> = grid.iter().flatten().flatten().copied().collect();
        if values.is_empty() {
            self.error(
                "empty-view",
                "there are no values to draw",
                c.span.clone(),
                "nothing to draw",
            );
            return None;
        }
        let (lo, hi) = match mode {
            PartsMode::Stacked => {
                // positive parts stack up, negative parts stack down
                let ups = grid
                    .iter()
                    .map(|r| r.iter().flatten().filter(|v| **v > 0.0).sum::<f64>());
                let downs = grid
                    .iter()
                    .map(|r| r.iter().flatten().filter(|v| **v < 0.0).sum::<f64>());
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
        let labels: Vec<String> = order.iter().map(|&i| cats[i].0.clone()).collect();
        let orientation =
            orientation_for(&labels, t.columns[spec.x].ty.is_time(), spec.orientation);
        let categories = order
            .iter()
            .map(|&i| PartCategory {
                label: cats[i].0.clone(),
                values: grid[i].clone(),
                total_label: value_label(grid[i].iter().flatten().sum(), &value),
                role: Role::Context,
            })
            .collect();
        let key_name = spec
            .extra
            .map_or(val.name.clone(), |e| t.columns[e].name.clone());
        let chart = Chart::Parts(PartsChart {
            mode,
            orientation,
            category_title: None,
            value,
            parts: keys
                .iter()
                .map(|k| Part {
                    name: k.clone(),
                    role: Role::Context,
                })
                .collect(),
            categories,
        });
        Some((chart, keys, key_name))
    }

    /// A dot plot.
    fn dots(&mut self, spec: &ChartSpec, c: &ChartStmt) -> Option<(Chart, Vec<String>, String)> {
        let (cats, keys, grid) = self.cells(spec, c)?;
        let order = self.order_rows(spec, &cats, &grid);
        let values: Vec<f64> = grid.iter().flatten().flatten().copied().collect();
        let (Some(lo), Some(hi)) = (
            values.iter().copied().reduce(f64::min),
            values.iter().copied().reduce(f64::max),
        ) else {
            self.error(
                "empty-view",
                "there are no values to draw",
                c.span.clone(),
                "nothing to draw",
            );
            return None;
        };
        let t = &spec.table;
        let val = &t.columns[spec.y];
        // Dots mark positions, not lengths: the axis need not start at zero
        // (common practice; Cleveland & McGill 1984 rank position first).
        let value = scale::linear_axis(lo, hi, false, Some(humanize(&val.name)));
        let rows: Vec<DotRow> = order
            .iter()
            .map(|&i| DotRow {
                label: cats[i].0.clone(),
                values: grid[i].clone(),
                role: Role::Context,
            })
            .collect();
        let names = if keys.len() > 1 {
            keys.clone()
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
            series: keys
                .iter()
                .map(|k| Part {
                    name: k.clone(),
                    role: Role::Context,
                })
                .collect(),
            rows,
        });
        Some((chart, names, key_name))
    }

    /// A pie: shares of a whole.
    fn pie(&mut self, spec: &ChartSpec, c: &ChartStmt) -> Option<(Chart, Vec<String>, String)> {
        let (cats, _, grid) = self.cells(spec, c)?;
        let mut slices: Vec<(String, f64)> = Vec::new();
        for (i, (label, _)) in cats.iter().enumerate() {
            match grid[i].first().copied().flatten() {
                Some(v) if v < 0.0 => {
                    self.error(
                        "chart-type",
                        format!("a pie shows parts of a whole, but \"{label}\" is negative"),
                        c.span.clone(),
                        "negative slice",
                    )
                    .help = Some("use bars for values that can be negative".into());
                    return None;
                }
                Some(v) => slices.push((label.clone(), v)),
                None => {}
            }
        }
        let total: f64 = slices.iter().map(|s| s.1).sum();
        if total <= 0.0 {
            self.error(
                "empty-view",
                "the slices add up to nothing",
                c.span.clone(),
                "nothing to draw",
            );
            return None;
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
        let key_name = spec.table.columns[spec.x].name.clone();
        let chart = Chart::Pie(PieChart {
            slices: slices
                .into_iter()
                .map(|(label, value)| {
                    let share = value / total;
                    Slice {
                        label,
                        value,
                        share,
                        share_label: format!(
                            "{}%",
                            format::number(round_to(share * 100.0, 0), None)
                        ),
                        role: Role::Context,
                    }
                })
                .collect(),
        });
        Some((chart, names, key_name))
    }

    /// A scatter of two measures, with an optional least-squares line.
    fn scatter(&mut self, spec: &ChartSpec, c: &ChartStmt) -> Option<(Chart, Vec<String>, String)> {
        let t = &spec.table;
        let (xc, yc) = (&t.columns[spec.x], &t.columns[spec.y]);
        let labels = spec.extra.map(|e| &t.columns[e]);
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
                role: Role::Context,
            });
        }
        if points.len() < 2 {
            self.error(
                "empty-view",
                format!(
                    "a scatter needs at least two points with both values; `{}` has {}",
                    spec.table_name,
                    points.len()
                ),
                c.span.clone(),
                "too few points",
            );
            return None;
        }
        let xs: Vec<f64> = points.iter().map(|p| p.x).collect();
        let ys: Vec<f64> = points.iter().map(|p| p.y).collect();
        let fit = if spec.fit {
            match stats::linear_fit(&xs, &ys) {
                Ok(f) => Some(Fit {
                    slope: f.slope,
                    intercept: f.intercept,
                    r: f.r,
                }),
                Err(e) => {
                    self.error(
                        "value",
                        format!("the fitted line cannot be computed: {}", e.message()),
                        c.span.clone(),
                        "`fit` here",
                    );
                    return None;
                }
            }
        } else {
            None
        };
        let axis_of = |col: &crescendo_data::Column, vs: &[f64]| {
            let lo = vs.iter().copied().fold(f64::INFINITY, f64::min);
            let hi = vs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            match col.ty {
                ColType::Month => scale::time_axis(ScaleKind::Months, lo, hi, None),
                ColType::Date => scale::time_axis(ScaleKind::Days, lo, hi, None),
                ColType::Year => scale::time_axis(ScaleKind::Years, lo, hi, None),
                _ => scale::linear_axis(lo, hi, false, Some(humanize(&col.name))),
            }
        };
        let (x, y) = (axis_of(xc, &xs), axis_of(yc, &ys));
        let names: Vec<String> = {
            let mut seen = BTreeSet::new();
            points
                .iter()
                .filter(|p| !p.label.is_empty() && seen.insert(p.label.clone()))
                .map(|p| p.label.clone())
                .collect()
        };
        let key_name = labels.map_or_else(|| yc.name.clone(), |l| l.name.clone());
        Some((
            Chart::Scatter(ScatterChart { x, y, points, fit }),
            names,
            key_name,
        ))
    }

    /// A table of every column of the view, rows in view order.
    fn table(&mut self, spec: &ChartSpec) -> Option<(Chart, Vec<String>, String)> {
        let t = &spec.table;
        let n = t.columns.first().map_or(0, |c| c.values.len());
        let columns: Vec<TableColumn> = t
            .columns
            .iter()
            .map(|c| TableColumn {
                title: humanize(&c.name),
                numeric: c.ty == ColType::Number,
            })
            .collect();
        // Per column, decimals enough for its values but no more than 2.
        let decimals: Vec<usize> = t
            .columns
            .iter()
            .map(|c| {
                c.values
                    .iter()
                    .filter_map(|v| number(&v))
                    .map(|v| decimals_for(round_to(v, 2)).min(2))
                    .max()
                    .unwrap_or(0)
            })
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
                    Value::Number(v) => format::number(*v, Some(*d)),
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
        Some((Chart::Table(TableChart { columns, rows }), names, key_name))
    }
}
