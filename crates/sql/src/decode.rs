//! A prefix query's text cells back into a typed table, with the local
//! engine's final arithmetic (mean = sum / count, median = the middle value
//! or the two middle values halved and added).

use crescendo_data::{time, ColType, Column, Table, Value};

use crate::print::Output;

/// A number as the engine keeps it: finite, else missing.
fn finite(x: f64) -> Value {
    if x.is_finite() {
        Value::Number(x)
    } else {
        Value::Missing
    }
}

fn number(cell: Option<&str>, name: &str) -> Result<Option<f64>, String> {
    match cell {
        None => Ok(None),
        Some(s) => match s.trim().parse::<f64>() {
            Ok(x) => Ok(Some(x)),
            Err(_) => Err(format!(
                "column `{name}` holds `{s}`, which is not a number"
            )),
        },
    }
}

/// One cell as a value of type `ty`.
pub fn value(cell: Option<&str>, ty: ColType, name: &str) -> Result<Value, String> {
    let Some(s) = cell else {
        return Ok(Value::Missing);
    };
    let bad = |what: &str| format!("column `{name}` holds `{s}`, which is not {what}");
    Ok(match ty {
        ColType::Text => Value::Text(s.to_string()),
        ColType::Number => match number(Some(s), name)? {
            Some(x) => finite(x),
            None => Value::Missing,
        },
        ColType::Date => {
            Value::Date(time::parse_date(s).ok_or_else(|| bad("a date (YYYY-MM-DD)"))?)
        }
        ColType::Month => {
            Value::Month(time::parse_month(s).ok_or_else(|| bad("a month (YYYY-MM)"))?)
        }
        ColType::Year => Value::Year(time::parse_year(s).ok_or_else(|| bad("a year (YYYY)"))?),
    })
}

/// Decode `rows` (cells in the query's column order) by `outputs`.
pub fn table(rows: &[Vec<Option<String>>], outputs: &[Output]) -> Result<Table, String> {
    let mut columns: Vec<Column> = outputs
        .iter()
        .map(|o| match o {
            Output::Value { name, ty } => Column {
                name: name.clone(),
                ty: *ty,
                values: crescendo_data::Values::new(),
            },
            Output::Mean { name } | Output::Median { name } => Column {
                name: name.clone(),
                ty: ColType::Number,
                values: crescendo_data::Values::new(),
            },
        })
        .collect();
    for row in rows {
        let mut at = 0;
        for (o, col) in outputs.iter().zip(columns.iter_mut()) {
            let cell = |k: usize| row.get(at + k).and_then(|c| c.as_deref());
            let v = match o {
                Output::Value { name, ty } => value(cell(0), *ty, name)?,
                Output::Mean { name } => {
                    let sum = number(cell(0), name)?;
                    let n = number(cell(1), name)?.unwrap_or(0.0);
                    match sum {
                        Some(s) if n > 0.0 => finite(s / n),
                        _ => Value::Missing,
                    }
                }
                Output::Median { name } => {
                    let lo = number(cell(0), name)?;
                    let hi = number(cell(1), name)?;
                    let n = number(cell(2), name)?.unwrap_or(0.0);
                    match (lo, hi) {
                        (Some(lo), _) if n % 2.0 == 1.0 => finite(lo),
                        (Some(lo), Some(hi)) => finite(lo / 2.0 + hi / 2.0),
                        _ => Value::Missing,
                    }
                }
            };
            col.values.push(v);
            at += o.width();
        }
    }
    Ok(Table { columns })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn s(x: &str) -> Option<String> {
        Some(x.to_string())
    }

    #[test]
    fn cells_decode_with_the_engine_arithmetic() {
        let outputs = vec![
            Output::Value {
                name: "month".into(),
                ty: ColType::Month,
            },
            Output::Mean { name: "m".into() },
            Output::Median { name: "med".into() },
            Output::Value {
                name: "y".into(),
                ty: ColType::Year,
            },
        ];
        let rows = vec![
            vec![
                s("2024-03"),
                s("10.5"),
                s("4"),
                s("1"),
                s("4"),
                s("4"),
                None,
            ],
            vec![None, None, s("0"), s("7"), s("7"), s("3"), s("2024")],
        ];
        let t = table(&rows, &outputs).unwrap();
        assert_eq!(
            t.columns[0].values,
            vec![Value::Month(2024 * 12 + 2), Value::Missing]
        );
        assert_eq!(
            t.columns[1].values,
            vec![Value::Number(2.625), Value::Missing]
        );
        // Even count: 1/2 + 4/2; odd count: the middle value.
        assert_eq!(
            t.columns[2].values,
            vec![Value::Number(2.5), Value::Number(7.0)]
        );
        assert_eq!(t.columns[3].values, vec![Value::Missing, Value::Year(2024)]);
        let e = table(&[vec![s("2024-3")]], &outputs[..1]).unwrap_err();
        assert!(e.contains("`month`") && e.contains("`2024-3`"), "{e}");
    }
}
