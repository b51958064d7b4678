//! How the cells of one column are held in memory: by kind, in flat arrays.
//!
//! * numbers as `f64` (8 bytes a cell; a NaN marks a missing cell, since
//!   the data never holds a NaN: the reader and the view engine turn every
//!   non-finite result into a missing cell);
//! * dates, months and years as `i32` (4 bytes; `i32::MIN` is missing);
//! * texts as `u32` ids (4 bytes; `u32::MAX` is missing) into a
//!   dictionary that holds each distinct text once, in one string, shared
//!   (reference-counted) by every column gathered from it;
//! * a column of missing cells only as its length.
//!
//! A column whose cells do not share one kind (the engine never makes one,
//! but any `Vec<Value>` can be turned into [`Values`]) falls back to a vector
//! of [`Value`]s, so every value survives a round trip unchanged, a NaN or
//! `i32::MIN` included.
//!
//! Cloning a column is cheap (the storage is shared and copied on the first
//! change), so tables can be passed through the view engine's steps without
//! copying their cells.

use std::fmt;
use std::sync::Arc;

use serde::ser::{Serialize, SerializeSeq, Serializer};

pub(crate) use crate::dict::Dict;
use crate::dict::NO_TEXT;
use crate::model::{Cell, Value};

const NO_TIME: i32 = i32::MIN;

/// The three kinds of time cell, all held as `i32`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Time {
    Date,
    Month,
    Year,
}

impl Time {
    fn cell<'a>(self, t: i32) -> Cell<'a> {
        match self {
            Time::Date => Cell::Date(t),
            Time::Month => Cell::Month(t),
            Time::Year => Cell::Year(t),
        }
    }

    /// The kind and the number of a time cell.
    fn of(c: Cell<'_>) -> Option<(Time, i32)> {
        match c {
            Cell::Date(t) => Some((Time::Date, t)),
            Cell::Month(t) => Some((Time::Month, t)),
            Cell::Year(t) => Some((Time::Year, t)),
            _ => None,
        }
    }
}

/// The storage of one column.
#[derive(Clone)]
enum Store {
    /// Only missing cells, this many.
    Missing(usize),
    Numbers(Vec<f64>),
    Times(Time, Vec<i32>),
    Texts(Vec<u32>, Arc<Dict>),
    /// Cells of several kinds (or a value equal to a kind's missing mark).
    Mixed(Vec<Value>),
}

impl Store {
    fn len(&self) -> usize {
        match self {
            Store::Missing(n) => *n,
            Store::Numbers(v) => v.len(),
            Store::Times(_, v) => v.len(),
            Store::Texts(v, _) => v.len(),
            Store::Mixed(v) => v.len(),
        }
    }

    fn cell(&self, row: usize) -> Cell<'_> {
        match self {
            Store::Missing(_) => Cell::Missing,
            Store::Numbers(v) => match v.get(row) {
                Some(&x) if !x.is_nan() => Cell::Number(x),
                _ => Cell::Missing,
            },
            Store::Times(k, v) => match v.get(row) {
                Some(&t) if t != NO_TIME => k.cell(t),
                _ => Cell::Missing,
            },
            Store::Texts(v, d) => match v.get(row) {
                Some(&id) if id != NO_TEXT => Cell::Text(d.get(id)),
                _ => Cell::Missing,
            },
            Store::Mixed(v) => v.get(row).map_or(Cell::Missing, Value::cell),
        }
    }

    /// Add a cell if this storage can hold it (else leave it unchanged).
    fn try_push(&mut self, c: Cell<'_>) -> bool {
        match (self, c) {
            (Store::Missing(n), Cell::Missing) => *n += 1,
            (Store::Numbers(v), Cell::Missing) => v.push(f64::NAN),
            (Store::Numbers(v), Cell::Number(x)) if !x.is_nan() => v.push(x),
            (Store::Times(_, v), Cell::Missing) => v.push(NO_TIME),
            (Store::Times(k, v), c) => match Time::of(c) {
                Some((kind, t)) if kind == *k && t != NO_TIME => v.push(t),
                _ => return false,
            },
            (Store::Texts(v, _), Cell::Missing) => v.push(NO_TEXT),
            (Store::Texts(v, d), Cell::Text(s)) => match Arc::make_mut(d).intern(s) {
                Some(id) => v.push(id),
                None => return false,
            },
            (Store::Mixed(v), c) => v.push(c.to_value()),
            (store @ Store::Missing(_), c) => {
                let n = store.len();
                let mut typed = match (c, Time::of(c)) {
                    (Cell::Number(_), _) => Store::Numbers(vec![f64::NAN; n]),
                    (Cell::Text(_), _) => Store::Texts(vec![NO_TEXT; n], Arc::default()),
                    (_, Some((k, _))) => Store::Times(k, vec![NO_TIME; n]),
                    _ => return false,
                };
                if !typed.try_push(c) {
                    return false;
                }
                *store = typed;
            }
            _ => return false,
        }
        true
    }

    fn heap_bytes(&self) -> usize {
        match self {
            Store::Missing(_) => 0,
            Store::Numbers(v) => v.capacity() * 8,
            Store::Times(_, v) => v.capacity() * 4,
            Store::Texts(v, d) => v.capacity() * 4 + d.heap_bytes(),
            Store::Mixed(v) => {
                v.capacity() * std::mem::size_of::<Value>()
                    + v.iter()
                        .map(|x| match x {
                            Value::Text(s) => s.capacity(),
                            _ => 0,
                        })
                        .sum::<usize>()
            }
        }
    }
}

/// The cells of one column (see the module documentation for how they are
/// held). Reads give borrowed [`Cell`]s or owned [`Value`]s.
#[derive(Clone)]
pub struct Values(Arc<Store>);

impl Default for Values {
    fn default() -> Self {
        Values::missing(0)
    }
}

impl Values {
    /// An empty column.
    pub fn new() -> Values {
        Values::default()
    }

    /// A column of `n` missing cells.
    pub fn missing(n: usize) -> Values {
        Values(Arc::new(Store::Missing(n)))
    }

    /// Number of cells.
    pub fn len(&self) -> usize {
        self.0.len()
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The cell in `row` (missing when out of range).
    pub fn cell(&self, row: usize) -> Cell<'_> {
        self.0.cell(row)
    }

    /// The cell in `row` as an owned value (missing when out of range).
    pub fn value(&self, row: usize) -> Value {
        self.cell(row).to_value()
    }

    /// The cell in `row` as an owned value, `None` when out of range.
    pub fn get(&self, row: usize) -> Option<Value> {
        (row < self.len()).then(|| self.value(row))
    }

    /// The cells in order, borrowed.
    pub fn cells(&self) -> Cells<'_> {
        Cells {
            values: self,
            next: 0,
            end: self.len(),
        }
    }

    /// The cells in order, as owned values.
    pub fn iter<'a>(&'a self) -> std::iter::Map<Cells<'a>, fn(Cell<'a>) -> Value> {
        self.cells().map(Cell::to_value)
    }

    /// Every cell as an owned value.
    pub fn to_vec(&self) -> Vec<Value> {
        self.iter().collect()
    }

    /// Append a value.
    pub fn push(&mut self, v: Value) {
        self.push_cell(v.cell());
    }

    /// Append a cell (its text is copied into the column's dictionary).
    pub fn push_cell(&mut self, c: Cell<'_>) {
        let store = Arc::make_mut(&mut self.0);
        if !store.try_push(c) {
            let mut all: Vec<Value> = (0..store.len()).map(|r| store.cell(r).to_value()).collect();
            all.push(c.to_value());
            *store = Store::Mixed(all);
        }
    }

    /// A column of numbers (`NaN` marks a missing cell), as pushing each
    /// one gives it: all missing is a column of missing cells.
    pub(crate) fn from_numbers(v: Vec<f64>) -> Values {
        if v.iter().all(|x| x.is_nan()) {
            return Values::missing(v.len());
        }
        Values(Arc::new(Store::Numbers(v)))
    }

    /// A column of dates, months or years (by `ty`; `i32::MIN` marks a
    /// missing cell), as pushing each one gives it; the cells back for
    /// another type.
    pub(crate) fn from_times(ty: crate::model::ColType, v: Vec<i32>) -> Result<Values, Vec<i32>> {
        use crate::model::ColType;
        let kind = match ty {
            ColType::Date => Time::Date,
            ColType::Month => Time::Month,
            ColType::Year => Time::Year,
            ColType::Number | ColType::Text => return Err(v),
        };
        if v.iter().all(|&t| t == NO_TIME) {
            return Ok(Values::missing(v.len()));
        }
        Ok(Values(Arc::new(Store::Times(kind, v))))
    }

    /// A column of texts by their ids in `dict` (`u32::MAX` marks a
    /// missing cell), as pushing each one gives it when `dict` holds the
    /// texts in order of first appearance.
    pub(crate) fn from_texts(ids: Vec<u32>, dict: Dict) -> Values {
        if ids.iter().all(|&id| id == NO_TEXT) {
            return Values::missing(ids.len());
        }
        Values(Arc::new(Store::Texts(ids, Arc::new(dict))))
    }

    /// The column's texts as ids into its dictionary (`u32::MAX`:
    /// missing), when it is held so.
    pub(crate) fn text_ids(&self) -> Option<(&[u32], &Dict)> {
        match &*self.0 {
            Store::Texts(v, d) => Some((v, d)),
            _ => None,
        }
    }

    /// The column's dates, months or years (`i32::MIN`: missing), when it
    /// is held so.
    pub(crate) fn times(&self) -> Option<&[i32]> {
        match &*self.0 {
            Store::Times(_, v) => Some(v),
            _ => None,
        }
    }

    /// The column's numbers (`NaN`: missing), when it is held so.
    pub(crate) fn numbers(&self) -> Option<&[f64]> {
        match &*self.0 {
            Store::Numbers(v) => Some(v),
            _ => None,
        }
    }

    /// The cells of the given rows, in that order (rows out of range give
    /// missing cells). Texts keep sharing this column's dictionary.
    pub fn gather(&self, rows: &[usize]) -> Values {
        let store = match &*self.0 {
            Store::Missing(_) => Store::Missing(rows.len()),
            Store::Numbers(v) => Store::Numbers(
                rows.iter()
                    .map(|&r| v.get(r).copied().unwrap_or(f64::NAN))
                    .collect(),
            ),
            Store::Times(k, v) => Store::Times(
                *k,
                rows.iter()
                    .map(|&r| v.get(r).copied().unwrap_or(NO_TIME))
                    .collect(),
            ),
            Store::Texts(v, d) => Store::Texts(
                rows.iter()
                    .map(|&r| v.get(r).copied().unwrap_or(NO_TEXT))
                    .collect(),
                Arc::clone(d),
            ),
            Store::Mixed(v) => Store::Mixed(
                rows.iter()
                    .map(|&r| v.get(r).cloned().unwrap_or(Value::Missing))
                    .collect(),
            ),
        };
        Values(Arc::new(store))
    }

    /// Append every cell of `other`.
    pub fn extend_from(&mut self, other: &Values) {
        let store = Arc::make_mut(&mut self.0);
        let done = match (store, &*other.0) {
            (Store::Missing(a), Store::Missing(b)) => {
                *a += b;
                true
            }
            (Store::Numbers(a), Store::Numbers(b)) => {
                a.extend_from_slice(b);
                true
            }
            (Store::Times(ka, a), Store::Times(kb, b)) if ka == kb => {
                a.extend_from_slice(b);
                true
            }
            (Store::Texts(a, da), Store::Texts(b, db)) if Arc::ptr_eq(da, db) => {
                a.extend_from_slice(b);
                true
            }
            _ => false,
        };
        if !done {
            for c in other.cells() {
                self.push_cell(c);
            }
        }
    }

    /// The column with each text cell replaced by `f` of its text, computed
    /// once per distinct text (`None` gives a missing cell); other cells
    /// stay as they are.
    pub(crate) fn map_texts(&self, f: impl Fn(&str) -> Option<Value>) -> Values {
        let mut out = Values::new();
        match &*self.0 {
            Store::Texts(ids, d) => {
                let mapped: Vec<Value> = (0..d.len())
                    .map(|i| f(d.get(i as u32)).unwrap_or(Value::Missing))
                    .collect();
                for &id in ids {
                    match mapped.get(id as usize) {
                        Some(v) => out.push_cell(v.cell()),
                        None => out.push_cell(Cell::Missing),
                    }
                }
            }
            _ => {
                for c in self.cells() {
                    match c {
                        Cell::Text(s) => out.push(f(s).unwrap_or(Value::Missing)),
                        other => out.push_cell(other),
                    }
                }
            }
        }
        out.shrink_to_fit();
        out
    }

    /// Give back memory reserved for cells that were never added.
    pub fn shrink_to_fit(&mut self) {
        match Arc::make_mut(&mut self.0) {
            Store::Missing(_) => {}
            Store::Numbers(v) => v.shrink_to_fit(),
            Store::Times(_, v) => v.shrink_to_fit(),
            Store::Texts(v, _) => v.shrink_to_fit(),
            Store::Mixed(v) => v.shrink_to_fit(),
        }
    }

    /// Bytes of memory this column holds (its dictionary included).
    pub fn heap_bytes(&self) -> usize {
        self.0.heap_bytes()
    }
}

/// The cells of a [`Values`], borrowed, in order.
#[derive(Clone)]
pub struct Cells<'a> {
    values: &'a Values,
    next: usize,
    end: usize,
}

impl<'a> Iterator for Cells<'a> {
    type Item = Cell<'a>;

    fn next(&mut self) -> Option<Cell<'a>> {
        if self.next >= self.end {
            return None;
        }
        self.next += 1;
        Some(self.values.cell(self.next - 1))
    }

    fn size_hint(&self) -> (usize, Option<usize>) {
        let n = self.end.saturating_sub(self.next);
        (n, Some(n))
    }
}

impl DoubleEndedIterator for Cells<'_> {
    fn next_back(&mut self) -> Option<Self::Item> {
        if self.next >= self.end {
            return None;
        }
        self.end -= 1;
        Some(self.values.cell(self.end))
    }
}

impl ExactSizeIterator for Cells<'_> {}

impl<'a> IntoIterator for &'a Values {
    type Item = Value;
    type IntoIter = std::iter::Map<Cells<'a>, fn(Cell<'a>) -> Value>;

    fn into_iter(self) -> Self::IntoIter {
        self.iter()
    }
}

impl FromIterator<Value> for Values {
    fn from_iter<I: IntoIterator<Item = Value>>(iter: I) -> Self {
        let mut out = Values::new();
        for v in iter {
            out.push(v);
        }
        out
    }
}

impl<'a> FromIterator<Cell<'a>> for Values {
    fn from_iter<I: IntoIterator<Item = Cell<'a>>>(iter: I) -> Self {
        let mut out = Values::new();
        for c in iter {
            out.push_cell(c);
        }
        out
    }
}

impl From<Vec<Value>> for Values {
    fn from(v: Vec<Value>) -> Self {
        v.into_iter().collect()
    }
}

impl PartialEq for Values {
    fn eq(&self, other: &Values) -> bool {
        self.len() == other.len() && self.cells().zip(other.cells()).all(|(a, b)| a == b)
    }
}

impl PartialEq<Vec<Value>> for Values {
    fn eq(&self, other: &Vec<Value>) -> bool {
        self.len() == other.len() && self.cells().zip(other).all(|(a, b)| a == b.cell())
    }
}

impl fmt::Debug for Values {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_list().entries(self.iter()).finish()
    }
}

impl Serialize for Values {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut seq = s.serialize_seq(Some(self.len()))?;
        for v in self.iter() {
            seq.serialize_element(&v)?;
        }
        seq.end()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn text(s: &str) -> Value {
        Value::Text(s.to_owned())
    }

    #[test]
    fn every_value_survives_a_round_trip() {
        let cases: Vec<Vec<Value>> = vec![
            vec![],
            vec![Value::Missing, Value::Missing],
            vec![Value::Missing, Value::Number(-0.0), Value::Number(1.5)],
            vec![Value::Number(f64::INFINITY), Value::Missing],
            vec![Value::Month(5), Value::Missing, Value::Month(-3)],
            vec![Value::Missing, text("b"), text("a"), text("b"), text("")],
            // mixed kinds, and values equal to a kind's missing mark
            vec![Value::Number(1.0), text("a"), Value::Year(2020)],
            vec![Value::Date(1), Value::Month(1)],
            vec![Value::Date(3), Value::Date(i32::MIN)],
            vec![Value::Number(2.0), Value::Number(f64::NAN)],
        ];
        for case in cases {
            let v = Values::from(case.clone());
            assert_eq!(v.len(), case.len());
            let back = v.to_vec();
            assert_eq!(format!("{back:?}"), format!("{case:?}"));
            // -0 keeps its sign
            for (a, b) in back.iter().zip(&case) {
                if let (Value::Number(x), Value::Number(y)) = (a, b) {
                    assert_eq!(x.to_bits(), y.to_bits());
                }
            }
        }
    }

    #[test]
    fn texts_are_held_once_and_gathered_without_copies() {
        let v: Values = ["north", "south", "north", "north"]
            .iter()
            .map(|s| text(s))
            .collect();
        let Store::Texts(ids, d) = &*v.0 else {
            panic!("not a text store");
        };
        assert_eq!(ids, &vec![0, 1, 0, 0]);
        assert_eq!(d.len(), 2);
        let g = v.gather(&[3, 1, 9]);
        assert_eq!(g, vec![text("north"), text("south"), Value::Missing]);
        let Store::Texts(_, gd) = &*g.0 else {
            panic!("not a text store");
        };
        assert!(Arc::ptr_eq(d, gd));
        // a push to the gathered column leaves the first one alone
        let mut g2 = g.clone();
        g2.push(text("east"));
        assert_eq!(g2.len(), 4);
        assert_eq!(g.len(), 3);
        assert_eq!(v.cell(1), Cell::Text("south"));
    }

    #[test]
    fn columns_take_a_few_bytes_a_cell() {
        let n = 100_000;
        let numbers: Values = (0..n).map(|i| Value::Number(i as f64)).collect();
        let months: Values = (0..n).map(|i| Value::Month(i % 48)).collect();
        let names: Values = (0..n).map(|i| text(&format!("r{}", i % 50))).collect();
        // doubling growth leaves at most twice the cells reserved
        assert!(
            numbers.heap_bytes() <= 16 * n as usize,
            "{}",
            numbers.heap_bytes()
        );
        assert!(
            months.heap_bytes() <= 8 * n as usize,
            "{}",
            months.heap_bytes()
        );
        assert!(
            names.heap_bytes() <= 8 * n as usize + 4096,
            "{}",
            names.heap_bytes()
        );
        assert_eq!(Values::missing(n as usize).heap_bytes(), 0);
    }

    #[test]
    fn extend_and_map_texts() {
        let mut a: Values = vec![text("1"), Value::Missing].into();
        let b: Values = vec![text("x"), text("1")].into();
        a.extend_from(&b);
        assert_eq!(a, vec![text("1"), Value::Missing, text("x"), text("1")]);
        let n = a.map_texts(|s| s.parse::<f64>().ok().map(Value::Number));
        assert_eq!(
            n,
            vec![
                Value::Number(1.0),
                Value::Missing,
                Value::Missing,
                Value::Number(1.0)
            ]
        );
        let mut m = Values::missing(2);
        m.extend_from(&Values::missing(3));
        assert_eq!(m.len(), 5);
        m.extend_from(&vec![Value::Year(2020)].into());
        assert_eq!(m.value(5), Value::Year(2020));
        assert_eq!(m.value(0), Value::Missing);
    }
}
