//! A streamed group step evaluated column by column over a whole table (a
//! Parquet row group) instead of row by row, for group steps whose
//! aggregates are counts, sums and means.
//!
//! * Each `keep` is split at its top-level `and`s; a part that reads one
//!   text column held as dictionary ids is decided once per distinct text,
//!   any other part row by row; the rows passing every part are selected.
//! * When every key column is a text column (ids) or a time column (days,
//!   months, years in a small range), the key of a row is a small number
//!   computed from those: the group of each such number is looked up
//!   (encoded and hashed) only the first time the table holds it. Otherwise
//!   each row's key is encoded and hashed, as in the row engine.
//! * Sums and means add each selected row's number to an exact [`Sum`].
//!
//! Groups are numbered in order of first appearance over all tables, and a
//! group's key cells are those of its first row; sums are exact. So the
//! result is bit for bit that of the row engine (`crate::groups`), which
//! the tests compare on random tables. Rows are also added one at a time
//! ([`FastGroups::add_row`]) while a view's `keep` texts are still being
//! looked for ([`crate::probe`]).

use crate::groups::KeyIndex;
use crate::hash::hash_bytes;
use crate::model::{AggFn, Aggregate, Cell, ColType, Column, Expr, Table, Value, Values};
use crate::view::{encode_key, sum_value, truth, Sum};

/// Largest number of distinct small keys of one table looked up by table.
const MAX_CODES: usize = 1 << 20;

/// One aggregate's accumulators, one per group (with its column).
#[derive(Clone, Debug)]
enum Acc {
    /// `count()` of rows.
    Rows(Vec<u64>),
    /// `count(col)`: non-missing cells.
    Count(usize, Vec<u64>),
    Sum(usize, Vec<Sum>),
    Mean(usize, Vec<Sum>),
}

impl Acc {
    fn grow(&mut self) {
        match self {
            Acc::Rows(v) | Acc::Count(_, v) => v.push(0),
            Acc::Sum(_, v) | Acc::Mean(_, v) => v.push(Sum::default()),
        }
    }

    /// Add one row of group `g`, as the row engine does.
    fn add<'c>(&mut self, g: usize, row: &impl Fn(usize) -> Cell<'c>) {
        match self {
            Acc::Rows(v) => v[g] += 1,
            Acc::Count(c, v) => {
                if !matches!(row(*c), Cell::Missing) {
                    v[g] += 1;
                }
            }
            Acc::Sum(c, v) | Acc::Mean(c, v) => match row(*c) {
                Cell::Number(x) => v[g].add(x),
                Cell::Year(y) => v[g].add(f64::from(y)),
                _ => {}
            },
        }
    }

    /// Add the selected rows `sel` of `t`, of groups `gids`.
    fn add_table(&mut self, t: &Table, sel: &[u32], gids: &[u32]) {
        let col = |c: usize| t.columns.get(c).map(|c| &c.values);
        match self {
            Acc::Rows(v) => gids.iter().for_each(|&g| v[g as usize] += 1),
            Acc::Sum(c, v) | Acc::Mean(c, v) if col(*c).and_then(Values::numbers).is_some() => {
                let xs = col(*c).and_then(Values::numbers).unwrap_or(&[]);
                for (&r, &g) in sel.iter().zip(gids) {
                    let x = xs[r as usize];
                    if !x.is_nan() {
                        v[g as usize].add(x);
                    }
                }
            }
            _ => {
                for (&r, &g) in sel.iter().zip(gids) {
                    let row = |c: usize| col(c).map_or(Cell::Missing, |v| v.cell(r as usize));
                    self.add(g as usize, &row);
                }
            }
        }
    }

    /// Fold in group `h` of `later` (the same aggregate over later rows)
    /// as group `g`, new here when `new`.
    fn merge(&mut self, (g, new): (usize, bool), later: &Acc, h: usize) {
        if new {
            self.grow();
        }
        match (self, later) {
            (Acc::Rows(v), Acc::Rows(w)) | (Acc::Count(_, v), Acc::Count(_, w)) => v[g] += w[h],
            (Acc::Sum(_, v), Acc::Sum(_, w)) | (Acc::Mean(_, v), Acc::Mean(_, w)) => {
                v[g].merge(&w[h])
            }
            _ => {}
        }
    }

    /// The output column's values.
    fn finish(self) -> Values {
        let number = |x: Option<f64>| match x {
            Some(x) if x.is_finite() => Value::Number(x),
            _ => Value::Missing,
        };
        let mut out = Values::new();
        match self {
            Acc::Rows(v) | Acc::Count(_, v) => v
                .into_iter()
                .for_each(|n| out.push_cell(Cell::Number(n as f64))),
            Acc::Sum(_, v) => v.iter().for_each(|s| out.push(sum_value(s.total()))),
            Acc::Mean(_, v) => v.iter().for_each(|s| out.push(number(s.mean()))),
        }
        out
    }
}

/// The groups of one view's group step, evaluated column by column.
#[derive(Clone, Debug)]
pub(crate) struct FastGroups {
    keys: Vec<usize>,
    index: KeyIndex,
    /// Per key column: each group's first cell.
    firsts: Vec<Values>,
    accs: Vec<Acc>,
}

impl FastGroups {
    /// The groups of `keys` with `aggs`; `None` when an aggregate is not a
    /// count, sum or mean (the row engine evaluates those).
    pub(crate) fn new(keys: &[usize], aggs: &[Aggregate]) -> Option<FastGroups> {
        let accs = aggs
            .iter()
            .map(|a| match (a.func, a.column) {
                (AggFn::Count, None) => Some(Acc::Rows(Vec::new())),
                (AggFn::Count, Some(c)) => Some(Acc::Count(c, Vec::new())),
                (AggFn::Sum, Some(c)) => Some(Acc::Sum(c, Vec::new())),
                (AggFn::Mean, Some(c)) => Some(Acc::Mean(c, Vec::new())),
                _ => None,
            })
            .collect::<Option<Vec<_>>>()?;
        let mut f = FastGroups {
            keys: keys.to_vec(),
            index: KeyIndex::default(),
            firsts: vec![Values::new(); keys.len()],
            accs,
        };
        if keys.is_empty() {
            // without keys the whole file is one group, even when empty
            f.group(&[], &|_| Cell::Missing);
        }
        Some(f)
    }

    /// The group of encoded key `key`, created when new with the key cells
    /// of `row`.
    fn group<'c>(&mut self, key: &[u8], row: &impl Fn(usize) -> Cell<'c>) -> usize {
        let (g, new) = self.index.id(hash_bytes(key), key);
        if new {
            for (v, &k) in self.firsts.iter_mut().zip(&self.keys) {
                v.push_cell(row(k));
            }
            for a in &mut self.accs {
                a.grow();
            }
        }
        g
    }

    fn key_group<'c>(&mut self, keybuf: &mut Vec<u8>, row: &impl Fn(usize) -> Cell<'c>) -> usize {
        keybuf.clear();
        for &k in &self.keys {
            encode_key(keybuf, row(k));
        }
        self.group(keybuf, row)
    }

    /// Add one row (one that passed the view's `keep`s).
    pub(crate) fn add_row<'c>(&mut self, keybuf: &mut Vec<u8>, row: &impl Fn(usize) -> Cell<'c>) {
        let g = self.key_group(keybuf, row);
        for a in &mut self.accs {
            a.add(g, row);
        }
    }

    /// Add the rows of `t` that pass every one of `keeps`.
    pub(crate) fn add_table(&mut self, t: &Table, keeps: &[Expr], keybuf: &mut Vec<u8>) {
        let n = t.columns.first().map_or(0, |c| c.values.len());
        let sel = select(t, keeps, n);
        let cell =
            |c: usize, r: usize| t.columns.get(c).map_or(Cell::Missing, |v| v.values.cell(r));
        let mut gids = Vec::with_capacity(sel.len());
        match codes(t, &self.keys, n) {
            Some((codes, size)) => {
                let mut local = vec![u32::MAX; size];
                for &r in &sel {
                    let code = codes[r as usize] as usize;
                    if local[code] == u32::MAX {
                        let row = |c: usize| cell(c, r as usize);
                        local[code] = self.key_group(keybuf, &row) as u32;
                    }
                    gids.push(local[code]);
                }
            }
            None => {
                for &r in &sel {
                    let row = |c: usize| cell(c, r as usize);
                    gids.push(self.key_group(keybuf, &row) as u32);
                }
            }
        }
        for a in &mut self.accs {
            a.add_table(t, &sel, &gids);
        }
    }

    /// Fold in `later`, the same group step over rows that come after
    /// these: its groups new here come after this one's, in its order,
    /// with its first cells, as if its rows had been added here.
    pub(crate) fn merge(&mut self, later: &FastGroups) {
        for h in 0..later.index.len() {
            let key = later.index.key(h);
            let (g, new) = self.index.id(hash_bytes(key), key);
            if new {
                for (mine, theirs) in self.firsts.iter_mut().zip(&later.firsts) {
                    mine.push_cell(theirs.cell(h));
                }
            }
            for (a, b) in self.accs.iter_mut().zip(&later.accs) {
                a.merge((g, new), b, h);
            }
        }
    }

    /// The output columns: the key columns, then one per aggregate, named
    /// and typed as the row engine's (`crate::stream::finish`).
    pub(crate) fn finish(self, schema: &[(String, ColType)], aggs: &[Aggregate]) -> Table {
        let mut columns: Vec<Column> = self
            .keys
            .iter()
            .zip(self.firsts)
            .map(|(&k, values)| {
                let (name, ty) = schema
                    .get(k)
                    .map_or((String::new(), ColType::Text), |c| c.clone());
                Column { name, ty, values }
            })
            .collect();
        for (a, acc) in aggs.iter().zip(self.accs) {
            columns.push(Column {
                name: a.name.clone(),
                ty: ColType::Number,
                values: acc.finish(),
            });
        }
        Table { columns }
    }
}

/// The rows (of `n`) of `t` that pass every one of `keeps`.
fn select(t: &Table, keeps: &[Expr], n: usize) -> Vec<u32> {
    let mut mask = vec![true; n];
    let mut parts = Vec::new();
    for e in keeps {
        conjuncts(e, &mut parts);
    }
    for e in parts {
        narrow(t, e, &mut mask);
    }
    (0..n as u32).filter(|&r| mask[r as usize]).collect()
}

/// The parts of `e` that must all hold (its top-level `and`s split).
pub(crate) fn conjuncts<'e>(e: &'e Expr, out: &mut Vec<&'e Expr>) {
    match e {
        Expr::And(parts) => parts.iter().for_each(|p| conjuncts(p, out)),
        _ => out.push(e),
    }
}

/// The one column `e` reads, if it reads exactly one.
pub(crate) fn only_column(e: &Expr) -> Option<usize> {
    fn walk(e: &Expr, found: &mut Vec<usize>) {
        match e {
            Expr::Col(c) => found.push(*c),
            Expr::Lit(_) => {}
            Expr::Neg(a) | Expr::Not(a) | Expr::In(a, _) => walk(a, found),
            Expr::Bucket { of, .. } => walk(of, found),
            Expr::Arith(a, rest) => {
                walk(a, found);
                rest.iter().for_each(|(_, b)| walk(b, found));
            }
            Expr::Cmp(_, a, b) | Expr::YearQuarter(a, b) => {
                walk(a, found);
                walk(b, found);
            }
            Expr::And(parts) | Expr::Or(parts) => parts.iter().for_each(|p| walk(p, found)),
        }
    }
    let mut found = Vec::new();
    walk(e, &mut found);
    found.sort_unstable();
    found.dedup();
    match found[..] {
        [c] => Some(c),
        _ => None,
    }
}

/// Clear the rows of `mask` where `e` is false.
fn narrow(t: &Table, e: &Expr, mask: &mut [bool]) {
    let col = only_column(e).and_then(|c| Some((c, t.columns.get(c)?.values.text_ids()?)));
    if let Some((c, (ids, dict))) = col {
        // once per distinct text, and once for a missing cell
        let at = |cell: Cell<'_>| truth(&|k| if k == c { cell } else { Cell::Missing }, e);
        let table: Vec<bool> = (0..dict.len())
            .map(|i| at(Cell::Text(dict.get(i as u32))))
            .collect();
        let missing = at(Cell::Missing);
        for (m, &id) in mask.iter_mut().zip(ids) {
            if *m {
                *m = table.get(id as usize).copied().unwrap_or(missing);
            }
        }
        return;
    }
    for (r, m) in mask.iter_mut().enumerate() {
        if *m {
            let row = |c: usize| t.columns.get(c).map_or(Cell::Missing, |v| v.values.cell(r));
            *m = truth(&row, e);
        }
    }
}

/// Per row, a small number that is equal for two rows exactly when their
/// key cells are (and the count of such numbers); `None` unless every key
/// column holds text ids or times in a small range.
fn codes(t: &Table, keys: &[usize], n: usize) -> Option<(Vec<u32>, usize)> {
    let mut codes = vec![0u32; n];
    let mut size = 1usize;
    for &k in keys {
        let values = &t.columns.get(k)?.values;
        if let Some((ids, dict)) = values.text_ids() {
            // a missing cell (`u32::MAX`) is 0
            let stride = size;
            size = widen(size, dict.len() + 1)?;
            combine(&mut codes, stride, ids.iter().map(|&id| id.wrapping_add(1)));
        } else if let Some(times) = values.times() {
            let present = times.iter().copied().filter(|&x| x != i32::MIN);
            let lo = present.clone().min().unwrap_or(0);
            let hi = present.max().unwrap_or(0);
            let span = usize::try_from(i64::from(hi) - i64::from(lo) + 2).ok()?;
            let stride = size;
            size = widen(size, span)?;
            let code = |x: i32| match x {
                i32::MIN => 0,
                x => (i64::from(x) - i64::from(lo) + 1) as u32,
            };
            combine(&mut codes, stride, times.iter().map(|&x| code(x)));
        } else {
            return None;
        }
    }
    Some((codes, size))
}

/// The count of codes once a column of `span` codes is added (within
/// [`MAX_CODES`]).
fn widen(size: usize, span: usize) -> Option<usize> {
    size.checked_mul(span).filter(|&s| s <= MAX_CODES)
}

/// `codes[r] += part[r] * stride` (the codes so far are below `stride`,
/// the count of codes before this column's).
fn combine(codes: &mut [u32], stride: usize, part: impl Iterator<Item = u32>) {
    for (c, p) in codes.iter_mut().zip(part) {
        *c += p * stride as u32;
    }
}

#[cfg(test)]
mod tests {
    use crate::fold::Fold;
    use crate::load::ReadLimits;
    use crate::model::{AggFn, Aggregate, CmpOp, ColType, Column, Expr, Table, Value, Values};
    use crate::stream::StreamView;

    /// A small deterministic generator (a linear congruential one).
    struct Lcg(u64);

    impl Lcg {
        fn below(&mut self, n: u64) -> u64 {
            self.0 = self
                .0
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            (self.0 >> 33) % n
        }
    }

    const SCHEMA: [(&str, ColType); 6] = [
        ("region", ColType::Text),
        ("month", ColType::Month),
        ("amount", ColType::Number),
        ("year", ColType::Year),
        ("flag", ColType::Text),
        ("code", ColType::Number),
    ];

    /// A table of `n` random rows with missing cells, ties, `-0` and
    /// numbers of very different sizes; `bare`: the region column all
    /// missing and the month column held as values of several kinds.
    fn table(rng: &mut Lcg, n: usize, bare: bool) -> Table {
        let mut cols: Vec<Vec<Value>> = vec![Vec::new(); SCHEMA.len()];
        for _ in 0..n {
            let region = match rng.below(8) {
                0 => Value::Missing,
                k => Value::Text(format!("r{k}")),
            };
            cols[0].push(if bare { Value::Missing } else { region });
            cols[1].push(match rng.below(10) {
                0 => Value::Missing,
                k => Value::Month(24_000 + k as i32),
            });
            cols[2].push(match rng.below(12) {
                0 => Value::Missing,
                1 => Value::Number(-0.0),
                2 => Value::Number(0.0),
                3 => Value::Number(1e300),
                4 => Value::Number(-1e300),
                5 => Value::Number(1e-300),
                k => Value::Number((rng.below(2000) as f64 - 1000.0) / 8.0 + k as f64 * 0.1),
            });
            cols[3].push(match rng.below(5) {
                0 => Value::Missing,
                k => Value::Year(2020 + k as i32),
            });
            cols[4].push(Value::Missing);
            cols[5].push(match rng.below(4) {
                0 => Value::Missing,
                1 => Value::Number(-0.0),
                k => Value::Number(k as f64),
            });
        }
        if bare {
            cols[1].push(Value::Text("x".into()));
            for (j, c) in cols.iter_mut().enumerate() {
                if j != 1 {
                    c.push(Value::Missing);
                }
            }
        }
        Table {
            columns: SCHEMA
                .iter()
                .zip(cols)
                .map(|((name, ty), values)| Column {
                    name: (*name).into(),
                    ty: *ty,
                    values: Values::from(values),
                })
                .collect(),
        }
    }

    fn agg(func: AggFn, column: Option<usize>) -> Aggregate {
        Aggregate {
            name: format!("{func:?}{column:?}"),
            func,
            column,
        }
    }

    fn text(t: &str) -> Value {
        Value::Text(t.into())
    }

    fn cmp(op: CmpOp, c: usize, v: Value) -> Expr {
        Expr::Cmp(op, Box::new(Expr::Col(c)), Box::new(Expr::Lit(v)))
    }

    fn views() -> Vec<StreamView> {
        use AggFn::*;
        let sums = vec![
            agg(Sum, Some(2)),
            agg(Count, None),
            agg(Mean, Some(2)),
            agg(Count, Some(2)),
            agg(Sum, Some(3)),
        ];
        let view = |keeps: Vec<Expr>, keys: Vec<usize>, aggs: Vec<Aggregate>| StreamView {
            keeps,
            group: Some((keys, aggs)),
        };
        let five = Expr::In(
            Box::new(Expr::Col(0)),
            vec![text("r1"), text("r2"), text("r5")],
        );
        vec![
            view(vec![five], vec![1, 0], sums.clone()),
            view(vec![], vec![0], sums.clone()),
            view(
                vec![Expr::And(vec![
                    cmp(CmpOp::Eq, 0, text("r3")),
                    cmp(CmpOp::Gt, 2, Value::Number(0.0)),
                ])],
                vec![1],
                vec![agg(Count, None)],
            ),
            view(vec![], vec![5], vec![agg(Mean, Some(3)), agg(Sum, Some(2))]),
            view(vec![], vec![], sums.clone()),
            view(
                vec![Expr::Or(vec![
                    cmp(CmpOp::Gt, 2, Value::Number(10.0)),
                    cmp(CmpOp::Ne, 0, text("r1")),
                ])],
                vec![0, 4, 3],
                sums.clone(),
            ),
            // a text no row holds: its rows are looked at one by one
            view(vec![cmp(CmpOp::Eq, 0, text("nowhere"))], vec![1], sums),
            view(vec![], vec![0], vec![agg(Min, Some(2)), agg(Sum, Some(2))]),
            StreamView {
                keeps: vec![cmp(CmpOp::Eq, 0, text("r2"))],
                group: None,
            },
        ]
    }

    #[test]
    fn columns_at_once_give_the_row_engine_s_tables() {
        let views = views();
        let schema: Vec<(String, ColType)> =
            SCHEMA.iter().map(|(n, t)| ((*n).into(), *t)).collect();
        let keep_values = vec![true; schema.len()];
        let limits = ReadLimits::none();
        for seed in 0..20 {
            let mut rng = Lcg(seed);
            let tables: Vec<Table> = (0..4)
                .map(|i| {
                    let n = rng.below(300) as usize;
                    table(&mut rng, n, i == 2 && seed % 2 == 0)
                })
                .collect();
            // the tables from `cut` on folded apart and merged in after
            let fold = |by_rows: bool, cut: usize| {
                let new = || {
                    let f = Fold::new(&views, &keep_values, &limits, schema.clone());
                    if by_rows {
                        f.row_by_row()
                    } else {
                        f
                    }
                };
                let (mut f, mut later) = (new(), new());
                for (i, t) in tables.iter().enumerate() {
                    assert!(if i < cut { f.add(t) } else { later.add(t) });
                }
                assert!(f.merge(later));
                let probes = f.probes();
                (f.finish().expect("fits"), probes)
            };
            let (slow, slow_probes) = fold(true, tables.len());
            let cut = seed as usize % (tables.len() + 1);
            for (fast, fast_probes) in
                [fold(false, tables.len()), fold(false, cut), fold(true, cut)]
            {
                assert_eq!(fast_probes, slow_probes, "seed {seed}");
                for (a, b) in fast.iter().zip(&slow) {
                    // numbers bit for bit (`-0` included)
                    assert_eq!(format!("{a:?}"), format!("{b:?}"), "seed {seed}");
                }
            }
            assert!(slow.iter().any(|t| t.columns[0].values.len() > 3));
        }
    }
}
