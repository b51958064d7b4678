//! Parquet files read with the Apache `parquet` crate (its typed column
//! readers; no Arrow) into a [`Table`].
//!
//! Only the columns the story can read are decoded (a projection), row
//! group by row group, each column chunk in batches of a few thousand
//! values (definition levels mark the missing ones). Types, by the
//! column's logical (or converted) type over its physical one:
//!
//! | Parquet | column |
//! | --- | --- |
//! | integers (8 to 64 bits, signed or not), float, double | number |
//! | decimal | number (the decimal's text read as a CSV cell is) |
//! | string (UTF-8), enum | text |
//! | date | date |
//! | timestamp | date: the day of the instant (UTC when the timestamp is adjusted to UTC) |
//! | boolean | `true` / `false`, as a workbook's |
//!
//! Anything else (binary, times of day, intervals, UUIDs, 96-bit
//! timestamps, nested groups, lists and maps) in a column the story reads
//! is an error naming the column; a damaged or cut-short file is an error.
//! Files are read with Snappy or zstd compression or none (the `snap` and
//! `zstd` features); another codec is an error that says which.
//!
//! # Row groups skipped by their statistics
//!
//! When every view over the data item starts with `keep`, the caller
//! passes those first conditions ([`load_parquet_skipping`]); a row group
//! whose statistics (each column's least and greatest value) show that no
//! row can pass any of them is not decoded. The conditions are resolved
//! against the file's columns in file order. Only comparisons of number,
//! date and timestamp columns with literals, and `and`, `or`, `in` over
//! them, are decided; anything else counts as "may pass". The caller
//! skips only when every text column it reads has a declared type, since
//! an undeclared text column's type is inferred from the rows read.

#![allow(clippy::result_large_err)]

use std::fs::File;

use parquet::basic::{ConvertedType, LogicalType, TimeUnit, Type as Physical};
use parquet::column::reader::{ColumnReader, ColumnReaderImpl};
use parquet::data_type::{ByteArray, DataType, Decimal, FixedLenByteArray};
use parquet::file::reader::{FileReader, SerializedFileReader};
use parquet::schema::types::{ColumnDescriptor, Type};

use crate::flat::{read_flat, Flat};
use crate::load::{parse_number, Columns, CsvSpec, LoadError, ReadLimits};
use crate::model::{CmpOp, Expr, Table, Value};
use crate::typed::{finish, finish_flat, Typed, TypedColumn};

mod parts;
pub use parts::{fold_groups_from, Parts};

/// Files read here, by name.
pub fn is_parquet(path: &std::path::Path) -> bool {
    path.extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("parquet"))
}

/// Why a leaf column's type is not read, or `None` when it is.
fn unsupported(t: &Type) -> Option<String> {
    if t.is_group() {
        return Some("a nested group (a struct, list or map)".into());
    }
    let logical = t.get_basic_info().logical_type_ref();
    let converted = t.get_basic_info().converted_type();
    let ok = match (t.get_physical_type(), logical) {
        (_, Some(LogicalType::Decimal(_))) => true,
        (_, Some(LogicalType::String | LogicalType::Enum)) => true,
        (Physical::INT32, Some(LogicalType::Date)) => true,
        (Physical::INT64, Some(LogicalType::Timestamp(t))) => t.unit != TimeUnit::NANOS,
        (Physical::INT32 | Physical::INT64, Some(LogicalType::Integer(_)) | None) => true,
        (Physical::FLOAT | Physical::DOUBLE | Physical::BOOLEAN, None) => true,
        (Physical::FLOAT, Some(LogicalType::Float16)) => true,
        (Physical::BYTE_ARRAY, None) => {
            matches!(converted, ConvertedType::UTF8 | ConvertedType::ENUM)
        }
        _ => false,
    };
    (!ok).then(|| {
        let what = match logical {
            Some(l) => format!("{l:?}"),
            None => format!("{:?}", t.get_physical_type()),
        };
        format!("the Parquet type {what}")
    })
}

/// The text of a decimal: its unscaled integer with the point put in.
fn decimal_text(d: &Decimal) -> Option<String> {
    let bytes = d.data();
    if bytes.is_empty() || bytes.len() > 16 {
        return None;
    }
    let negative = bytes[0] & 0x80 != 0;
    let mut v: i128 = if negative { -1 } else { 0 };
    for b in bytes {
        v = (v << 8) | i128::from(*b);
    }
    let digits = v.unsigned_abs().to_string();
    let scale = usize::try_from(d.scale()).ok()?;
    let padded = format!("{digits:0>width$}", width = scale + 1);
    let (int, frac) = padded.split_at(padded.len() - scale);
    let sign = if v < 0 { "-" } else { "" };
    Some(if scale == 0 {
        format!("{sign}{int}")
    } else {
        format!("{sign}{int}.{frac}")
    })
}

const DAY_MS: i64 = 86_400_000;

fn day(x: i64, per_day: i64) -> Option<i32> {
    i32::try_from(x.div_euclid(per_day)).ok()
}

/// Values decoded from a column chunk at a time (a few thousand, so the
/// buffers stay small whatever the row group's size).
const BATCH: usize = 4096;

/// Why a column chunk stopped being read.
enum Stop {
    Damaged(parquet::errors::ParquetError),
    /// The row (of the row group) whose value has no reading.
    Unreadable(usize),
}

/// The cells of one column chunk appended to `cells`, batch by batch
/// through the typed column reader: `cell` reads a stored value, the
/// definition levels mark the missing ones.
fn read_chunk<T: DataType>(
    mut reader: ColumnReaderImpl<T>,
    max_def: i16,
    cells: &mut Vec<Typed>,
    mut cell: impl FnMut(&T::T) -> Option<Typed>,
) -> Result<(), Stop> {
    let start = cells.len();
    let mut values: Vec<T::T> = Vec::with_capacity(BATCH);
    let mut defs: Vec<i16> = Vec::with_capacity(BATCH);
    loop {
        values.clear();
        defs.clear();
        let (records, _, levels) = reader
            .read_records(BATCH, Some(&mut defs), None, &mut values)
            .map_err(Stop::Damaged)?;
        if records == 0 {
            return Ok(());
        }
        let unread = |cells: &Vec<Typed>| Stop::Unreadable(cells.len() - start);
        if max_def == 0 {
            for v in &values {
                let c = cell(v).ok_or_else(|| unread(cells))?;
                cells.push(c);
            }
        } else {
            let mut stored = values.iter();
            for &d in &defs[..levels] {
                let c = match (d == max_def).then(|| stored.next()).flatten() {
                    Some(v) => cell(v).ok_or_else(|| unread(cells))?,
                    None => Typed::Missing,
                };
                cells.push(c);
            }
        }
    }
}

/// A decimal's cell: its text read as a CSV cell is.
fn decimal_cell(d: &Decimal) -> Option<Typed> {
    Some(Typed::Number(parse_number(&decimal_text(d)?)?))
}

/// A column chunk's cells appended to `cells`, each value read by the
/// column's physical and converted type as the `parquet` crate's record
/// API reads it (integers by their width and sign, dates, timestamps as
/// their day, decimals, UTF-8 texts).
fn read_leaf(
    reader: ColumnReader,
    descr: &ColumnDescriptor,
    cells: &mut Vec<Typed>,
) -> Result<(), Stop> {
    use ConvertedType as C;
    let max_def = descr.max_def_level();
    let converted = descr.converted_type();
    let (precision, scale) = (descr.type_precision(), descr.type_scale());
    match reader {
        ColumnReader::BoolColumnReader(r) => {
            read_chunk(r, max_def, cells, |b| Some(Typed::Bool(*b)))
        }
        ColumnReader::Int32ColumnReader(r) => read_chunk(r, max_def, cells, |&v| {
            let number = |x: f64| Some(Typed::Number(x));
            match converted {
                C::INT_8 => number(f64::from(v as i8)),
                C::INT_16 => number(f64::from(v as i16)),
                C::INT_32 | C::NONE => number(f64::from(v)),
                C::UINT_8 => number(f64::from(v as u8)),
                C::UINT_16 => number(f64::from(v as u16)),
                C::UINT_32 => number(f64::from(v as u32)),
                C::DATE => Some(Typed::Date(v)),
                C::DECIMAL => decimal_cell(&Decimal::from_i32(v, precision, scale)),
                _ => None,
            }
        }),
        ColumnReader::Int64ColumnReader(r) => read_chunk(r, max_def, cells, |&v| match converted {
            C::INT_64 | C::NONE => Some(Typed::Number(v as f64)),
            C::UINT_64 => Some(Typed::Number(v as u64 as f64)),
            C::TIMESTAMP_MILLIS => Some(Typed::Date(day(v, DAY_MS)?)),
            C::TIMESTAMP_MICROS => Some(Typed::Date(day(v, DAY_MS * 1000)?)),
            C::DECIMAL => decimal_cell(&Decimal::from_i64(v, precision, scale)),
            _ => None,
        }),
        ColumnReader::FloatColumnReader(r) => {
            read_chunk(r, max_def, cells, |&x| Some(Typed::Number(f64::from(x))))
        }
        ColumnReader::DoubleColumnReader(r) => {
            read_chunk(r, max_def, cells, |&x| Some(Typed::Number(x)))
        }
        ColumnReader::ByteArrayColumnReader(r) => {
            read_chunk(r, max_def, cells, |v: &ByteArray| match converted {
                C::UTF8 | C::ENUM | C::JSON => {
                    Some(Typed::Text(std::str::from_utf8(v.data()).ok()?.to_owned()))
                }
                C::DECIMAL => decimal_cell(&Decimal::from_bytes(v.clone(), precision, scale)),
                _ => None,
            })
        }
        ColumnReader::FixedLenByteArrayColumnReader(r) => {
            read_chunk(r, max_def, cells, |v: &FixedLenByteArray| match converted {
                C::DECIMAL => decimal_cell(&Decimal::from_bytes((**v).clone(), precision, scale)),
                _ => None,
            })
        }
        ColumnReader::Int96ColumnReader(r) => read_chunk(r, max_def, cells, |_| None),
    }
}

/// The least and greatest value of a column in a row group.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Bounds {
    Number(f64, f64),
    /// Days since 1970-01-01.
    Date(i32, i32),
}

/// A column's bounds from its chunk statistics (`None` when unknown).
fn bounds(t: &Type, stats: Option<&parquet::file::statistics::Statistics>) -> Option<Bounds> {
    use parquet::file::statistics::Statistics as S;
    let logical = t.get_basic_info().logical_type_ref();
    let both = |a: Option<f64>, b: Option<f64>| Some((a?, b?));
    match (stats?, logical) {
        (S::Int32(v), Some(LogicalType::Date)) => Some(Bounds::Date(*v.min_opt()?, *v.max_opt()?)),
        (S::Int64(v), Some(LogicalType::Timestamp(ts))) => {
            let per_day = match ts.unit {
                TimeUnit::MILLIS => DAY_MS,
                TimeUnit::MICROS => DAY_MS * 1000,
                TimeUnit::NANOS => return None,
            };
            Some(Bounds::Date(
                day(*v.min_opt()?, per_day)?,
                day(*v.max_opt()?, per_day)?,
            ))
        }
        (S::Int32(v), Some(LogicalType::Integer(_)) | None) => both(
            v.min_opt().map(|x| f64::from(*x)),
            v.max_opt().map(|x| f64::from(*x)),
        )
        .map(|(a, b)| Bounds::Number(a, b)),
        (S::Int64(v), Some(LogicalType::Integer(_)) | None) => both(
            v.min_opt().map(|x| *x as f64),
            v.max_opt().map(|x| *x as f64),
        )
        .map(|(a, b)| Bounds::Number(a, b)),
        (S::Double(v), None) => both(v.min_opt().copied(), v.max_opt().copied())
            .filter(|(a, b)| !a.is_nan() && !b.is_nan())
            .map(|(a, b)| Bounds::Number(a, b)),
        _ => None,
    }
}

/// May some row whose columns lie within `spans` make `e` true? (See the
/// module docs; `true` when undecided.)
pub fn may_hold(e: &Expr, spans: &[Option<Bounds>]) -> bool {
    match e {
        Expr::And(parts) => parts.iter().all(|p| may_hold(p, spans)),
        Expr::Or(parts) => parts.iter().any(|p| may_hold(p, spans)),
        Expr::In(a, list) => list.iter().any(|v| {
            may_hold(
                &Expr::Cmp(CmpOp::Eq, a.clone(), Box::new(Expr::Lit(v.clone()))),
                spans,
            )
        }),
        Expr::Cmp(op, a, b) => match (a.as_ref(), b.as_ref()) {
            (Expr::Col(i), Expr::Lit(v)) => compare(*op, spans.get(*i).copied().flatten(), v),
            (Expr::Lit(v), Expr::Col(i)) => {
                let flipped = match op {
                    CmpOp::Lt => CmpOp::Gt,
                    CmpOp::Le => CmpOp::Ge,
                    CmpOp::Gt => CmpOp::Lt,
                    CmpOp::Ge => CmpOp::Le,
                    other => *other,
                };
                compare(flipped, spans.get(*i).copied().flatten(), v)
            }
            _ => true,
        },
        _ => true,
    }
}

/// May `column op v` hold for a column within `b`?
fn compare(op: CmpOp, b: Option<Bounds>, v: &Value) -> bool {
    let (lo, hi, x) = match (b, v) {
        (Some(Bounds::Number(lo, hi)), Value::Number(x)) => (lo, hi, *x),
        (Some(Bounds::Date(lo, hi)), Value::Date(x)) => {
            (f64::from(lo), f64::from(hi), f64::from(*x))
        }
        _ => return true,
    };
    match op {
        CmpOp::Eq => lo <= x && x <= hi,
        CmpOp::Ne => !(lo == x && hi == x),
        CmpOp::Lt => lo < x,
        CmpOp::Le => lo <= x,
        CmpOp::Gt => hi > x,
        CmpOp::Ge => hi >= x,
    }
}

/// Read a Parquet file already opened (and checked) for `spec.path`.
pub fn load_parquet(
    spec: &CsvSpec,
    file: &File,
    columns: &Columns,
    limits: &ReadLimits,
) -> Result<Table, LoadError> {
    load_parquet_skipping(spec, file, columns, limits, &[]).map(|(t, _)| t)
}

/// The column types the conditions of [`load_parquet_skipping`] are
/// resolved against, in file order: numbers, dates (and timestamps) and
/// texts by their Parquet types; `None` for a column of another type.
pub fn column_types(file: &File) -> Option<Vec<(String, Option<crate::model::ColType>)>> {
    use crate::model::ColType;
    let reader = SerializedFileReader::new(file.try_clone().ok()?).ok()?;
    let schema = reader
        .metadata()
        .file_metadata()
        .schema_descr()
        .root_schema();
    Some(
        schema
            .get_fields()
            .iter()
            .map(|f| {
                let ty = if unsupported(f).is_some() {
                    None
                } else {
                    match (f.get_physical_type(), f.get_basic_info().logical_type_ref()) {
                        (_, Some(LogicalType::Date | LogicalType::Timestamp(_))) => {
                            Some(ColType::Date)
                        }
                        (_, Some(LogicalType::String | LogicalType::Enum)) => Some(ColType::Text),
                        (Physical::BYTE_ARRAY | Physical::BOOLEAN, _) => Some(ColType::Text),
                        _ => Some(ColType::Number),
                    }
                };
                (f.name().to_string(), ty)
            })
            .collect(),
    )
}

/// A Parquet file opened for the columns a story reads.
struct Opened {
    reader: SerializedFileReader<File>,
    /// The columns decoded (the projection): each one's place among the
    /// file's columns and its leaf column in the schema.
    picked: Vec<(usize, usize)>,
    /// Every column's name and whether it is decoded, in file order.
    names: Vec<(String, bool)>,
    /// No nested column: statistics line up with the fields.
    flat: bool,
}

/// A column chunk that holds another number of values than its row group
/// has rows: the file is damaged.
fn short_column(name: &str, column: &str, got: usize, rows: usize) -> LoadError {
    let why = format!("column `{column}` holds {got} of the row group's {rows} rows");
    damaged(name, &why)
}

fn damaged(name: &str, e: &dyn std::fmt::Display) -> LoadError {
    let text = e.to_string();
    if let Some(codec) = text.strip_prefix("Parquet error: Disabled feature at compile time: ") {
        // a sound file in a compression this build does not read
        return LoadError::story(
            "data-file",
            format!("cannot read Parquet file `{name}`: it is compressed with {codec}, which crescendo does not read"),
            Some("write it again with Snappy or zstd compression (or none), or export the data as CSV"),
        );
    }
    LoadError::story(
        "data-file",
        format!("cannot read Parquet file `{name}`: it is damaged, cut short or not a Parquet file ({e})"),
        Some("write the file again, or export the data as CSV"),
    )
}

impl Opened {
    fn new(spec: &CsvSpec, file: &File, columns: &Columns) -> Result<Opened, LoadError> {
        let name = &spec.display_name;
        let handle = file.try_clone().map_err(|e| damaged(name, &e))?;
        let reader = SerializedFileReader::new(handle).map_err(|e| damaged(name, &e))?;
        let schema = reader
            .metadata()
            .file_metadata()
            .schema_descr()
            .root_schema()
            .clone();
        let descr = reader.metadata().file_metadata().schema_descr_ptr();
        let mut names = Vec::new();
        let mut picked = Vec::new();
        for (k, field) in schema.get_fields().iter().enumerate() {
            let title = field.name().to_string();
            let keep = columns.keeps(&title) || spec.declared.iter().any(|(n, _)| *n == title);
            if keep {
                if let Some(why) = unsupported(field) {
                    return Err(LoadError::story(
                        "data-file",
                        format!("column `{title}` of Parquet file `{name}` is {why}, which crescendo does not read"),
                        Some("columns are read as numbers, texts, dates, timestamps (as their day) and true/false; flatten or convert this column, or leave it unused"),
                    ));
                }
                // a kept column is a leaf (groups are refused above)
                let leaf = (0..descr.num_columns()).find(|&i| descr.get_column_root_idx(i) == k);
                picked.push((
                    k,
                    leaf.ok_or_else(|| damaged(name, &"a column has no leaf"))?,
                ));
            }
            names.push((title, keep));
        }
        let flat = schema.get_fields().iter().all(|f| !f.is_group());
        Ok(Opened {
            reader,
            picked,
            names,
            flat,
        })
    }

    /// Empty columns, one per file column.
    fn columns(&self) -> Vec<TypedColumn> {
        self.names
            .iter()
            .map(|(name, keep)| TypedColumn {
                name: name.clone(),
                keep: *keep,
                cells: Vec::new(),
            })
            .collect()
    }

    /// Can no row of group `g` make any of `keeps` true (by its statistics)?
    fn skips(&self, name: &str, g: usize, keeps: &[Expr]) -> Result<bool, LoadError> {
        if !self.flat || keeps.is_empty() {
            return Ok(false);
        }
        let group = self
            .reader
            .get_row_group(g)
            .map_err(|e| damaged(name, &e))?;
        let meta = group.metadata();
        let schema = self
            .reader
            .metadata()
            .file_metadata()
            .schema_descr()
            .root_schema();
        let spans: Vec<Option<Bounds>> = schema
            .get_fields()
            .iter()
            .enumerate()
            .map(|(k, f)| bounds(f, meta.column(k).statistics()))
            .collect();
        Ok(!keeps.iter().any(|e| may_hold(e, &spans)))
    }

    /// The rows of group `g`: its kept columns decoded into `cols`,
    /// column chunk by column chunk; returns the number of rows. With
    /// `flats` (one per column), a chunk that can be is decoded flat into
    /// it instead (see [`crate::flat`]).
    fn decode(
        &self,
        (name, limits): (&str, &ReadLimits),
        g: usize,
        cols: &mut [TypedColumn],
        mut flats: Option<&mut [Option<Flat>]>,
    ) -> Result<usize, LoadError> {
        let group = self
            .reader
            .get_row_group(g)
            .map_err(|e| damaged(name, &e))?;
        let n = usize::try_from(group.metadata().num_rows()).unwrap_or(0);
        let schema = self.reader.metadata().file_metadata().schema_descr_ptr();
        for &(j, leaf) in &self.picked {
            if let Some(slot) = flats.as_deref_mut().and_then(|f| f.get_mut(j)) {
                let reader = group
                    .get_column_reader(leaf)
                    .map_err(|e| damaged(name, &e))?;
                let flat =
                    read_flat(reader, &schema.column(leaf)).map_err(|e| damaged(name, &e))?;
                if let Some(flat) = flat {
                    if flat.len() != n {
                        return Err(short_column(name, &cols[j].name, flat.len(), n));
                    }
                    if flat.too_long(limits.text) {
                        return Err(too_long(name, &cols[j].name, limits));
                    }
                    *slot = Some(flat);
                    continue;
                }
            }
            let reader = group
                .get_column_reader(leaf)
                .map_err(|e| damaged(name, &e))?;
            let cells = &mut cols[j].cells;
            let start = cells.len();
            cells.reserve(n);
            match read_leaf(reader, &schema.column(leaf), cells) {
                Ok(()) => {}
                Err(Stop::Damaged(e)) => return Err(damaged(name, &e)),
                Err(Stop::Unreadable(i)) => {
                    return Err(LoadError::story(
                        "bad-value",
                        format!(
                            "column `{}` of Parquet file `{name}` holds a value crescendo cannot read in row group {}, row {}",
                            cols[j].name,
                            g + 1,
                            i + 1
                        ),
                        None,
                    ))
                }
            }
            let cells = &cols[j].cells[start..];
            if cells.len() != n {
                return Err(short_column(name, &cols[j].name, cells.len(), n));
            }
            let long = |c: &Typed| matches!(c, Typed::Text(s) if s.len() > limits.text && s.chars().count() > limits.text);
            if cells.iter().any(long) {
                return Err(too_long(name, &cols[j].name, limits));
            }
        }
        Ok(n)
    }
}

fn too_long(name: &str, column: &str, limits: &ReadLimits) -> LoadError {
    LoadError::story(
        "too-long",
        format!(
            "column `{column}` of `{name}`: a text is longer than {} characters",
            limits.text
        ),
        Some("raise `--max-text`"),
    )
}

/// Where cell `(column j, row r)` is, for messages; `starts`: the first
/// row (over the rows read) of each row group read, and the group.
fn place(
    name: &str,
    names: &[(String, bool)],
    starts: &[(usize, usize)],
    j: usize,
    r: usize,
) -> String {
    let k = starts.partition_point(|&(first, _)| first <= r);
    let (first, g) = k.checked_sub(1).map_or((0, 0), |k| starts[k]);
    format!(
        "Parquet file `{name}`, column `{}`, row {} (row {} of row group {})",
        names.get(j).map_or("", |n| n.0.as_str()),
        r + 1,
        r - first + 1,
        g + 1
    )
}

/// [`load_parquet`], skipping the row groups in which no row can make any
/// of `keeps` true (see the module docs; no skipping when `keeps` is
/// empty). Returns the table and the number of row groups skipped.
pub fn load_parquet_skipping(
    spec: &CsvSpec,
    file: &File,
    columns: &Columns,
    limits: &ReadLimits,
    keeps: &[Expr],
) -> Result<(Table, usize), LoadError> {
    let name = &spec.display_name;
    let opened = Opened::new(spec, file, columns)?;
    let mut cols = opened.columns();
    let mut rows = 0usize;
    let mut starts: Vec<(usize, usize)> = Vec::new();
    let mut skipped = 0;
    for g in 0..opened.reader.num_row_groups() {
        if opened.skips(name, g, keeps)? {
            skipped += 1;
            continue;
        }
        let group = opened
            .reader
            .get_row_group(g)
            .map_err(|e| damaged(name, &e))?;
        let n = usize::try_from(group.metadata().num_rows()).unwrap_or(0);
        if limits.rows.is_some_and(|max| rows + n > max) {
            return Err(LoadError::story(
                "too-many-rows",
                format!(
                    "Parquet file `{name}` has more than {} rows",
                    limits.rows.unwrap_or(0)
                ),
                Some("raise `--max-rows`"),
            ));
        }
        starts.push((rows, g));
        rows += opened.decode((name.as_str(), limits), g, &mut cols, None)?;
    }
    let locate = |j: usize, r: usize| place(name, &opened.names, &starts, j, r);
    finish(spec, cols, rows, &locate).map(|t| (t, skipped))
}

/// What [`each_group`] did.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Groups {
    /// Row groups decoded and handed on.
    pub read: usize,
    /// Row groups skipped by their statistics.
    pub skipped: usize,
    /// The callback asked to stop.
    pub stopped: bool,
}

/// The file one row group at a time, each typed as [`load_parquet`] types
/// a whole file, handed to `each` (which returns `false` to stop); row
/// groups `keeps` rule out are skipped as in [`load_parquet_skipping`].
/// Empty groups are passed over. An error is the first problem met; the
/// whole load reports the same problems with rows counted over the file.
///
/// With two cores or more, a second thread decodes the next row group
/// while `each` takes the one before, so at most three groups' rows are
/// held at a time; the groups reach `each` in file order either way.
pub fn each_group(
    spec: &CsvSpec,
    file: &File,
    columns: &Columns,
    limits: &ReadLimits,
    keeps: &[Expr],
    each: &mut dyn FnMut(Table) -> bool,
) -> Result<Groups, LoadError> {
    each_group_from(spec, file, (columns, limits, keeps), 0, each)
}

/// The first row group that holds rows, read on this thread alone (no
/// group after it is decoded): its number, its table, and how many groups
/// before it were skipped by their statistics. `None`: no group holds rows.
/// A caller that needs the column types before it can take the groups
/// reads this one, then the rest with [`each_group_from`] from the next
/// number, so no group is decoded twice.
pub fn first_group(
    spec: &CsvSpec,
    file: &File,
    (columns, limits, keeps): (&Columns, &ReadLimits, &[Expr]),
) -> Result<Option<(usize, Table, usize)>, LoadError> {
    let opened = Opened::new(spec, file, columns)?;
    let mut skipped = 0;
    for g in 0..opened.reader.num_row_groups() {
        match read_group(&opened, (spec, limits), keeps, g)? {
            Read::Skipped => skipped += 1,
            Read::Empty => {}
            Read::Rows(table) => return Ok(Some((g, table, skipped))),
        }
    }
    Ok(None)
}

/// [`each_group`] from row group number `from` on.
pub fn each_group_from(
    spec: &CsvSpec,
    file: &File,
    (columns, limits, keeps): (&Columns, &ReadLimits, &[Expr]),
    from: usize,
    each: &mut dyn FnMut(Table) -> bool,
) -> Result<Groups, LoadError> {
    let opened = Opened::new(spec, file, columns)?;
    let mut done = Groups {
        read: 0,
        skipped: 0,
        stopped: false,
    };
    let groups = opened.reader.num_row_groups();
    let read = |g: usize| read_group(&opened, (spec, limits), keeps, g);
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    if groups < from + 2 || cores < 2 {
        for g in from..groups {
            if !hand_on(read(g)?, &mut done, each) {
                break;
            }
        }
        return Ok(done);
    }
    std::thread::scope(|s| {
        let (tx, rx) = std::sync::mpsc::sync_channel(1);
        s.spawn(move || {
            for g in from..groups {
                let r = read(g);
                let failed = r.is_err();
                // a closed channel: `each` stopped, or a problem was met
                if tx.send(r).is_err() || failed {
                    break;
                }
            }
        });
        for r in rx {
            if !hand_on(r?, &mut done, each) {
                break;
            }
        }
        Ok(done)
    })
}

/// A row group as [`each_group`] reads it.
enum Read {
    Skipped,
    Empty,
    Rows(Table),
}

/// Row group `g` skipped by its statistics, empty, or decoded and typed.
fn read_group(
    opened: &Opened,
    (spec, limits): (&CsvSpec, &ReadLimits),
    keeps: &[Expr],
    g: usize,
) -> Result<Read, LoadError> {
    let name = &spec.display_name;
    if opened.skips(name, g, keeps)? {
        return Ok(Read::Skipped);
    }
    let mut cols = opened.columns();
    let mut flats: Vec<Option<Flat>> = cols.iter().map(|_| None).collect();
    let rows = opened.decode((name.as_str(), limits), g, &mut cols, Some(&mut flats))?;
    if rows == 0 {
        return Ok(Read::Empty);
    }
    let starts = [(0, g)];
    let locate = |j: usize, r: usize| place(name, &opened.names, &starts, j, r);
    finish_flat(spec, cols, flats, rows, &locate).map(Read::Rows)
}

/// Count a row group read and hand its rows to `each`; `false`: stop.
fn hand_on(read: Read, done: &mut Groups, each: &mut dyn FnMut(Table) -> bool) -> bool {
    match read {
        Read::Skipped => done.skipped += 1,
        Read::Empty => {}
        Read::Rows(table) => {
            done.read += 1;
            if !each(table) {
                done.stopped = true;
                return false;
            }
        }
    }
    true
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn statistics_decide_only_what_they_can() {
        let spans = [
            Some(Bounds::Date(100, 200)),
            Some(Bounds::Number(-5.0, 5.0)),
            None,
        ];
        let col = |i| Box::new(Expr::Col(i));
        let lit = |v| Box::new(Expr::Lit(v));
        let date_ge = |d| Expr::Cmp(CmpOp::Ge, col(0), lit(Value::Date(d)));
        assert!(may_hold(&date_ge(200), &spans));
        assert!(!may_hold(&date_ge(201), &spans));
        let n_lt = |x| Expr::Cmp(CmpOp::Lt, col(1), lit(Value::Number(x)));
        assert!(!may_hold(&n_lt(-5.0), &spans));
        assert!(may_hold(&n_lt(-4.9), &spans));
        // a literal on the left: 300 <= day is day >= 300
        let flipped = Expr::Cmp(CmpOp::Le, lit(Value::Date(300)), col(0));
        assert!(!may_hold(&flipped, &spans));
        assert!(!may_hold(
            &Expr::And(vec![date_ge(150), n_lt(-6.0)]),
            &spans
        ));
        assert!(may_hold(&Expr::Or(vec![date_ge(250), n_lt(0.0)]), &spans));
        let inn = Expr::In(col(1), vec![Value::Number(9.0), Value::Number(10.0)]);
        assert!(!may_hold(&inn, &spans));
        // unknown bounds, text, negation: undecided, so kept
        assert!(may_hold(
            &Expr::Cmp(CmpOp::Eq, col(2), lit(Value::Number(1.0))),
            &spans
        ));
        assert!(may_hold(&Expr::Not(Box::new(date_ge(0))), &spans));
    }

    #[test]
    fn decimals_read_as_their_text() {
        let d = |v: i32, scale: i32| Decimal::from_i32(v, 9, scale);
        assert_eq!(decimal_text(&d(12345, 2)).as_deref(), Some("123.45"));
        assert_eq!(decimal_text(&d(-5, 3)).as_deref(), Some("-0.005"));
        assert_eq!(decimal_text(&d(7, 0)).as_deref(), Some("7"));
        assert_eq!(day(-1, DAY_MS), Some(-1));
        assert_eq!(day(DAY_MS * 3 + 5, DAY_MS), Some(3));
    }
}
