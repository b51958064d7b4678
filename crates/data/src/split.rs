//! Our own CSV record splitter, for the streaming reader ([`crate::stream`]).
//!
//! Two passes over a buffer of the file. The first ([`Index::build`]) looks
//! at 64-byte blocks, turns each of the bytes that can end a field or a
//! record (`,`, `"`, CR, LF) into one bit of a 64-bit mask and lists their
//! positions; it lists apart the bytes a cell check must look at (control
//! characters other than line breaks, and 0xEF, the lead byte of U+FFFE and
//! U+FFFF). The second ([`Records::next`]) walks those positions record by
//! record: a record without a quote at the start of one of its fields is cut
//! at its separators at once; a record with one is read byte by byte into a
//! decoded copy (quotes removed, doubled quotes made single).
//!
//! The dialect is the one of [`crate::record::reader_builder`] with the
//! quoting rules of [`crate::record::scan_fields`]: line breaks (CR, LF or
//! CRLF) before a record are skipped, a quote opens a quoted field only as
//! its first byte (elsewhere it is data), and a closing quote must be
//! followed by a separator, a line break or the end of the file. A record
//! that breaks these rules is [`Next::Bad`]: the reader then gives up, and
//! the loader reports the located error. A property test checks that the
//! records and fields found are the csv crate's.

use std::ops::Range;

/// Bytes per block of the first pass.
const BLOCK: usize = 64;

/// The bit of each byte of a block (up to 64 bytes) for which `f` holds.
#[inline(always)]
fn mask(block: &[u8], f: impl Fn(u8) -> bool) -> u64 {
    let mut m = 0u64;
    for (i, &b) in block.iter().enumerate() {
        m |= u64::from(f(b)) << i;
    }
    m
}

/// Is `b` a byte that can end a field or a record, or open a quote?
#[inline(always)]
fn structural(b: u8) -> bool {
    b == b',' || b == b'"' || b == b'\n' || b == b'\r'
}

/// Is `b` a byte a cell check has to look at: a control character other
/// than a line break, or the lead byte of U+FFFE and U+FFFF?
#[inline(always)]
fn odd(b: u8) -> bool {
    (b < 0x20 && b != b'\n' && b != b'\r') || b == 0xEF
}

/// The masks of [`structural`] and [`odd`] bytes of a 64-byte block: 16
/// bytes at a time with SSE2 (part of every x86-64 processor).
#[cfg(target_arch = "x86_64")]
#[inline(always)]
fn block_masks(block: &[u8]) -> (u64, u64) {
    use std::arch::x86_64::{
        __m128i, _mm_andnot_si128, _mm_cmpeq_epi8, _mm_min_epu8, _mm_movemask_epi8, _mm_or_si128,
        _mm_set1_epi8, _mm_set_epi64x,
    };
    let (mut marks, mut odd) = (0u64, 0u64);
    // SAFETY: these SSE2 intrinsics touch no memory (the bytes are passed
    // by value), and SSE2 is part of the x86-64 baseline: every x86-64
    // target enables it.
    unsafe {
        for (k, part) in block.chunks_exact(16).enumerate() {
            let word = |i: usize| {
                let mut w = [0u8; 8];
                w.copy_from_slice(&part[i..i + 8]);
                i64::from_le_bytes(w)
            };
            let v: __m128i = _mm_set_epi64x(word(8), word(0));
            let eq = |c: u8| _mm_cmpeq_epi8(v, _mm_set1_epi8(c as i8));
            let breaks = _mm_or_si128(eq(b'\n'), eq(b'\r'));
            let m = _mm_or_si128(_mm_or_si128(eq(b','), eq(b'"')), breaks);
            // a byte below 0x20 is its own minimum with 0x1F (unsigned)
            let control = _mm_cmpeq_epi8(_mm_min_epu8(v, _mm_set1_epi8(0x1F)), v);
            let o = _mm_or_si128(_mm_andnot_si128(breaks, control), eq(0xEF));
            marks |= u64::from(_mm_movemask_epi8(m) as u16) << (16 * k);
            odd |= u64::from(_mm_movemask_epi8(o) as u16) << (16 * k);
        }
    }
    (marks, odd)
}

/// The masks of [`structural`] and [`odd`] bytes of a 64-byte block.
#[cfg(not(target_arch = "x86_64"))]
#[inline(always)]
fn block_masks(block: &[u8]) -> (u64, u64) {
    (mask(block, structural), mask(block, odd))
}

/// The positions found by the first pass over one buffer.
#[derive(Debug, Default)]
pub(crate) struct Index {
    /// Every `,`, `"`, CR and LF, in order.
    marks: Vec<u32>,
    /// Every byte for which [`odd`] holds, in order.
    odd: Vec<u32>,
    /// Does the buffer hold a quote? Without one, every mark is a
    /// separator or a line break.
    quotes: bool,
}

impl Index {
    /// Index `buf` (at most 4 GiB: positions are 32-bit).
    pub(crate) fn build(&mut self, buf: &[u8]) {
        self.marks.clear();
        self.odd.clear();
        self.quotes = memchr::memchr(b'"', buf).is_some();
        let push = |v: &mut Vec<u32>, base: usize, mut m: u64| {
            while m != 0 {
                v.push((base + m.trailing_zeros() as usize) as u32);
                m &= m - 1;
            }
        };
        let mut blocks = buf.chunks_exact(BLOCK);
        let mut base = 0;
        for block in &mut blocks {
            let (m, o) = block_masks(block);
            push(&mut self.marks, base, m);
            if o != 0 {
                push(&mut self.odd, base, o);
            }
            base += BLOCK;
        }
        let rest = blocks.remainder();
        push(&mut self.marks, base, mask(rest, structural));
        push(&mut self.odd, base, mask(rest, odd));
    }
}

/// One record found by [`Records::next`].
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct Rec {
    /// Its raw text in the buffer, without line breaks around it.
    pub(crate) raw: Range<usize>,
    /// Where the next record may start (after its line break).
    pub(crate) end: usize,
    /// Its fields are ranges of the decoded copy, not of the buffer.
    pub(crate) decoded: bool,
    /// Its raw text holds a byte a cell check must look at (see [`odd`]).
    pub(crate) odd: bool,
}

/// What [`Records::next`] found.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) enum Next {
    Record(Rec),
    /// Only line breaks are left, and the file ends there.
    End,
    /// The buffer ends inside a record (or inside line breaks that may be
    /// followed by one): read more of the file from `at`, the first byte
    /// not yet used.
    More {
        at: usize,
    },
    /// A quoting error.
    Bad,
}

/// The second pass: records and their fields, one after another.
pub(crate) struct Records<'a> {
    buf: &'a [u8],
    index: &'a Index,
    /// The buffer ends where the file does.
    eof: bool,
    pos: usize,
    mark: usize,
    odd: usize,
}

impl<'a> Records<'a> {
    /// The records of `buf` (indexed in `index`) from `pos`.
    pub(crate) fn new(buf: &'a [u8], index: &'a Index, eof: bool, pos: usize) -> Self {
        Records {
            buf,
            index,
            eof,
            pos,
            mark: 0,
            odd: 0,
        }
    }

    /// The next record: its fields go to `fields`, as ranges of the buffer
    /// or (when the record has a quoted field) of `decoded`.
    pub(crate) fn next(&mut self, fields: &mut Vec<Range<usize>>, decoded: &mut Vec<u8>) -> Next {
        let buf = self.buf;
        let start = self.pos;
        let Some(skip) = buf[start..].iter().position(|&b| b != b'\n' && b != b'\r') else {
            return if self.eof {
                self.pos = buf.len();
                Next::End
            } else {
                Next::More { at: start }
            };
        };
        let start = start + skip;
        let marks = &self.index.marks;
        while marks.get(self.mark).is_some_and(|&m| (m as usize) < start) {
            self.mark += 1;
        }
        fields.clear();
        let mut field = start;
        let mut mark = self.mark;
        let quotes = self.index.quotes;
        let (body, end) = loop {
            if quotes && buf.get(field) == Some(&b'"') {
                return self.quoted(start, fields, decoded);
            }
            // a quote elsewhere in an unquoted field is data: skip it
            let next = loop {
                match marks.get(mark) {
                    Some(&m) if quotes && buf[m as usize] == b'"' => mark += 1,
                    Some(&m) => break Some(m as usize),
                    None => break None,
                }
            };
            let Some(m) = next else {
                if !self.eof {
                    return Next::More { at: start };
                }
                fields.push(field..buf.len());
                break (buf.len(), buf.len());
            };
            mark += 1;
            fields.push(field..m);
            match buf[m] {
                b',' => field = m + 1,
                b'\r' if buf.get(m + 1) == Some(&b'\n') => break (m, m + 2),
                _ => break (m, m + 1),
            }
        };
        self.mark = mark;
        self.pos = end;
        Next::Record(Rec {
            raw: start..body,
            end,
            decoded: false,
            odd: self.odd_in(start..body),
        })
    }

    /// Does `raw` hold a byte listed in the index's `odd`?
    fn odd_in(&mut self, raw: Range<usize>) -> bool {
        let odd = &self.index.odd;
        while odd.get(self.odd).is_some_and(|&o| (o as usize) < raw.start) {
            self.odd += 1;
        }
        odd.get(self.odd).is_some_and(|&o| (o as usize) < raw.end)
    }

    /// A record with a quoted field, from `start`, read byte by byte.
    fn quoted(&mut self, start: usize, fields: &mut Vec<Range<usize>>, out: &mut Vec<u8>) -> Next {
        let buf = self.buf;
        let n = buf.len();
        out.clear();
        fields.clear();
        let more = |eof: bool| {
            if eof {
                None
            } else {
                Some(Next::More { at: start })
            }
        };
        let mut i = start;
        let body = loop {
            let from = out.len();
            if i < n && buf[i] == b'"' {
                i += 1;
                loop {
                    let Some(p) = memchr::memchr(b'"', &buf[i..]) else {
                        // the file ends inside the quotes
                        return more(self.eof).unwrap_or(Next::Bad);
                    };
                    out.extend_from_slice(&buf[i..i + p]);
                    i += p + 1;
                    match buf.get(i) {
                        Some(b'"') => {
                            out.push(b'"');
                            i += 1;
                        }
                        Some(b',' | b'\r' | b'\n') => break,
                        Some(_) => return Next::Bad,
                        None => match more(self.eof) {
                            Some(m) => return m,
                            None => break,
                        },
                    }
                }
            } else {
                let p = buf[i..]
                    .iter()
                    .position(|&b| b == b',' || b == b'\r' || b == b'\n')
                    .unwrap_or(n - i);
                if i + p == n {
                    if let Some(m) = more(self.eof) {
                        return m;
                    }
                }
                out.extend_from_slice(&buf[i..i + p]);
                i += p;
            }
            fields.push(from..out.len());
            match buf.get(i) {
                Some(b',') => i += 1,
                _ => break i,
            }
        };
        let end = match buf.get(body) {
            None => body,
            Some(b'\r') if buf.get(body + 1) == Some(&b'\n') => body + 2,
            Some(_) => body + 1,
        };
        self.pos = end;
        Next::Record(Rec {
            raw: start..body,
            end,
            decoded: true,
            odd: self.odd_in(start..body),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// Records and fields of `text` as the splitter finds them, with the
    /// file given in buffers of `step` bytes (growing by `step` when a
    /// record does not fit); `None` for a quoting error.
    fn split(text: &[u8], step: usize) -> Option<Vec<Vec<Vec<u8>>>> {
        let mut out = Vec::new();
        let mut index = Index::default();
        let (mut fields, mut decoded) = (Vec::new(), Vec::new());
        let mut from = 0;
        let mut len = step.min(text.len());
        loop {
            let buf = &text[from..from + len];
            let eof = from + len == text.len();
            index.build(buf);
            let mut recs = Records::new(buf, &index, eof, 0);
            let at = loop {
                match recs.next(&mut fields, &mut decoded) {
                    Next::Record(r) => {
                        let src: &[u8] = if r.decoded { &decoded } else { buf };
                        out.push(fields.iter().map(|f| src[f.clone()].to_vec()).collect());
                    }
                    Next::End => return Some(out),
                    Next::More { at } => break at,
                    Next::Bad => return None,
                }
            };
            let grow = if at == 0 { len + step } else { step };
            from += at;
            len = grow.min(text.len() - from);
        }
    }

    /// The same as the streaming reader had it before: the csv crate's
    /// records, and the quoting rules of `scan_fields` on each raw record.
    fn reference(text: &[u8]) -> Option<Vec<Vec<Vec<u8>>>> {
        let mut rdr = crate::record::reader_builder().from_reader(text);
        let mut rec = csv::ByteRecord::new();
        let mut out = Vec::new();
        loop {
            let start = rdr.position().byte();
            match rdr.read_byte_record(&mut rec) {
                Ok(true) => {}
                Ok(false) => return Some(out),
                Err(_) => return None,
            }
            let raw = crate::record::RawRecord::new(
                &text[start as usize..rdr.position().byte() as usize],
                1,
            );
            if raw.bytes.contains(&b'"') && crate::record::scan_fields(raw.bytes).is_err() {
                return None;
            }
            out.push(rec.iter().map(<[u8]>::to_vec).collect());
        }
    }

    #[test]
    fn plain_quoted_and_broken_records() {
        let text = b"a,b\r\n\n\"x,\"\"y\"\"\",\nlast,\"q\"";
        let want: Vec<Vec<&[u8]>> =
            vec![vec![b"a", b"b"], vec![b"x,\"y\"", b""], vec![b"last", b"q"]];
        let got = split(text, 1 << 20).unwrap_or_default();
        assert_eq!(
            got,
            want.iter()
                .map(|r| r.iter().map(|f| f.to_vec()).collect::<Vec<_>>())
                .collect::<Vec<_>>()
        );
        assert_eq!(split(b"a,\"b\"c\n", 64), None);
        assert_eq!(split(b"a,\"b\n", 64), None);
        // a quote inside an unquoted field is data
        assert_eq!(
            split(b"a\"b,c", 64).map(|r| r[0][0].clone()),
            Some(b"a\"b".to_vec())
        );
    }

    #[test]
    fn block_masks_follow_the_byte_rules() {
        for round in 0..8usize {
            // every byte value once in four blocks, in a different order
            // each round
            let bytes: Vec<u8> = (0..256usize)
                .map(|i| ((i * 67 + round * 13) % 256) as u8)
                .collect();
            for block in bytes.chunks_exact(BLOCK) {
                assert_eq!(
                    block_masks(block),
                    (mask(block, structural), mask(block, odd))
                );
            }
        }
    }

    #[test]
    fn odd_bytes_are_flagged_per_record() {
        let text = b"a,b\nc\x01,d\ne,\xEF\xBF\xBE\n";
        let mut index = Index::default();
        index.build(text);
        let mut recs = Records::new(text, &index, true, 0);
        let (mut f, mut d) = (Vec::new(), Vec::new());
        let mut flags = Vec::new();
        while let Next::Record(r) = recs.next(&mut f, &mut d) {
            flags.push(r.odd);
        }
        assert_eq!(flags, vec![false, true, true]);
    }

    /// Cells from a small alphabet that makes every quoting case likely.
    fn cell() -> impl Strategy<Value = String> {
        let piece = prop_oneof![
            Just(String::new()),
            "[a-c]{1,3}",
            Just("\"".to_string()),
            Just("\"\"".to_string()),
            Just(",".to_string()),
            Just("\r\n".to_string()),
            Just("\n".to_string()),
            Just("\r".to_string()),
            Just("é".to_string()),
        ];
        prop::collection::vec(piece, 0..4).prop_map(|p| p.concat())
    }

    /// A CSV written from cells: quoted properly, or written raw (which
    /// makes ragged rows, stray and broken quotes, blank lines).
    fn csv_text() -> impl Strategy<Value = Vec<u8>> {
        let row = prop::collection::vec((cell(), any::<bool>()), 1..5);
        let ends = prop_oneof![Just("\n"), Just("\r\n"), Just("\r")];
        (prop::collection::vec((row, ends), 0..8), any::<bool>()).prop_map(|(rows, last)| {
            let mut s = String::new();
            let n = rows.len();
            for (k, (cells, end)) in rows.into_iter().enumerate() {
                let cells: Vec<String> = cells
                    .into_iter()
                    .map(|(c, quote)| {
                        if quote {
                            format!("\"{}\"", c.replace('"', "\"\""))
                        } else {
                            c
                        }
                    })
                    .collect();
                s.push_str(&cells.join(","));
                if k + 1 < n || last {
                    s.push_str(end);
                }
            }
            s.into_bytes()
        })
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(2000))]
        #[test]
        fn finds_the_records_of_the_csv_crate(text in csv_text(), step in 1usize..80) {
            let want = reference(&text);
            prop_assert_eq!(split(&text, step), want.clone());
            prop_assert_eq!(split(&text, text.len().max(1)), want);
        }
    }
}
