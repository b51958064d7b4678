//! `text-cut`: a takeaway or source note too long for its two lines, or a
//! label inside the chart cut to fit its room.

use crescendo_diag::Severity;
use crescendo_look::Part;

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("text-cut", Severity::Warning, check);

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
