//! `stack-middle`: a stacked segment that is not on the baseline is the point.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, PartsMode, Role};

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "stack-middle",
    severity: Severity::Warning,
    summary: "stacked bars spotlight a segment that does not sit on the baseline",
    doc: Doc {
        flags: "Stacked bars whose spotlighted part is not the first (bottom) segment.",
        why: "Only the bottom segments of stacked bars share a baseline. The segments above\n\
              start at different heights, so comparing them across bars is a judgement of\n\
              lengths on unaligned scales, much less accurate than positions on a common\n\
              scale (Cleveland & McGill 1984). The spotlight then points at the very\n\
              comparison the form makes hardest.",
        example: "bars by_branch: category branch, value loans, stack format\nspotlight \"Audio\"   # the top segment",
        instead: "Put the spotlighted part first in the stack (order the view so it comes first),\n\
                  use `group` instead of `stack`, or `split` the parts into panels.",
    },
    check,
};

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        let Chart::Parts(p) = &f.chart else { continue };
        if p.mode != PartsMode::Stacked {
            continue;
        }
        let first_visible = p.parts.iter().position(|x| x.role != Role::Hidden);
        for (k, part) in p.parts.iter().enumerate() {
            if part.role == Role::Focus && Some(k) != first_visible {
                out.push(Finding {
                    frame: Some(i),
                    span: a.spotlight.clone().unwrap_or(a.chart.clone()),
                    label: format!("\"{}\" sits above the baseline", part.name),
                    message: format!("\"{}\" floats on the other segments, so its bars cannot be compared", part.name),
                    fix: "stack the spotlighted part first, group the bars side by side, or split into panels".into(),
                });
            }
        }
    }
}
