//! `cite-covers-data`: the figure of a cited value found no spot clear of
//! the data.

use crescendo_diag::Severity;
use crescendo_look::Part;

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "cite-covers-data",
    severity: Severity::Warning,
    summary: "a cited value's figure could only be put over the data",
    doc: Doc {
        before:
            "line ledger: x day, y amount, series branch   # 540 days, the plot full of lines\n\
                 cite quietest",
        after: "line monthly: x month, y amount, series branch\n\
                cite quietest",
        why: "`cite` puts the figure near the marks it rests on, clear of every text, data\n\
              mark and data line. When the plot is so full that no such spot exists, the\n\
              figure goes where it covers the least, or is left out: a number printed over\n\
              the data hides the very marks it speaks for, and is hard to read (common\n\
              practice). Show fewer marks (a coarser time step, fewer series) or give the\n\
              figure room with `y range`.",
    },
    check,
};

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
