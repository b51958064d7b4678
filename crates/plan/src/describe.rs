//! A text alternative for each frame, generated from its chart: the form,
//! what the axes show, the items, the range and direction of what is
//! spotlighted, and the takeaway. Written from the sentence patterns of
//! the story's locale (`sentences.rs`); names and titles as written.

use crescendo_data::time;

use crate::sentences::{current as sentences, fill};

use crate::model::*;

/// The text alternative of a frame drawing `chart`; `key` names what its
/// items are (the chart's key column).
pub(crate) fn describe(chart: &Chart, key: &str, takeaway: Option<&str>) -> String {
    let t = sentences();
    let mut out = match chart {
        Chart::Line(l) => line(l, key) + &moments(l),
        Chart::Bars(b) => bars(b, key),
        Chart::Parts(p) => parts(p, key),
        Chart::Dots(d) => dots(d),
        Chart::Scatter(s) => scatter(s),
        Chart::Figures(f) => figures(f),
        Chart::Table(t) => table(t),
        Chart::Pie(p) => pie(p, key),
        Chart::Plugin(p) => fill(t.plugin, &[&p.plugin_name, &p.plugin_version, &p.form]),
        Chart::Panels(pc) => panels(pc, key),
    };
    if let Some(takeaway) = takeaway {
        out.push_str(&fill(t.takeaway, &[takeaway]));
    }
    out
}

/// A figure as described: as its label (the number policy).
fn fig(v: f64) -> String {
    crate::numbers::label(v)
}

/// " (highlighted)" for an item in focus.
fn lit(r: Role) -> &'static str {
    if r == Role::Focus {
        sentences().highlighted
    } else {
        ""
    }
}

/// What an axis measures: its title as written.
fn measure(a: &Axis) -> String {
    a.title
        .clone()
        .unwrap_or_else(|| sentences().the_measure.into())
}

/// A month axis of quarterly data ([`crate::scale::quarter_axis`]): its
/// positions are named as quarters too. (Under a fiscal year, monthly data
/// get quarter ticks as well, so their positions keep their months.)
fn quarterly(axis: &Axis) -> bool {
    !crescendo_data::locale::current().fiscal.is_fiscal()
        && !axis.ticks.is_empty()
        && axis.ticks.iter().all(|t| {
            ["Q1", "Q2", "Q3", "Q4"]
                .iter()
                .any(|q| t.label == *q || t.label.ends_with(&format!(" {q}")))
        })
}

/// A position on an axis as its reader would name it.
pub(crate) fn tick_label(axis: &Axis, v: f64) -> String {
    match axis.scale {
        ScaleKind::Months if quarterly(axis) => {
            let i = v.round() as i32;
            let fiscal = crescendo_data::locale::current().fiscal;
            fiscal.quarter_label(i.div_euclid(12), (i.rem_euclid(12) + 1) as u32)
        }
        ScaleKind::Months => time::month_label(v.round() as i32),
        ScaleKind::Days => time::date_text(v.round() as i32),
        ScaleKind::Years => format!("{}", v.round() as i64),
        ScaleKind::Categories => axis
            .ticks
            .iter()
            .find(|t| (t.value - v).abs() < 1e-9)
            .map_or_else(String::new, |t| t.label.clone()),
        ScaleKind::Linear => fig(v),
    }
}

/// The moments of a line chart, each as a sentence: its label and time.
fn moments(l: &LineChart) -> String {
    let t = sentences();
    let mut out = String::new();
    for a in &l.annotations {
        if let Annotation::Moment { from, to, text } = a {
            let when = match to {
                Some(to) => format!("{} – {}", tick_label(&l.x, *from), tick_label(&l.x, *to)),
                None => tick_label(&l.x, *from),
            };
            out.push_str(&fill(t.marked, &[text, &when]));
        }
    }
    out
}

fn line(l: &LineChart, key: &str) -> String {
    let shown: Vec<&Series> = l.series.iter().filter(|s| s.role != Role::Hidden).collect();
    let t = sentences();
    let mut out = fill(
        t.line,
        &[
            &measure(&l.y),
            &tick_label(&l.x, l.x.domain[0]),
            &tick_label(&l.x, l.x.domain[1]),
        ],
    );
    if l.series.len() > 1 {
        let names: Vec<&str> = shown.iter().map(|s| s.name.as_str()).collect();
        out.push_str(&fill(t.one_line_per, &[key, &names.join(", ")]));
    }
    out.push('.');
    for s in shown.iter().filter(|s| s.role == Role::Focus) {
        let pts: Vec<(f64, f64)> = s
            .points
            .iter()
            .filter_map(|p| p.y.map(|y| (p.x, y)))
            .collect();
        let (Some(first), Some(last)) = (pts.first(), pts.last()) else {
            continue;
        };
        let peak = pts
            .iter()
            .copied()
            .fold(*first, |a, b| if b.1 > a.1 { b } else { a });
        let pattern = if last.1 > first.1 {
            t.rose
        } else if last.1 < first.1 {
            t.fell
        } else {
            t.level
        };
        out.push_str(&fill(
            pattern,
            &[
                &s.name,
                &fig(first.1),
                &tick_label(&l.x, first.0),
                &fig(last.1),
                &tick_label(&l.x, last.0),
                &fig(peak.1),
                &tick_label(&l.x, peak.0),
            ],
        ));
    }
    out
}

/// The items not hidden, each as `text` writes it with its role's mark.
fn shown<T>(items: &[T], role: fn(&T) -> Role, text: impl Fn(&T) -> String) -> Vec<String> {
    (items.iter())
        .filter(|x| role(x) != Role::Hidden)
        .map(|x| format!("{}{}", text(x), lit(role(x))))
        .collect()
}

fn bars(b: &BarChart, key: &str) -> String {
    let shown = shown(
        &b.bars,
        |x| x.role,
        |x| format!("{} {}", x.label, x.value_label),
    );
    fill(
        sentences().bars,
        &[
            &measure(&b.value),
            key,
            &shown.len().to_string(),
            &shown.join("; "),
        ],
    )
}

fn parts(p: &PartsChart, key: &str) -> String {
    let t = sentences();
    let pattern = match p.mode {
        PartsMode::Stacked => t.stacked,
        PartsMode::Grouped => t.grouped,
    };
    let parts = shown(&p.parts, |x| x.role, |x| x.name.clone());
    let cats: Vec<String> = p
        .categories
        .iter()
        .map(|c| format!("{} {}", c.label, c.total_label))
        .collect();
    fill(
        pattern,
        &[
            &measure(&p.value),
            &p.categories.len().to_string(),
            key,
            &parts.join(", "),
            &cats.join("; "),
        ],
    )
}

fn dots(d: &DotChart) -> String {
    let rows = shown(
        &d.rows,
        |r| r.role,
        |r| {
            let vs: Vec<String> = (r.values.iter())
                .map(|v| v.map_or_else(|| sentences().no_data.into(), fig))
                .collect();
            format!("{} {}", r.label, vs.join(" / "))
        },
    );
    fill(sentences().dots, &[&measure(&d.value), &rows.join("; ")])
}

fn scatter(s: &ScatterChart) -> String {
    let t = sentences();
    let mut out = fill(
        t.scatter,
        &[&measure(&s.y), &measure(&s.x), &s.points.len().to_string()],
    );
    if let Some(f) = &s.fit {
        out.push_str(&fill(t.fit, &[&fig(f.slope)]));
        if let Some(r) = f.r {
            out.push_str(&fill(t.correlation, &[&fig(r)]));
        }
    }
    let mut focus: Vec<&str> = Vec::new();
    for p in s.points.iter().filter(|p| p.role == Role::Focus) {
        let name = if p.label.is_empty() {
            p.series.as_str()
        } else {
            p.label.as_str()
        };
        if !name.is_empty() && !focus.contains(&name) {
            focus.push(name);
        }
    }
    if !focus.is_empty() {
        out.push_str(&fill(t.highlighted_list, &[&focus.join(", ")]));
    }
    out.push('.');
    out
}

fn figures(f: &FigureChart) -> String {
    let figs: Vec<String> = f
        .figures
        .iter()
        .map(|x| format!("{}: {}", x.text, x.caption))
        .collect();
    let t = sentences();
    let pattern = if figs.len() == 1 { t.figure } else { t.figures };
    fill(pattern, &[&figs.join("; ")])
}

fn table(t: &TableChart) -> String {
    let cols: Vec<&str> = t.columns.iter().map(|c| c.title.as_str()).collect();
    let focus: Vec<&str> = t
        .rows
        .iter()
        .filter(|r| r.role == Role::Focus || r.focus_cell.is_some())
        .filter_map(|r| r.cells.first().map(String::as_str))
        .collect();
    let words = sentences();
    let mut out = fill(words.table, &[&t.rows.len().to_string(), &cols.join(", ")]);
    if !focus.is_empty() {
        out.push_str(&fill(words.highlighted_list, &[&focus.join(", ")]));
    }
    out.push('.');
    out
}

fn pie(p: &PieChart, key: &str) -> String {
    let slices = shown(
        &p.slices,
        |s| s.role,
        |s| format!("{} {}", s.label, s.share_label),
    );
    fill(sentences().pie, &[key, &slices.join("; ")])
}

fn panels(pc: &PanelChart, key: &str) -> String {
    let panels = shown(&pc.panels, |p| p.role, |p| p.title.clone());
    let t = sentences();
    let scale = if pc.common_scale {
        t.common_scale
    } else {
        t.separate_scales
    };
    fill(t.panels, &[key, scale, &panels.join(", ")])
}

#[cfg(test)]
mod tests {
    use super::*;
    use crescendo_data::locale::{scoped, Conventions};

    fn axis(title: Option<&str>, scale: ScaleKind, domain: [f64; 2]) -> Axis {
        Axis {
            title: title.map(str::to_string),
            scale,
            domain,
            ticks: Vec::new(),
            grid: false,
        }
    }

    /// A line chart (months, two stations, one in focus) and a bar chart,
    /// described in the four languages crescendo ships; German nouns keep
    /// their capitals, names stay as written.
    #[test]
    fn descriptions_in_four_locales() {
        let jul_2022 = 2022 * 12 + 6;
        let point = |x: i32, y: f64| Point {
            x: f64::from(x),
            y: Some(y),
        };
        let series = |name: &str, role, ys: [f64; 3]| Series {
            name: name.into(),
            label: name.into(),
            role,
            points: (0..3)
                .map(|k| point(jul_2022 + k * 6, ys[k as usize]))
                .collect(),
            end_values: Vec::new(),
        };
        let line = Chart::Line(LineChart {
            x: axis(
                None,
                ScaleKind::Months,
                [f64::from(jul_2022), f64::from(jul_2022 + 12)],
            ),
            y: axis(
                Some("Einnahmen je Monat in Euro"),
                ScaleKind::Linear,
                [0.0, 1.0],
            ),
            series: vec![
                series("Nord", Role::Focus, [1200.5, 1800.0, 1500.25]),
                series("Süd", Role::Context, [900.0, 950.0, 990.0]),
            ],
            annotations: Vec::new(),
            end_labels: false,
        });
        let bars = |tag| {
            Chart::Bars(BarChart {
                orientation: Orientation::Vertical,
                category_title: None,
                value: axis(Some("Anteil Online"), ScaleKind::Linear, [0.0, 1.0]),
                bars: ["Nord", "Süd"]
                    .iter()
                    .zip([0.527, 0.31])
                    .map(|(l, v)| Bar {
                        label: (*l).into(),
                        value: Some(v),
                        value_label: scoped(Conventions::of(Some(tag), None), || {
                            crate::numbers::share_label(v)
                        }),
                        role: if *l == "Nord" {
                            Role::Focus
                        } else {
                            Role::Context
                        },
                    })
                    .collect(),
            })
        };
        let mut out = String::new();
        for tag in ["en-GB", "de-DE", "fr-FR", "es-ES", "ja-JP"] {
            let c = Conventions::of(Some(tag), None);
            let text = scoped(c, || {
                format!(
                    "{}\n{}",
                    describe(&line, "Stelle", Some("Nord führt.")),
                    describe(&bars(tag), "Stelle", None)
                )
            });
            out.push_str(&format!("[{tag}]\n{text}\n\n"));
        }
        insta::assert_snapshot!(out);
    }
}
