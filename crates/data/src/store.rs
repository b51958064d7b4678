//! A lossless serde form of a [`Table`], for caches. Numbers are kept as
//! their IEEE-754 bits, so a table read back is bit-for-bit the table
//! written (a decimal round trip through JSON need not be).

use serde::{Deserialize, Serialize};

use crate::model::{Cell, ColType, Column, Table, Value};

/// One cell.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
enum Stored {
    M,
    N(u64),
    T(String),
    D(i32),
    Mo(i32),
    Y(i32),
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
struct StoredColumn {
    name: String,
    ty: ColType,
    values: Vec<Stored>,
}

/// A table in its stored form.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct StoredTable {
    columns: Vec<StoredColumn>,
}

impl From<&Table> for StoredTable {
    fn from(t: &Table) -> Self {
        StoredTable {
            columns: t
                .columns
                .iter()
                .map(|c| StoredColumn {
                    name: c.name.clone(),
                    ty: c.ty,
                    values: c
                        .values
                        .cells()
                        .map(|v| match v {
                            Cell::Missing => Stored::M,
                            Cell::Number(x) => Stored::N(x.to_bits()),
                            Cell::Text(s) => Stored::T(s.to_owned()),
                            Cell::Date(d) => Stored::D(d),
                            Cell::Month(m) => Stored::Mo(m),
                            Cell::Year(y) => Stored::Y(y),
                        })
                        .collect(),
                })
                .collect(),
        }
    }
}

impl From<StoredTable> for Table {
    fn from(t: StoredTable) -> Self {
        Table {
            columns: t
                .columns
                .into_iter()
                .map(|c| Column {
                    name: c.name,
                    ty: c.ty,
                    values: c
                        .values
                        .into_iter()
                        .map(|v| match v {
                            Stored::M => Value::Missing,
                            Stored::N(b) => Value::Number(f64::from_bits(b)),
                            Stored::T(s) => Value::Text(s),
                            Stored::D(d) => Value::Date(d),
                            Stored::Mo(m) => Value::Month(m),
                            Stored::Y(y) => Value::Year(y),
                        })
                        .collect(),
                })
                .collect(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trip_is_exact() {
        let t = Table {
            columns: vec![Column {
                name: "x".into(),
                ty: ColType::Number,
                values: vec![
                    Value::Number(0.1 + 0.2),
                    Value::Missing,
                    Value::Number(-0.0),
                    Value::Text("a\"b".into()),
                    Value::Month(24_300),
                    Value::Date(-3),
                    Value::Year(2020),
                ]
                .into(),
            }],
        };
        let json = serde_json::to_string(&StoredTable::from(&t)).unwrap();
        let back: StoredTable = serde_json::from_str(&json).unwrap();
        let back = Table::from(back);
        assert_eq!(format!("{back:?}"), format!("{t:?}"));
        assert_eq!(back, t);
    }
}
