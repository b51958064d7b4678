//! `shades-crowded`: more greys than the eye tells apart.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, Role};

use super::util::frames;
use crate::{Finding, Input, Rule};

/// More context parts than this need more grey steps than the eye can tell
/// apart and match to their labels.
const MAX_SHADES: usize = 4;

pub static RULE: Rule = Rule::new("shades-crowded", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        let shades = match &f.chart {
            Chart::Parts(p) => p.parts.iter().filter(|x| x.role == Role::Context).count(),
            Chart::Pie(p) => p.slices.iter().filter(|x| x.role == Role::Context).count(),
            _ => continue,
        };
        if shades > MAX_SHADES {
            out.push(Finding {
                frame: Some(i),
                span: a.chart.clone(),
                label: format!("{shades} parts in greys"),
                message: format!(
                    "{shades} parts in distinct greys are more than the eye tells apart"
                ),
                fix: "fold small parts with `top N ... rest`, or split the parts into panels"
                    .into(),
            });
        }
    }
}
