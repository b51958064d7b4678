//! `shades-crowded`: more greys than the eye tells apart.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, Role};

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

/// More context parts than this need more grey steps than the eye can tell
/// apart and match to their labels.
const MAX_SHADES: usize = 4;

pub static RULE: Rule = Rule {
    name: "shades-crowded",
    severity: Severity::Warning,
    summary: "more parts in distinct shades than the eye can tell apart",
    doc: Doc {
        flags: "Stacked or grouped bars, or a pie, with more than 4 visible parts drawn in\n\
                distinct greys (everything but the spotlight).",
        why: "Each part gets its own shade so readers can match it to its label. People\n\
              tell only a few steps of lightness apart reliably, fewer still on a\n\
              projector, so with many parts the shades blur together and the chart turns\n\
              into a matching puzzle (common practice: few distinct colours; Cleveland &\n\
              McGill 1984 rank shading among the least accurate encodings).",
        example: "bars spending: category year, value amount, stack department   # 7 departments",
        instead:
            "Fold the small parts into one with `| top 3 ... rest \"Other\"`, or `split` the\n\
                  parts into panels, one per part, on a common scale.",
    },
    check,
};

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
