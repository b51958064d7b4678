//! The chart of one frame: the sequence's chart with the roles (focus,
//! context, hidden) its build-up state gives each item, and its axis
//! titles.

use std::collections::BTreeSet;

use crate::model::*;
use crate::sequence::SeqState;

/// The chart of the current frame: roles from the visibility and spotlight.
pub(crate) fn apply_state(st: &SeqState) -> Chart {
    let visible = st.names.iter().filter(|n| !st.hidden.contains(*n)).count();
    let role = |name: &str| {
        if st.hidden.contains(name) {
            Role::Hidden
        } else if st.spotlight.contains(name)
            || (st.spotlight.is_empty() && st.names.len() == 1 && visible == 1)
        {
            Role::Focus
        } else {
            Role::Context
        }
    };
    let titles = Titles {
        x: st.x_title.as_ref().map(|t| t.text.clone()),
        y: st.y_title.as_ref().map(|t| t.text.clone()),
    };
    let mut chart = apply_roles(&st.chart, &role, &titles, &st.cells);
    if let Chart::Parts(p) = &mut chart {
        visible_totals(p);
    }
    if let Chart::Plugin(p) = &mut chart {
        // A plugin gets the role of every item it may draw.
        p.request.roles = st
            .names
            .iter()
            .filter_map(|n| {
                let r = match role(n) {
                    Role::Focus => crescendo_plugin::Role::Focus,
                    Role::Context => crescendo_plugin::Role::Context,
                    Role::Hidden => return None,
                };
                Some((n.clone(), r))
            })
            .collect();
        p.request.hidden = st
            .names
            .iter()
            .filter(|n| st.hidden.contains(*n))
            .cloned()
            .collect();
    }
    chart
}

/// The total over each stack's visible parts: while a stack unfolds, the
/// number above it is what the audience sees stacked, never the total of
/// parts still hidden. (A frame with every part shown keeps the total of
/// all parts.)
fn visible_totals(chart: &mut PartsChart) {
    if !chart.parts.iter().any(|p| p.role == Role::Hidden) {
        return;
    }
    let shown: Vec<bool> = chart.parts.iter().map(|p| p.role != Role::Hidden).collect();
    for cat in &mut chart.categories {
        let visible = cat
            .values
            .iter()
            .zip(&shown)
            .filter(|(_, s)| **s)
            .filter_map(|(v, _)| *v);
        cat.total_label = crate::scale::value_label(crescendo_data::stats::total(visible));
    }
}

/// The axis titles a frame sets (`x title`, `y title`).
struct Titles {
    x: Option<String>,
    y: Option<String>,
}

impl Titles {
    /// Replace the chart's titles along x and y by those set, each when
    /// one is.
    fn set(&self, x: &mut Option<String>, y: &mut Option<String>) {
        for (slot, t) in [(x, &self.x), (y, &self.y)] {
            if t.is_some() {
                *slot = t.clone();
            }
        }
    }
}

/// A point's role: its group's when the group is hidden or spotlighted,
/// else its label's.
fn scatter_role(role: &dyn Fn(&str) -> Role, p: &ScatterPoint) -> Role {
    match (p.series.is_empty(), role(&p.series)) {
        (false, r @ (Role::Hidden | Role::Focus)) => r,
        _ => role(&p.label),
    }
}

/// Set roles (by series, bar, part, row, slice or panel name) and axis
/// titles on a chart.
fn apply_roles(
    chart: &Chart,
    role: &dyn Fn(&str) -> Role,
    titles: &Titles,
    cells: &BTreeSet<(String, String)>,
) -> Chart {
    let mut chart = chart.clone();
    match &mut chart {
        Chart::Line(l) => {
            titles.set(&mut l.x.title, &mut l.y.title);
            for s in &mut l.series {
                s.role = role(&s.name);
            }
        }
        Chart::Bars(b) => {
            titles.set(&mut b.category_title, &mut b.value.title);
            for bar in &mut b.bars {
                bar.role = role(&bar.label);
            }
        }
        Chart::Parts(p) => {
            titles.set(&mut p.category_title, &mut p.value.title);
            for part in &mut p.parts {
                part.role = role(&part.name);
            }
        }
        Chart::Dots(d) => {
            titles.set(&mut d.category_title, &mut d.value.title);
            if d.series.len() > 1 {
                for s in &mut d.series {
                    s.role = role(&s.name);
                }
            } else {
                for r in &mut d.rows {
                    r.role = role(&r.label);
                }
            }
        }
        Chart::Scatter(sc) => {
            titles.set(&mut sc.x.title, &mut sc.y.title);
            for p in &mut sc.points {
                p.role = scatter_role(role, p);
            }
        }
        Chart::Figures(_) => {}
        Chart::Plugin(p) => {
            p.request.texts.x_title = titles.x.clone();
            p.request.texts.y_title = titles.y.clone();
        }
        Chart::Table(t) => {
            for row in &mut t.rows {
                let key = row.cells.first().cloned().unwrap_or_default();
                row.role = role(&key);
                row.focus_cell = t
                    .columns
                    .iter()
                    .position(|c| cells.contains(&(key.clone(), c.title.clone())));
            }
        }
        Chart::Pie(p) => {
            for s in &mut p.slices {
                s.role = role(&s.label);
            }
        }
        Chart::Panels(pc) => {
            for panel in &mut pc.panels {
                let r = role(&panel.title);
                panel.role = r;
                // inside a panel, its own series takes the panel's role
                let inner = |_: &str| r;
                panel.chart = apply_roles(&panel.chart, &inner, titles, cells);
            }
        }
    }
    chart
}
