//! Charts of a measure by category (bars, dots, pies): the columns they
//! take, and the grid of their values by category and part.

use std::collections::BTreeSet;

use crescendo_data::{stats, ColType};
use crescendo_lang::ast::{ChartStmt, OptName};

use crate::context::{Ctx, Outcome};
use crate::forms::spec::{ChartSpec, SpecInput};
use crate::labels::{display, humanize, number, position};
use crate::model::{Orientation, Part, PartsMode, Role};

/// Resolve `category`, `value` and the optional part or series column of
/// a bars, dots or pie statement.
pub(crate) fn spec(cx: &mut Ctx, input: &SpecInput) -> Outcome<ChartSpec> {
    let (c, view) = (input.c, &input.view);
    let form = c.form.keyword();
    let which = |cx: &mut Ctx, name: OptName, what: &str| {
        let help = format!("write `{form} {view}: category COLUMN, value COLUMN`");
        input.missing(cx, name, format!("which column holds the {what}?"), help)
    };
    let cat = match input.given_or_key(OptName::Category) {
        Some(id) => input.lookup(cx, id)?,
        None => return Err(which(cx, OptName::Category, "categories")),
    };
    let val = match input.given_or_measure(OptName::Value) {
        Some(id) => input.lookup(cx, id)?,
        None => return Err(which(cx, OptName::Value, "values")),
    };
    input.number_column(cx, val, input.span_of(OptName::Value), "bar values")?;
    let ordinal = cat.1.is_time() || cat.1 == ColType::Number;
    let chosen = &input.chosen;
    let extra = input.given(OptName::Stack).or(input.given(OptName::Group));
    Ok(ChartSpec {
        ordered: ordinal || chosen.has(OptName::Ordered),
        orientation: chosen
            .last_of(&[OptName::Horizontal, OptName::Vertical])
            .map(|o| match o {
                OptName::Horizontal => Orientation::Horizontal,
                _ => Orientation::Vertical,
            }),
        measure_is_count: input.counts(val.0),
        extra: input.optional(cx, extra.or(input.given(OptName::Series)))?,
        parts_mode: if chosen.has(OptName::Stack) {
            Some(PartsMode::Stacked)
        } else if chosen.has(OptName::Group) {
            Some(PartsMode::Grouped)
        } else {
            None
        },
        ..input.spec(cat.0, val.0)
    })
}

/// The values of a (category, value[, part]) chart by category and part.
pub(crate) struct Grid {
    /// Category labels in first-appearance order, with their first row.
    pub(crate) cats: Vec<(String, usize)>,
    /// Part names (the part column's values, else the measure's title).
    pub(crate) keys: Vec<String>,
    /// `values[category][part]`.
    pub(crate) values: Vec<Vec<Option<f64>>>,
}

impl Grid {
    /// The parts, each in context.
    pub(crate) fn parts(&self) -> Vec<Part> {
        self.keys
            .iter()
            .map(|k| Part {
                name: k.clone(),
                role: Role::Context,
            })
            .collect()
    }

    /// Every value present.
    pub(crate) fn present(&self) -> Vec<f64> {
        self.values.iter().flatten().flatten().copied().collect()
    }
}

/// Read the view into a grid; reports a category and part given twice.
pub(crate) fn cells(cx: &mut Ctx, spec: &ChartSpec, c: &ChartStmt) -> Outcome<Grid> {
    let t = &spec.table;
    let cat = &t.columns[spec.x];
    let val = &t.columns[spec.y];
    let extra = spec.extra.map(|e| &t.columns[e]);
    let mut grid = Grid {
        cats: Vec::new(),
        keys: Vec::new(),
        values: Vec::new(),
    };
    let mut seen: BTreeSet<(usize, usize)> = BTreeSet::new();
    for r in 0..cat.values.len() {
        let label = display(&cat.values.value(r));
        let ci = match grid.cats.iter().position(|(l, _)| *l == label) {
            Some(i) => i,
            None => {
                grid.cats.push((label.clone(), r));
                grid.values.push(vec![None; grid.keys.len()]);
                grid.cats.len() - 1
            }
        };
        let key = extra.map_or_else(|| humanize(&val.name), |e| display(&e.values.value(r)));
        let ki = match grid.keys.iter().position(|k| *k == key) {
            Some(i) => i,
            None => {
                grid.keys.push(key.clone());
                for row in &mut grid.values {
                    row.push(None);
                }
                grid.keys.len() - 1
            }
        };
        if !seen.insert((ci, ki)) {
            let what = match extra {
                Some(e) => format!("\"{label}\" and {} \"{key}\"", e.name),
                None => format!("\"{label}\""),
            };
            return Err(cx.error_with_help(
                "duplicate-point",
                format!("`{}` has several rows for {what}", spec.table_name),
                c.span.clone(),
                "in this chart",
                format!(
                    "group the view first, e.g. `| by {}{}: ...`",
                    cat.name,
                    extra.map_or(String::new(), |e| format!(", {}", e.name))
                ),
            ));
        }
        grid.values[ci][ki] = number(&val.values.value(r));
    }
    Ok(grid)
}

/// The display order of the grid's categories: by position when ordinal,
/// else by each category's total, largest first, with a folded "other"
/// row last.
pub(crate) fn order(spec: &ChartSpec, grid: &Grid) -> Vec<usize> {
    let cat = &spec.table.columns[spec.x];
    let mut order: Vec<usize> = (0..grid.cats.len()).collect();
    if spec.ordered {
        if cat.ty.is_time() || cat.ty == ColType::Number {
            order.sort_by(|a, b| {
                let pa = position(&cat.values.value(grid.cats[*a].1)).unwrap_or(f64::INFINITY);
                let pb = position(&cat.values.value(grid.cats[*b].1)).unwrap_or(f64::INFINITY);
                pa.total_cmp(&pb)
            });
        }
    } else {
        let total = |i: usize| stats::total(grid.values[i].iter().flatten().copied());
        order.sort_by(|a, b| total(*b).total_cmp(&total(*a)));
        if let Some(rest) = &spec.rest {
            if let Some(k) = order.iter().position(|&i| grid.cats[i].0 == *rest) {
                let r = order.remove(k);
                order.push(r);
            }
        }
    }
    order
}
