//! Ordering for the view engine's `sort` and `top` steps on big tables.
//!
//! A sort compares cells through [`crate::view::compare_cells`] (missing
//! last both ways). On a million rows that is some twenty million calls,
//! each reading two cells out of their columns. Here each key column is
//! turned once into one integer code per row ([`codes`]), ordered as the
//! cells compare, and rows are sorted by their codes with the row number as
//! the last key: the same order as the stable sort, ties included, from a
//! plain unstable sort of integers.
//!
//! The top step only needs its first `n` categories in rank order:
//! [`first_ranked`] selects them ([`slice::select_nth_unstable_by`]) and
//! sorts those few, with the category's number as the last key so ties come
//! out in first-appearance order, as a stable sort of all of them would.

use std::cmp::Ordering;

use crate::dict::NO_TEXT;
use crate::model::{Cell, ColType, Column, Table};
use crate::view::{num_of, sum_of, sum_value, Sum};

/// The code of a missing cell: after every other code.
const MISSING: u64 = u64::MAX;

/// Which cells a key column holds (the cells of one class compare with
/// each other; cells of different classes compare equal, see
/// [`crate::view::compare_cells`], which is no order to code).
#[derive(Clone, Copy, PartialEq, Eq)]
enum Class {
    /// Numbers and years (a year compares as its number).
    Number,
    Text,
    Date,
    Month,
}

fn class(c: Cell<'_>) -> Option<Class> {
    match c {
        Cell::Missing => None,
        Cell::Number(_) | Cell::Year(_) => Some(Class::Number),
        Cell::Text(_) => Some(Class::Text),
        Cell::Date(_) => Some(Class::Date),
        Cell::Month(_) => Some(Class::Month),
    }
}

/// A number's bits as an unsigned integer in the order of
/// [`f64::total_cmp`] (the same mapping it makes: flip every bit of a
/// negative number, the sign bit of a positive one).
fn number_code(x: f64) -> u64 {
    let b = x.to_bits();
    if b >> 63 == 1 {
        !b
    } else {
        b | (1 << 63)
    }
}

/// One code per row of column `col` of `t`: codes compare as the sort
/// compares the cells (`desc`: reversed, missing last either way). `None`
/// when the column mixes classes of cells, or a cell's code would equal
/// the missing code (a not-a-number with every bit set): the caller sorts
/// by comparing cells then.
pub(crate) fn codes(t: &Table, col: usize, desc: bool) -> Option<Vec<u64>> {
    let values = &t.columns.get(col)?.values;
    let mut kind = None;
    for c in values.cells() {
        match (class(c), kind) {
            (None, _) => {}
            (Some(k), None) => kind = Some(k),
            (Some(k), Some(was)) if k == was => {}
            _ => return None,
        }
    }
    let mut out: Vec<u64> = match kind {
        None => return Some(vec![MISSING; values.len()]),
        Some(Class::Text) => text_ranks(t, col),
        Some(_) => values
            .cells()
            .map(|c| match c {
                Cell::Number(x) => number_code(x),
                Cell::Year(y) => number_code(f64::from(y)),
                // dates and months: their day or month number, shifted
                Cell::Date(d) | Cell::Month(d) => (i64::from(d) - i64::from(i32::MIN)) as u64,
                Cell::Missing | Cell::Text(_) => MISSING,
            })
            .collect(),
    };
    let mut bad = false;
    for (code, c) in out.iter_mut().zip(values.cells()) {
        if matches!(c, Cell::Missing) {
            *code = MISSING;
            continue;
        }
        bad |= *code == MISSING;
        if desc {
            *code = MISSING - 1 - *code;
        }
    }
    (!bad).then_some(out)
}

/// Per row of text column `col`: the rank of its text among the column's
/// distinct texts in byte order (equal texts, equal ranks).
fn text_ranks(t: &Table, col: usize) -> Vec<u64> {
    let Some(c) = t.columns.get(col) else {
        return Vec::new();
    };
    let mut texts: Vec<(&str, usize)> = c
        .values
        .cells()
        .enumerate()
        .filter_map(|(r, c)| match c {
            Cell::Text(s) => Some((s, r)),
            _ => None,
        })
        .collect();
    texts.sort_unstable_by(|a, b| a.0.as_bytes().cmp(b.0.as_bytes()));
    let mut ranks = vec![MISSING; c.values.len()];
    let mut rank = 0u64;
    for (i, &(s, r)) in texts.iter().enumerate() {
        if i > 0 && texts[i - 1].0 != s {
            rank += 1;
        }
        if let Some(x) = ranks.get_mut(r) {
            *x = rank;
        }
    }
    ranks
}

/// The rows of `t` in the order of a stable sort by `keys` (`true` =
/// descending, missing last), from the keys' codes; `None` when a key
/// column has no codes (see [`codes`]).
pub(crate) fn sorted_rows(t: &Table, keys: &[(usize, bool)], rows: usize) -> Option<Vec<usize>> {
    let coded: Vec<Vec<u64>> = keys
        .iter()
        .map(|&(col, desc)| codes(t, col, desc))
        .collect::<Option<_>>()?;
    if let [one] = &coded[..] {
        let pairs: Vec<(u64, usize)> = (0..rows)
            .map(|r| (one.get(r).copied().unwrap_or(MISSING), r))
            .collect();
        return Some(by_code(pairs).into_iter().map(|(_, r)| r).collect());
    }
    let mut order: Vec<usize> = (0..rows).collect();
    let code = |k: &Vec<u64>, r: usize| k.get(r).copied().unwrap_or(MISSING);
    order.sort_unstable_by(|&a, &b| {
        coded
            .iter()
            .map(|k| code(k, a).cmp(&code(k, b)))
            .find(|o| o.is_ne())
            .unwrap_or_else(|| a.cmp(&b))
    });
    Some(order)
}

/// Rows from which [`by_code`] sorts by radix: below, a comparison sort
/// costs less than its byte counts.
const RADIX_FROM: usize = 1 << 12;

/// `pairs` (code, row), in rows order, sorted by code, equal codes in
/// their order. From [`RADIX_FROM`] pairs on, a least-significant-digit
/// radix sort (Knuth, TAOCP vol. 3, 5.2.5): one stable pass per byte of
/// the codes, skipping the bytes every code shares.
fn by_code(mut pairs: Vec<(u64, usize)>) -> Vec<(u64, usize)> {
    if pairs.len() < RADIX_FROM {
        pairs.sort_unstable();
        return pairs;
    }
    let mut counts = vec![[0usize; 256]; 8];
    for &(code, _) in &pairs {
        for (byte, count) in counts.iter_mut().enumerate() {
            count[(code >> (8 * byte)) as usize & 0xff] += 1;
        }
    }
    let mut other = vec![(0u64, 0usize); pairs.len()];
    for (byte, count) in counts.iter().enumerate() {
        if count.contains(&pairs.len()) {
            continue;
        }
        let mut next = [0usize; 256];
        let mut at = 0;
        for (slot, &c) in next.iter_mut().zip(count) {
            *slot = at;
            at += c;
        }
        for &pair in &pairs {
            let digit = (pair.0 >> (8 * byte)) as usize & 0xff;
            if let Some(to) = other.get_mut(next[digit]) {
                *to = pair;
            }
            next[digit] += 1;
        }
        std::mem::swap(&mut pairs, &mut other);
    }
    pairs
}

/// The rank order of the top step: larger totals first, a category
/// without a total after every other, ties in the categories' order.
fn by_rank(a: &(usize, Option<f64>), b: &(usize, Option<f64>)) -> Ordering {
    let o = match (a.1, b.1) {
        (Some(x), Some(y)) => y.total_cmp(&x),
        (Some(_), None) => Ordering::Less,
        (None, Some(_)) => Ordering::Greater,
        (None, None) => Ordering::Equal,
    };
    o.then(a.0.cmp(&b.0))
}

/// The first `n` of `ranked` (category number, total) in rank order
/// ([`by_rank`]), as a stable sort by total would give them.
pub(crate) fn first_ranked(
    mut ranked: Vec<(usize, Option<f64>)>,
    n: usize,
) -> Vec<(usize, Option<f64>)> {
    if n == 0 {
        return Vec::new();
    }
    if n < ranked.len() {
        ranked.select_nth_unstable_by(n - 1, by_rank);
        ranked.truncate(n);
    }
    ranked.sort_unstable_by(by_rank);
    ranked
}

/// The top step (see [`crate::view::top_by_cells`]) over a table whose
/// `key` column is held as text ids ([`Values::text_ids`]) and whose other
/// columns are all numbers: a category is its text's id (a dictionary holds
/// each text once), so no key is hashed, and the rest folds into one row.
/// The same table as the step's cell-by-cell path, bit for bit; `None` for
/// any other table.
pub(crate) fn top_by_ids(t: &Table, key: usize, by: usize, n: usize, rest: &str) -> Option<Table> {
    const NONE: u32 = u32::MAX;
    let (ids, dict) = t.columns.get(key)?.values.text_ids()?;
    let rows = ids.len();
    let plain = t
        .columns
        .iter()
        .enumerate()
        .all(|(c, col)| col.values.len() == rows && (c == key || col.ty == ColType::Number));
    if !plain {
        return None;
    }
    let rest_id = (0..dict.len()).find(|&id| dict.get(id as u32) == rest);
    // per text id (the missing cell after them): its category, numbered in
    // order of first appearance; per row: its category (`NONE`: the rest)
    let mut cat_of = vec![NONE; dict.len() + 1];
    let mut cats: Vec<u32> = Vec::with_capacity(rows);
    let mut totals: Vec<Sum> = Vec::new();
    let by = t.columns.get(by).map(|c| &c.values);
    for (r, &id) in ids.iter().enumerate() {
        let slot = if id == NO_TEXT {
            dict.len()
        } else {
            id as usize
        };
        if Some(slot) == rest_id {
            cats.push(NONE);
            continue;
        }
        let c = cat_of.get_mut(slot)?;
        if *c == NONE {
            *c = u32::try_from(totals.len()).ok().filter(|&c| c != NONE)?;
            totals.push(Sum::default());
        }
        if let (Some(total), Some(x)) = (
            totals.get_mut(*c as usize),
            by.and_then(|v| num_of(v.cell(r))),
        ) {
            total.add(x);
        }
        cats.push(*c);
    }
    drop(cat_of);
    if totals.len() <= n {
        return Some(t.clone());
    }
    let mut kept_cat = vec![false; totals.len()];
    let ranked = totals
        .iter()
        .enumerate()
        .map(|(i, s)| (i, s.total()))
        .collect();
    drop(totals);
    for (i, _) in first_ranked(ranked, n) {
        if let Some(k) = kept_cat.get_mut(i) {
            *k = true;
        }
    }
    let kept_row = |r: usize| {
        cats.get(r)
            .is_some_and(|&c| c != NONE && kept_cat.get(c as usize) == Some(&true))
    };
    let kept: Vec<usize> = (0..rows).filter(|&r| kept_row(r)).collect();
    let folded = kept.len() < rows;
    let columns = t.columns.iter().enumerate().map(|(c, col)| {
        let mut values = if c == key {
            // a dictionary of the kept texts only: the rest's text is
            // added to it without copying the whole one
            kept.iter().map(|&r| col.values.cell(r)).collect()
        } else {
            col.values.gather(&kept)
        };
        if folded && c == key {
            values.push_cell(Cell::Text(rest));
        } else if folded {
            let rest_rows = (0..rows).filter(|&r| !kept_row(r));
            values.push(sum_value(
                sum_of(rest_rows.map(|r| col.values.cell(r))).total(),
            ));
        }
        Column {
            name: col.name.clone(),
            ty: col.ty,
            values,
        }
    });
    Some(Table {
        columns: columns.collect(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{ColType, Column, Value};

    /// A small deterministic generator (Knuth's MMIX constants).
    struct Lcg(u64);

    impl Lcg {
        fn next(&mut self) -> u64 {
            self.0 = self
                .0
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            self.0 >> 33
        }
    }

    /// The stable sort by comparing cells, as the view engine did it.
    fn sorted_by_cells(t: &Table, keys: &[(usize, bool)]) -> Vec<usize> {
        let cell = |c: usize, r: usize| t.columns[c].values.cell(r);
        let mut rows: Vec<usize> = (0..t.columns[0].values.len()).collect();
        rows.sort_by(|&a, &b| {
            for &(col, desc) in keys {
                let (x, y) = (cell(col, a), cell(col, b));
                let o = match (x, y) {
                    (Cell::Missing, Cell::Missing) => Ordering::Equal,
                    (Cell::Missing, _) => Ordering::Greater,
                    (_, Cell::Missing) => Ordering::Less,
                    _ => {
                        let o = crate::view::compare_cells(x, y).unwrap_or(Ordering::Equal);
                        if desc {
                            o.reverse()
                        } else {
                            o
                        }
                    }
                };
                if o.is_ne() {
                    return o;
                }
            }
            Ordering::Equal
        });
        rows
    }

    fn random_table(g: &mut Lcg, rows: usize) -> Table {
        // few distinct values, so ties are common; -0 beside 0, missing
        // cells, years beside numbers, texts that are prefixes of others
        let numbers = [-0.0, 0.0, 1.5, -2.25, 1e300, -1e-300, f64::INFINITY];
        let texts = ["", "a", "ab", "b", "B", "é", "a\u{0}"];
        let mut num = Vec::new();
        let mut text = Vec::new();
        let mut month = Vec::new();
        for _ in 0..rows {
            let k = g.next() as usize;
            num.push(match k % 9 {
                7 => Value::Missing,
                8 => Value::Year(2000 + (k / 9 % 3) as i32),
                i => Value::Number(numbers[i % numbers.len()]),
            });
            text.push(match k / 11 % 8 {
                7 => Value::Missing,
                i => Value::Text(texts[i].to_string()),
            });
            month.push(match k / 101 % 5 {
                4 => Value::Missing,
                i => Value::Month(-1 + i as i32),
            });
        }
        let col = |name: &str, ty, values: Vec<Value>| Column {
            name: name.into(),
            ty,
            values: values.into(),
        };
        Table {
            columns: vec![
                col("n", ColType::Number, num),
                col("t", ColType::Text, text),
                col("m", ColType::Month, month),
            ],
        }
    }

    #[test]
    fn coded_sort_equals_the_stable_sort_by_cells_on_random_tables() {
        let mut g = Lcg(7);
        let keysets: Vec<Vec<(usize, bool)>> = vec![
            vec![(0, false)],
            vec![(0, true)],
            vec![(1, false)],
            vec![(1, true)],
            vec![(2, true)],
            vec![(1, false), (0, true)],
            vec![(2, false), (1, true), (0, false)],
        ];
        for rows in [0, 1, 2, 5, 40, 300] {
            let t = random_table(&mut g, rows);
            for keys in &keysets {
                let fast = sorted_rows(&t, keys, rows).expect("codes");
                assert_eq!(fast, sorted_by_cells(&t, keys), "{rows} rows, {keys:?}");
            }
        }
    }

    #[test]
    fn radix_order_equals_a_sort_of_pairs() {
        let mut g = Lcg(5);
        for rows in [0, 1, RADIX_FROM - 1, RADIX_FROM, 3 * RADIX_FROM + 7] {
            for spread in [1u64, 3, 1 << 20, u64::MAX] {
                // codes that share bytes, tie often, or differ in every byte
                let pairs: Vec<(u64, usize)> = (0..rows)
                    .map(|r| {
                        (
                            ((g.next() << 31 ^ g.next()) % spread).wrapping_mul(0x0101),
                            r,
                        )
                    })
                    .chain([(MISSING, rows), (0, rows + 1)])
                    .collect();
                let mut want = pairs.clone();
                want.sort_unstable();
                assert_eq!(by_code(pairs), want, "{rows} rows, spread {spread}");
            }
        }
    }

    #[test]
    fn mixed_columns_and_all_bits_not_a_number_have_no_codes() {
        let col = |values: Vec<Value>| Table {
            columns: vec![Column {
                name: "x".into(),
                ty: ColType::Text,
                values: values.into(),
            }],
        };
        let mixed = col(vec![Value::Text("a".into()), Value::Number(1.0)]);
        assert!(codes(&mixed, 0, false).is_none());
        let dates = col(vec![Value::Date(3), Value::Month(3)]);
        assert!(codes(&dates, 0, true).is_none());
        // the one number whose code is the missing code
        let nan = col(vec![Value::Number(f64::from_bits(u64::MAX >> 1))]);
        assert!(codes(&nan, 0, false).is_none());
        let missing = col(vec![Value::Missing, Value::Missing]);
        assert_eq!(codes(&missing, 0, true), Some(vec![MISSING, MISSING]));
        assert_eq!(codes(&missing, 5, true), None);
    }

    proptest::proptest! {
        /// The top step by text ids gives the cell-by-cell step's table bit
        /// for bit: categories with several rows, a missing key, a key that
        /// is already the rest's text, totals that tie, are missing, or
        /// overflow, and a second number column folded beside them.
        #[test]
        fn top_by_ids_equals_top_by_cells(
            rows in proptest::collection::vec((0u8..9, 0u8..8, 0u8..8), 0..60),
            n in 0usize..8,
        ) {
            const TEXTS: [&str; 7] = ["a", "b", "rest", "", "é", "ab", "c"];
            let numbers = [-0.0, 0.0, 1.5, 2.5, 1e308, -1e308, 0.1];
            let num = |k: u8| match k {
                7 => Value::Missing,
                k => Value::Number(numbers[usize::from(k)]),
            };
            let key: Vec<Value> = rows
                .iter()
                .map(|r| match r.0 {
                    7 | 8 => Value::Missing,
                    k => Value::Text(TEXTS[usize::from(k)].to_string()),
                })
                .collect();
            let col = |name: &str, ty, values: Vec<Value>| Column {
                name: name.into(),
                ty,
                values: values.into(),
            };
            let t = Table {
                columns: vec![
                    col("amount", ColType::Number, rows.iter().map(|r| num(r.1)).collect()),
                    col("key", ColType::Text, key),
                    col("units", ColType::Number, rows.iter().map(|r| num(r.2)).collect()),
                ],
            };
            let want = crate::view::top_by_cells(&t, 1, 0, n, "rest");
            let got = top_by_ids(&t, 1, 0, n, "rest");
            let show = |t: &Table| format!("{:?}", t.columns.iter().map(|c| (&c.name, c.ty, c.values.to_vec())).collect::<Vec<_>>());
            let texts = t.columns[1].values.text_ids().is_some();
            proptest::prop_assert_eq!(got.is_some(), texts);
            if let Some(got) = got {
                proptest::prop_assert_eq!(show(&got), show(&want));
            }
        }
    }

    #[test]
    fn selected_top_equals_the_first_of_a_stable_sort_with_ties() {
        let mut g = Lcg(11);
        for len in [0usize, 1, 2, 3, 10, 57, 400] {
            let ranked: Vec<(usize, Option<f64>)> = (0..len)
                .map(|i| {
                    let k = g.next();
                    // totals from a few values: many ties, and no totals
                    let total = match k % 6 {
                        5 => None,
                        4 => Some(-0.0),
                        j => Some([0.0, 2.5, 2.5, -1.0][j as usize]),
                    };
                    (i, total)
                })
                .collect();
            let mut stable = ranked.clone();
            stable.sort_by(|a, b| match (a.1, b.1) {
                (Some(x), Some(y)) => y.total_cmp(&x),
                (Some(_), None) => Ordering::Less,
                (None, Some(_)) => Ordering::Greater,
                (None, None) => Ordering::Equal,
            });
            for n in [0, 1, 2, 5, len.saturating_sub(1), len, len + 3] {
                let fast = first_ranked(ranked.clone(), n);
                let want: Vec<_> = stable.iter().take(n).copied().collect();
                let bits = |v: &[(usize, Option<f64>)]| -> Vec<(usize, Option<u64>)> {
                    v.iter().map(|&(i, x)| (i, x.map(f64::to_bits))).collect()
                };
                assert_eq!(bits(&fast), bits(&want), "{len} categories, n = {n}");
            }
        }
    }
}
