//! `cite VALUE`: the evidence of a named value drawn on the frame's chart,
//! from the rows the value was computed from. What is drawn follows the
//! value's function and the chart's form: a bracket between the two marks
//! a ratio or a difference compares, a from–to marker along a line for a
//! change, the marks of a share emphasised, the one mark of a single row
//! (max, min, first, last, a category's value) emphasised, or the compound
//! or fitted path of a growth or a slope. The figure prints as the frame's
//! texts quote the value (`settle`).

use std::collections::BTreeMap;

use crescendo_data::{stats, time, Table, Value};
use crescendo_lang::ast::{ChartStmt, FormatSpec, Ident, NumberStyle, OptName, Span};

use super::provenance::{self, NoProv, Picked, Prov};
use crate::context::{Ctx, Outcome};
use crate::model::*;
use crate::scope::Scope;
use crate::sequence::SeqState;
use crate::values::format_quantity;

/// The functions whose evidence is one row.
const ONE_ROW: &[&str] = &["first", "last", "min", "max", "sum", "mean", "median"];

/// `cite VALUE`.
pub(crate) fn cite(
    cx: &mut Ctx,
    scope: &Scope,
    st: &mut SeqState,
    id: &Ident,
    span: &Span,
) -> Outcome<()> {
    let name = &id.name;
    let Some(expr) = scope.values.exprs.get(name) else {
        let mut d = cx.at(
            "unknown-name",
            format!("no value named `{name}`"),
            id.span.clone(),
            "not a value of this story",
        );
        d = d.suggest(name, scope.values.exprs.keys().map(String::as_str));
        return Err(cx.report(d));
    };
    if scope.values.broken.contains(name) {
        return Err(cx.already_reported());
    }
    let defined = scope.values.spans.get(name).cloned();
    let prov = match provenance::of((scope, cx.src), expr, 0) {
        Ok(p) => p,
        Err(NoProv::Literal) => {
            let mut d = cx.at(
                "cite",
                format!(
                    "`{name}` is computed from numbers written in the story, not from rows of data"
                ),
                id.span.clone(),
                "nothing on the chart to cite",
            );
            if let Some(at) = defined {
                d = d.also(cx.src, at, "defined without a view here");
            }
            let d = d.help("cite a value computed from a view, e.g. `value v = last(VIEW.COLUMN)`");
            return Err(cx.report(d));
        }
        Err(NoProv::Broken) => {
            return Err(cx.error_with_help(
                "cite",
                format!("the evidence of `{name}` cannot be drawn"),
                id.span.clone(),
                "not one function of a view's rows, nor a ratio or difference of two",
                "cite a function of a view (`max`, `last`, `share`, `change`, `growth`, `slope`, ...) or a value `a / b` or `a - b` of two of them",
            ));
        }
    };
    let Some(stmt) = st.chart_stmt.clone() else {
        return Err(cx.error_with_help(
            "cite",
            "`cite` draws on a chart of a view",
            span.clone(),
            "this frame's chart is not one",
            "cite the value in a frame with a line, bars, dots, scatter or pie chart",
        ));
    };
    let view = first_view(&prov);
    let table = &scope.tables.by_name[&view].table;
    // a value of another view is drawn where that view's rows have marks
    // here: a view of the same rows (the same columns) that kept them
    let same = view == stmt.view.name;
    let chart_table = scope.tables.by_name.get(&stmt.view.name).map(|n| &n.table);
    let same_grain = chart_table.is_some_and(|c| {
        table.columns.len() == c.columns.len()
            && table
                .columns
                .iter()
                .all(|t| c.columns.iter().any(|x| x.name == t.name))
    });
    if !same && !same_grain {
        let mut d = cx.at(
            "cite",
            format!(
                "`{name}` was computed from `{view}`, but this frame's chart draws `{}`",
                stmt.view.name
            ),
            id.span.clone(),
            "its rows are not in this chart",
        );
        if let Some(at) = defined {
            d = d.also(cx.src, at, format!("computed from `{view}` here"));
        }
        let d = d.help(format!(
            "a chart of `{view}` would show it: cite `{name}` in a frame whose chart draws `{view}`"
        ));
        return Err(cx.report(d));
    }
    let q = scope.values.by_name.get(name);
    let shape = shape(
        &Marks {
            st,
            stmt: &stmt,
            table,
        },
        &prov,
    )
    .map_err(|why| {
        let mut d = cx.at(
            "cite",
            format!("`{name}` cannot be cited on this chart: {why}"),
            id.span.clone(),
            "not drawn here",
        );
        if let (false, Some(at)) = (same, defined.clone()) {
            d = d.also(cx.src, at, format!("computed from `{view}` here"));
        }
        let d = if same {
            d.help("show the rows it was computed from, or cite it on a chart that draws them")
        } else {
            d.note(format!(
                "this chart draws `{}`, which leaves out rows of `{view}`",
                stmt.view.name
            ))
            .help(format!("a chart of `{view}` would show it"))
        };
        cx.report(d)
    })?;
    let figure = q.map_or_else(String::new, |q| {
        crate::numbers::drawn(format_quantity(q, &default_spec(&prov)))
    });
    st.cites.retain(|(c, _)| c.value != *name);
    st.anchors.cites.retain(|(v, _)| v != name);
    st.anchors.cites.push((name.clone(), span.clone()));
    st.cites.push((
        Cite {
            value: name.clone(),
            figure,
            shape,
        },
        true,
    ));
    Ok(())
}

/// The figure of each value cited in this frame, as this frame's texts
/// quote it (the same number policy as the text), kept through the rest
/// of the sequence (until `split` turns it into small multiples).
pub(crate) fn settle(st: &mut SeqState, quoted: &BTreeMap<String, String>) {
    if matches!(st.chart, Chart::Panels(_)) {
        // small multiples end the cites of the sequence (each panel is a
        // chart of its own; cite the value on one chart)
        st.cites.clear();
        st.anchors.cites.clear();
        return;
    }
    for (c, fresh) in &mut st.cites {
        if *fresh {
            if let Some(f) = quoted.get(&c.value) {
                c.figure = f.clone();
            }
            *fresh = false;
        }
    }
}

/// A value cited in this frame (`within`) whose marks the frame hides
/// (after any `unfold` shows them all) is an error: nothing would show it.
pub(crate) fn check_shown(
    cx: &mut Ctx,
    chart: &Chart,
    cites: &[Cite],
    said: &[(String, Span)],
    within: &Span,
) -> Outcome<()> {
    for c in cites {
        let Some((_, span)) = said
            .iter()
            .find(|(v, s)| *v == c.value && s.start >= within.start && s.end <= within.end)
        else {
            continue;
        };
        let marks = match &c.shape {
            CiteShape::Between { from, to } | CiteShape::Change { from, to } => vec![*from, *to],
            CiteShape::One { mark } => vec![*mark],
            CiteShape::Part { marks } => marks.clone(),
            CiteShape::Path { .. } => Vec::new(),
        };
        if let Some(m) = marks.iter().find(|m| hidden(chart, m)) {
            let what = mark_name(chart, m);
            return Err(cx.error_with_help(
                "cite",
                format!("`{}` rests on \"{what}\", which this frame hides", c.value),
                span.clone(),
                "hidden here",
                "show it (`show` or `spotlight`) before citing the value",
            ));
        }
    }
    Ok(())
}

/// Whether a mark is hidden in this frame.
fn hidden(chart: &Chart, m: &MarkRef) -> bool {
    let h = |r: Option<Role>| r == Some(Role::Hidden);
    match chart {
        Chart::Bars(b) => h(b.bars.get(m.item).map(|x| x.role)),
        Chart::Pie(p) => h(p.slices.get(m.item).map(|x| x.role)),
        Chart::Parts(p) => {
            h(p.categories.get(m.item).map(|x| x.role)) || h(p.parts.get(m.part).map(|x| x.role))
        }
        Chart::Dots(d) => {
            h(d.rows.get(m.item).map(|x| x.role)) || h(d.series.get(m.part).map(|x| x.role))
        }
        Chart::Line(l) => h(l.series.get(m.item).map(|x| x.role)),
        Chart::Scatter(s) => h(s.points.get(m.item).map(|x| x.role)),
        _ => false,
    }
}

/// The sentence a screen reader hears about the frame's cites, in the
/// story's language (empty without cites).
pub(crate) fn describe(chart: &Chart, cites: &[Cite]) -> String {
    let s = crate::sentences::current();
    let fill = crate::sentences::fill;
    let mut out = String::new();
    for c in cites {
        let name = |m: &MarkRef| mark_name(chart, m);
        out.push_str(&match &c.shape {
            CiteShape::Between { from, to } => {
                fill(s.cited_pair, &[&c.figure, &name(from), &name(to)])
            }
            CiteShape::Change { from, to } => {
                fill(s.cited_change, &[&c.figure, &name(from), &name(to)])
            }
            CiteShape::One { mark } => fill(s.cited, &[&c.figure, &name(mark)]),
            CiteShape::Part { marks } => {
                let names: Vec<String> = marks.iter().map(name).collect();
                fill(s.cited, &[&c.figure, &names.join(", ")])
            }
            CiteShape::Path { .. } => fill(s.cited_path, &[&c.figure]),
        });
    }
    out
}

/// A mark as its reader would name it: the bar, the category and part,
/// the series and the time.
fn mark_name(chart: &Chart, m: &MarkRef) -> String {
    let two = |a: Option<&str>, b: Option<&str>| match (a, b) {
        (Some(a), Some(b)) => format!("{a} {b}"),
        (a, b) => a.or(b).unwrap_or_default().to_string(),
    };
    match chart {
        Chart::Bars(b) => b
            .bars
            .get(m.item)
            .map(|x| x.label.clone())
            .unwrap_or_default(),
        Chart::Pie(p) => p
            .slices
            .get(m.item)
            .map(|x| x.label.clone())
            .unwrap_or_default(),
        Chart::Parts(p) => two(
            p.categories.get(m.item).map(|x| x.label.as_str()),
            p.parts.get(m.part).map(|x| x.name.as_str()),
        ),
        Chart::Dots(d) => two(
            d.rows.get(m.item).map(|x| x.label.as_str()),
            (d.series.len() > 1)
                .then(|| d.series.get(m.part).map(|x| x.name.as_str()))
                .flatten(),
        ),
        Chart::Line(l) => {
            let s = l.series.get(m.item);
            let at = s
                .and_then(|s| s.points.get(m.part))
                .map(|p| crate::describe::tick_label(&l.x, p.x));
            two(
                (l.series.len() > 1)
                    .then(|| s.map(|s| s.name.as_str()))
                    .flatten(),
                at.as_deref(),
            )
        }
        Chart::Scatter(sc) => sc
            .points
            .get(m.item)
            .map(|p| p.label.clone())
            .unwrap_or_default(),
        _ => String::new(),
    }
}

/// The figure's format when no text of the frame quotes the value: a
/// share, a percent change and a growth are percentages.
fn default_spec(p: &Prov) -> FormatSpec {
    let percent = matches!(p, Prov::Rows(r) if matches!(r.func.as_str(), "share" | "percent_change" | "growth"));
    FormatSpec {
        style: if percent {
            NumberStyle::Percent
        } else {
            NumberStyle::Plain
        },
        ..FormatSpec::default()
    }
}

/// The view of the first rows the evidence rests on, and every other
/// must be the same (a pair from two views names the first that differs).
fn first_view(p: &Prov) -> String {
    match p {
        Prov::Rows(r) => r.view.clone(),
        Prov::Pair(a, b) => {
            let (va, vb) = (first_view(a), first_view(b));
            if va == vb {
                va
            } else {
                vb
            }
        }
    }
}

/// The chart a cite draws on, with its statement and the view's table.
struct Marks<'a> {
    st: &'a SeqState,
    stmt: &'a ChartStmt,
    table: &'a Table,
}

impl Marks<'_> {
    /// The column playing option `o` in the chart statement.
    fn col(&self, o: OptName) -> Option<usize> {
        let name = self
            .stmt
            .opts
            .iter()
            .find(|x| x.name == o)?
            .column
            .as_ref()?;
        self.table.columns.iter().position(|c| c.name == name.name)
    }

    fn cell(&self, col: usize, row: usize) -> Value {
        self.table.columns[col].values.value(row)
    }

    /// The text a category or series name of `cell` is drawn with.
    fn name(&self, col: Option<usize>, row: usize) -> Option<String> {
        Some(match self.cell(col?, row) {
            Value::Text(t) => t,
            Value::Year(y) => y.to_string(),
            Value::Month(m) => time::month_label(m),
            Value::Number(n) => crescendo_data::format::number(n, None),
            Value::Date(d) => time::date_iso(d),
            Value::Missing => return None,
        })
    }

    /// The mark that draws row `r`, or why there is none.
    fn mark(&self, r: usize) -> Result<MarkRef, String> {
        let by_name = |names: Vec<&str>, col: Option<usize>, what: &str| -> Result<usize, String> {
            match col {
                None if names.len() == 1 => Ok(0),
                None => Err(format!("name the {what} column in the chart statement")),
                Some(_) => {
                    let n = self.name(col, r).unwrap_or_default();
                    names
                        .iter()
                        .position(|x| *x == n)
                        .ok_or_else(|| format!("\"{n}\" is not drawn in this chart"))
                }
            }
        };
        let category = |names| by_name(names, self.col(OptName::Category), "category");
        let series = |names| by_name(names, self.col(OptName::Series), "series");
        let one = |item| Ok(MarkRef { item, part: 0 });
        match &self.st.chart {
            Chart::Bars(b) => one(category(b.bars.iter().map(|x| x.label.as_str()).collect())?),
            Chart::Pie(p) => one(category(
                p.slices.iter().map(|x| x.label.as_str()).collect(),
            )?),
            Chart::Parts(p) => {
                let part_col = self.col(OptName::Stack).or(self.col(OptName::Group));
                Ok(MarkRef {
                    item: category(p.categories.iter().map(|x| x.label.as_str()).collect())?,
                    part: by_name(
                        p.parts.iter().map(|x| x.name.as_str()).collect(),
                        part_col,
                        "stack or group",
                    )?,
                })
            }
            Chart::Dots(d) => Ok(MarkRef {
                item: category(d.rows.iter().map(|x| x.label.as_str()).collect())?,
                part: series(d.series.iter().map(|x| x.name.as_str()).collect())?,
            }),
            Chart::Line(l) => {
                let s = series(l.series.iter().map(|x| x.name.as_str()).collect())?;
                let x = self
                    .col(OptName::X)
                    .and_then(|c| provenance::position(&self.cell(c, r)))
                    .ok_or("name the x column in the chart statement")?;
                let k = l.series[s]
                    .points
                    .iter()
                    .position(|p| p.x == x && p.y.is_some())
                    .ok_or("that point has no value in this chart")?;
                Ok(MarkRef { item: s, part: k })
            }
            Chart::Scatter(sc) => {
                let at = |o| {
                    self.col(o)
                        .and_then(|c| provenance::position(&self.cell(c, r)))
                };
                let (Some(x), Some(y)) = (at(OptName::X), at(OptName::Y)) else {
                    return Err("name the x and y columns in the chart statement".into());
                };
                one(sc
                    .points
                    .iter()
                    .position(|p| p.x == x && p.y == y)
                    .ok_or("that point is not drawn in this chart")?)
            }
            _ => Err("`cite` draws on line, bars, dots, scatter and pie charts".into()),
        }
    }

    /// The one mark of a one-row function.
    fn single(&self, p: &Picked) -> Result<MarkRef, String> {
        let present: Vec<usize> = p
            .rows
            .iter()
            .copied()
            .filter(|r| {
                p.column
                    .is_some_and(|c| !matches!(self.cell(c, *r), Value::Missing))
            })
            .collect();
        let row = match p.func.as_str() {
            "first" => present.first().copied(),
            "last" => present.last().copied(),
            "min" | "max" => {
                let key = |r: &usize| p.column.and_then(|c| provenance::position(&self.cell(c, *r))).unwrap_or(0.0);
                let mut best: Option<usize> = None;
                for r in &present {
                    let better = best.is_none_or(|b| {
                        if p.func == "min" { key(r) < key(&b) } else { key(r) > key(&b) }
                    });
                    if better {
                        best = Some(*r);
                    }
                }
                best
            }
            _ if present.len() == 1 => present.first().copied(),
            f => {
                return Err(format!(
                    "`{f}` of {} rows is not one mark; cite one row, a share, a change, a growth, a slope, or a ratio or difference of two rows",
                    present.len()
                ))
            }
        };
        self.mark(row.ok_or("no row was selected")?)
    }

    /// Points (x, y) of the selected rows, in `by` order.
    fn points(&self, p: &Picked) -> Vec<(f64, f64)> {
        let (Some(c), Some(b)) = (p.column, p.by) else {
            return Vec::new();
        };
        p.rows
            .iter()
            .filter_map(|r| {
                Some((
                    provenance::position(&self.cell(b, *r))?,
                    provenance::position(&self.cell(c, *r))?,
                ))
            })
            .collect()
    }
}

/// What to draw for evidence `p` on the chart of `m`.
fn shape(m: &Marks, p: &Prov) -> Result<CiteShape, String> {
    let line = matches!(m.st.chart, Chart::Line(_));
    let path_ok = line || matches!(m.st.chart, Chart::Scatter(_));
    match p {
        Prov::Pair(a, b) => {
            let one = |x: &Prov| match x {
                Prov::Rows(r) => m.single(r),
                Prov::Pair(..) => Err("each side of a ratio or difference must be one row".into()),
            };
            Ok(CiteShape::Between {
                from: one(a)?,
                to: one(b)?,
            })
        }
        Prov::Rows(r) => match r.func.as_str() {
            "share" => Ok(CiteShape::Part {
                marks: r
                    .rows
                    .iter()
                    .map(|row| m.mark(*row))
                    .collect::<Result<Vec<_>, _>>()?,
            }),
            "change" | "percent_change" => {
                let (Some(a), Some(b)) = (r.rows.first(), r.rows.last()) else {
                    return Err("no rows were selected".into());
                };
                let (from, to) = (m.mark(*a)?, m.mark(*b)?);
                Ok(if line {
                    CiteShape::Change { from, to }
                } else {
                    CiteShape::Between { from, to }
                })
            }
            "growth" if path_ok => compound(&m.points(r)).map(|points| CiteShape::Path { points }),
            "slope" | "intercept" | "correlation" if path_ok => {
                fitted(&m.points(r)).map(|points| CiteShape::Path { points })
            }
            "growth" | "slope" | "intercept" | "correlation" => {
                Err("a growth or a fit is drawn as a path over a line or a scatter".into())
            }
            f if ONE_ROW.contains(&f) => m.single(r).map(|mark| CiteShape::One { mark }),
            f => Err(format!("`{f}` has no one place on a chart")),
        },
    }
}

/// The compound path from the first to the last point: the value grown at
/// one steady rate, at each point's x.
fn compound(pts: &[(f64, f64)]) -> Result<Vec<(f64, f64)>, String> {
    let (Some(a), Some(b)) = (pts.first(), pts.last()) else {
        return Err("a growth needs two points".into());
    };
    if a.1 <= 0.0 || b.1 <= 0.0 || a.0 == b.0 {
        return Err("a growth needs a positive start and end".into());
    }
    Ok(pts
        .iter()
        .map(|(x, _)| (*x, a.1 * (b.1 / a.1).powf((x - a.0) / (b.0 - a.0))))
        .collect())
}

/// The least-squares line over the points' x extent.
fn fitted(pts: &[(f64, f64)]) -> Result<Vec<(f64, f64)>, String> {
    let (xs, ys): (Vec<f64>, Vec<f64>) = pts.iter().copied().unzip();
    let fit = stats::linear_fit(&xs, &ys).map_err(|e| e.message().to_string())?;
    let lo = xs.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = xs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    Ok(vec![
        (lo, fit.intercept + fit.slope * lo),
        (hi, fit.intercept + fit.slope * hi),
    ])
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The compound path meets both ends and grows by one factor per step
    /// (the definition of a compound rate; common practice).
    #[test]
    fn compound_path_meets_both_ends() {
        let p = compound(&[(0.0, 100.0), (1.0, 0.0), (2.0, 121.0)]).unwrap();
        assert_eq!(p[0], (0.0, 100.0));
        assert!((p[1].1 - 110.0).abs() < 1e-9);
        assert!((p[2].1 - 121.0).abs() < 1e-9);
    }

    #[test]
    fn fitted_line_spans_the_points() {
        let p = fitted(&[(1.0, 2.0), (2.0, 4.0), (3.0, 6.0)]).unwrap();
        assert_eq!(p, vec![(1.0, 2.0), (3.0, 6.0)]);
    }
}
