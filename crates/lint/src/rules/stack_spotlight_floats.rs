//! `stack-spotlight-floats`: a stacked segment that is not on the baseline is the point.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, PartsMode, Role};

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "stack-spotlight-floats",
    severity: Severity::Warning,
    summary: "stacked bars spotlight a segment that floats above the baseline",
    doc: Doc {
        before: concat!(
            "bars by_area: category month, value cases, stack area\n",
            "spotlight \"East\"   # a segment above the bottom one",
        ),
        after: concat!(
            "bars by_area: category month, value cases, stack area\n",
            "spotlight \"North\"   # the bottom segment, on the baseline\n",
            "# or `group area` instead of `stack area`, or `split area`",
        ),
        why:
            "Only the bottom segments of stacked bars share a baseline. The segments above start\n\
              at different heights, so comparing one across bars is a judgement of lengths on\n\
              unaligned scales, much less accurate than positions on a common scale (Cleveland &\n\
              McGill 1984). A spotlight on such a segment points at the very comparison the form\n\
              makes hardest; order the view so the spotlighted part comes first.",
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
