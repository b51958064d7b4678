//! Line charts: a measure over time (or numbers, or text categories), one
//! line per series.

use std::collections::BTreeSet;

use crescendo_data::{ColType, Column, Value};
use crescendo_lang::ast::{ChartStmt, OptName};

use crate::context::{Ctx, Outcome};
use crate::forms::form::FormPlanner;
use crate::forms::options::{column, Opt};
use crate::forms::spec::{self, ChartSpec, SpecInput};
use crate::labels::{display, humanize, position};
use crate::model::*;
use crate::scale;
use crate::sequence::SeqState;

pub(crate) struct Line;

pub(crate) const OPTIONS: &[Opt] = &[
    column(OptName::X),
    column(OptName::Y),
    column(OptName::Series),
];

impl FormPlanner for Line {
    fn spec(&self, cx: &mut Ctx, input: &SpecInput) -> Outcome<ChartSpec> {
        let view = &input.view;
        let x = match input.given(OptName::X) {
            Some(id) => input.lookup(cx, id)?,
            None => {
                let times: Vec<usize> = input
                    .schema
                    .iter()
                    .enumerate()
                    .filter(|(_, (_, t))| t.is_time())
                    .map(|(i, _)| i)
                    .collect();
                let [only] = times[..] else {
                    let help = format!("write `line {view}: x COLUMN, ...`");
                    let question = "which column runs along x?".into();
                    return Err(input.missing(cx, OptName::X, question, help));
                };
                (only, input.schema[only].1)
            }
        };
        // A line over text categories is allowed but linted
        // (`line-over-categories`): the line implies an order.
        let Some(y) = input.given_or_measure(OptName::Y) else {
            let help =
                format!("write `line {view}: y COLUMN`, or declare `compare KEY by MEASURE`");
            let question = "which column is the measure?".into();
            return Err(input.missing(cx, OptName::Y, question, help));
        };
        let y = input.lookup(cx, y)?;
        input.number_column(cx, y, input.span_of(OptName::Y), "the measure")?;
        let series = input.optional(cx, input.given_or_key(OptName::Series))?;
        Ok(ChartSpec {
            series,
            measure_is_count: input.counts(y.0),
            ..input.spec(x.0, y.0)
        })
    }

    fn chart(&self, cx: &mut Ctx, spec: &ChartSpec, c: &ChartStmt) -> Outcome<SeqState> {
        let t = &spec.table;
        let (xcol, ycol) = (&t.columns[spec.x], &t.columns[spec.y]);
        let lines = collect(cx, spec, c)?;
        if !lines.y.0.is_finite() {
            return Err(spec.no_values(cx, c));
        }
        let Lines {
            names,
            mut series,
            categories,
            x: (lo, hi),
            y: (ylo, yhi),
        } = lines;
        for s in &mut series {
            s.points.sort_by(|a, b| a.x.total_cmp(&b.x));
        }
        let quarterly = xcol.ty == ColType::Month
            && series.iter().flat_map(|s| &s.points).count() > 1
            && series
                .iter()
                .flat_map(|s| &s.points)
                .all(|p| (p.x.round() as i64).rem_euclid(3) == 0);
        let x = match quarterly {
            // every point a quarter's first month: quarterly data
            true => scale::quarter_axis(lo, hi, None),
            false => x_axis(xcol, &categories, lo, hi),
        };
        let y = scale::linear_axis(ylo, yhi, false, Some(humanize(&ycol.name)));
        let chart = Chart::Line(LineChart {
            x,
            y,
            series,
            annotations: Vec::new(),
            end_labels: false,
        });
        let anchors = spec::category_anchors(c, spec);
        Ok(spec.state(
            chart,
            names,
            spec.series
                .map_or(ycol.name.clone(), |s| t.columns[s].name.clone()),
            anchors,
        ))
    }
}

/// The series of a line chart, with the range of x and y.
struct Lines {
    names: Vec<String>,
    series: Vec<Series>,
    /// Text categories along x, in order of first appearance.
    categories: Vec<String>,
    x: (f64, f64),
    y: (f64, f64),
}

/// Read the view's rows into series; reports two rows at one x of one
/// series.
fn collect(cx: &mut Ctx, spec: &ChartSpec, c: &ChartStmt) -> Outcome<Lines> {
    let t = &spec.table;
    let (xcol, ycol) = (&t.columns[spec.x], &t.columns[spec.y]);
    let mut out = Lines {
        names: Vec::new(),
        series: Vec::new(),
        categories: Vec::new(),
        x: (f64::INFINITY, f64::NEG_INFINITY),
        y: (f64::INFINITY, f64::NEG_INFINITY),
    };
    // Exact x values (`-0.0` counted as `0.0`): rounding them to a grid
    // would merge distinct points or overflow for large x.
    let mut seen: BTreeSet<(String, u64)> = BTreeSet::new();
    for r in 0..xcol.values.len() {
        let name = match spec.series {
            Some(s) => display(&t.columns[s].values.value(r)),
            None => humanize(&ycol.name),
        };
        let Some(x) = x_of(xcol, r, &mut out.categories) else {
            continue;
        };
        let y = match &ycol.values.value(r) {
            Value::Number(v) => Some(*v),
            _ => None,
        };
        if !seen.insert((name.clone(), (x + 0.0).to_bits())) {
            return Err(cx.error_with_help(
                "duplicate-point",
                format!(
                    "a line needs one value per x and series, but `{}` has several rows for \"{}\" at {}",
                    spec.table_name,
                    name,
                    display(&xcol.values.value(r))
                ),
                c.span.clone(),
                "in this chart",
                format!(
                    "group the view first, e.g. `| by {}{}: ...`",
                    xcol.name,
                    spec.series
                        .map_or(String::new(), |s| format!(", {}", t.columns[s].name))
                ),
            ));
        }
        out.x = (out.x.0.min(x), out.x.1.max(x));
        if let Some(y) = y {
            out.y = (out.y.0.min(y), out.y.1.max(y));
        }
        let idx = match out.names.iter().position(|n| *n == name) {
            Some(i) => i,
            None => {
                out.names.push(name.clone());
                out.series.push(Series {
                    label: name.clone(),
                    name,
                    role: Role::Context,
                    points: Vec::new(),
                    end_values: Vec::new(), // written by `drawn`
                });
                out.names.len() - 1
            }
        };
        out.series[idx].points.push(Point { x, y });
    }
    Ok(out)
}

/// Where row `r` sits along x: text categories at 0, 1, 2, ... in order of
/// first appearance; numbers and times at their value.
fn x_of(xcol: &Column, r: usize, categories: &mut Vec<String>) -> Option<f64> {
    if xcol.ty != ColType::Text {
        return position(&xcol.values.value(r));
    }
    let label = display(&xcol.values.value(r));
    Some(match categories.iter().position(|c| *c == label) {
        Some(i) => i as f64,
        None => {
            categories.push(label);
            (categories.len() - 1) as f64
        }
    })
}

/// The x axis of a line chart over `xcol`.
fn x_axis(xcol: &Column, categories: &[String], lo: f64, hi: f64) -> Axis {
    let kind = match xcol.ty {
        ColType::Month => ScaleKind::Months,
        ColType::Date => ScaleKind::Days,
        ColType::Year => ScaleKind::Years,
        ColType::Text => ScaleKind::Categories,
        ColType::Number => ScaleKind::Linear,
    };
    match kind {
        ScaleKind::Linear => scale::linear_axis(lo, hi, false, None),
        ScaleKind::Categories => Axis {
            title: None,
            scale: ScaleKind::Categories,
            domain: [0.0, (categories.len().max(2) - 1) as f64],
            ticks: categories
                .iter()
                .enumerate()
                .map(|(i, c)| Tick {
                    value: i as f64,
                    label: c.clone(),
                })
                .collect(),
            grid: false,
        },
        k => scale::time_axis(k, lo, hi, None),
    }
}
