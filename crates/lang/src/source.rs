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
