//! Parquet column chunks decoded straight into flat arrays (numbers as
//! `f64`, dates as day numbers, texts as ids into a dictionary that holds
//! each distinct text once) instead of a [`Typed`] cell per value, and
//! typed from there: a text column's declared (or inferred) type is read
//! from each distinct text once, not from every cell.
//!
//! This is only a faster road to the same table: a chunk holding anything
//! the arrays cannot carry (a decimal, a boolean, a `NaN`, a text that is
//! not UTF-8, a timestamp beyond the dates) is read cell by cell instead
//! ([`read_flat`] gives `None`), and a column with any cell that does not
//! convert to its type is typed cell by cell, which reports the cells
//! ([`flat_column`] gives `None`).

use parquet::basic::ConvertedType as C;
use parquet::column::reader::{ColumnReader, ColumnReaderImpl};
use parquet::data_type::{ByteArray, DataType};
use parquet::errors::ParquetError;
use parquet::schema::types::ColumnDescriptor;

use crate::column::Dict;
use crate::load::{parse_as, CsvSpec};
use crate::model::{ColType, Column, Value, Values};
use crate::time::{month_of_day, parse_date, parse_month};
use crate::typed::Typed;

const NO_TEXT: u32 = u32::MAX;
const NO_TIME: i32 = i32::MIN;

/// Values decoded at a time (as in the cell-by-cell reader).
const BATCH: usize = 4096;

/// The cells of one column chunk in flat arrays.
pub(crate) enum Flat {
    /// `NaN`: missing.
    Numbers(Vec<f64>),
    /// Days since 1970-01-01; `i32::MIN`: missing.
    Dates(Vec<i32>),
    /// Ids into the dictionary (texts in order of first appearance);
    /// `u32::MAX`: missing.
    Texts(Vec<u32>, Dict),
}

impl Flat {
    pub(crate) fn len(&self) -> usize {
        match self {
            Flat::Numbers(v) => v.len(),
            Flat::Dates(v) => v.len(),
            Flat::Texts(v, _) => v.len(),
        }
    }

    /// The cells as the cell-by-cell reader gives them.
    pub(crate) fn typed(&self) -> Vec<Typed> {
        match self {
            Flat::Numbers(v) => v
                .iter()
                .map(|&x| {
                    if x.is_nan() {
                        Typed::Missing
                    } else {
                        Typed::Number(x)
                    }
                })
                .collect(),
            Flat::Dates(v) => v
                .iter()
                .map(|&d| {
                    if d == NO_TIME {
                        Typed::Missing
                    } else {
                        Typed::Date(d)
                    }
                })
                .collect(),
            Flat::Texts(v, dict) => v
                .iter()
                .map(|&id| match id {
                    NO_TEXT => Typed::Missing,
                    id => Typed::Text(dict.get(id).to_owned()),
                })
                .collect(),
        }
    }

    /// Is some text longer than `max` characters?
    pub(crate) fn too_long(&self, max: usize) -> bool {
        let Flat::Texts(_, dict) = self else {
            return false;
        };
        (0..dict.len()).any(|i| {
            let s = dict.get(i as u32);
            s.len() > max && s.chars().count() > max
        })
    }
}

/// The values of a column chunk, batch by batch, each read by `f` (`None`:
/// not held flat); the definition levels mark the missing ones, as in the
/// cell-by-cell reader. `Ok(None)`: some value is not held flat.
fn chunk<T: DataType, O: Copy>(
    mut reader: ColumnReaderImpl<T>,
    max_def: i16,
    missing: O,
    mut f: impl FnMut(&T::T) -> Option<O>,
) -> Result<Option<Vec<O>>, ParquetError> {
    let mut out = Vec::new();
    let mut values: Vec<T::T> = Vec::with_capacity(BATCH);
    let mut defs: Vec<i16> = Vec::with_capacity(BATCH);
    loop {
        values.clear();
        defs.clear();
        let (records, _, levels) =
            reader.read_records(BATCH, Some(&mut defs), None, &mut values)?;
        if records == 0 {
            return Ok(Some(out));
        }
        if max_def == 0 {
            for v in &values {
                let Some(o) = f(v) else { return Ok(None) };
                out.push(o);
            }
        } else {
            let mut stored = values.iter();
            for &d in &defs[..levels] {
                let o = match (d == max_def).then(|| stored.next()).flatten() {
                    Some(v) => match f(v) {
                        Some(o) => o,
                        None => return Ok(None),
                    },
                    None => missing,
                };
                out.push(o);
            }
        }
    }
}

/// A column chunk in flat arrays; `Ok(None)` when it is to be read cell by
/// cell (see the module docs). Values are read as the cell-by-cell reader
/// reads them.
pub(crate) fn read_flat(
    reader: ColumnReader,
    descr: &ColumnDescriptor,
) -> Result<Option<Flat>, ParquetError> {
    let max_def = descr.max_def_level();
    let converted = descr.converted_type();
    let number = |x: f64| (!x.is_nan()).then_some(x);
    let nan = f64::NAN;
    Ok(match reader {
        ColumnReader::Int32ColumnReader(r) => {
            let int: fn(i32) -> f64 = match converted {
                C::INT_8 => |v| f64::from(v as i8),
                C::INT_16 => |v| f64::from(v as i16),
                C::INT_32 | C::NONE => f64::from,
                C::UINT_8 => |v| f64::from(v as u8),
                C::UINT_16 => |v| f64::from(v as u16),
                C::UINT_32 => |v| f64::from(v as u32),
                C::DATE => {
                    return Ok(
                        chunk(r, max_def, NO_TIME, |&v| (v != NO_TIME).then_some(v))?
                            .map(Flat::Dates),
                    )
                }
                _ => return Ok(None),
            };
            chunk(r, max_def, nan, |&v| Some(int(v)))?.map(Flat::Numbers)
        }
        ColumnReader::Int64ColumnReader(r) => {
            let per_day: i64 = match converted {
                C::INT_64 | C::NONE => {
                    return Ok(chunk(r, max_def, nan, |&v| Some(v as f64))?.map(Flat::Numbers))
                }
                C::UINT_64 => {
                    return Ok(
                        chunk(r, max_def, nan, |&v| Some(v as u64 as f64))?.map(Flat::Numbers)
                    )
                }
                C::TIMESTAMP_MILLIS => 86_400_000,
                C::TIMESTAMP_MICROS => 86_400_000_000,
                _ => return Ok(None),
            };
            chunk(r, max_def, NO_TIME, |&v| {
                i32::try_from(v.div_euclid(per_day))
                    .ok()
                    .filter(|&d| d != NO_TIME)
            })?
            .map(Flat::Dates)
        }
        ColumnReader::FloatColumnReader(r) => {
            chunk(r, max_def, nan, |&x| number(f64::from(x)))?.map(Flat::Numbers)
        }
        ColumnReader::DoubleColumnReader(r) => {
            chunk(r, max_def, nan, |&x| number(x))?.map(Flat::Numbers)
        }
        ColumnReader::ByteArrayColumnReader(r) => match converted {
            C::UTF8 | C::ENUM | C::JSON => {
                let mut dict = Dict::default();
                let mut seen = Seen::default();
                let ids = chunk(r, max_def, NO_TEXT, |v: &ByteArray| {
                    let bytes = v.data();
                    if let Some(id) = seen.get(bytes, &dict) {
                        return Some(id);
                    }
                    let id = dict.intern(std::str::from_utf8(bytes).ok()?)?;
                    seen.put(bytes, id);
                    Some(id)
                })?;
                ids.map(|ids| Flat::Texts(ids, dict))
            }
            _ => None,
        },
        _ => None,
    })
}

/// Slots of [`Seen`] (a power of two).
const SEEN_SLOTS: usize = 1024;

/// The ids of texts recently read, by where their bytes lie: values read
/// through a Parquet dictionary are slices of the one dictionary page, so
/// the same text comes back at the same address. A slot is a hint only:
/// its text is compared with the dictionary's before its id is taken, so
/// a reused address never gives a wrong id. Hashing each text and
/// checking it is UTF-8 took a third of a scan.
struct Seen {
    slots: Vec<(usize, u32)>,
}

impl Default for Seen {
    fn default() -> Seen {
        Seen {
            slots: vec![(0, NO_TEXT); SEEN_SLOTS],
        }
    }
}

impl Seen {
    fn slot(bytes: &[u8]) -> usize {
        // Fibonacci hashing of the address (Knuth, TAOCP vol. 3, 6.4)
        let at = bytes.as_ptr() as u64;
        (at.wrapping_mul(0x9E37_79B9_7F4A_7C15) >> 54) as usize & (SEEN_SLOTS - 1)
    }

    /// The id of `bytes` if its slot holds it (the same text).
    fn get(&self, bytes: &[u8], dict: &Dict) -> Option<u32> {
        let (at, id) = self.slots[Self::slot(bytes)];
        (at == bytes.as_ptr() as usize && id != NO_TEXT && dict.get(id).as_bytes() == bytes)
            .then_some(id)
    }

    fn put(&mut self, bytes: &[u8], id: u32) {
        self.slots[Self::slot(bytes)] = (bytes.as_ptr() as usize, id);
    }
}

/// The column of a flat chunk, typed as [`crate::typed::finish`] types the
/// same cells; the chunk back when some cell does not convert (it is typed
/// cell by cell then, which names the cell).
pub(crate) fn flat_column(
    spec: &CsvSpec,
    (name, keep): (&str, bool),
    flat: Flat,
) -> Result<Column, Flat> {
    let rows = flat.len();
    let declared = spec
        .declared
        .iter()
        .find(|(n, _)| *n == name)
        .map(|(_, t)| *t);
    let column = |ty: ColType, values: Values| Column {
        name: name.to_owned(),
        ty,
        values: if keep { values } else { Values::missing(rows) },
    };
    match flat {
        Flat::Numbers(v) => {
            let none = v.iter().all(|x| x.is_nan());
            let ty = declared.unwrap_or(if none { ColType::Text } else { ColType::Number });
            if none || ty == ColType::Number {
                Ok(column(ty, Values::from_numbers(v)))
            } else {
                Err(Flat::Numbers(v))
            }
        }
        Flat::Dates(v) => {
            let none = v.iter().all(|&d| d == NO_TIME);
            let ty = declared.unwrap_or(if none { ColType::Text } else { ColType::Date });
            let v = match ty {
                _ if none => return Ok(column(ty, Values::missing(rows))),
                ColType::Date => v,
                ColType::Month => v
                    .into_iter()
                    .map(|d| if d == NO_TIME { d } else { month_of_day(d) })
                    .collect(),
                _ => return Err(Flat::Dates(v)),
            };
            match Values::from_times(ty, v) {
                Ok(values) => Ok(column(ty, values)),
                Err(v) => Err(Flat::Dates(v)),
            }
        }
        Flat::Texts(ids, dict) => match texts_column(spec, declared, ids, &dict) {
            Ok((ty, values)) => Ok(column(ty, values)),
            Err(ids) => Err(Flat::Texts(ids, dict)),
        },
    }
}

/// A text chunk's type and values (see [`flat_column`]); the ids back when
/// some text does not convert.
fn texts_column(
    spec: &CsvSpec,
    declared: Option<ColType>,
    ids: Vec<u32>,
    dict: &Dict,
) -> Result<(ColType, Values), Vec<u32>> {
    // each distinct text, or `None` for a missing-value token
    let texts: Vec<Option<&str>> = (0..dict.len())
        .map(|i| {
            let s = dict.get(i as u32);
            (!spec.missing.iter().any(|m| m == s)).then_some(s)
        })
        .collect();
    let present = || texts.iter().flatten().copied();
    let ty = match declared {
        Some(t) => t,
        None if present().next().is_none() => ColType::Text,
        None if present().all(|s| parse_month(s).is_some()) => ColType::Month,
        None if present().all(|s| parse_date(s).is_some()) => ColType::Date,
        None if present().all(|s| spec.numbers.parse(s).is_some()) => ColType::Number,
        None => ColType::Text,
    };
    let rows = ids.len();
    if present().next().is_none() {
        return Ok((ty, Values::missing(rows)));
    }
    if ty == ColType::Text {
        if texts.iter().all(Option::is_some) {
            return Ok((ty, Values::from_texts(ids, dict.clone())));
        }
        // without the missing-value tokens, in order of first appearance
        let mut kept = Dict::default();
        let new: Vec<u32> = texts
            .iter()
            .map(|s| s.and_then(|s| kept.intern(s)).unwrap_or(NO_TEXT))
            .collect();
        let ids = ids
            .into_iter()
            .map(|id| new.get(id as usize).copied().unwrap_or(NO_TEXT))
            .collect();
        return Ok((ty, Values::from_texts(ids, kept)));
    }
    // each distinct text read once, as a number or a time
    let mut numbers = Vec::with_capacity(texts.len());
    let mut times = Vec::with_capacity(texts.len());
    for s in &texts {
        let v = match s {
            Some(s) => parse_as(&spec.numbers, ty, s),
            None => Some(Value::Missing),
        };
        match v {
            Some(Value::Missing) => {
                numbers.push(f64::NAN);
                times.push(NO_TIME);
            }
            Some(Value::Number(x)) if !x.is_nan() => numbers.push(x),
            Some(Value::Date(t) | Value::Month(t) | Value::Year(t)) if t != NO_TIME => {
                times.push(t)
            }
            _ => return Err(ids),
        }
    }
    let values = if ty == ColType::Number {
        let at = |id: u32| numbers.get(id as usize).copied().unwrap_or(f64::NAN);
        Values::from_numbers(ids.iter().map(|&id| at(id)).collect())
    } else {
        let at = |id: u32| times.get(id as usize).copied().unwrap_or(NO_TIME);
        match Values::from_times(ty, ids.iter().map(|&id| at(id)).collect()) {
            Ok(v) => v,
            Err(_) => return Err(ids),
        }
    };
    Ok((ty, values))
}

#[cfg(test)]
mod tests;
