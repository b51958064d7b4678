//! `text-unfinished`: a text still holding a placeholder ("TODO", "TBD",
//! "FIXME", "XXX", "lorem ipsum"), as the starters `crescendo new` writes
//! do until the author fills them in.

use crescendo_diag::Severity;
use crescendo_frame::anchors::Span;

use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("text-unfinished", Severity::Warning, check);

/// Placeholder words, matched as whole words in capitals.
const WORDS: &[&str] = &["TODO", "TBD", "FIXME", "XXX"];

/// The placeholder a text holds, if any.
pub(crate) fn placeholder(text: &str) -> Option<&'static str> {
    if text.to_lowercase().contains("lorem ipsum") {
        return Some("lorem ipsum");
    }
    text.split(|c: char| !c.is_alphanumeric())
        .find_map(|w| WORDS.iter().copied().find(|p| *p == w))
}

/// Each text is read as the story wrote it (where its place is known), so a
/// placeholder quoted into another text through `{conclusion}` is flagged
/// once, where it was written.
fn check(input: &Input, out: &mut Vec<Finding>) {
    let plan = input.plan;
    let a = input.anchors;
    let written = |span: &Option<Span>, planned: Option<&str>| -> Option<&'static str> {
        match span {
            Some(s) => input.src.text.get(s.clone()).and_then(placeholder),
            None => planned.and_then(placeholder),
        }
    };
    let whole = a.title.clone().unwrap_or(0..0);
    let story = [
        ("title", Some(plan.title.as_str()), &a.title),
        ("byline", plan.byline.as_deref(), &a.byline),
        ("source", plan.source.as_deref(), &a.source),
        ("conclusion", plan.conclusion.as_deref(), &a.conclusion),
    ];
    for (what, text, span) in story {
        if let Some(word) = written(span, text) {
            out.push(finding(
                None,
                what,
                word,
                span.clone().unwrap_or(whole.clone()),
            ));
        }
    }
    for (i, f) in plan.frames.iter().enumerate() {
        let Some(fa) = a.frames.get(i) else { continue };
        let texts = [
            (
                "headline",
                Some(f.headline.as_str()),
                Some(fa.headline.clone()),
            ),
            ("takeaway", f.takeaway.as_deref(), fa.takeaway.clone()),
            ("notes", f.notes.as_deref(), fa.notes.clone()),
        ];
        for (what, text, span) in texts {
            if let Some(word) = written(&span, text) {
                out.push(finding(
                    Some(i),
                    what,
                    word,
                    span.unwrap_or(fa.frame.clone()),
                ));
            }
        }
    }
}

fn finding(frame: Option<usize>, what: &str, word: &str, span: Span) -> Finding {
    Finding {
        frame,
        span,
        label: format!("\"{word}\" is a placeholder"),
        message: format!("the {what} still holds the placeholder \"{word}\""),
        fix: format!("write the {what} the audience should read"),
    }
}
