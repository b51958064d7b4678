//! A story file's bytes as text: UTF-8, or a located error.

use std::sync::Arc;

use crescendo_diag::{Diagnostic, Source};

/// The story file `name` whose content is `bytes`, or, when the bytes are
/// not UTF-8, the error at the first bad byte: its line, its column (in
/// characters, counting the bad bytes as one) and its byte offset in the
/// file, with that line as the excerpt (bad bytes shown as `�`).
pub fn decode(name: &str, bytes: Vec<u8>) -> Result<Arc<Source>, Vec<Diagnostic>> {
    let err = match String::from_utf8(bytes) {
        Ok(text) => return Ok(Source::file(name, text)),
        Err(e) => e,
    };
    let at = err.utf8_error().valid_up_to();
    // `None`: a sequence cut short by the end of the file
    let bad = err
        .utf8_error()
        .error_len()
        .unwrap_or(err.as_bytes().len() - at);
    let bytes = err.into_bytes();
    let line_start = bytes[..at]
        .iter()
        .rposition(|&b| b == b'\n')
        .map_or(0, |i| i + 1);
    let line_end = bytes[at..]
        .iter()
        .position(|&b| b == b'\n')
        .map_or(bytes.len(), |i| at + i);
    let line = bytes[..line_start].iter().filter(|&&b| b == b'\n').count() + 1;
    // the text before the bad bytes is valid: its length is the offset of
    // the replacement character in the excerpt
    let before = String::from_utf8_lossy(&bytes[line_start..at]).into_owned();
    let excerpt = String::from_utf8_lossy(&bytes[line_start..line_end]).into_owned();
    let start = before.len();
    let end = start + excerpt[start..].chars().next().map_or(0, char::len_utf8);
    let source = Source::excerpt(name, excerpt, line);
    let what = match bad {
        1 => "the byte".to_string(),
        n => format!("the {n} bytes"),
    };
    Err(vec![Diagnostic::error(
        "bad-encoding",
        format!("the story is not valid UTF-8: {what} at offset {at} cannot be read as text"),
    )
    .at(&source, start..end, "invalid UTF-8")
    .help("save the story as UTF-8")])
}

/// Where the string literal opening at `bytes[open]` (a `"`) stops: the
/// index of its closing quote or of the end of its line (a backslash
/// escapes the byte after it); past the end when the text ends first.
pub fn literal_end(bytes: &[u8], open: usize) -> usize {
    let mut i = open + 1;
    while let Some(&c) = bytes.get(i) {
        match c {
            b'\\' => i += 1,
            b'"' | b'\n' => break,
            _ => {}
        }
        i += 1;
    }
    i
}

/// Where the comment starting at `bytes[at]` (a `#`) stops: the index of
/// the end of its line, or the end of the text.
pub fn comment_end(bytes: &[u8], at: usize) -> usize {
    let mut i = at;
    while bytes.get(i).is_some_and(|&c| c != b'\n') {
        i += 1;
    }
    i
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn valid_text_reads() {
        let s = decode("s.cresc", "story \"Ä\"\n".into()).unwrap();
        assert_eq!(s.text, "story \"Ä\"\n");
    }

    /// The first bad byte is located by line, column and byte offset, and
    /// its line is shown (bad bytes as `�`).
    #[test]
    fn invalid_utf8_is_located() {
        let mut bytes = b"story \"T\"\nbyline \"\xc3\xa9t\xe9\"\n".to_vec();
        bytes.extend(b"source \"x\"\n");
        let d = decode("s.cresc", bytes).unwrap_err().remove(0);
        assert_eq!(d.code, "bad-encoding");
        assert_eq!(d.location(), Some(("s.cresc".into(), 2, 11)));
        assert!(d.message.contains("the byte at offset 21"), "{}", d.message);
        let shown = crescendo_diag::render(std::slice::from_ref(&d), false);
        assert!(shown.contains("byline \"ét�\""), "{shown}");
        // a truncated sequence at the very end
        let d = decode("s.cresc", b"story \"\xe2\x82".to_vec())
            .unwrap_err()
            .remove(0);
        assert_eq!(d.location(), Some(("s.cresc".into(), 1, 8)));
        assert!(
            d.message.contains("the 2 bytes at offset 7"),
            "{}",
            d.message
        );
    }
}

#[cfg(test)]
mod scan_tests {
    use super::{comment_end, literal_end};

    #[test]
    fn literals_and_comments_end_where_written() {
        let text = br#"a "x\"y" b "open
# note
"#;
        assert_eq!(literal_end(text, 2), 7); // the closing quote
        assert_eq!(literal_end(text, 11), 16); // the end of the line
        assert_eq!(comment_end(text, 17), 23);
        assert_eq!(literal_end(b"\"ab\\", 0), 5); // a last backslash: past the end
    }
}
