//! The canonical layout of a story file (`crescendo fmt`).
//!
//! The formatter prints the syntax tree, one `match` arm per item and per
//! frame statement (the matches are exhaustive, so a new statement does not
//! compile until it has a layout). Names, numbers and strings are copied from
//! the source text by their spans, so a literal is never rewritten (`0.50`
//! stays `0.50`); only blank space, line breaks, `;`, redundant parentheses
//! and defaults (`ascending`) change.
//!
//! Comments are not in the tree (`COMMENT` is a silent pest rule): they are
//! found again in the source text and placed by position — a comment on its
//! own line stays on its own line before the next item or statement, a
//! comment after code stays at the end of that line. Line breaks after commas
//! in lists are kept (long lists stay readable); blank lines between items
//! and statements are kept, at most one in a row.
//!
//! Layout: two spaces per level (frame statements, column declarations,
//! view steps as `  | step`), four for the continuation of a list, one space
//! around `=` and binary operators, none before `,` and `:`, two spaces
//! before a trailing comment, exactly one line break at the end of the file.
//!
//! Every result is checked before it is returned: it must parse to the same
//! tree (spans aside) and keep every comment, in order; otherwise the
//! formatter returns an error instead of a changed story.

use std::sync::Arc;

use crescendo_diag::{Diagnostic, Source};

mod exprs;
mod frames;
mod items;

use crate::ast::*;
use crate::parser::parse;

/// Format a story. On a syntax error returns the parser's located
/// diagnostics (and formats nothing).
pub fn format_source(source: &Arc<Source>) -> Result<String, Vec<Diagnostic>> {
    let (ast, diags) = parse(source);
    if !diags.is_empty() {
        return Err(diags);
    }
    let text = source.text.as_str();
    let mut p = Printer::new(text);
    p.story(&ast);
    let out = p.finish();
    // The safety net: never hand back a story that means something else.
    let again = Source::file(source.name.clone(), out.clone());
    let (ast2, diags2) = parse(&again);
    let same_tree = diags2.is_empty() && same_shape(&ast, &ast2);
    let same_comments = comments(text)
        .iter()
        .map(|r| text[r.clone()].trim_end())
        .eq(comments(&out).iter().map(|r| out[r.clone()].trim_end()));
    if !same_tree || !same_comments {
        return Err(vec![Diagnostic::error(
            "fmt-internal",
            "the formatter could not keep this story's meaning or comments; the file is left as it is",
        )
        .at(source, 0..0, "formatting stopped here")
        .note("this is a bug in crescendo fmt: please report it with the story")]);
    }
    Ok(out)
}

/// Format story text (named `<story>` in diagnostics).
pub fn format_story(text: &str) -> Result<String, Vec<Diagnostic>> {
    format_source(&Source::file("<story>", text))
}

/// True when two trees are the same apart from their spans (source
/// positions): what `parse(format(s))` must give back.
pub fn same_shape(a: &StoryAst, b: &StoryAst) -> bool {
    strip_spans(&format!("{a:?}")) == strip_spans(&format!("{b:?}"))
}

/// The `Debug` text of a tree with every `start..end` range blanked out.
pub fn strip_spans(debug: &str) -> String {
    let b = debug.as_bytes();
    let mut out = String::with_capacity(debug.len());
    let mut i = 0;
    while i < b.len() {
        if b[i].is_ascii_digit() && (i == 0 || !b[i - 1].is_ascii_alphanumeric()) {
            let mut j = i;
            while j < b.len() && b[j].is_ascii_digit() {
                j += 1;
            }
            if debug[j..].starts_with("..") {
                let mut k = j + 2;
                while k < b.len() && b[k].is_ascii_digit() {
                    k += 1;
                }
                if k > j + 2 {
                    out.push('_');
                    i = k;
                    continue;
                }
            }
            out.push_str(&debug[i..j]);
            i = j;
            continue;
        }
        let ch = debug[i..].chars().next().unwrap_or(' ');
        out.push(ch);
        i += ch.len_utf8().max(1);
    }
    out
}

/// Byte ranges of the comments of a story (from `#` to the end of the line,
/// without the line break); a `#` inside a string is not a comment.
pub fn comments(text: &str) -> Vec<std::ops::Range<usize>> {
    let b = text.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        match b[i] {
            b'"' => {
                i += 1;
                while i < b.len() && b[i] != b'"' && b[i] != b'\n' {
                    if b[i] == b'\\' {
                        i += 1;
                    }
                    i += 1;
                }
                i += 1;
            }
            b'#' => {
                let start = i;
                while i < b.len() && b[i] != b'\n' {
                    i += 1;
                }
                let end = if i > start && b[i - 1] == b'\r' {
                    i - 1
                } else {
                    i
                };
                out.push(start..end);
            }
            _ => i += 1,
        }
    }
    out
}

/// Indentation of one level.
const INDENT: &str = "  ";
/// Extra indentation of a list continued on the next line.
const CONTINUE: &str = "    ";

struct Printer<'a> {
    src: &'a str,
    comments: Vec<std::ops::Range<usize>>,
    /// The next comment not yet printed.
    next: usize,
    out: String,
    /// Indentation of the current line (levels).
    level: usize,
    /// Where the last printed source node ended (for blank-line detection).
    last_end: usize,
}

impl<'a> Printer<'a> {
    fn new(src: &'a str) -> Self {
        Printer {
            src,
            comments: comments(src),
            next: 0,
            out: String::new(),
            level: 0,
            last_end: 0,
        }
    }

    fn finish(mut self) -> String {
        self.leading(self.src.len(), true);
        let trimmed = self.out.trim_end().len();
        self.out.truncate(trimmed);
        if !self.out.is_empty() {
            self.out.push('\n');
        }
        self.out
    }

    fn s(&mut self, text: &str) {
        self.out.push_str(text);
    }

    /// Copy a node's source text (a name, a number, a string with quotes).
    fn raw(&mut self, span: &Span) {
        let t = self.src.get(span.clone()).unwrap_or("");
        self.out.push_str(t);
    }

    /// `word` and the node's source text, when the optional node is given
    /// (` sheet "Q1"`, ` by region`).
    fn opt<N: Node>(&mut self, word: &str, node: Option<&N>) {
        if let Some(node) = node {
            self.put(word, node);
        }
    }

    /// `word` and the node's source text (`theme `, `classic`).
    fn put(&mut self, word: &str, node: &impl Node) {
        self.s(word);
        self.raw(node.span());
    }

    fn indent(&mut self) {
        for _ in 0..self.level {
            self.out.push_str(INDENT);
        }
    }

    fn newline(&mut self) {
        let trimmed = self.out.trim_end_matches([' ', '\t']).len();
        self.out.truncate(trimmed);
        self.out.push('\n');
    }

    /// True when the source between `from` and `to` has a blank line
    /// outside comments.
    fn blank_between(&self, from: usize, to: usize) -> bool {
        has_empty_line(self.src.get(from.min(to)..to).unwrap_or(""))
    }

    /// Print the comments that start before `pos` on lines of their own,
    /// at the current indentation; keep one blank line where the source had
    /// one. When `blank_before_node` is set, also a blank line between the
    /// last comment and the node at `pos` if the source had one.
    fn leading(&mut self, pos: usize, blank_before_node: bool) {
        while let Some(c) = self.comments.get(self.next).cloned() {
            if c.start >= pos {
                break;
            }
            if !self.out.is_empty() && self.blank_between(self.last_end, c.start) {
                self.ensure_blank_line();
            }
            self.indent();
            let text = self.src[c.clone()].trim_end().to_string();
            self.s(&text);
            self.newline();
            self.last_end = c.end;
            self.next += 1;
        }
        if blank_before_node && !self.out.is_empty() && self.blank_between(self.last_end, pos) {
            self.ensure_blank_line();
        }
    }

    fn ensure_blank_line(&mut self) {
        if !self.out.ends_with("\n\n") && !self.out.ends_with("{\n") {
            if !self.out.ends_with('\n') {
                self.newline();
            }
            self.out.push('\n');
        }
    }

    /// Print at the end of the current line the comments that start inside
    /// the node ending at `end`, and a comment that follows it on the same
    /// source line with nothing but `;`, `,` or blank space between (a
    /// comment after later code on that line belongs to that code).
    fn trailing(&mut self, end: usize) {
        let line_end = self.src[end.min(self.src.len())..]
            .find('\n')
            .map_or(self.src.len(), |o| end + o);
        let mut first = true;
        while let Some(c) = self.comments.get(self.next).cloned() {
            let inside = c.start < end;
            let follows = c.start < line_end
                && self.src[end.min(c.start)..c.start]
                    .chars()
                    .all(|ch| matches!(ch, ' ' | '\t' | ';' | ','));
            if !inside && !follows {
                break;
            }
            // a second comment inside the node goes on its own line
            self.comment(&c, first);
            first = false;
        }
        self.last_end = self.last_end.max(end);
    }

    /// Write the next comment, `c`: after two spaces on the current line
    /// when it is the `first` there, else on a line of its own.
    fn comment(&mut self, c: &std::ops::Range<usize>, first: bool) {
        if first {
            self.s("  ");
        } else {
            self.newline();
            self.indent();
            self.s(CONTINUE);
        }
        let text = self.src[c.clone()].trim_end().to_string();
        self.s(&text);
        self.next += 1;
    }

    /// Between two elements of a list: `sep` (e.g. `,`), then a line break
    /// if the source had one between them (with any comments there kept at
    /// the end of the line), else a space.
    fn gap(&mut self, sep: &str, prev_end: usize, next_start: usize, space: bool) {
        self.s(sep);
        let gap = self.src.get(prev_end..next_start).unwrap_or("");
        if gap.contains('\n') {
            self.trailing_until(next_start);
            self.newline();
            self.indent();
            self.s(CONTINUE);
        } else if space {
            self.s(" ");
        }
    }

    /// Comments before `pos`, kept on the current line (only one fits: the
    /// others go on lines of their own).
    fn trailing_until(&mut self, pos: usize) {
        let mut first = true;
        while let Some(c) = self.comments.get(self.next).cloned() {
            if c.start >= pos {
                break;
            }
            self.comment(&c, first);
            first = false;
        }
    }
}

/// True when `gap` contains a line with nothing but blank space between two
/// line breaks.
fn has_empty_line(gap: &str) -> bool {
    let parts: Vec<&str> = gap.split('\n').collect();
    parts.len() >= 3
        && parts[1..parts.len() - 1]
            .iter()
            .any(|l| l.trim().is_empty())
}

/// A name or a quoted string: a node the formatter copies as it stands.
trait Node {
    fn span(&self) -> &Span;
}

impl Node for crate::ast::Ident {
    fn span(&self) -> &Span {
        &self.span
    }
}

impl Node for crate::ast::Str {
    fn span(&self) -> &Span {
        &self.span
    }
}

impl Node for crate::ast::Text {
    fn span(&self) -> &Span {
        &self.span
    }
}
