//! `small-counts`: counts small enough to identify people.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, Role};

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("small-counts", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    let threshold = input.small_counts;
    for (i, f, a) in frames(input) {
        if !a.measure_is_count {
            continue;
        }
        let small: Vec<String> = match &f.chart {
            Chart::Bars(b) => b
                .bars
                .iter()
                .filter(|b| b.role != Role::Hidden)
                .filter(|b| b.value.is_some_and(|v| v > 0.0 && v < threshold))
                .map(|b| format!("{} ({})", b.label, b.value_label))
                .collect(),
            Chart::Line(l) => l
                .series
                .iter()
                .filter(|s| s.role != Role::Hidden)
                .filter(|s| {
                    s.points
                        .iter()
                        .any(|p| p.y.is_some_and(|v| v > 0.0 && v < threshold))
                })
                .map(|s| s.name.clone())
                .collect(),
            Chart::Parts(p) => p
                .categories
                .iter()
                .filter(|c| c.role != Role::Hidden)
                .filter(|c| {
                    c.values
                        .iter()
                        .any(|v| v.is_some_and(|v| v > 0.0 && v < threshold))
                })
                .map(|c| c.label.clone())
                .collect(),
            Chart::Dots(d) => d
                .rows
                .iter()
                .filter(|r| r.role != Role::Hidden)
                .filter(|r| {
                    r.values
                        .iter()
                        .any(|v| v.is_some_and(|v| v > 0.0 && v < threshold))
                })
                .map(|r| r.label.clone())
                .collect(),
            Chart::Pie(p) => p
                .slices
                .iter()
                .filter(|s| s.role != Role::Hidden && s.value > 0.0 && s.value < threshold)
                .map(|s| s.label.clone())
                .collect(),
            Chart::Panels(p) => p
                .panels
                .iter()
                .filter(|x| x.role != Role::Hidden)
                .filter(|x| match &x.chart {
                    Chart::Line(l) => l.series.iter().any(|s| {
                        s.points
                            .iter()
                            .any(|p| p.y.is_some_and(|v| v > 0.0 && v < threshold))
                    }),
                    Chart::Bars(b) => b
                        .bars
                        .iter()
                        .any(|b| b.value.is_some_and(|v| v > 0.0 && v < threshold)),
                    _ => false,
                })
                .map(|x| x.title.clone())
                .collect(),
            Chart::Scatter(_) | Chart::Figures(_) | Chart::Table(_) | Chart::Plugin(_) => {
                Vec::new()
            }
        };
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
