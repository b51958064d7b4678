//! `pie-crowded`: a pie with too many slices, or slices too close to tell apart.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, Role};

use super::util::frames;
use crate::{Finding, Input, Rule};

/// More visible slices than this crowd a pie.
const MAX_SLICES: usize = 5;
/// Slices whose shares differ by less than this cannot be ranked by eye.
const CLOSE: f64 = 0.03;

pub static RULE: Rule = Rule::new("pie-crowded", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        let Chart::Pie(p) = &f.chart else { continue };
        let shown: Vec<_> = p.slices.iter().filter(|s| s.role != Role::Hidden).collect();
        if shown.len() > MAX_SLICES {
            out.push(Finding {
                frame: Some(i),
                span: a.chart.clone(),
                label: format!("{} slices", shown.len()),
                message: format!(
                    "a pie of {} slices cannot be read; past {MAX_SLICES} they crowd",
                    shown.len()
                ),
                fix: "draw sorted bars, or fold the small slices with `top N ... rest`".into(),
            });
            continue;
        }
        let close = shown
            .windows(2)
            .find(|w| (w[0].share - w[1].share).abs() < CLOSE);
        if let Some(w) = close {
            out.push(Finding {
                frame: Some(i),
                span: a.chart.clone(),
                label: format!(
                    "\"{}\" {} and \"{}\" {}",
                    w[0].label, w[0].share_label, w[1].label, w[1].share_label
                ),
                message: "two slices are too close in size to compare by angle".into(),
                fix: "draw sorted bars, which show small differences on a common scale".into(),
            });
        }
    }
}
