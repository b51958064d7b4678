//! Raw CSV records: the dialect every reader here uses (RFC 4180, see
//! [`crate::load`]), a reader that keeps the bytes of the current record
//! for checks and excerpts, the fields of a record's raw text, the checks
//! of one cell's text, and the text of an excerpt shown in a diagnostic.

use std::io::{self, Read};
use std::ops::Range;

/// The CSV dialect of every reader here (RFC 4180, see the module docs).
pub(crate) fn reader_builder() -> csv::ReaderBuilder {
    let mut b = csv::ReaderBuilder::new();
    b.has_headers(false)
        .flexible(true)
        .delimiter(b',')
        .quote(b'"')
        .double_quote(true)
        .escape(None)
        .quoting(true)
        .trim(csv::Trim::None)
        .comment(None);
    b
}

pub(crate) const BOM: &[u8] = b"\xEF\xBB\xBF";

/// Read the first bytes and drop a UTF-8 byte order mark if present.
/// A file with its byte order mark (if any) removed.
pub(crate) type WithoutBom<R> = io::Chain<io::Cursor<Vec<u8>>, R>;

pub(crate) fn skip_bom<R: Read>(mut file: R) -> io::Result<(WithoutBom<R>, u64)> {
    let mut head = Vec::with_capacity(3);
    let mut buf = [0u8; 3];
    while head.len() < 3 {
        let n = match file.read(&mut buf[..3 - head.len()]) {
            Ok(n) => n,
            Err(e) if e.kind() == io::ErrorKind::Interrupted => continue,
            Err(e) => return Err(e),
        };
        if n == 0 {
            break;
        }
        head.extend_from_slice(&buf[..n]);
    }
    let bom = if head == BOM {
        head.clear();
        BOM.len() as u64
    } else {
        0
    };
    Ok((io::Cursor::new(head).chain(file), bom))
}

/// A reader that keeps the bytes it passed on since the start of the current
/// record, so a record's raw text is available for validation and excerpts.
pub(crate) struct Tee<R> {
    inner: R,
    /// Bytes read but not yet reported to the progress display.
    unreported: u64,
    /// Raw bytes from offset `base` onwards.
    buf: Vec<u8>,
    base: u64,
}

/// Drop consumed bytes once this many have accumulated (amortised O(1)).
const DRAIN_AT: usize = 64 * 1024;

impl<R: Read> Tee<R> {
    pub(crate) fn new(inner: R) -> Self {
        Tee {
            inner,
            unreported: 0,
            buf: Vec::new(),
            base: 0,
        }
    }

    /// The raw bytes between two stream offsets (empty if out of range).
    pub(crate) fn window(&self, start: u64, end: u64) -> &[u8] {
        let a = start.saturating_sub(self.base) as usize;
        let b = end.saturating_sub(self.base) as usize;
        self.buf.get(a..b.min(self.buf.len())).unwrap_or(&[])
    }

    /// Everything before stream offset `end` will not be asked for again.
    pub(crate) fn consumed(&mut self, end: u64) {
        let cut = (end.saturating_sub(self.base) as usize).min(self.buf.len());
        if cut >= DRAIN_AT {
            self.buf.drain(..cut);
            self.base += cut as u64;
        }
    }
}

impl<R: Read> Read for Tee<R> {
    fn read(&mut self, out: &mut [u8]) -> io::Result<usize> {
        let n = self.inner.read(out)?;
        self.buf.extend_from_slice(&out[..n]);
        self.unreported += n as u64;
        if self.unreported >= crate::progress::STEP || n == 0 {
            crate::progress::advance(self.unreported);
            self.unreported = 0;
        }
        Ok(n)
    }
}

/// The raw text of one record without surrounding line breaks, and the
/// 1-based file line it starts on.
pub(crate) struct RawRecord<'a> {
    pub(crate) bytes: &'a [u8],
    pub(crate) line: usize,
}

impl<'a> RawRecord<'a> {
    pub(crate) fn new(window: &'a [u8], line_at_start: u64) -> Self {
        // Blank lines skipped before the record belong to its window.
        let lead = window
            .iter()
            .position(|&b| b != b'\r' && b != b'\n')
            .unwrap_or(window.len());
        let skipped_lines = window[..lead].iter().filter(|&&b| b == b'\n').count();
        let mut bytes = &window[lead..];
        while let [rest @ .., b'\r' | b'\n'] = bytes {
            bytes = rest;
        }
        RawRecord {
            bytes,
            line: (line_at_start as usize)
                .saturating_add(skipped_lines)
                .max(1),
        }
    }
}

/// A problem found while scanning a record's raw text.
pub(crate) enum ScanError {
    /// Text follows the closing quote of field `field`; `at` is its offset.
    AfterQuote { field: usize, at: usize },
    /// Field `field` opens a quote at `at` that is never closed.
    Unterminated { field: usize, at: usize },
}

/// Split a record's raw text into field spans (quotes included), checking the
/// RFC 4180 quoting rules chosen in the module docs.
pub(crate) fn scan_fields(raw: &[u8]) -> Result<Vec<Range<usize>>, ScanError> {
    let mut fields = Vec::new();
    let mut i = 0;
    let n = raw.len();
    loop {
        let start = i;
        if i < n && raw[i] == b'"' {
            i += 1;
            loop {
                match raw[i..].iter().position(|&b| b == b'"') {
                    None => {
                        return Err(ScanError::Unterminated {
                            field: fields.len(),
                            at: start,
                        })
                    }
                    Some(p) => {
                        i += p + 1;
                        if i < n && raw[i] == b'"' {
                            i += 1;
                        } else {
                            break;
                        }
                    }
                }
            }
            if i < n && raw[i] != b',' {
                return Err(ScanError::AfterQuote {
                    field: fields.len(),
                    at: i,
                });
            }
        } else {
            while i < n && raw[i] != b',' {
                i += 1;
            }
        }
        fields.push(start..i);
        if i >= n {
            return Ok(fields);
        }
        i += 1;
    }
}

/// Span of field `field` in a raw record, or the whole record.
pub(crate) fn field_span(raw: &[u8], field: usize) -> Range<usize> {
    match scan_fields(raw) {
        Ok(spans) => spans.get(field).cloned().unwrap_or(0..raw.len()),
        Err(_) => 0..raw.len(),
    }
}

/// Keep excerpts of huge records (an unclosed quote, say) readable.
const MAX_EXCERPT: usize = 8 * 1024;
/// Bytes shown after the span of a line longer than [`MAX_EXCERPT`].
const EXCERPT_AFTER: usize = 60;

impl RawRecord<'_> {
    /// The text shown for this record in a diagnostic, and `span` within
    /// it: invalid UTF-8 replaced, and a record longer than [`MAX_EXCERPT`]
    /// cut after the line of the span (or, for one line that long, a little
    /// after the span). Control characters stay: the diagnostic renderer
    /// shows them as visible characters (`crescendo_diag::terminal_safe`).
    pub(crate) fn excerpt(&self, span: Range<usize>) -> (String, Range<usize>) {
        let raw = self;
        let bytes = if raw.bytes.len() > MAX_EXCERPT {
            let from = span.end.min(raw.bytes.len());
            let mut cut = raw.bytes[from..]
                .iter()
                .position(|&b| b == b'\n' || b == b'\r')
                .map_or(raw.bytes.len(), |p| from + p);
            if cut > MAX_EXCERPT {
                // a single line that long (one huge field, say): show the
                // text around the span only
                cut = cut.min(from.max(span.start + 1) + EXCERPT_AFTER);
            }
            &raw.bytes[..cut]
        } else {
            raw.bytes
        };
        match std::str::from_utf8(bytes) {
            Ok(t) => (t.to_owned(), span),
            Err(_) => {
                let at = |o: usize| String::from_utf8_lossy(&bytes[..o.min(bytes.len())]).len();
                (
                    String::from_utf8_lossy(bytes).into_owned(),
                    at(span.start)..at(span.end),
                )
            }
        }
    }
}

/// The first character of `s` that XML 1.0 cannot carry (see
/// [`crate::load`]), with its byte offset.
pub(crate) fn forbidden_char(s: &str) -> Option<(usize, char)> {
    // fast path: only bytes below 0x20 and the lead byte of U+FFFE/U+FFFF
    if !s.bytes().any(|b| b < 0x20 || b == 0xEF) {
        return None;
    }
    s.char_indices().find(|&(_, c)| {
        matches!(c, '\u{0}'..='\u{8}' | '\u{b}' | '\u{c}' | '\u{e}'..='\u{1f}' | '\u{fffe}' | '\u{ffff}')
    })
}

/// The number of characters of `s` when it has more than `limit`.
pub(crate) fn too_long(s: &str, limit: usize) -> Option<usize> {
    if s.len() <= limit {
        return None;
    }
    let n = s.chars().count();
    (n > limit).then_some(n)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scanner_spans_and_quote_rules() {
        let spans = scan_fields(b"a,\"b,\"\"c\",,d").ok().unwrap_or_default();
        assert_eq!(spans, vec![0..1, 2..9, 10..10, 11..12]);
        assert!(matches!(
            scan_fields(b"x,\"abc\"d,e"),
            Err(ScanError::AfterQuote { field: 1, at: 7 })
        ));
        assert!(matches!(
            scan_fields(b"x,\"abc"),
            Err(ScanError::Unterminated { field: 1, at: 2 })
        ));
        // A bare quote inside an unquoted field is data (documented choice).
        assert_eq!(scan_fields(b"aa\"a,b").ok().map(|s| s.len()), Some(2));
        let empty = scan_fields(b"").ok().unwrap_or_default();
        assert_eq!((empty.len(), empty.first()), (1, Some(&(0..0))));
    }

    #[test]
    fn raw_record_skips_blank_lines_and_terminators() {
        let r = RawRecord::new(b"\r\n\nabc,d\r\n", 4);
        assert_eq!(r.bytes, b"abc,d");
        assert_eq!(r.line, 6);
    }
}
