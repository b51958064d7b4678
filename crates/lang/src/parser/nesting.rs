//! The one nesting cap. The grammar, the syntax tree and everything that
//! walks it recurse once per level of parentheses and signs (a chain of
//! operators is read and walked in a loop), so input nested deeper than
//! [`MAX_NESTING`] is refused before any of them can run out of stack: the
//! whole story first (strings skipped), then each quoted value of a text
//! (`{...}`) before it is parsed.

use std::sync::Arc;

use crescendo_diag::{Diagnostic, Source};

use crate::source::{comment_end, literal_end};

/// Deepest nesting of parentheses, brackets, braces and unary operators
/// (`-`, `not`) a story may use; no real story comes near it.
pub const MAX_NESTING: usize = 48;

/// The error for the piece `range` of `source` when it nests deeper than
/// [`MAX_NESTING`], located where it first does.
pub(super) fn check(source: &Arc<Source>, range: std::ops::Range<usize>) -> Option<Diagnostic> {
    let text = &source.text[range.clone()];
    let at = range.start + too_deep(text)?;
    let end = source.text[at..]
        .chars()
        .next()
        .map_or(at, |c| at + c.len_utf8());
    Some(
        Diagnostic::error(
            "too-deep",
            format!("expressions nest more than {MAX_NESTING} levels deep here"),
        )
        .at(source, at..end, "too deep")
        .help("split the expression into named views or values"),
    )
}

/// The byte offset where the nesting of `text` first goes deeper than
/// [`MAX_NESTING`], counting open brackets plus the current run of unary
/// operators (`- - x`, `not not x`); strings and comments are skipped.
fn too_deep(text: &str) -> Option<usize> {
    let bytes = text.as_bytes();
    let word = |c: Option<&u8>| c.is_some_and(|c| c.is_ascii_alphanumeric() || *c == b'_');
    let mut depth = 0usize;
    let mut run = 0usize;
    let mut i = 0;
    while let Some(&b) = bytes.get(i) {
        match b {
            b'"' => {
                // to the closing quote (or the end of the line)
                i = literal_end(bytes, i);
                run = 0;
            }
            b'#' => {
                i = comment_end(bytes, i);
                continue;
            }
            b'(' | b'[' | b'{' => {
                depth += 1;
                run = 0;
            }
            b')' | b']' | b'}' => {
                depth = depth.saturating_sub(1);
                run = 0;
            }
            b'-' => run += 1,
            b' ' | b'\t' | b'\r' | b'\n' => {}
            b'n' if bytes.get(i..i + 3) == Some(b"not")
                && !word(bytes.get(i + 3))
                && !(i > 0 && word(bytes.get(i - 1))) =>
            {
                run += 1;
                if depth + run > MAX_NESTING {
                    return Some(i);
                }
                i += 3;
                continue;
            }
            _ => run = 0,
        }
        if depth + run > MAX_NESTING {
            return Some(i);
        }
        i += 1;
    }
    None
}
