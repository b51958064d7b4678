//! `cite-covers-data`: the figure of a cited value found no spot clear of
//! the data.

use crescendo_diag::Severity;
use crescendo_look::Part;

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("cite-covers-data", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, _, a) in frames(input) {
        let Some(list) = input.displays.get(i) else {
            continue;
        };
        for (part, items) in list.groups(|p| matches!(p, Part::Cite { covers: true, .. })) {
            let Part::Cite { value, .. } = part else {
                continue;
            };
            let span = (a.cites.iter())
                .find(|(v, _)| v == value)
                .map_or_else(|| a.frame.clone(), |(_, s)| s.clone());
            let what = if items.is_empty() {
                "was left out: no spot clear of text"
            } else {
                "covers data"
            };
            out.push(Finding {
                frame: Some(i),
                span,
                label: format!("its figure {what}"),
                message: format!("the figure of `{value}` {what}"),
                fix: "draw fewer marks (a coarser step, fewer series), or give it room with `y range`"
                    .into(),
            });
        }
    }
}
