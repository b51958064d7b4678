//! One chunk of a streamed CSV file ([`crate::stream`]): its records found
//! by our own splitter ([`crate::split`]) in large buffers, the cells of the
//! columns the story reads (or declares) decoded and checked, and every
//! record fed to the views.

use std::io::{ErrorKind, Read};
use std::ops::Range;

use crate::codes::{head, Coded, HEAD};
use crate::files::ReadAt;
use crate::fold::{states, Sink};
use crate::load::ReadLimits;
use crate::model::{Cell, ColType};
use crate::pieces::Pieces;
use crate::probe::Watch;
use crate::record::{forbidden_char, too_long};
use crate::split::{Index, Next, Records};
use crate::stream::{ChunkOut, End, ScanInput};
use crate::time::{parse_date, parse_month_or_date, parse_year};

/// Bytes read at a time (a buffer grows when one record is longer).
const BUFFER: usize = 1 << 20;

/// Reusable per-record storage for cells borrowed from the current buffer.
fn recycle<'a>(mut v: Vec<Cell<'_>>) -> Vec<Cell<'a>> {
    v.clear();
    v.into_iter().map(|_| Cell::Missing).collect()
}

/// Do the cells the loader checks (`check`) hold no character XML cannot
/// carry, and none over the text limit? `field` gives a cell's text.
fn checked_cells_allowed<'a>(
    limits: &ReadLimits,
    check: &[usize],
    field: impl Fn(usize) -> Option<&'a str>,
) -> bool {
    check.iter().all(|&j| {
        field(j).is_none_or(|t| forbidden_char(t).is_none() && too_long(t, limits.text).is_none())
    })
}

/// The last text of a column: its length and first [`HEAD`] bytes as words
/// (compared at once), the whole text when longer.
#[derive(Clone, Default)]
struct Seen {
    len: usize,
    head: [u64; 2],
    long: Vec<u8>,
}

impl Seen {
    /// Is `t` the text last seen?
    #[inline]
    fn is(&self, t: &[u8]) -> bool {
        t.len() == self.len && head(t) == self.head && (t.len() <= HEAD || self.long == t)
    }

    fn set(&mut self, t: &[u8]) {
        self.len = t.len();
        self.head = head(t);
        self.long.clear();
        if t.len() > HEAD {
            self.long.extend_from_slice(t);
        }
    }
}

/// How the cells of one chunk are read: the parsed columns by type, the
/// last date-like cell of each column (ledgers repeat them row after row),
/// whether a text column has shown a non-number yet.
struct Decoder<'i> {
    input: &'i ScanInput<'i>,
    /// The parsed text, number and date, month or year columns (each
    /// kind in its own loop, so that a loop does not branch on the type).
    texts: Vec<usize>,
    numbers: Vec<usize>,
    times: Vec<(usize, ColType)>,
    check: Vec<usize>,
    missing: Vec<&'i str>,
    /// One bit per length (up to 63, longer ones at 63) of a missing text.
    missing_lens: u64,
    last: Vec<(Seen, Option<Cell<'static>>)>,
    text_done: Vec<bool>,
    /// Are numbers written plainly (no digit groups, a decimal point)?
    plain: bool,
}

impl<'i> Decoder<'i> {
    fn new(input: &'i ScanInput<'i>) -> Self {
        let ncols = input.schema.len();
        let parse = |j: usize| input.parse.get(j).copied().unwrap_or(false);
        let of = |want: fn(ColType) -> bool| -> Vec<(usize, ColType)> {
            (0..ncols)
                .filter(|&j| parse(j) && want(input.schema[j].1))
                .map(|j| (j, input.schema[j].1))
                .collect()
        };
        let only = |v: Vec<(usize, ColType)>| v.into_iter().map(|(j, _)| j).collect();
        Decoder {
            input,
            texts: only(of(|t| t == ColType::Text)),
            numbers: only(of(|t| t == ColType::Number)),
            times: of(|t| !matches!(t, ColType::Text | ColType::Number)),
            // the cells the loader checks: those of kept and declared columns
            check: (0..ncols)
                .filter(|&j| parse(j) || input.keep_values.get(j).copied().unwrap_or(false))
                .collect(),
            missing: input.spec.missing.iter().map(String::as_str).collect(),
            missing_lens: input
                .spec
                .missing
                .iter()
                .fold(0, |m, t| m | 1 << t.len().min(63)),
            last: vec![(Seen::default(), None); ncols],
            text_done: (0..ncols)
                .map(|j| input.schema[j].1 != ColType::Text)
                .collect(),
            plain: input.spec.numbers.is_plain(),
        }
    }

    /// The number a cell (bytes `b`, text `text()`) holds, in the file's
    /// number style.
    #[inline]
    fn number<'t>(&self, b: &[u8], text: impl Fn() -> Option<&'t str>) -> Option<f64> {
        if self.plain {
            // the common short decimal inline, then the full parser
            crate::quicknum::short_decimal(b).or_else(|| text().and_then(crate::load::parse_number))
        } else {
            text().and_then(|t| self.input.spec.numbers.parse(t))
        }
    }

    /// Is `b` one of the texts that mean "missing"? (Most cells are
    /// ruled out by their length alone.)
    #[inline]
    fn is_missing(&self, b: &[u8]) -> bool {
        self.missing_lens >> b.len().min(63) & 1 == 1
            && self.missing.iter().any(|m| m.as_bytes() == b)
    }

    /// The cells of one record (fields as ranges of `text`) into `cells`;
    /// `false` when a cell is not allowed or does not parse. `suspect`:
    /// the record may hold a cell that is not allowed (a byte a cell check
    /// must look at, or more bytes than the text limit).
    fn decode<'t>(
        &mut self,
        (text, fields, suspect): (&'t str, &[Range<usize>], bool),
        cells: &mut [Cell<'t>],
        (row, first_text): (usize, &mut [Option<(usize, String)>]),
    ) -> bool {
        let field = |j: usize| fields.get(j).and_then(|r| text.get(r.clone()));
        if suspect && !checked_cells_allowed(self.input.limits, &self.check, field) {
            return false;
        }
        let bytes = text.as_bytes();
        // fields end at ASCII bytes, so only a text cell needs its
        // character boundaries checked; `None`: no such field
        let cell = |j: usize| fields.get(j).and_then(|r| bytes.get(r.clone()));
        // the order of the loops does not matter: any cell that does not
        // parse fails the record
        for &j in &self.numbers {
            let Some(b) = cell(j) else { return false };
            if !self.is_missing(b) {
                let Some(x) = self.number(b, || field(j)) else {
                    return false;
                };
                cells[j] = Cell::Number(x);
            }
        }
        for &(j, ty) in &self.times {
            let Some(b) = cell(j) else { return false };
            if self.is_missing(b) {
                continue;
            }
            let (seen, c) = &mut self.last[j];
            if !seen.is(b) || c.is_none() {
                seen.set(b);
                *c = field(j).and_then(|t| match ty {
                    ColType::Date => parse_date(t).map(Cell::Date),
                    ColType::Month => parse_month_or_date(t).map(Cell::Month),
                    _ => parse_year(t).map(Cell::Year),
                });
            }
            let Some(c) = *c else { return false };
            cells[j] = c;
        }
        for &j in &self.texts {
            let Some(t) = field(j) else { return false };
            if self.is_missing(t.as_bytes()) {
                continue;
            }
            if !self.text_done[j] && self.number(t.as_bytes(), || Some(t)).is_none() {
                self.text_done[j] = true;
                first_text[j] = Some((row, t.to_owned()));
            }
            cells[j] = Cell::Text(t);
        }
        true
    }
}

/// Fill `buf[len..]` from `file` (less only at the end of the file).
fn fill(file: &mut ReadAt<'_>, buf: &mut [u8], mut len: usize) -> std::io::Result<(usize, bool)> {
    while len < buf.len() {
        match file.read(&mut buf[len..]) {
            Ok(0) => return Ok((len, true)),
            Ok(n) => {
                crate::progress::advance(n as u64);
                len += n;
            }
            Err(e) if e.kind() == ErrorKind::Interrupted => {}
            Err(e) => return Err(e),
        }
    }
    Ok((len, false))
}

/// One run: records from the start of piece `k` until the verified start of
/// a piece where another run started ([`Pieces::pass`]), or the end of the
/// file.
pub(crate) fn run_chunk(input: &ScanInput<'_>, pieces: &Pieces, k: usize) -> ChunkOut {
    let ncols = input.schema.len();
    let start = pieces.starts[k];
    let next = &pieces.starts[k + 1..];
    let mut out = ChunkOut {
        end: End::Failed,
        rows: 0,
        absorbed: 0,
        views: states(input.views, ncols),
        watches: input.views.iter().map(|v| Watch::new(&v.keeps)).collect(),
        first_text: vec![None; ncols],
    };
    let sink = Sink {
        views: input.views,
        keep_values: input.keep_values,
        limits: input.limits,
    };
    let mut decoder = Decoder::new(input);
    let mut coded = Coded::new(&sink, input.schema, input.parse);
    let mut kept = vec![0usize; input.views.len()];
    let mut scratch: Vec<Cell<'static>> = Vec::with_capacity(ncols);
    let mut keybuf: Vec<u8> = Vec::with_capacity(64);
    let mut file = ReadAt::new(input.file, start);
    let mut buf = vec![0u8; BUFFER];
    let (mut len, mut base, mut target) = (0usize, start, 0usize);
    let mut index = Index::default();
    let (mut fields, mut decoded) = (Vec::with_capacity(ncols), Vec::new());
    loop {
        let eof;
        (len, eof) = match fill(&mut file, &mut buf, len) {
            Ok(r) => r,
            Err(_) => return out,
        };
        let data = &buf[..len];
        index.build(data);
        // UTF-8: the whole buffer checked once (a character cut at its end
        // is checked again with the next buffer); no record may reach
        // past the first invalid byte
        let text = match std::str::from_utf8(data) {
            Ok(t) => t,
            Err(e) => {
                let valid = &data[..e.valid_up_to()];
                std::str::from_utf8(valid).unwrap_or_default()
            }
        };
        let mut recs = Records::new(data, &index, eof, 0);
        let at = loop {
            let r = match recs.next(&mut fields, &mut decoded) {
                Next::Record(r) => r,
                Next::End => {
                    out.end = End::Eof;
                    return out;
                }
                Next::More { at } => break at,
                Next::Bad => return out,
            };
            if r.raw.end > text.len() || fields.len() != ncols {
                return out;
            }
            let src = if r.decoded {
                match std::str::from_utf8(&decoded) {
                    Ok(t) => t,
                    Err(_) => return out,
                }
            } else {
                text
            };
            let mut cells = recycle(std::mem::take(&mut scratch));
            cells.resize(ncols, Cell::Missing);
            // the raw record is at least as long as its cells together
            let suspect = r.odd || r.raw.len() > input.limits.text;
            let rec = (src, &fields[..], suspect);
            if !decoder.decode(rec, &mut cells, (out.rows, &mut out.first_text)) {
                return out;
            }
            let views = (&mut out.views[..], &mut out.watches[..]);
            if !coded.add(&sink, &cells, views, (&mut kept, &mut keybuf)) {
                return out;
            }
            scratch = recycle(cells);
            out.rows += 1;
            // Verify the next boundary once this record reaches it.
            let p = base + r.end as u64;
            while let Some(&s) = next.get(target) {
                let j = k + 1 + target;
                if p > s {
                    // The record spans the guessed boundary: that piece's
                    // start was inside a quoted field. Absorb it.
                    pieces.absorb(j);
                    out.absorbed += 1;
                    target += 1;
                    continue;
                }
                let gap = data.get(r.end..r.end + (s - p) as usize);
                if gap.is_some_and(|g| g.iter().all(|&b| b == b'\n' || b == b'\r')) {
                    if pieces.pass(j) {
                        // read on into piece `j`
                        target += 1;
                        continue;
                    }
                    out.end = End::Piece(j);
                    return out;
                }
                break;
            }
        };
        if at == 0 && len == buf.len() {
            // one record longer than the buffer
            buf.resize(buf.len() * 2, 0);
        }
        buf.copy_within(at..len, 0);
        len -= at;
        base += at as u64;
    }
}

#[cfg(test)]
mod tests {
    use proptest::prelude::*;

    use super::Seen;

    /// Texts from a small alphabet, short and long, so that equal and
    /// nearly equal pairs are common.
    fn text() -> impl Strategy<Value = Vec<u8>> {
        prop::collection::vec(prop::sample::select(b"ab-0\xc3".to_vec()), 0..40)
    }

    proptest! {
        #[test]
        fn the_last_text_is_met_again_exactly(a in text(), b in text()) {
            let mut seen = Seen::default();
            seen.set(&a);
            prop_assert!(seen.is(&a));
            prop_assert_eq!(seen.is(&b), a == b);
            // a text with its last byte changed
            if let Some((last, head)) = a.split_last() {
                let mut c = head.to_vec();
                c.push(last ^ 1);
                prop_assert!(!seen.is(&c));
            }
        }
    }
}
