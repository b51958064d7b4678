//! Dictionary codes for the records of one chunk of a streamed CSV file
//! ([`crate::chunk`]), so that per record the views do table look-ups
//! instead of text comparisons and key hashing.
//!
//! * Each text column that a view's `keep` or group key reads gets a dense
//!   code per distinct text met in the chunk (0 for a missing cell). Past
//!   [`MAX_CODES`] distinct texts the column is no longer coded for the
//!   rest of the chunk: the plain path takes over.
//! * A `keep` is split at its top-level `and`s; a part that reads one coded
//!   column is evaluated once per code and remembered.
//! * A group key of at most two columns, each a coded text column or a
//!   date, month or year column (small integers), is turned into a pair of
//!   numbers: its group is looked up in the view's group table only the
//!   first time the chunk meets the pair.
//!
//! Codes only cache what the plain path ([`crate::stream::add_record`])
//! computes: a code stands for exactly one cell, parts are pure, and a
//! group is created in the table at its first row, as before. So groups,
//! their order and sums are those of the plain path, bit for bit; the tests
//! compare both on random tables.

use hashbrown::HashTable;

use crate::colfold::{conjuncts, only_column};
use crate::fold::Sink;
use crate::hash::hash_bytes;
use crate::model::{Cell, ColType, Expr};
use crate::probe::Watch;
use crate::stream::{add_passed, ViewState};
use crate::view::truth;

/// Most distinct texts one column may hold in a chunk and stay coded.
pub(crate) const MAX_CODES: usize = 4096;

/// The code of a cell that has none (an uncoded column, or one past
/// [`MAX_CODES`]).
const NONE: u64 = u64::MAX;

/// Bytes of a text held in its dictionary entry.
pub(crate) const HEAD: usize = 16;

/// A text's code, length and first [`HEAD`] bytes (zeros after its end):
/// a text no longer than that is matched without reading the arena.
#[derive(Clone, Copy)]
struct Entry {
    head: [u64; 2],
    len: u32,
    code: u32,
}

/// The first [`HEAD`] bytes of `t` as two words, zeros after its end.
/// A text of 8 to 16 bytes is read as two overlapping 8-byte loads (no
/// copy), the second shifted so that its bytes past the end are zeros.
#[inline]
pub(crate) fn head(t: &[u8]) -> [u64; 2] {
    let word = |w: &[u8]| w.first_chunk::<8>().map_or(0, |w| u64::from_le_bytes(*w));
    let n = t.len();
    if n >= HEAD {
        [word(t), word(&t[8..])]
    } else if n >= 8 {
        // the last 8 bytes hold bytes 8..n in their top `n - 8`
        let tail = word(&t[n - 8..]).checked_shr(8 * (HEAD - n) as u32);
        [word(t), tail.unwrap_or(0)]
    } else {
        [short_word(t), 0]
    }
}

/// The bytes of `t` (at most 8) as a little-endian word, zeros after its
/// end: two overlapping loads of 4 (or 2) bytes, or'ed where they overlap
/// (the same bytes at the same places).
#[inline]
fn short_word(t: &[u8]) -> u64 {
    let n = t.len();
    let two = |w: &[u8]| {
        w.first_chunk::<2>()
            .map_or(0, |w| u64::from(u16::from_le_bytes(*w)))
    };
    let four = |w: &[u8]| {
        w.first_chunk::<4>()
            .map_or(0, |w| u64::from(u32::from_le_bytes(*w)))
    };
    match n {
        0 => 0,
        1 => u64::from(t[0]),
        2..=3 => two(t) | two(&t[n - 2..]) << (8 * (n - 2)),
        4..=7 => four(t) | four(&t[n - 4..]) << (8 * (n - 4)),
        _ => t.first_chunk::<8>().map_or(0, |w| u64::from_le_bytes(*w)),
    }
}

/// The hash of two words: the two halves of their 128-bit product
/// (after a xor with constants, digits of pi) xored, a folded multiply
/// (common practice). Bits of both words reach both ends of the hash.
fn mix(w: [u64; 2]) -> u64 {
    let p = u128::from(w[0] ^ 0x243f_6a88_85a3_08d3) * u128::from(w[1] ^ 0x1319_8a2e_0370_7344);
    (p as u64) ^ ((p >> 64) as u64)
}

/// The distinct texts of one column in one chunk, numbered from 1.
#[derive(Default)]
struct Dict {
    /// Codes, hashed by their text.
    table: HashTable<Entry>,
    arena: String,
    /// Where each text ends in `arena`.
    ends: Vec<usize>,
}

fn text_of<'a>(arena: &'a str, ends: &[usize], code: u32) -> &'a str {
    let i = code as usize - 1;
    let start = if i == 0 { 0 } else { ends[i - 1] };
    &arena[start..ends[i]]
}

impl Dict {
    /// The code of `t`, numbered when new; `None` once the column holds
    /// [`MAX_CODES`] texts and `t` is not one of them.
    fn code(&mut self, t: &str) -> Option<u32> {
        let bytes = t.as_bytes();
        let (w, long) = (head(bytes), bytes.len() > HEAD);
        let len = u32::try_from(bytes.len()).ok()?;
        let h = if long { hash_bytes(bytes) } else { mix(w) };
        let (arena, ends) = (&self.arena, &self.ends);
        let same =
            |e: &Entry| e.len == len && e.head == w && (!long || text_of(arena, ends, e.code) == t);
        if let Some(e) = self.table.find(h, same) {
            return Some(e.code);
        }
        if self.ends.len() >= MAX_CODES {
            return None;
        }
        self.arena.push_str(t);
        self.ends.push(self.arena.len());
        let code = self.ends.len() as u32;
        let (arena, ends) = (&self.arena, &self.ends);
        let rehash = |e: &Entry| match e.len as usize {
            n if n > HEAD => hash_bytes(text_of(arena, ends, e.code).as_bytes()),
            _ => mix(e.head),
        };
        let entry = Entry { head: w, len, code };
        self.table.insert_unique(h, entry, rehash);
        Some(code)
    }
}

/// How a column's cells are coded.
enum Kind {
    /// Not at all.
    Plain,
    /// Text: by its dictionary (`None` once past [`MAX_CODES`]).
    Text(Option<Dict>),
    /// Date, month or year: its number plus one (0 for a missing cell).
    Time,
}

/// One part of a view's `keep`s (they all must hold).
enum Part<'v> {
    /// Reads only coded text column `.0`: its truth per code (0 not yet
    /// known, 1 false, 2 true).
    Memo(usize, &'v Expr, Vec<u8>),
    /// Evaluated per row.
    Plain(&'v Expr),
}

/// A view's groups by the codes of their key cells.
struct Cache {
    keys: Vec<usize>,
    /// The last pair looked up and its group (ledgers repeat a date or
    /// month row after row); no pair has a [`NONE`] half.
    last: (u64, u64, u32),
    /// Groups by the text code of one key, while the other half of the
    /// pair stays the same (when a key is a coded text column).
    dense: Option<Dense>,
    /// Each pair met and its group, hashed by [`mix`].
    groups: HashTable<([u64; 2], u32)>,
}

/// The groups of the pairs met whose half `at` is a text code and whose
/// other half is `other`: per code, the stamp of the `other` it was met
/// with and its group. A new `other` takes a new stamp, so no entry has to
/// be cleared.
struct Dense {
    at: usize,
    other: u64,
    stamp: u32,
    ids: Vec<(u32, u32)>,
}

impl Dense {
    fn new(at: usize) -> Dense {
        Dense {
            at,
            other: NONE,
            stamp: 0,
            ids: Vec::new(),
        }
    }

    /// The group of `pair`, if met since its other half last changed.
    #[inline]
    fn get(&mut self, pair: [u64; 2]) -> Option<u32> {
        let other = pair[1 - self.at];
        if other != self.other {
            self.other = other;
            self.stamp = self.stamp.wrapping_add(1);
            if self.stamp == 0 {
                // stamps wrapped: forget every entry
                self.ids.fill((0, 0));
                self.stamp = 1;
            }
            return None;
        }
        match self.ids.get(pair[self.at] as usize) {
            Some(&(s, id)) if s == self.stamp => Some(id),
            _ => None,
        }
    }

    /// Remember the group of `pair` (whose other half is the current one).
    fn put(&mut self, pair: [u64; 2], id: u32) {
        let code = pair[self.at] as usize;
        if code >= self.ids.len() {
            self.ids.resize(code + 1, (0, 0));
        }
        self.ids[code] = (self.stamp, id);
    }
}

impl Cache {
    fn new(keys: &[usize], kinds: &[Kind]) -> Cache {
        let text = |i: usize| {
            keys.get(i)
                .is_some_and(|&k| matches!(kinds[k], Kind::Text(_)))
        };
        let at = (0..keys.len()).rev().find(|&i| text(i));
        Cache {
            keys: keys.to_vec(),
            last: (NONE, NONE, 0),
            dense: at.map(Dense::new),
            groups: HashTable::new(),
        }
    }

    /// The pair of codes of the row's key cells, if all are coded.
    ///
    /// The two halves are kept as two words, never built in memory: a pair
    /// stored as two words and read back at once as one 16-byte value
    /// stalls the processor (a store that cannot be forwarded to the load).
    #[inline]
    fn pair(&self, codes: &[u64]) -> Option<[u64; 2]> {
        let code = |i: usize| {
            self.keys
                .get(i)
                .map_or(Some(0), |&k| Some(codes[k]).filter(|&c| c != NONE))
        };
        Some([code(0)?, code(1)?])
    }

    /// The group of `pair`; `new` creates it when the chunk meets the pair
    /// for the first time.
    #[inline]
    fn id(&mut self, pair: [u64; 2], new: impl FnOnce() -> u32) -> u32 {
        // the halves as two words (see `Cache::pair`)
        let (a, b) = (pair[0], pair[1]);
        if self.last.0 == a && self.last.1 == b {
            return self.last.2;
        }
        let id = match self.dense.as_mut().and_then(|d| d.get([a, b])) {
            Some(id) => id,
            None => {
                let h = mix(pair);
                let id = match self.groups.find(h, move |e| e.0[0] == a && e.0[1] == b) {
                    Some(e) => e.1,
                    None => {
                        let id = new();
                        self.groups.insert_unique(h, (pair, id), |e| mix(e.0));
                        id
                    }
                };
                if let Some(d) = self.dense.as_mut() {
                    d.put(pair, id);
                }
                id
            }
        };
        self.last = (a, b, id);
        id
    }
}

/// Per view: its `keep` parts and its group cache.
struct Plan<'v> {
    parts: Vec<Part<'v>>,
    cache: Option<Cache>,
}

/// The codes of one chunk's records and the views' plans over them.
pub(crate) struct Coded<'v> {
    /// The coded text columns and their dictionaries (`None` once past
    /// [`MAX_CODES`]), and the coded date, month or year columns: each
    /// kind in its own loop.
    texts: Vec<(usize, Option<Dict>)>,
    times: Vec<usize>,
    /// Per column: the current record's code ([`NONE`] if uncoded).
    codes: Vec<u64>,
    plans: Vec<Plan<'v>>,
}

impl<'v> Coded<'v> {
    /// Codes for the views of `sink` over columns of `schema`, of which
    /// those marked in `parse` are decoded.
    pub(crate) fn new(sink: &Sink<'v>, schema: &[(String, ColType)], parse: &[bool]) -> Self {
        let ncols = schema.len();
        let ty = |j: usize| {
            let parsed = parse.get(j).copied().unwrap_or(false);
            schema.get(j).filter(|_| parsed).map(|c| c.1)
        };
        let mut kinds: Vec<Kind> = (0..ncols).map(|_| Kind::Plain).collect();
        let mut plans = Vec::with_capacity(sink.views.len());
        for v in sink.views {
            let mut found = Vec::new();
            v.keeps.iter().for_each(|e| conjuncts(e, &mut found));
            let parts = found
                .into_iter()
                .map(
                    |e| match only_column(e).filter(|&c| ty(c) == Some(ColType::Text)) {
                        Some(c) => {
                            kinds[c] = Kind::Text(Some(Dict::default()));
                            Part::Memo(c, e, Vec::new())
                        }
                        None => Part::Plain(e),
                    },
                )
                .collect();
            let cache = v.group.as_ref().and_then(|(keys, _)| {
                if keys.len() > 2 {
                    return None;
                }
                let kinds_of = keys.iter().map(|&k| match ty(k)? {
                    ColType::Text => Some((k, Kind::Text(Some(Dict::default())))),
                    ColType::Date | ColType::Month | ColType::Year => Some((k, Kind::Time)),
                    ColType::Number => None,
                });
                for (k, kind) in kinds_of.collect::<Option<Vec<_>>>()? {
                    if matches!(kinds[k], Kind::Plain) {
                        kinds[k] = kind;
                    }
                }
                Some(Cache::new(keys, &kinds))
            });
            plans.push(Plan { parts, cache });
        }
        let (mut texts, mut times) = (Vec::new(), Vec::new());
        for (j, kind) in kinds.into_iter().enumerate() {
            match kind {
                Kind::Text(dict) => texts.push((j, dict)),
                Kind::Time => times.push(j),
                Kind::Plain => {}
            }
        }
        Coded {
            texts,
            times,
            codes: vec![NONE; ncols],
            plans,
        }
    }

    /// Code the cells of one record.
    fn code(&mut self, cells: &[Cell<'_>]) {
        let cell = |j: usize| cells.get(j).copied().unwrap_or(Cell::Missing);
        for (j, dict) in &mut self.texts {
            let c = cell(*j);
            self.codes[*j] = match (dict.as_mut(), c) {
                (None, _) => NONE,
                (Some(_), Cell::Missing) => 0,
                (Some(d), Cell::Text(t)) => d.code(t).map_or(NONE, u64::from),
                _ => NONE,
            };
            if self.codes[*j] == NONE && matches!(c, Cell::Text(_)) {
                // too many texts: plain from here on
                *dict = None;
            }
        }
        for &j in &self.times {
            self.codes[j] = match cell(j) {
                Cell::Missing => 0,
                Cell::Date(v) | Cell::Month(v) | Cell::Year(v) => u64::from(v as u32) + 1,
                _ => NONE,
            };
        }
    }

    /// Add one record (cells by column) to every view whose `keep`s it
    /// passes, as [`crate::stream::add_record`] does.
    #[inline(always)]
    pub(crate) fn add(
        &mut self,
        input: &Sink<'_>,
        cells: &[Cell<'_>],
        (states, watches): (&mut [ViewState], &mut [Watch]),
        (kept, keybuf): (&mut [usize], &mut Vec<u8>),
    ) -> bool {
        self.code(cells);
        let row = |c: usize| cells.get(c).copied().unwrap_or(Cell::Missing);
        let codes = &self.codes;
        let views = input.views.iter().zip(states).zip(watches);
        for (vi, ((view, state), watch)) in views.enumerate() {
            let plan = &mut self.plans[vi];
            let pass = if watch.settled() {
                plan.passes(codes, &row)
            } else {
                watch.passes(&row, &view.keeps)
            };
            if !pass {
                continue;
            }
            let cached = match (&mut plan.cache, &mut *state, &view.group) {
                (Some(cache), ViewState::Groups(g), Some((keys, aggs))) => {
                    cache.pair(codes).map(|pair| {
                        let id = cache.id(pair, || g.group(keybuf, keys, &row) as u32);
                        g.add_at(id as usize, aggs, &row);
                    })
                }
                _ => None,
            };
            if cached.is_none() && !add_passed(input, vi, state, (kept, keybuf), &row) {
                return false;
            }
        }
        true
    }
}

impl<'v> Plan<'v> {
    /// Does the row (with `codes`) pass every part?
    fn passes<'c>(&mut self, codes: &[u64], row: &impl Fn(usize) -> Cell<'c>) -> bool
    where
        'v: 'c,
    {
        self.parts.iter_mut().all(|part| match part {
            Part::Plain(e) => truth(row, e),
            Part::Memo(c, e, memo) => {
                let code = codes[*c];
                if code == NONE {
                    return truth(row, e);
                }
                let i = code as usize;
                if i >= memo.len() {
                    memo.resize(i + 1, 0);
                }
                if memo[i] == 0 {
                    memo[i] = 1 + u8::from(truth(row, e));
                }
                memo[i] == 2
            }
        })
    }
}

#[cfg(test)]
mod tests {
    use proptest::prelude::*;

    use super::*;
    use crate::fold::states;
    use crate::load::ReadLimits;
    use crate::model::{AggFn, Aggregate, CmpOp, Value};
    use crate::stream::{add_record, finish, StreamView};

    /// One random row: month, region, product, amount.
    type Row = (Option<i32>, Option<String>, Option<String>, Option<f64>);

    fn col(c: usize) -> Box<Expr> {
        Box::new(Expr::Col(c))
    }

    fn text(t: &str) -> Value {
        Value::Text(t.into())
    }

    fn agg(func: AggFn, column: Option<usize>) -> Aggregate {
        Aggregate {
            name: format!("{func:?}{column:?}"),
            func,
            column,
        }
    }

    /// Columns: month, region (text), product (text), amount.
    fn schema() -> Vec<(String, ColType)> {
        [
            ("month", ColType::Month),
            ("region", ColType::Text),
            ("product", ColType::Text),
            ("amount", ColType::Number),
        ]
        .map(|(n, t)| (n.to_string(), t))
        .to_vec()
    }

    /// Views of every kind: memoised and plain `keep` parts, cached group
    /// keys of text and time columns, a number key and three keys (not
    /// cached), no key, a `keep`-only view.
    fn views() -> Vec<StreamView> {
        let sum = |c| agg(AggFn::Sum, Some(c));
        let regions = vec![text("r1"), text("r2"), text("r30")];
        let large = Expr::Cmp(CmpOp::Gt, col(3), Box::new(Expr::Lit(Value::Number(50.0))));
        let r7 = Expr::Cmp(CmpOp::Eq, col(1), Box::new(Expr::Lit(text("r7"))));
        let not_p3 = Expr::Cmp(CmpOp::Ne, col(2), Box::new(Expr::Lit(text("p3"))));
        let v = |keeps: Vec<Expr>, group: Option<(Vec<usize>, Vec<Aggregate>)>| StreamView {
            keeps,
            group,
        };
        let count_min = vec![agg(AggFn::Count, None), agg(AggFn::Min, Some(3))];
        vec![
            v(
                vec![Expr::In(col(1), regions)],
                Some((vec![0, 1], vec![sum(3)])),
            ),
            v(vec![], Some((vec![2], count_min))),
            v(
                vec![Expr::And(vec![r7, large])],
                Some((vec![0], vec![agg(AggFn::Last, Some(3))])),
            ),
            v(vec![], Some((vec![1], vec![agg(AggFn::Mean, Some(3))]))),
            v(vec![not_p3.clone()], None),
            v(vec![], Some((vec![3], vec![agg(AggFn::Count, Some(1))]))),
            v(
                vec![not_p3],
                Some((vec![0, 1, 2], vec![sum(3), agg(AggFn::First, Some(2))])),
            ),
            v(vec![], Some((vec![], vec![sum(3)]))),
        ]
    }

    /// `n` random rows (xorshift from `seed`), texts from `cards` distinct
    /// values per text column, some cells missing, amounts with `-0`.
    fn rows(seed: u64, n: usize, cards: (u64, u64)) -> Vec<Row> {
        let mut s = seed | 1;
        let mut next = move |m: u64| {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            s % m
        };
        (0..n)
            .map(|i| {
                let month = (next(20) > 0).then(|| 24_000 + (i / 50) as i32 % 40);
                let region = (next(30) > 0).then(|| format!("r{}", next(cards.0)));
                let product = (next(30) > 0).then(|| format!("p{}", next(cards.1)));
                let amount = match next(10) {
                    0 => None,
                    1 => Some(-0.0),
                    _ => Some(next(1000) as f64 / 10.0),
                };
                (month, region, product, amount)
            })
            .collect()
    }

    /// Each view's table and probes after all rows, by the coded or the
    /// plain path.
    fn run(coded: bool, rows: &[Row]) -> String {
        let (schema, views) = (schema(), views());
        let limits = ReadLimits::none();
        let keep_values = vec![true; 4];
        let sink = Sink {
            views: &views,
            keep_values: &keep_values,
            limits: &limits,
        };
        let mut st = states(&views, 4);
        let mut watches: Vec<Watch> = views.iter().map(|v| Watch::new(&v.keeps)).collect();
        let (mut kept, mut keybuf) = (vec![0; views.len()], Vec::new());
        let mut codes = Coded::new(&sink, &schema, &[true; 4]);
        for (m, r, p, a) in rows {
            let cells = [
                m.map_or(Cell::Missing, Cell::Month),
                r.as_deref().map_or(Cell::Missing, Cell::Text),
                p.as_deref().map_or(Cell::Missing, Cell::Text),
                a.map_or(Cell::Missing, Cell::Number),
            ];
            let state = (&mut st[..], &mut watches[..]);
            let ok = if coded {
                codes.add(&sink, &cells, state, (&mut kept, &mut keybuf))
            } else {
                add_record(&sink, &cells, state, &mut kept, &mut keybuf)
            };
            assert!(ok);
        }
        let tables: Vec<_> = views
            .iter()
            .zip(st)
            .map(|(v, s)| finish(&schema, v, s))
            .collect();
        let probes: Vec<_> = watches.into_iter().map(Watch::finish).collect();
        // Debug text tells -0 from 0
        format!("{tables:?}\n{probes:?}")
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(48))]
        #[test]
        fn coded_path_equals_plain_path(
            seed in any::<u64>(),
            n in 0usize..3000,
            cards in prop_oneof![
                Just((3u64, 5u64)),
                Just((40, 300)),
                Just((8, MAX_CODES as u64 + 200)),
                Just((MAX_CODES as u64 * 2, 6)),
            ],
        ) {
            // a cardinality past the threshold needs rows enough to pass it
            let n = if cards.0.max(cards.1) > MAX_CODES as u64 { n + 6000 } else { n };
            let rows = rows(seed, n, cards);
            prop_assert_eq!(run(true, &rows), run(false, &rows));
        }
    }

    proptest! {
        #[test]
        fn head_is_the_first_bytes_then_zeros(t in prop::collection::vec(any::<u8>(), 0..40)) {
            let mut b = [0u8; HEAD];
            let n = t.len().min(HEAD);
            b[..n].copy_from_slice(&t[..n]);
            let (lo, hi) = b.split_at(8);
            let word = |w: &[u8]| u64::from_le_bytes(w.try_into().unwrap_or_default());
            prop_assert_eq!(head(&t), [word(lo), word(hi)]);
        }
    }

    #[test]
    fn a_column_past_the_threshold_is_no_longer_coded() {
        let mut d = Dict::default();
        for i in 0..MAX_CODES {
            assert_eq!(d.code(&format!("t{i}")), Some(i as u32 + 1));
        }
        assert_eq!(d.code("t7"), Some(8));
        assert_eq!(d.code("new"), None);
    }
}
