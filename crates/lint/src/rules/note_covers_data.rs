//! `note-covers-data`: a note the label placer puts on the chart (a cited
//! value's figure, a callout, a moment's label) found no spot clear of the
//! data.

use crescendo_diag::Severity;
use crescendo_frame::anchors::{FrameAnchors, Span};
use crescendo_look::display::{Item, NoteOf};
use crescendo_look::Part;

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("note-covers-data", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, _, a) in frames(input) {
        let Some(list) = input.displays.get(i) else {
            continue;
        };
        for (part, items) in list.groups(|p| matches!(p, Part::Note { covers: true, .. })) {
            let Part::Note { of, .. } = part else {
                continue;
            };
            let (span, what) = written(a, of);
            let drawn = items.iter().any(|i| matches!(i, Item::Text(_)));
            let how = if drawn {
                "covers data"
            } else {
                "was left out: no spot clear of text"
            };
            let (label, message) = match of {
                NoteOf::Cite(_) => (
                    format!("its figure {how}"),
                    format!("the figure of {what} {how}"),
                ),
                _ => (format!("it {how}"), format!("{what} {how}")),
            };
            out.push(Finding {
                frame: Some(i),
                span: span.unwrap_or_else(|| a.frame.clone()),
                label,
                message,
                fix: "draw fewer marks (a coarser step, fewer series or bars), shorten the note, \
                      or give it room with `y range`"
                    .into(),
            });
        }
    }
}

/// Where a note was written and how the finding names it.
fn written(a: &FrameAnchors, of: &NoteOf) -> (Option<Span>, String) {
    match of {
        NoteOf::Cite(value) => (
            (a.cites.iter())
                .find(|(v, _)| v == value)
                .map(|(_, s)| s.clone()),
            format!("`{value}`"),
        ),
        NoteOf::Callout(k) => (a.callouts.get(*k).cloned(), "this callout".into()),
        NoteOf::Moment(k) => (a.moments.get(*k).cloned(), "this moment's label".into()),
    }
}
