//! The group table of the streaming engine ([`crate::stream`],
//! [`crate::fold`]): one entry per distinct key, in order of first
//! appearance, without an allocation per group.
//!
//! Keys are encoded once ([`encode_key`]) into one byte arena; a hash table
//! holds only group numbers (it compares candidates against the arena).
//! Each aggregate keeps its accumulators in one flat array indexed by the
//! group number: counts as integers, sums as exact sums of 32 bytes that
//! allocate only for rare terms ([`Sum`]). A million groups of one text key and one sum take
//! well under 100 bytes each, where a map of boxed keys, a vector of key
//! values and a vector of accumulators per group took about 800.
//!
//! The key values of the output are decoded from the arena, so they are
//! the cells of each group's first row. The encoding makes `-0` and `0` one
//! key; a group whose first row held `-0` keeps it (a short side list), so
//! the output is bit for bit the table engine's.

use crate::dict::{Dict, NO_TEXT};
use crate::hash::hash_bytes;
pub(crate) use crate::keys::KeyIndex;
use crate::keys::{prefetch, NOT_FOUND};
use crate::model::{AggFn, Aggregate, Cell, ColType, Column, Value, Values};
use crate::view::{compare_cells, sum_value, Sum};

/// How many keys ahead [`Groups::merge`] fetches a group's accumulators.
const MERGE_AHEAD: usize = 16;

/// The groups of one view's group step.
#[derive(Clone, Debug, Default)]
pub(crate) struct Groups {
    keys: KeyIndex,
    /// (group, key column) whose first cell was `-0`.
    negative_zero: Vec<(usize, usize)>,
    /// One flat array of accumulators per aggregate.
    accs: Vec<AccColumn>,
    /// Rows waiting for their group, when every aggregate
    /// [`AccColumn::takes_nums`] (`None` otherwise).
    pending: Option<Box<Pending>>,
    /// Rows wait only once there are this many groups: a smaller table
    /// stays in the caches, where waiting costs more than it saves.
    batch_from: usize,
}

/// Rows read but not yet added to their groups. Each row's table slot is
/// fetched when it arrives ([`KeyIndex::prefetch`]) and looked up when
/// [`BATCH`] rows wait: the lookups, then the accumulators, of a batch
/// wait for memory together instead of one after another (with a million
/// groups nearly every lookup misses the caches).
#[derive(Clone, Debug, Default)]
struct Pending {
    /// The rows' encoded keys, one after another.
    keys: Vec<u8>,
    /// Per row: where its key ends in `keys`, its hash, and the key
    /// columns whose cell is `-0` (one bit each).
    rows: Vec<(usize, u64, u64)>,
    /// Per row, per aggregate: its cell.
    cells: Vec<Num>,
    /// Per row: its group (while a batch is added).
    ids: Vec<usize>,
}

/// Rows per batch of [`Pending`].
const BATCH: usize = 32;

/// Groups from which rows wait in batches: a table of 2^15 keys has 2^16
/// slots of 16 bytes (1 MiB), more than a core's L2 cache on common
/// x86-64 parts. Below that batching only cost time (the ledger's few
/// groups: 10-15% more CPU).
const BATCH_FROM: usize = 1 << 15;

/// What a numeric aggregate reads of a cell.
#[derive(Clone, Copy, Debug)]
enum Num {
    Missing,
    /// A number (a year as its number).
    Number(f64),
    /// Any other cell (counted by `count(col)`).
    Other,
}

impl Num {
    fn of(c: Cell<'_>) -> Num {
        match c {
            Cell::Missing => Num::Missing,
            Cell::Number(x) => Num::Number(x),
            Cell::Year(y) => Num::Number(f64::from(y)),
            _ => Num::Other,
        }
    }
}

/// A key cell that is `-0`.
fn negative_zero(c: Cell<'_>) -> bool {
    matches!(c, Cell::Number(x) if x == 0.0 && x.is_sign_negative())
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
        if self.takes_nums() {
            return self.add_num(g, Num::of(c));
        }
        if matches!(c, Cell::Missing) {
            return;
        }
        match self {
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
            _ => {}
        }
    }

    /// Whether this aggregate reads only [`Num`]s ([`AccColumn::add_num`]).
    fn takes_nums(&self) -> bool {
        !matches!(
            self,
            AccColumn::Min(_) | AccColumn::Max(_) | AccColumn::First(_) | AccColumn::Last(_)
        )
    }

    /// Add one row of group `g` whose aggregate column holds `c`, for the
    /// aggregates that [`AccColumn::takes_nums`].
    fn add_num(&mut self, g: usize, c: Num) {
        let num = match (&*self, c) {
            (AccColumn::Rows(_), _) => None,
            (_, Num::Missing) => return,
            (_, Num::Number(x)) => Some(x),
            (_, Num::Other) => None,
        };
        match self {
            AccColumn::Rows(v) | AccColumn::Count(v) => {
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
            _ => {}
        }
    }

    /// Ask for group `g`'s accumulator early (a hint, see [`prefetch`]).
    fn prefetch(&self, g: usize) {
        match self {
            AccColumn::Rows(v) | AccColumn::Count(v) => v.get(g).map(prefetch),
            AccColumn::Sum(v) | AccColumn::Mean(v) => v.get(g).map(prefetch),
            _ => None,
        };
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
        // numbers, a missing one as `NaN` (no sum, mean or count is one)
        let numbers = |v: Vec<f64>| Values::from_numbers(v);
        let missing_nan = |v: Value| match v {
            Value::Number(x) => x,
            _ => f64::NAN,
        };
        let mut out = Values::new();
        match self {
            AccColumn::Rows(v) | AccColumn::Count(v) => {
                return numbers(v.into_iter().map(|n| n as f64).collect())
            }
            AccColumn::Sum(v) => {
                return numbers(
                    v.iter()
                        .map(|s| missing_nan(sum_value(s.total())))
                        .collect(),
                )
            }
            AccColumn::Mean(v) => {
                return numbers(v.iter().map(|s| missing_nan(number(s.mean()))).collect())
            }
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

impl Groups {
    pub(crate) fn new(keys: &[usize], aggs: &[Aggregate]) -> Groups {
        let accs: Vec<AccColumn> = aggs.iter().map(AccColumn::new).collect();
        let batched = keys.len() <= 64 && accs.iter().all(AccColumn::takes_nums);
        let mut g = Groups {
            accs,
            pending: batched.then(Box::default),
            batch_from: BATCH_FROM,
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
        self.id_hashed(hash_bytes(key), key)
    }

    /// [`Groups::id`] of a key hashed `h`.
    fn id_hashed(&mut self, h: u64, key: &[u8]) -> (usize, bool) {
        let found = self.keys.id(h, key);
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
        let big = self.keys.len() >= self.batch_from;
        if let Some(p) = self.pending.as_mut().filter(|_| big) {
            let start = p.keys.len();
            let mut zeros = 0u64;
            for (j, &k) in keys.iter().enumerate() {
                let c = row(k);
                encode_key(&mut p.keys, c);
                zeros |= u64::from(negative_zero(c)) << j;
            }
            let h = hash_bytes(p.keys.get(start..).unwrap_or(&[]));
            self.keys.prefetch(h);
            p.rows.push((p.keys.len(), h, zeros));
            p.cells.extend(
                aggs.iter()
                    .map(|a| a.column.map_or(Num::Missing, |c| Num::of(row(c)))),
            );
            if p.rows.len() == BATCH {
                self.flush();
            }
            return;
        }
        let g = self.group(keybuf, keys, row);
        self.add_at(g, aggs, row);
    }

    /// The group of the row's cells in `keys`, created (with empty
    /// accumulators) when new. Rows waiting in a batch are added first, so
    /// groups are still numbered in the order their first rows came.
    pub(crate) fn group<'c>(
        &mut self,
        keybuf: &mut Vec<u8>,
        keys: &[usize],
        row: &impl Fn(usize) -> Cell<'c>,
    ) -> usize {
        if self.pending.as_ref().is_some_and(|p| !p.rows.is_empty()) {
            self.flush();
        }
        keybuf.clear();
        for &k in keys {
            encode_key(keybuf, row(k));
        }
        let (g, new) = self.id(keybuf);
        if new {
            for (j, &k) in keys.iter().enumerate() {
                if negative_zero(row(k)) {
                    self.negative_zero.push((g, j));
                }
            }
        }
        g
    }

    /// Add the row's cells of `aggs` to group `g` (see [`Groups::group`]).
    #[inline]
    pub(crate) fn add_at<'c>(
        &mut self,
        g: usize,
        aggs: &[Aggregate],
        row: &impl Fn(usize) -> Cell<'c>,
    ) {
        for (acc, a) in self.accs.iter_mut().zip(aggs) {
            let c = a.column.map_or(Cell::Missing, row);
            // the common cases at once, the same as `AccColumn::add`
            match (acc, c) {
                (AccColumn::Sum(v) | AccColumn::Mean(v), Cell::Number(x)) => {
                    if let Some(s) = v.get_mut(g) {
                        s.add(x);
                    }
                }
                (AccColumn::Rows(v), _) => {
                    if let Some(n) = v.get_mut(g) {
                        *n += 1;
                    }
                }
                (acc, c) => acc.add(g, c),
            }
        }
    }

    /// Add the waiting rows to their groups, in order: first every row's
    /// group (fetching its accumulators), then the accumulators.
    fn flush(&mut self) {
        let Some(mut p) = self.pending.take() else {
            return;
        };
        p.ids.clear();
        let mut start = 0;
        for &(end, h, zeros) in &p.rows {
            let key = p.keys.get(start..end).unwrap_or(&[]);
            start = end;
            let (g, new) = self.id_hashed(h, key);
            if new && zeros != 0 {
                let columns = (0..64).filter(|j| zeros >> j & 1 == 1);
                self.negative_zero.extend(columns.map(|j| (g, j)));
            }
            for a in &self.accs {
                a.prefetch(g);
            }
            p.ids.push(g);
        }
        let n = self.accs.len();
        for (&g, cells) in p.ids.iter().zip(p.cells.chunks(n.max(1))) {
            for (acc, &c) in self.accs.iter_mut().zip(cells) {
                acc.add_num(g, c);
            }
        }
        p.keys.clear();
        p.rows.clear();
        p.cells.clear();
        self.pending = Some(p);
    }

    /// Fold in the groups of the following chunk, in their order.
    pub(crate) fn merge(&mut self, mut later: Groups) {
        self.flush();
        later.flush();
        // the later keys are only read from now on
        later.keys.drop_table();
        // the keys this table holds already, looked up on both cores; the
        // others are numbered below, in their order
        let found = self.keys.find_all(&later.keys);
        let mut zeros = later.negative_zero.iter().peekable();
        for (h, &f) in found.iter().enumerate() {
            // the accumulators of a group some keys ahead, fetched while
            // these are added
            if let Some(&ahead) = found.get(h + MERGE_AHEAD).filter(|&&g| g != NOT_FOUND) {
                for a in &self.accs {
                    a.prefetch(ahead as usize);
                }
            }
            let (g, new) = match f {
                NOT_FOUND => self.id(later.keys.key(h)),
                g => (g as usize, false),
            };
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
        mut self,
        key_cols: Vec<(String, ColType)>,
        aggs: Vec<(String, ColType)>,
    ) -> Vec<Column> {
        self.flush();
        // the keys are only read from now on
        self.keys.drop_table();
        let n = self.len();
        let keys = match key_cols.len() {
            1 => self.text_keys().map(|col| vec![col]),
            _ => None,
        };
        let keys = keys.unwrap_or_else(|| self.key_columns(key_cols.len()));
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

    /// The key column of groups keyed by one column of texts (and missing
    /// cells): one text per group, so the texts are distinct and enter the
    /// column's dictionary without a lookup ([`Dict::distinct`]).
    /// `None` for a key of any other cell.
    fn text_keys(&self) -> Option<Values> {
        let n = self.len();
        let mut text = Vec::with_capacity(self.keys.bytes());
        let mut ends = Vec::with_capacity(n);
        let mut ids = Vec::with_capacity(n);
        for g in 0..n {
            match self.keys.key(g) {
                [0] => ids.push(NO_TEXT),
                [2, rest @ ..] => {
                    let (bytes, used) = text_bytes(rest)?;
                    if used != rest.len() {
                        return None;
                    }
                    ids.push(u32::try_from(ends.len()).ok()?);
                    text.extend_from_slice(bytes);
                    ends.push(text.len());
                }
                _ => return None,
            }
        }
        // each key was a text: the texts together are one (checked once)
        let dict = Dict::distinct(String::from_utf8(text).ok()?, ends)?;
        Some(Values::from_texts(ids, dict))
    }

    /// The `width` key columns, cell by cell from the keys.
    fn key_columns(&self, width: usize) -> Vec<Values> {
        let mut keys: Vec<Values> = vec![Values::new(); width];
        let mut zeros = self.negative_zero.iter().peekable();
        for g in 0..self.len() {
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
        keys
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

/// The bytes of a text key cell whose tag `encode_key` wrote just before
/// `rest`, and the number of bytes of `rest` its length and text take.
fn text_bytes(rest: &[u8]) -> Option<(&[u8], usize)> {
    // the length as `encode_key` writes it (LEB128)
    let (mut n, mut shift, mut used) = (0u64, 0u32, 0usize);
    loop {
        let &b = rest.get(used)?;
        used += 1;
        n |= u64::from(b & 0x7f).checked_shl(shift).unwrap_or(0);
        shift += 7;
        if b < 0x80 {
            break;
        }
    }
    let n = usize::try_from(n).ok()?;
    let end = used.checked_add(n)?;
    Some((rest.get(used..end)?, end))
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
        2 => text_bytes(rest)
            .and_then(|(text, used)| Some((Cell::Text(std::str::from_utf8(text).ok()?), used))),
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

    /// A random row of four columns: a number key (with `-0` and
    /// missing), a text key, numbers for the aggregates of every kind, and
    /// numbers and texts for `count` and `sum`.
    fn rows() -> impl proptest::strategy::Strategy<Value = Vec<(u8, u8, u8)>> {
        proptest::collection::vec((0u8..7, 0u8..5, 0u8..9), 0..400)
    }

    fn cell(r: (u8, u8, u8), col: usize) -> Cell<'static> {
        const TEXTS: [&str; 5] = ["a", "bb", "a much longer text than a head", "", "é"];
        match col {
            0 => match r.0 {
                0 => Cell::Missing,
                1 => Cell::Number(-0.0),
                2 => Cell::Number(0.0),
                k => Cell::Number(f64::from(k) * 1.5),
            },
            1 => Cell::Text(TEXTS[usize::from(r.1)]),
            // texts among numbers: counted, not summed (no column the
            // reader makes mixes them, and `min` of mixed cells depends on
            // their order: they compare equal)
            3 => match r.2 {
                1 | 4 => Cell::Text("x"),
                _ => cell(r, 2),
            },
            _ => match r.2 {
                0 | 1 => Cell::Missing,
                2 => Cell::Year(2024),
                3 => Cell::Number(1e300),
                4 => Cell::Number(-1e300),
                k => Cell::Number(f64::from(k) * 0.1),
            },
        }
    }

    /// The output of one group table over `rows` cut into `parts` merged
    /// in order, batched or not.
    fn grouped(rows: &[(u8, u8, u8)], cuts: &[usize], batched: bool, aggs: &[Aggregate]) -> String {
        let keys = [0usize, 1];
        let mut parts = Vec::new();
        let mut from = 0;
        for &c in cuts.iter().chain([&rows.len()]) {
            let to = c.clamp(from, rows.len());
            let mut g = Groups::new(&keys, aggs);
            if batched {
                g.batch_from = 0;
            } else {
                g.pending = None;
            }
            let mut keybuf = Vec::new();
            for &r in &rows[from..to] {
                g.add(&mut keybuf, (&keys, aggs), &|col| cell(r, col));
            }
            parts.push(g);
            from = to;
        }
        let mut all = parts.remove(0);
        for p in parts {
            all.merge(p);
        }
        let names = |n: usize| (0..n).map(|i| (format!("c{i}"), ColType::Number)).collect();
        let columns = all.finish(names(2), names(aggs.len()));
        format!(
            "{:?}",
            columns
                .iter()
                .map(|c| c.values.to_vec())
                .collect::<Vec<_>>()
        )
    }

    proptest::proptest! {
        /// A key of one text column gives, from the arena, the column that
        /// decoding key by key gives, each text once in its dictionary.
        #[test]
        fn text_keys_equal_decoded_keys(picks in proptest::collection::vec(0usize..7, 0..200)) {
            const TEXTS: [&str; 6] = ["a", "", "é", "a much longer text than a head", "ab", "\u{1}"];
            let aggs = [Aggregate { name: String::new(), func: AggFn::Count, column: None }];
            let mut g = Groups::new(&[0], &aggs);
            let mut keybuf = Vec::new();
            for &p in &picks {
                let c = TEXTS.get(p).map_or(Cell::Missing, |&t| Cell::Text(t));
                g.add(&mut keybuf, (&[0], &aggs), &|_| c);
            }
            let decoded = g.key_columns(1);
            match g.text_keys() {
                Some(col) => {
                    proptest::prop_assert_eq!(format!("{col:?}"), format!("{:?}", decoded[0]));
                    if let Some((ids, dict)) = col.text_ids() {
                        let texts = ids.iter().filter(|&&id| id != NO_TEXT).count();
                        proptest::prop_assert_eq!(dict.len(), texts);
                    }
                }
                // every key here is a text or missing
                None => proptest::prop_assert!(false, "no text keys"),
            }
        }

        /// Batched rows (and merged parts) give the groups, first cells
        /// (`-0` included) and accumulators bit for bit of rows added one
        /// at a time in one table.
        #[test]
        fn batches_and_merges_equal_one_row_at_a_time(
            rows in rows(),
            cuts in proptest::collection::vec(0usize..400, 0..3),
            with_extremes in proptest::prelude::any::<bool>(),
        ) {
            let mut cuts = cuts;
            cuts.sort_unstable();
            let agg = |func, column| Aggregate { name: String::new(), func, column };
            let mut aggs = vec![
                agg(AggFn::Count, None),
                agg(AggFn::Count, Some(3)),
                agg(AggFn::Sum, Some(3)),
                agg(AggFn::Mean, Some(2)),
                agg(AggFn::Median, Some(2)),
            ];
            if with_extremes {
                aggs.push(agg(AggFn::Min, Some(2)));
            }
            let want = grouped(&rows, &[], false, &aggs);
            proptest::prop_assert_eq!(&grouped(&rows, &[], true, &aggs), &want);
            proptest::prop_assert_eq!(&grouped(&rows, &cuts, true, &aggs), &want);
        }
    }
}
