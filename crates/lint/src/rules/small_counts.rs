//! `small-counts`: counts small enough to identify people.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, LineChart, Role};

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("small-counts", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    let threshold = input.small_counts;
    let small = |v: Option<f64>| v.is_some_and(|v| v > 0.0 && v < threshold);
    let small_in = |vs: &[Option<f64>]| vs.iter().any(|v| small(*v));
    let line_small = |l: &LineChart| l.series.iter().any(|s| s.points.iter().any(|p| small(p.y)));
    for (i, f, a) in frames(input) {
        if !a.measure_is_count {
            continue;
        }
        // each mark of the chart: its role, whether it shows a small count, its name
        let marks: Vec<(Role, bool, String)> = match &f.chart {
            Chart::Bars(b) => (b.bars.iter())
                .map(|b| {
                    (
                        b.role,
                        small(b.value),
                        format!("{} ({})", b.label, b.value_label),
                    )
                })
                .collect(),
            Chart::Line(l) => (l.series.iter())
                .map(|s| (s.role, s.points.iter().any(|p| small(p.y)), s.name.clone()))
                .collect(),
            Chart::Parts(p) => (p.categories.iter())
                .map(|c| (c.role, small_in(&c.values), c.label.clone()))
                .collect(),
            Chart::Dots(d) => (d.rows.iter())
                .map(|r| (r.role, small_in(&r.values), r.label.clone()))
                .collect(),
            Chart::Pie(p) => (p.slices.iter())
                .map(|s| (s.role, small(Some(s.value)), s.label.clone()))
                .collect(),
            Chart::Panels(p) => (p.panels.iter())
                .map(|x| {
                    let shows_small = match &x.chart {
                        Chart::Line(l) => line_small(l),
                        Chart::Bars(b) => b.bars.iter().any(|b| small(b.value)),
                        _ => false,
                    };
                    (x.role, shows_small, x.title.clone())
                })
                .collect(),
            Chart::Scatter(_) | Chart::Figures(_) | Chart::Table(_) | Chart::Plugin(_) => {
                Vec::new()
            }
        };
        let small: Vec<String> = (marks.into_iter())
            .filter(|(role, shows_small, _)| *role != Role::Hidden && *shows_small)
            .map(|(_, _, name)| name)
            .collect();
        if !small.is_empty() {
            out.push(Finding {
                frame: Some(i),
                span: a.chart.clone(),
                label: format!("counts below {threshold}"),
                message: format!(
                    "counts below {threshold} could identify individuals: {}",
                    small.join(", ")
                ),
                fix: "merge small groups (`top N ... rest`) or follow your disclosure rules".into(),
            });
        }
    }
}
