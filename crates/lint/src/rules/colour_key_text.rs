//! `colour-key-text`: words that point at marks by their colour.

use crescendo_diag::Severity;

use super::util::frames;
use crate::{Finding, Input, Rule};

const COLOURS: &[&str] = &[
    "red", "orange", "amber", "yellow", "green", "teal", "blue", "purple", "violet", "pink",
    "brown", "grey", "gray", "black",
];
const MARKS: &[&str] = &[
    "line", "lines", "bar", "bars", "dot", "dots", "slice", "slices", "segment", "segments",
    "series", "area", "panel",
];

/// The first "COLOUR MARK" or "in COLOUR" phrase of a text, if any.
pub(super) fn colour_phrase(text: &str) -> Option<String> {
    let words: Vec<String> = text
        .split(|c: char| !c.is_alphanumeric())
        .filter(|w| !w.is_empty())
        .map(str::to_lowercase)
        .collect();
    for w in words.windows(2) {
        let (a, b) = (w[0].as_str(), w[1].as_str());
        if (COLOURS.contains(&a) && MARKS.contains(&b)) || (a == "in" && COLOURS.contains(&b)) {
            return Some(format!("{a} {b}"));
        }
    }
    None
}

pub static RULE: Rule = Rule::new("colour-key-text", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        let texts = [
            (Some(f.headline.as_str()), Some(a.headline.clone())),
            (f.takeaway.as_deref(), a.takeaway.clone()),
            (f.notes.as_deref(), a.notes.clone()),
        ];
        for (text, span) in texts {
            let (Some(text), Some(span)) = (text, span) else {
                continue;
            };
            if let Some(phrase) = colour_phrase(text) {
                out.push(Finding {
                    frame: Some(i),
                    span,
                    label: format!("\"{phrase}\""),
                    message: format!("\"{phrase}\" tells the audience which colour means what"),
                    fix: "name the series or category instead of its colour".into(),
                });
            }
        }
    }
}
