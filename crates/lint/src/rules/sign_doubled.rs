//! `sign-doubled`: a word of direction before a signed figure ("up +103%").

use crescendo_diag::Severity;
use crescendo_frame::FramePlan;

use super::util::flag_quoted;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("sign-doubled", Severity::Advice, check);

/// Words that already say which way a figure went.
const DIRECTION: &[&str] = &[
    "up",
    "down",
    "rose",
    "rise",
    "rises",
    "fell",
    "fall",
    "falls",
    "grew",
    "grow",
    "grows",
    "gained",
    "gain",
    "gains",
    "lost",
    "lose",
    "loses",
    "increased",
    "increase",
    "decreased",
    "decrease",
    "dropped",
    "drop",
    "drops",
    "climbed",
    "climb",
    "declined",
    "decline",
    "shrank",
];

/// Whether `text` holds a direction word (optionally followed by "by")
/// right before `figure`, a figure starting with a sign.
pub(super) fn doubled(text: &str, figure: &str) -> bool {
    if !figure.starts_with(['+', '-', '\u{2212}']) {
        return false;
    }
    text.match_indices(figure).any(|(at, _)| {
        let before = text.get(..at).unwrap_or("");
        let mut words = before.split_whitespace().rev().map(|w| {
            w.trim_start_matches(|c: char| !c.is_alphanumeric())
                .to_lowercase()
        });
        // the figure must follow a space, not stand inside a word
        if !before.ends_with(char::is_whitespace) {
            return false;
        }
        match words.next() {
            Some(w) if w == "by" => words
                .next()
                .is_some_and(|w| DIRECTION.contains(&w.as_str())),
            Some(w) => DIRECTION.contains(&w.as_str()),
            None => false,
        }
    })
}

fn check(input: &Input, out: &mut Vec<Finding>) {
    let doubled_in = |f: &FramePlan, figure: &str| {
        let texts = [Some(&f.headline), f.takeaway.as_ref(), f.notes.as_ref()];
        texts.iter().flatten().any(|t| doubled(t, figure))
    };
    flag_quoted(input, out, doubled_in, |name, figure| {
        (
            format!("a word of direction already stands before \"{figure}\""),
            format!("quote `{name}` without `signed`, or drop the word"),
        )
    });
}
