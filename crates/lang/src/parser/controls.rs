//! Characters XML 1.0 cannot carry (the C0 controls other than tab, line
//! feed and carriage return, and U+FFFE, U+FFFF): a story's strings end up
//! in SVG and HTML, so a story that holds one is refused, at the
//! character, before it is parsed. Comments may hold anything.

use std::sync::Arc;

use crescendo_diag::{Diagnostic, Source};

/// At most this many characters are reported (one per line).
const MAX_REPORTED: usize = 20;

/// True for a character that no text of a deck can carry.
pub fn is_forbidden(c: char) -> bool {
    matches!(c, '\u{0}'..='\u{8}' | '\u{b}' | '\u{c}' | '\u{e}'..='\u{1f}' | '\u{fffe}' | '\u{ffff}')
}

/// A visible stand-in for a forbidden character: its Control Pictures
/// symbol (U+2400 block: `␇` for U+0007), or `�`.
fn picture(c: char) -> char {
    match u32::from(c) {
        n @ 0..=0x1f => char::from_u32(0x2400 + n).unwrap_or('\u{fffd}'),
        _ => '\u{fffd}',
    }
}

/// One error for each line (up to [`MAX_REPORTED`]) that holds a forbidden
/// character outside a comment, located at the first such character. The
/// excerpt shows the line with each such character as a visible stand-in
/// (`␇`), so that the terminal gets none of them.
pub(super) fn check(source: &Arc<Source>) -> Vec<Diagnostic> {
    let text = source.text.as_str();
    let mut out = Vec::new();
    for (number, line) in text.split_inclusive('\n').enumerate() {
        if let Some((i, c)) = first_outside_comment(line) {
            let shown: String = line
                .trim_end_matches(['\r', '\n'])
                .chars()
                .map(|c| if is_forbidden(c) { picture(c) } else { c })
                .collect();
            let at: usize = line[..i]
                .chars()
                .map(|c| if is_forbidden(c) { picture(c) } else { c })
                .map(char::len_utf8)
                .sum();
            let excerpt = Source::excerpt(source.name.clone(), shown, number + 1);
            out.push(
                Diagnostic::error(
                    "control-character",
                    format!(
                        "the story holds the control character U+{:04X}, which no text of a deck can carry",
                        u32::from(c)
                    ),
                )
                .at(&excerpt, at..at + picture(c).len_utf8(), "here")
                .help("delete it; write `\\n` for a line break and `\\t` for a tab in a text"),
            );
            if out.len() == MAX_REPORTED {
                break;
            }
        }
    }
    out
}

/// The first forbidden character of `line` that is not in a comment (a
/// `#` outside a string starts one).
fn first_outside_comment(line: &str) -> Option<(usize, char)> {
    let mut in_string = false;
    let mut escaped = false;
    for (i, c) in line.char_indices() {
        if is_forbidden(c) {
            return Some((i, c));
        }
        match c {
            _ if escaped => escaped = false,
            '\\' if in_string => escaped = true,
            '"' => in_string = !in_string,
            '#' if !in_string => return None,
            _ => {}
        }
    }
    None
}
