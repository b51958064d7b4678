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
    summary: "more than 4 parts in distinct shades, more than the eye can tell apart",
    doc: Doc {
        before: "bars d: category month, value cases, stack district   # 9 districts, 9 greys",
        after: concat!(
            "view top3 = d | top 3 district by cases rest \"Other districts\"\n",
            "bars top3: category month, value cases, stack district   # or `split district`",
        ),
        why: "Stacked or grouped bars and pies give each part its own grey (the spotlight aside)\n\
              so readers can match it to its label. People tell only a few steps of lightness\n\
              apart reliably, fewer still on a projector, so with many parts the shades blur\n\
              together and the chart turns into a matching puzzle (common practice: few distinct\n\
              colours; Cleveland & McGill 1984 rank shading among the least accurate encodings).",
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
