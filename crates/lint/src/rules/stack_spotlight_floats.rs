//! `stack-spotlight-floats`: a stacked segment that is not on the baseline is the point.

use crescendo_diag::Severity;
use crescendo_frame::{Chart, PartsMode, Role};

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("stack-spotlight-floats", Severity::Warning, check);

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
