//! The group table of the streaming engine ([`crate::stream`],
//! [`crate::fold`]): one entry per distinct key, in order of first
//! appearance, without an allocation per group.
//!
//! Keys are encoded once ([`encode_key`]) into one byte arena; a hash table
//! holds only group numbers (it compares candidates against the arena).
//! Each aggregate keeps its accumulators in one flat array indexed by the
//! group number: counts as integers, sums as exact sums whose few partials
//! live inline ([`Sum`]). A million groups of one text key and one sum take
//! well under 100 bytes each, where a map of boxed keys, a vector of key
//! values and a vector of accumulators per group took about 800.
//!
//! The key values of the output are decoded from the arena, so they are
//! the cells of each group's first row. The encoding makes `-0` and `0` one
//! key; a group whose first row held `-0` keeps it (a short side list), so
//! the output is bit for bit the table engine's.

use hashbrown::HashTable;

use crate::hash::hash_bytes;
use crate::model::{AggFn, Aggregate, Cell, ColType, Column, Value, Values};
use crate::view::{compare_cells, sum_value, Sum};

/// Distinct encoded keys numbered in order of first appearance, interned
/// in one arena.
#[derive(Clone, Debug, Default)]
pub(crate) struct KeyIndex {
    /// Per key: its number and its first bytes; hashed by the key.
    index: HashTable<Entry>,
    /// Every key, one after another.
    arena: Vec<u8>,
    /// Where each key ends in `arena`.
    ends: Vec<usize>,
}

/// Bytes of a key held in its hash-table entry.
const HEAD: usize = 12;

/// A key's number and its first [`HEAD`] bytes (zeros after its end). A
/// lookup of a key no longer than that compares the entry alone: the
/// table's lines are the only memory it reads, not the arena's. Encoded
/// keys of one key list are prefix-free (no key is the start of another),
/// so equal heads mean the same key when the sought key fits in one, and
/// a longer key compares the rest with the arena.
#[derive(Clone, Copy, Debug)]
struct Entry {
    id: u32,
    head: [u8; HEAD],
}

impl KeyIndex {
    /// The number of keys.
    pub(crate) fn len(&self) -> usize {
        self.ends.len()
    }

    /// The bytes of key `g`.
    pub(crate) fn key(&self, g: usize) -> &[u8] {
        key_of(&self.arena, &self.ends, g)
    }

    /// The number of `key` (hashed `h`, see [`hash_bytes`]), and whether it
    /// is new.
    pub(crate) fn id(&mut self, h: u64, key: &[u8]) -> (usize, bool) {
        let mut head = [0u8; HEAD];
        let n = key.len().min(HEAD);
        head[..n].copy_from_slice(&key[..n]);
        let (arena, ends) = (&self.arena, &self.ends);
        let same = |e: &Entry| {
            e.head == head
                && (key.len() <= HEAD || {
                    let start = key_start(ends, e.id as usize);
                    arena
                        .get(start + HEAD..start + key.len())
                        .is_some_and(|k| same_bytes(k, &key[HEAD..]))
                })
        };
        if let Some(e) = self.index.find(h, same) {
            return (e.id as usize, false);
        }
        let id = self.ends.len();
        self.arena.extend_from_slice(key);
        self.ends.push(self.arena.len());
        // past 2^32 keys (more than memory holds) the table cannot number
        // them: the arena is searched instead (never in practice)
        let Ok(id32) = u32::try_from(id) else {
            return self.slow_id(key, id);
        };
        let (arena, ends) = (&self.arena, &self.ends);
        let entry = Entry { id: id32, head };
        self.index
            .insert_unique(h, entry, |e| hash_bytes(key_of(arena, ends, e.id as usize)));
        (id, true)
    }

    /// The number of `key`, just appended as key `id`, among the keys past
    /// those the table numbers.
    #[cold]
    fn slow_id(&mut self, key: &[u8], id: usize) -> (usize, bool) {
        let first = u32::MAX as usize + 1;
        let found = (first..id).find(|&g| same_bytes(self.key(g), key));
        match found {
            Some(g) => {
                self.ends.pop();
                self.arena.truncate(key_start(&self.ends, id));
                (g, false)
            }
            None => (id, true),
        }
    }
}

/// The groups of one view's group step.
#[derive(Clone, Debug, Default)]
pub(crate) struct Groups {
    keys: KeyIndex,
    /// (group, key column) whose first cell was `-0`.
    negative_zero: Vec<(usize, usize)>,
    /// One flat array of accumulators per aggregate.
    accs: Vec<AccColumn>,
}

/// One aggregate's accumulators, one per group.
#[derive(Clone, Debug)]
enum AccColumn {
    /// `count()` of rows.
    Rows(Vec<u64>),
    /// `count(col)`: non-missing cells.
    Count(Vec<u64>),
    Sum(Vec<Sum>),
    Mean(Vec<Sum>),
    /// `median` keeps its group's numbers (its memory grows with them).
    Median(Vec<Vec<f64>>),
    Min(Vec<Option<Value>>),
    Max(Vec<Option<Value>>),
    First(Vec<Option<Value>>),
    Last(Vec<Option<Value>>),
    /// An aggregate without a column that is not `count` (the type check
    /// rules it out): always missing, as in the table engine.
    Nothing,
}

impl AccColumn {
    fn new(a: &Aggregate) -> AccColumn {
        match (a.func, a.column) {
            (AggFn::Count, None) => AccColumn::Rows(Vec::new()),
            (_, None) => AccColumn::Nothing,
            (AggFn::Count, Some(_)) => AccColumn::Count(Vec::new()),
            (AggFn::Sum, _) => AccColumn::Sum(Vec::new()),
            (AggFn::Mean, _) => AccColumn::Mean(Vec::new()),
            (AggFn::Median, _) => AccColumn::Median(Vec::new()),
            (AggFn::Min, _) => AccColumn::Min(Vec::new()),
            (AggFn::Max, _) => AccColumn::Max(Vec::new()),
            (AggFn::First, _) => AccColumn::First(Vec::new()),
            (AggFn::Last, _) => AccColumn::Last(Vec::new()),
        }
    }

    /// Room for one more group, empty.
    fn grow(&mut self) {
        match self {
            AccColumn::Rows(v) | AccColumn::Count(v) => v.push(0),
            AccColumn::Sum(v) | AccColumn::Mean(v) => v.push(Sum::default()),
            AccColumn::Median(v) => v.push(Vec::new()),
            AccColumn::Min(v) | AccColumn::Max(v) | AccColumn::First(v) | AccColumn::Last(v) => {
                v.push(None)
            }
            AccColumn::Nothing => {}
        }
    }

    /// Add one row of group `g` whose aggregate column holds `c`.
    fn add(&mut self, g: usize, c: Cell<'_>) {
        if let AccColumn::Rows(v) = self {
            if let Some(n) = v.get_mut(g) {
                *n += 1;
            }
            return;
        }
        if matches!(c, Cell::Missing) {
            return;
        }
        let num = match c {
            Cell::Number(x) => Some(x),
            Cell::Year(y) => Some(f64::from(y)),
            _ => None,
        };
        match self {
            AccColumn::Rows(_) | AccColumn::Nothing => {}
            AccColumn::Count(v) => {
                if let Some(n) = v.get_mut(g) {
                    *n += 1;
                }
            }
            AccColumn::Sum(v) | AccColumn::Mean(v) => {
                if let (Some(s), Some(x)) = (v.get_mut(g), num) {
                    s.add(x);
                }
            }
            AccColumn::Median(v) => {
                if let Some(xs) = v.get_mut(g) {
                    xs.extend(num);
                }
            }
            AccColumn::Min(v) => at(v, g, |b| extreme(b, c, std::cmp::Ordering::Less)),
            AccColumn::Max(v) => at(v, g, |b| extreme(b, c, std::cmp::Ordering::Greater)),
            AccColumn::First(v) => at(v, g, |b| {
                if b.is_none() {
                    *b = Some(c.to_value());
                }
            }),
            AccColumn::Last(v) => at(v, g, |b| match b {
                // Skip the copy when the cell is the same (bit for bit).
                Some(old) if same(old.cell(), c) => {}
                _ => *b = Some(c.to_value()),
            }),
        }
    }

    /// Fold group `h` of `later` (the same aggregate over the rows that
    /// follow) into group `g`.
    fn merge(&mut self, g: usize, later: &mut AccColumn, h: usize) {
        use std::cmp::Ordering::{Greater, Less};
        use AccColumn as A;
        match (self, later) {
            (A::Rows(a), A::Rows(b)) | (A::Count(a), A::Count(b)) => {
                if let (Some(x), Some(y)) = (a.get_mut(g), b.get(h)) {
                    *x += y;
                }
            }
            (A::Sum(a), A::Sum(b)) | (A::Mean(a), A::Mean(b)) => {
                if let (Some(x), Some(y)) = (a.get_mut(g), b.get_mut(h)) {
                    if x.is_empty() {
                        // a new group: its sum moves as it is
                        *x = std::mem::take(y);
                    } else {
                        x.merge(y);
                    }
                }
            }
            (A::Median(a), A::Median(b)) => {
                if let (Some(x), Some(y)) = (a.get_mut(g), b.get_mut(h)) {
                    x.append(y);
                }
            }
            (A::Min(a), A::Min(b)) => take(a, g, b, h, |x, y| extreme(x, y.cell(), Less)),
            (A::Max(a), A::Max(b)) => take(a, g, b, h, |x, y| extreme(x, y.cell(), Greater)),
            (A::First(a), A::First(b)) => take(a, g, b, h, |x, y| {
                if x.is_none() {
                    *x = Some(y);
                }
            }),
            (A::Last(a), A::Last(b)) => take(a, g, b, h, |x, y| *x = Some(y)),
            _ => {}
        }
    }

    /// The output column's values for `groups` groups.
    fn finish(self, groups: usize) -> Values {
        let number = |x: Option<f64>| match x {
            Some(x) if x.is_finite() => Value::Number(x),
            _ => Value::Missing,
        };
        let mut out = Values::new();
        match self {
            AccColumn::Rows(v) | AccColumn::Count(v) => v
                .into_iter()
                .for_each(|n| out.push_cell(Cell::Number(n as f64))),
            AccColumn::Sum(v) => v.iter().for_each(|s| out.push(sum_value(s.total()))),
            AccColumn::Mean(v) => v.iter().for_each(|s| out.push(number(s.mean()))),
            AccColumn::Median(v) => v.into_iter().for_each(|xs| out.push(number(median(xs)))),
            AccColumn::Min(v) | AccColumn::Max(v) | AccColumn::First(v) | AccColumn::Last(v) => v
                .into_iter()
                .for_each(|x| out.push(x.unwrap_or(Value::Missing))),
            AccColumn::Nothing => return Values::missing(groups),
        }
        out
    }
}

/// The median of a group's numbers (as the table engine takes it).
fn median(mut xs: Vec<f64>) -> Option<f64> {
    xs.sort_by(f64::total_cmp);
    let m = xs.len();
    match m {
        0 => None,
        _ if m % 2 == 1 => xs.get(m / 2).copied(),
        _ => Some(xs.get(m / 2 - 1)? / 2.0 + xs.get(m / 2)? / 2.0),
    }
}

fn at(v: &mut [Option<Value>], g: usize, f: impl FnOnce(&mut Option<Value>)) {
    if let Some(b) = v.get_mut(g) {
        f(b);
    }
}

/// Apply `f` to group `g` of `a` and the value taken from group `h` of `b`
/// (when it has one).
fn take(
    a: &mut [Option<Value>],
    g: usize,
    b: &mut [Option<Value>],
    h: usize,
    f: impl FnOnce(&mut Option<Value>, Value),
) {
    if let (Some(x), Some(Some(y))) = (a.get_mut(g), b.get_mut(h).map(Option::take)) {
        f(x, y);
    }
}

/// Identical cells (numbers bit for bit, so `-0` differs from `0`).
fn same(a: Cell<'_>, b: Cell<'_>) -> bool {
    match (a, b) {
        (Cell::Number(x), Cell::Number(y)) => x.to_bits() == y.to_bits(),
        _ => a == b,
    }
}

/// Replace `best` when `c` is strictly more `want` (the first of equal
/// extremes wins, as in the table engine).
fn extreme(best: &mut Option<Value>, c: Cell<'_>, want: std::cmp::Ordering) {
    let replace = match best {
        None => true,
        Some(b) => compare_cells(c, b.cell()) == Some(want),
    };
    if replace {
        *best = Some(c.to_value());
    }
}

/// Equal byte strings of equal length: word by word (group keys are
/// short, and a call to `memcmp` cost more than the comparison).
fn same_bytes(a: &[u8], b: &[u8]) -> bool {
    let n = a.len();
    if n != b.len() || n < 8 {
        return a == b;
    }
    let word = |s: &[u8], i: usize| {
        s.get(i..i + 8)
            .map(|w| u64::from_le_bytes([w[0], w[1], w[2], w[3], w[4], w[5], w[6], w[7]]))
    };
    let mut i = 0;
    while i + 8 < n {
        if word(a, i) != word(b, i) {
            return false;
        }
        i += 8;
    }
    // the last word (overlapping the one before when `n` is not a multiple)
    word(a, n - 8) == word(b, n - 8)
}

/// The bytes of key `g`.
fn key_of<'a>(arena: &'a [u8], ends: &[usize], g: usize) -> &'a [u8] {
    let end = ends.get(g).copied().unwrap_or(0);
    arena.get(key_start(ends, g)..end).unwrap_or(&[])
}

/// Where key `g` starts in the arena.
fn key_start(ends: &[usize], g: usize) -> usize {
    g.checked_sub(1)
        .and_then(|p| ends.get(p).copied())
        .unwrap_or(0)
}

impl Groups {
    pub(crate) fn new(keys: &[usize], aggs: &[Aggregate]) -> Groups {
        let mut g = Groups {
            accs: aggs.iter().map(AccColumn::new).collect(),
            ..Groups::default()
        };
        if keys.is_empty() {
            // Without keys the whole file is one group, even when empty.
            g.id(&[]);
        }
        g
    }

    /// The number of groups.
    pub(crate) fn len(&self) -> usize {
        self.keys.len()
    }

    /// The group of `key`, created (with empty accumulators) when new.
    fn id(&mut self, key: &[u8]) -> (usize, bool) {
        let found = self.keys.id(hash_bytes(key), key);
        if found.1 {
            for a in &mut self.accs {
                a.grow();
            }
        }
        found
    }

    /// Add one row (`row`: its cell in a column): to the group of its
    /// cells in `keys`, each aggregate of `aggs` with its column's cell.
    pub(crate) fn add<'c>(
        &mut self,
        keybuf: &mut Vec<u8>,
        (keys, aggs): (&[usize], &[Aggregate]),
        row: &impl Fn(usize) -> Cell<'c>,
    ) {
        let g = self.group(keybuf, keys, row);
        self.add_at(g, aggs, row);
    }

    /// The group of the row's cells in `keys`, created (with empty
    /// accumulators) when new.
    pub(crate) fn group<'c>(
        &mut self,
        keybuf: &mut Vec<u8>,
        keys: &[usize],
        row: &impl Fn(usize) -> Cell<'c>,
    ) -> usize {
        keybuf.clear();
        for &k in keys {
            encode_key(keybuf, row(k));
        }
        let (g, new) = self.id(keybuf);
        if new {
            for (j, &k) in keys.iter().enumerate() {
                if matches!(row(k), Cell::Number(x) if x == 0.0 && x.is_sign_negative()) {
                    self.negative_zero.push((g, j));
                }
            }
        }
        g
    }

    /// Add the row's cells of `aggs` to group `g` (see [`Groups::group`]).
    pub(crate) fn add_at<'c>(
        &mut self,
        g: usize,
        aggs: &[Aggregate],
        row: &impl Fn(usize) -> Cell<'c>,
    ) {
        for (acc, a) in self.accs.iter_mut().zip(aggs) {
            acc.add(g, a.column.map_or(Cell::Missing, row));
        }
    }

    /// Fold in the groups of the following chunk, in their order.
    pub(crate) fn merge(&mut self, mut later: Groups) {
        let mut zeros = later.negative_zero.iter().peekable();
        for h in 0..later.len() {
            let (g, new) = self.id(later.keys.key(h));
            while let Some(&&(zg, j)) = zeros.peek() {
                if zg != h {
                    break;
                }
                if new {
                    self.negative_zero.push((g, j));
                }
                zeros.next();
            }
            // a new group's accumulators are empty: folding in is a copy
            for (a, b) in self.accs.iter_mut().zip(&mut later.accs) {
                a.merge(g, b, h);
            }
        }
    }

    /// The output columns: the key columns (named and typed from
    /// `key_cols`), then one per aggregate (named and typed from `aggs`).
    pub(crate) fn finish(
        self,
        key_cols: Vec<(String, ColType)>,
        aggs: Vec<(String, ColType)>,
    ) -> Vec<Column> {
        let n = self.len();
        let mut keys: Vec<Values> = vec![Values::new(); key_cols.len()];
        let mut zeros = self.negative_zero.iter().peekable();
        for g in 0..n {
            let mut bytes = self.keys.key(g);
            for (j, col) in keys.iter_mut().enumerate() {
                let (cell, rest) = decode_key(bytes);
                bytes = rest;
                let negative = zeros.peek().is_some_and(|&&(zg, zj)| zg == g && zj == j);
                if negative {
                    zeros.next();
                    col.push_cell(Cell::Number(-0.0));
                } else {
                    col.push_cell(cell);
                }
            }
        }
        let mut columns: Vec<Column> = key_cols
            .into_iter()
            .zip(keys)
            .map(|((name, ty), values)| Column { name, ty, values })
            .collect();
        for ((name, ty), acc) in aggs.into_iter().zip(self.accs) {
            columns.push(Column {
                name,
                ty,
                values: acc.finish(n),
            });
        }
        columns
    }
}

/// Append a key cell to `buf` so that two rows get equal bytes exactly when
/// they belong to one group (`-0` and `0` are one key).
pub(crate) fn encode_key(buf: &mut Vec<u8>, c: Cell<'_>) {
    match c {
        Cell::Missing => buf.push(0),
        Cell::Number(x) => {
            buf.push(1);
            let bits = if x == 0.0 { 0 } else { x.to_bits() };
            buf.extend_from_slice(&bits.to_le_bytes());
        }
        Cell::Text(s) => {
            // the length in 7-bit groups, low first, the high bit set on all
            // but the last (LEB128): one byte for texts under 128 bytes
            buf.push(2);
            let mut n = s.len() as u64;
            while n >= 0x80 {
                buf.push((n as u8 & 0x7f) | 0x80);
                n >>= 7;
            }
            buf.push(n as u8);
            buf.extend_from_slice(s.as_bytes());
        }
        Cell::Date(d) => {
            buf.push(3);
            buf.extend_from_slice(&d.to_le_bytes());
        }
        Cell::Month(m) => {
            buf.push(4);
            buf.extend_from_slice(&m.to_le_bytes());
        }
        Cell::Year(y) => {
            buf.push(5);
            buf.extend_from_slice(&y.to_le_bytes());
        }
    }
}

/// The first key cell encoded at the start of `bytes` (see
/// [`encode_key`]), and the bytes after it.
fn decode_key(bytes: &[u8]) -> (Cell<'_>, &[u8]) {
    let word = |b: &[u8]| -> Option<u64> { Some(u64::from_le_bytes(b.get(..8)?.try_into().ok()?)) };
    let int = |b: &[u8]| -> Option<i32> { Some(i32::from_le_bytes(b.get(..4)?.try_into().ok()?)) };
    let Some((&tag, rest)) = bytes.split_first() else {
        return (Cell::Missing, bytes);
    };
    let decoded = match tag {
        1 => word(rest).map(|w| (Cell::Number(f64::from_bits(w)), 8)),
        2 => {
            // the length as `encode_key` writes it (LEB128)
            let (mut n, mut shift, mut used) = (0u64, 0u32, 0usize);
            loop {
                let Some(&b) = rest.get(used) else { break None };
                used += 1;
                n |= u64::from(b & 0x7f).checked_shl(shift).unwrap_or(0);
                shift += 7;
                if b < 0x80 {
                    break Some(());
                }
            }
            .and_then(|()| {
                let n = usize::try_from(n).ok()?;
                let text = std::str::from_utf8(rest.get(used..used.checked_add(n)?)?).ok()?;
                Some((Cell::Text(text), used + n))
            })
        }
        3 => int(rest).map(|t| (Cell::Date(t), 4)),
        4 => int(rest).map(|t| (Cell::Month(t), 4)),
        5 => int(rest).map(|t| (Cell::Year(t), 4)),
        _ => None,
    };
    match decoded {
        Some((c, used)) => (c, rest.get(used..).unwrap_or(&[])),
        None => (Cell::Missing, rest),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keys_compare_word_by_word_at_every_length() {
        for n in 0..40usize {
            let a: Vec<u8> = (0..n as u8).collect();
            assert!(same_bytes(&a, &a.clone()));
            for i in 0..n {
                let mut b = a.clone();
                b[i] ^= 0x40;
                assert!(!same_bytes(&a, &b), "length {n}, byte {i}");
            }
            assert!(!same_bytes(&a, &a[..n.saturating_sub(1)]) || n == 0);
        }
    }

    #[test]
    fn keys_decode_as_encoded_at_every_text_length() {
        // lengths around the one-byte and two-byte length encodings and
        // around the head held in the table entry
        for n in [0usize, 1, 5, 11, 12, 13, 127, 128, 129, 300, 16_400] {
            let text: String = (0..n).map(|i| char::from(b'a' + (i % 26) as u8)).collect();
            let mut buf = Vec::new();
            let cells = [Cell::Text(&text), Cell::Number(-2.5), Cell::Missing];
            for c in cells {
                encode_key(&mut buf, c);
            }
            let mut rest = &buf[..];
            for want in cells {
                let (got, after) = decode_key(rest);
                assert_eq!(got, want, "length {n}");
                rest = after;
            }
            assert!(rest.is_empty());
        }
    }

    #[test]
    fn short_and_long_keys_sharing_a_head_are_distinct() {
        // two-column keys: texts whose encodings share their first bytes,
        // short ones held whole in the entry, long ones compared with the
        // arena past it
        let mut k = KeyIndex::default();
        let mut keys = Vec::new();
        for a in ["", "x", "xxxxxxxxxx", "xxxxxxxxxxx", "xxxxxxxxxxxxxxxxxxxx"] {
            for b in ["", "x", "y", "xxxxxxxxxxxxxxxx", "xxxxxxxxxxxxxxxy"] {
                let mut key = Vec::new();
                encode_key(&mut key, Cell::Text(a));
                encode_key(&mut key, Cell::Text(b));
                keys.push(key);
            }
        }
        for round in 0..2 {
            for (i, key) in keys.iter().enumerate() {
                assert_eq!(k.id(hash_bytes(key), key), (i, round == 0));
            }
        }
        for (i, key) in keys.iter().enumerate() {
            assert_eq!(k.key(i), &key[..]);
        }
    }

    #[test]
    fn keys_are_numbered_in_order_of_first_appearance() {
        let mut k = KeyIndex::default();
        let keys: Vec<Vec<u8>> = (0..5000u32)
            .map(|i| format!("key{}", i % 1700).into_bytes())
            .collect();
        for (i, key) in keys.iter().enumerate() {
            let (id, new) = k.id(hash_bytes(key), key);
            assert_eq!((id, new), (i % 1700, i < 1700));
        }
        assert_eq!(k.len(), 1700);
        assert_eq!(k.key(1234), b"key1234");
    }
}
