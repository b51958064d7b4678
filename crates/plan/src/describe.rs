//! A text alternative for each frame, generated from its chart: the form,
//! what the axes show, the items, the range and direction of what is
//! spotlighted, and the takeaway.

use crescendo_data::time;

use crate::model::*;

/// The text alternative of a frame drawing `chart`; `key` names what its
/// items are (the chart's key column).
pub(crate) fn describe(chart: &Chart, key: &str, takeaway: Option<&str>) -> String {
    let mut out = match chart {
        Chart::Line(l) => line(l, key),
        Chart::Bars(b) => bars(b, key),
        Chart::Parts(p) => parts(p, key),
        Chart::Dots(d) => dots(d),
        Chart::Scatter(s) => scatter(s),
        Chart::Figures(f) => figures(f),
        Chart::Table(t) => table(t),
        Chart::Pie(p) => pie(p, key),
        Chart::Plugin(p) => format!(
            "Chart drawn by the plugin {} {} (form {}).",
            p.plugin_name, p.plugin_version, p.form
        ),
        Chart::Panels(pc) => panels(pc, key),
    };
    if let Some(t) = takeaway {
        out.push_str(&format!(" Takeaway: {t}"));
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
        " (highlighted)"
    } else {
        ""
    }
}

/// What an axis measures, in lower case.
fn measure(a: &Axis) -> String {
    a.title
        .clone()
        .unwrap_or_else(|| "the measure".into())
        .to_lowercase()
}

/// A position on an axis as its reader would name it.
fn tick_label(axis: &Axis, v: f64) -> String {
    match axis.scale {
        ScaleKind::Months => time::month_label(v.round() as i32),
        ScaleKind::Days => time::date_iso(v.round() as i32),
        ScaleKind::Years => format!("{}", v.round() as i64),
        ScaleKind::Categories => axis
            .ticks
            .iter()
            .find(|t| (t.value - v).abs() < 1e-9)
            .map_or_else(String::new, |t| t.label.clone()),
        ScaleKind::Linear => fig(v),
    }
}

fn line(l: &LineChart, key: &str) -> String {
    let shown: Vec<&Series> = l.series.iter().filter(|s| s.role != Role::Hidden).collect();
    let mut out = format!(
        "Line chart of {} from {} to {}",
        measure(&l.y),
        tick_label(&l.x, l.x.domain[0]),
        tick_label(&l.x, l.x.domain[1])
    );
    if l.series.len() > 1 {
        let names: Vec<&str> = shown.iter().map(|s| s.name.as_str()).collect();
        out.push_str(&format!(", one line per {key}: {}", names.join(", ")));
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
        let direction = if last.1 > first.1 {
            "rose"
        } else if last.1 < first.1 {
            "fell"
        } else {
            "ended level"
        };
        out.push_str(&format!(
            " Highlighted: {} {direction} from {} in {} to {} in {}, with a high of {} in {}.",
            s.name,
            fig(first.1),
            tick_label(&l.x, first.0),
            fig(last.1),
            tick_label(&l.x, last.0),
            fig(peak.1),
            tick_label(&l.x, peak.0)
        ));
    }
    out
}

fn bars(b: &BarChart, key: &str) -> String {
    let shown: Vec<String> = b
        .bars
        .iter()
        .filter(|x| x.role != Role::Hidden)
        .map(|x| format!("{} {}{}", x.label, x.value_label, lit(x.role)))
        .collect();
    format!(
        "Bar chart of {} by {key}, {} bars: {}.",
        measure(&b.value),
        shown.len(),
        shown.join("; ")
    )
}

fn parts(p: &PartsChart, key: &str) -> String {
    let kind = match p.mode {
        PartsMode::Stacked => "Stacked bar chart",
        PartsMode::Grouped => "Grouped bar chart",
    };
    let parts: Vec<String> = p
        .parts
        .iter()
        .filter(|x| x.role != Role::Hidden)
        .map(|x| format!("{}{}", x.name, lit(x.role)))
        .collect();
    let cats: Vec<String> = p
        .categories
        .iter()
        .map(|c| format!("{} {}", c.label, c.total_label))
        .collect();
    format!(
        "{kind} of {}, {} categories split by {key} into {}. Totals: {}.",
        measure(&p.value),
        p.categories.len(),
        parts.join(", "),
        cats.join("; ")
    )
}

fn dots(d: &DotChart) -> String {
    let rows: Vec<String> = d
        .rows
        .iter()
        .filter(|r| r.role != Role::Hidden)
        .map(|r| {
            let vs: Vec<String> = r
                .values
                .iter()
                .map(|v| v.map_or_else(|| "no data".into(), fig))
                .collect();
            format!("{} {}{}", r.label, vs.join(" / "), lit(r.role))
        })
        .collect();
    format!("Dot plot of {}: {}.", measure(&d.value), rows.join("; "))
}

fn scatter(s: &ScatterChart) -> String {
    let mut out = format!(
        "Scatter of {} against {}, {} points",
        measure(&s.y),
        measure(&s.x),
        s.points.len()
    );
    if let Some(f) = &s.fit {
        out.push_str(&format!(
            "; fitted line rises {} per unit{}",
            fig(f.slope),
            f.r.map_or(String::new(), |r| format!(", correlation {}", fig(r)))
        ));
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
        out.push_str(&format!("; highlighted: {}", focus.join(", ")));
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
    format!(
        "Key figure{}: {}.",
        if figs.len() == 1 { "" } else { "s" },
        figs.join("; ")
    )
}

fn table(t: &TableChart) -> String {
    let cols: Vec<&str> = t.columns.iter().map(|c| c.title.as_str()).collect();
    let focus: Vec<&str> = t
        .rows
        .iter()
        .filter(|r| r.role == Role::Focus || r.focus_cell.is_some())
        .filter_map(|r| r.cells.first().map(String::as_str))
        .collect();
    let mut out = format!(
        "Table of {} rows with columns {}",
        t.rows.len(),
        cols.join(", ")
    );
    if !focus.is_empty() {
        out.push_str(&format!("; highlighted: {}", focus.join(", ")));
    }
    out.push('.');
    out
}

fn pie(p: &PieChart, key: &str) -> String {
    let slices: Vec<String> = p
        .slices
        .iter()
        .filter(|s| s.role != Role::Hidden)
        .map(|s| format!("{} {}{}", s.label, s.share_label, lit(s.role)))
        .collect();
    format!("Pie chart of shares by {key}: {}.", slices.join("; "))
}

fn panels(pc: &PanelChart, key: &str) -> String {
    let panels: Vec<String> = pc
        .panels
        .iter()
        .filter(|p| p.role != Role::Hidden)
        .map(|p| format!("{}{}", p.title, lit(p.role)))
        .collect();
    format!(
        "Small multiples, one panel per {key} on {}: {}.",
        if pc.common_scale {
            "one common scale"
        } else {
            "separate scales"
        },
        panels.join(", ")
    )
}
