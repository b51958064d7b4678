//! `text-cut`: a takeaway or source note too long for its two lines, or a
//! label inside the chart cut to fit its room.

use crescendo_diag::Severity;
use crescendo_look::Part;

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "text-cut",
    severity: Severity::Warning,
    summary: "a takeaway, source note or chart label does not fit and is cut short",
    doc: Doc {
        before: "  takeaway \"North recorded more cases than any other area in every single month of the year, and the gap between North and the rest kept widening through the second half of the year until December, long after the other areas had settled back to their spring levels\"",
        after: "  takeaway \"North led every month, and the gap widened after June\"",
        why: "Every text on a frame wraps; what still does not fit in two lines at its size is cut\n\
              with an ellipsis, and the audience reads half a sentence or a source without its\n\
              year. The layout keeps two lines for the takeaway and for the source note on\n\
              every frame of the deck (common practice: one line that states the point, one\n\
              that names the data). Shorten the text, or move the detail into `notes`. Labels\n\
              inside the chart (names, titles, cells) wrap where they can; one that still\n\
              does not fit is cut, and reported here, never silently.",
    },
    check,
};

/// Labels inside the chart that the layout had to cut ([`Part::Cut`]),
/// each once per frame.
fn cut_labels(input: &Input, out: &mut Vec<Finding>) {
    for (i, _, a) in frames(input) {
        let Some(list) = input.displays.get(i) else {
            continue;
        };
        let mut seen = std::collections::BTreeSet::new();
        for (part, _) in list.groups(|p| matches!(p, Part::Cut { .. })) {
            let Part::Cut { full } = part else { continue };
            if !seen.insert(full.clone()) {
                continue;
            }
            out.push(Finding {
                frame: Some(i),
                span: a.chart.clone(),
                label: "a label here is cut".into(),
                message: format!(
                    "the text \"{full}\" does not fit its room on the frame and is cut short"
                ),
                fix: "shorten it (in the data, or where the story writes it), or give the \
                      chart more room"
                    .into(),
            });
        }
    }
}

fn check(input: &Input, out: &mut Vec<Finding>) {
    cut_labels(input, out);
    for (i, _, a) in frames(input) {
        let Some(list) = input.displays.get(i) else {
            continue;
        };
        for (part, _) in list.groups(|p| matches!(p, Part::Takeaway { .. } | Part::Source { .. })) {
            let (what, needed, span) = match part {
                Part::Takeaway { needed } => (
                    "takeaway",
                    *needed,
                    a.takeaway.clone().unwrap_or(a.headline.clone()),
                ),
                Part::Source { needed } => (
                    "source note",
                    *needed,
                    input.anchors.source.clone().unwrap_or(a.headline.clone()),
                ),
                _ => continue,
            };
            if needed > 2 {
                out.push(Finding {
                    frame: Some(i),
                    span,
                    label: format!("needs {needed} lines"),
                    message: format!("this {what} is too long for two lines and will be cut off"),
                    fix: "shorten it, and move the detail into `notes`".into(),
                });
            }
        }
    }
}
