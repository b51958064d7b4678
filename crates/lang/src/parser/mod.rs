//! Parser: pest grammar (`grammar/story.pest`) to [`StoryAst`], with error
//! recovery at top-level items so that every syntax error in a file is
//! reported, not only the first.
//!
//! The conversion from pest's pairs to the tree is split by phase: items
//! and data sources (`items.rs`), view steps (`views.rs`), frame statements
//! (`frames.rs`), expressions (`values.rs`) and the texts that quote values
//! (`templates.rs`); `errors.rs` words syntax errors, `nesting.rs` refuses
//! input nested too deep before anything recursive runs, `controls.rs`
//! characters no text of a deck can carry.

pub mod controls;
mod errors;
mod frames;
mod items;
mod nesting;
mod templates;
mod values;
mod views;

#[cfg(test)]
mod tests;

use std::sync::Arc;

use crescendo_diag::{Diagnostic, Source};
use pest::error::InputLocation;
use pest::iterators::Pair;
use pest::Parser;
use pest_derive::Parser;

use crate::ast::*;
use errors::{syntax_error, Context};
pub use nesting::MAX_NESTING;

#[derive(Parser)]
#[grammar = "../../grammar/story.pest"]
struct StoryParser;

/// Words that may start a top-level item.
pub const TOP_KEYWORDS: &[&str] = &[
    "story",
    "byline",
    "source",
    "theme",
    "data",
    "view",
    "compare",
    "focus",
    "conclusion",
    "value",
    "claim",
    "allow",
    "accent",
    "style",
    "use",
    "frame",
    "locale",
    "fiscal",
];

/// Parse a story file. Returns the items that parsed and one diagnostic per
/// syntax error (at most one per top-level item, plus one per broken quoted
/// value in a text).
pub fn parse(source: &Arc<Source>) -> (StoryAst, Vec<Diagnostic>) {
    let text = source.text.as_str();
    if let Some(d) = nesting::check(source, 0..text.len()) {
        return (StoryAst { items: Vec::new() }, vec![d]);
    }
    let controls = controls::check(source);
    if !controls.is_empty() {
        return (StoryAst { items: Vec::new() }, controls);
    }
    let mut items = Vec::new();
    let mut diags = Vec::new();
    let mut pos = 0;
    while pos < text.len() {
        let rest = &text[pos..];
        if StoryParser::parse(Rule::only_trivia, rest).is_ok() {
            break;
        }
        match StoryParser::parse(Rule::next_item, rest) {
            Ok(mut pairs) => {
                let Some(pair) = pairs.next() else { break };
                let end = pair.as_span().end();
                let mut conv = Conv::new(source, pos);
                match conv.item(pair) {
                    Ok(item) => items.push(item),
                    Err(d) => diags.push(d.into_diag(source)),
                }
                diags.append(&mut conv.diags);
                pos += end.max(1);
            }
            Err(err) => {
                let at = location(&err.location);
                let at = pull_back_to_previous_token(rest, at);
                let lead = leading_trivia(rest);
                let context = Context::of_item(&rest[lead..]);
                let diag = match StoryParser::parse(Rule::lone_step, &rest[lead..]) {
                    // A view step that starts a line but does not parse:
                    // explain the step, not the missing item keyword.
                    Err(step_err) if at == lead && rest[lead..].starts_with('|') => {
                        let sat = location(&step_err.location);
                        let sat = pull_back_to_previous_token(&rest[lead..], sat);
                        syntax_error(source, pos + lead, sat, &step_err.variant, Context::Row)
                    }
                    _ => syntax_error(source, pos, at, &err.variant, context),
                };
                diags.push(diag);
                pos = next_item_start(text, pos, pos + at);
            }
        }
    }
    (StoryAst { items }, diags)
}

/// The byte offset of a pest error.
fn location(at: &InputLocation) -> usize {
    match *at {
        InputLocation::Pos(p) => p,
        InputLocation::Span((s, _)) => s,
    }
}

/// Where to resume after a syntax error at `error` in the item that starts
/// at `item_start`: the first line after the item's first line, at or after
/// the error's line, that starts (in column 1) with a top-level keyword; or
/// the end of the text.
fn next_item_start(text: &str, item_start: usize, error: usize) -> usize {
    let starts_item = |line: &str| {
        TOP_KEYWORDS.iter().any(|k| {
            line.starts_with(k)
                && !line[k.len()..]
                    .chars()
                    .next()
                    .is_some_and(|c| c.is_ascii_alphanumeric() || c == '_')
        })
    };
    let first_line_end = text[item_start..]
        .find(|c: char| !c.is_whitespace() && c != '#')
        .map(|o| item_start + o)
        .and_then(|s| text[s..].find('\n').map(|nl| s + nl + 1))
        .unwrap_or(text.len());
    let error = error.min(text.len());
    let mut i = text[..error]
        .rfind('\n')
        .map_or(0, |nl| nl + 1)
        .max(first_line_end);
    while i < text.len() {
        if starts_item(&text[i..]) {
            return i;
        }
        match text[i..].find('\n') {
            Some(nl) => i += nl + 1,
            None => break,
        }
    }
    text.len()
}

/// When an error is found at the first token of a later line, report it just
/// after the last token before it: "expected a string" belongs to the line
/// that is missing it.
fn pull_back_to_previous_token(text: &str, at: usize) -> usize {
    let before = &text[..at.min(text.len())];
    let trimmed = before.trim_end();
    let after = &text[at.min(text.len())..];
    let item_cut_short = after.is_empty() || TOP_KEYWORDS.iter().any(|k| after.starts_with(k));
    if item_cut_short && before[trimmed.len()..].contains('\n') && !trimmed.is_empty() {
        // skip back over a trailing comment on that line
        let line_start = trimmed.rfind('\n').map_or(0, |i| i + 1);
        let line = &trimmed[line_start..];
        match line.find('#') {
            Some(h) if !line[..h].contains('"') => line_start + line[..h].trim_end().len(),
            _ => trimmed.len(),
        }
    } else {
        at
    }
}

/// Length of the blank space and comments at the start of `text`.
fn leading_trivia(text: &str) -> usize {
    let mut i = 0;
    let b = text.as_bytes();
    while i < b.len() {
        match b[i] {
            b' ' | b'\t' | b'\r' | b'\n' => i += 1,
            b'#' => {
                while i < b.len() && b[i] != b'\n' {
                    i += 1
                }
            }
            _ => break,
        }
    }
    i
}

/// A problem found while converting pairs (values out of range).
struct ConvertError {
    span: Span,
    message: String,
}

impl ConvertError {
    fn into_diag(self, source: &Arc<Source>) -> Diagnostic {
        Diagnostic::error("syntax", self.message).at(source, self.span, "here")
    }
}

type Res<T> = Result<T, ConvertError>;

fn internal(span: &Span) -> ConvertError {
    ConvertError {
        span: span.clone(),
        message:
            "the parser could not read this item (an internal inconsistency; please report it)"
                .into(),
    }
}

/// Punctuation tokens: named rules only so errors can say what was expected.
fn is_punct(rule: Rule) -> bool {
    matches!(
        rule,
        Rule::eq
            | Rule::colon
            | Rule::open_brace
            | Rule::close_brace
            | Rule::open_paren
            | Rule::close_paren
            | Rule::call_open
    )
}

/// The meaningful children of a pair (punctuation left out).
fn children(pair: Pair<Rule>) -> impl Iterator<Item = Pair<Rule>> {
    pair.into_inner().filter(|p| !is_punct(p.as_rule()))
}

/// The `i`th of a statement's children `inner`; its absence is an
/// internal error at the statement's `span`.
fn nth<'i>(inner: &[Pair<'i, Rule>], i: usize, span: &Span) -> Res<Pair<'i, Rule>> {
    inner.get(i).cloned().ok_or_else(|| internal(span))
}

/// Turns pest's pairs into the tree. Spans are made absolute by adding
/// `base` (the offset of the parsed piece in the story); the problems found
/// in texts (their quoted values) are collected in `diags`.
struct Conv<'s> {
    source: &'s Arc<Source>,
    base: usize,
    diags: Vec<Diagnostic>,
}

impl<'s> Conv<'s> {
    fn new(source: &'s Arc<Source>, base: usize) -> Self {
        Conv {
            source,
            base,
            diags: Vec::new(),
        }
    }

    /// A statement's span, its rule and its meaningful children.
    fn open<'i>(&self, pair: Pair<'i, Rule>) -> (Span, Rule, Vec<Pair<'i, Rule>>) {
        (
            self.span_of(&pair),
            pair.as_rule(),
            children(pair).collect(),
        )
    }

    fn span_of(&self, pair: &Pair<Rule>) -> Span {
        let s = pair.as_span();
        self.base + s.start()..self.base + s.end()
    }

    fn ident(&self, pair: Pair<Rule>) -> Ident {
        Ident {
            name: pair.as_str().to_string(),
            span: self.span_of(&pair),
        }
    }

    fn string(&self, pair: Pair<Rule>) -> Str {
        let span = self.span_of(&pair);
        let raw = children(pair).next().map(|p| p.as_str()).unwrap_or("");
        Str {
            value: unescape(raw),
            span,
        }
    }

    /// A string shown to the audience: its value and its parts (literal
    /// pieces and quoted values), read in one pass.
    fn text(&mut self, pair: Pair<Rule>) -> Text {
        let span = self.span_of(&pair);
        let raw = children(pair).next().map_or("", |p| p.as_str());
        templates::text(self.source, raw, span, &mut self.diags)
    }
}

/// The value of a string literal's characters: `\n` and `\t` become a line
/// break and a tab, any other escaped character stands for itself.
fn unescape(raw: &str) -> String {
    let mut value = String::with_capacity(raw.len());
    let mut chars = raw.chars();
    while let Some(c) = chars.next() {
        if c == '\\' {
            match chars.next() {
                Some('n') => value.push('\n'),
                Some('t') => value.push('\t'),
                Some(other) => value.push(other),
                None => {}
            }
        } else {
            value.push(c);
        }
    }
    value
}

/// The byte ranges of every keyword (`kw_*` rule) the parser matches in a
/// story that parses, in order; empty when it does not parse. For tools
/// that check an editor's highlighting against the grammar.
pub fn keyword_spans(text: &str) -> Vec<std::ops::Range<usize>> {
    match StoryParser::parse(Rule::file, text) {
        Ok(pairs) => pairs
            .flatten()
            .filter(|p| format!("{:?}", p.as_rule()).starts_with("kw_"))
            .map(|p| p.as_span().start()..p.as_span().end())
            .collect(),
        Err(_) => Vec::new(),
    }
}
