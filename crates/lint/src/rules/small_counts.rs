//! `small-counts`: counts small enough to identify people.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, Role};

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "small-counts",
    severity: Severity::Warning,
    summary: "a chart shows counts small enough to identify individuals",
    doc: Doc {
        before: "view c = v | by clinic: patients = count()   # one clinic saw 3 patients",
        after: concat!(
            "view c = v | by clinic: patients = count() | keep patients >= 5\n",
            "# or merge small clinics (`top N ... rest`), widen the period, or show a rate",
        ),
        why:
            "In a published chart, a cell of 1, 2 or 3 people can identify them, especially next\n\
              to other public facts. The rule flags a chart whose measure counts rows (`count` in\n\
              its view) and shows a value above zero but below the threshold (5 unless\n\
              `--small-counts N`). Official statistics suppress or merge cells below a small\n\
              threshold, often 5 or 10 (common practice); follow your organisation's own\n\
              disclosure rules, which may be stricter.",
    },
    check,
};

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
