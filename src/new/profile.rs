//! Profiling a CSV file for `crescendo new`: each column's type, distinct
//! values, missing cells and range, and the summary printed on the terminal.

use std::fmt::Write as _;
use std::path::Path;

use crescendo_data::load::{load_csv, CsvSpec, LoadError};
use crescendo_data::{ColType, Table, Value};
use crescendo_diag::Diagnostic;

use super::roles::{role_of, ColumnRole};
use super::shape::{why, Shape};

/// What one column holds.
#[derive(Clone, Debug)]
pub struct ColumnProfile {
    pub name: String,
    pub ty: ColType,
    pub distinct: usize,
    pub missing: usize,
    /// Smallest and largest value as printed (numbers and times).
    pub range: Option<(String, String)>,
    /// Longest text value, in characters.
    pub longest: usize,
    /// The first text in the column (empty for other columns).
    pub first: String,
    /// Usable as a name in a story.
    pub nameable: bool,
    /// A measure (amount or rate), a code, a part of a time, or other.
    pub role: ColumnRole,
    /// For a text column: the time columns that, with it, name each row
    /// once (a long file: one row per time and per series or indicator).
    pub identifies_with: Vec<String>,
}

/// The profile of a file.
#[derive(Clone, Debug)]
pub struct Profile {
    pub file: String,
    pub rows: usize,
    pub columns: Vec<ColumnProfile>,
}

/// Load and profile a CSV file.
pub fn profile_file(data: &Path) -> Result<(Table, Profile), Diagnostic> {
    let display = data.display().to_string();
    let spec = CsvSpec {
        path: data.to_path_buf(),
        display_name: display.clone(),
        declared: Vec::new(),
        missing: vec![String::new(), "NA".into()],
        numbers: Default::default(),
    };
    let mut table = load_csv(&spec).map_err(|e| match e {
        LoadError::Csv(d) => d,
        // the first problem (a starter story is written from a clean file)
        LoadError::Many(mut ds) => ds.remove(0),
        LoadError::Story {
            code,
            message,
            help,
            ..
        } => {
            let mut d = Diagnostic::error(code, message);
            d.help = help;
            d
        }
    })?;
    // The loader never infers years: a whole-number column named like a
    // year becomes one.
    for c in &mut table.columns {
        if c.ty == ColType::Number && looks_like_year(c.name.as_str(), &c.values.to_vec()) {
            c.ty = ColType::Year;
            c.values = c
                .values
                .iter()
                .map(|v| match v {
                    Value::Number(x) => Value::Year(x as i32),
                    other => other,
                })
                .collect();
        }
    }
    let rows = table.columns.first().map_or(0, |c| c.values.len());
    let columns = table
        .columns
        .iter()
        .enumerate()
        .map(|(i, c)| {
            let mut seen = std::collections::BTreeSet::new();
            let mut missing = 0;
            let mut longest = 0;
            let mut first: Option<String> = None;
            let mut lo: Option<f64> = None;
            let mut hi: Option<f64> = None;
            for v in &c.values {
                let key = match v {
                    Value::Missing => {
                        missing += 1;
                        continue;
                    }
                    Value::Text(t) => {
                        longest = longest.max(t.chars().count());
                        first.get_or_insert_with(|| t.clone());
                        t.clone()
                    }
                    other => {
                        let x = order_key(&other);
                        lo = Some(lo.map_or(x, |l: f64| l.min(x)));
                        hi = Some(hi.map_or(x, |h: f64| h.max(x)));
                        format!("{x:?}")
                    }
                };
                seen.insert(key);
            }
            let range = match (lo, hi) {
                (Some(l), Some(h)) => Some((show(c.ty, l), show(c.ty, h))),
                _ => None,
            };
            ColumnProfile {
                name: c.name.clone(),
                ty: c.ty,
                distinct: seen.len(),
                missing,
                range,
                longest,
                first: first.unwrap_or_default(),
                nameable: is_name(&c.name),
                role: role_of(&table, i),
                identifies_with: identifies_with(&table, i),
            }
        })
        .collect();
    Ok((
        table,
        Profile {
            file: data
                .file_name()
                .map_or(display, |n| n.to_string_lossy().into_owned()),
            rows,
            columns,
        },
    ))
}

/// The time columns that, with text column `i`, name each row once.
fn identifies_with(table: &Table, i: usize) -> Vec<String> {
    let Some(c) = table.columns.get(i).filter(|c| c.ty == ColType::Text) else {
        return Vec::new();
    };
    table
        .columns
        .iter()
        .filter(|t| t.ty.is_time())
        .filter(|t| {
            let mut seen = std::collections::BTreeSet::new();
            t.values
                .iter()
                .zip(c.values.iter())
                .all(|(a, b)| seen.insert((format!("{a:?}"), format!("{b:?}"))))
        })
        .map(|t| t.name.clone())
        .collect()
}

fn looks_like_year(name: &str, values: &[Value]) -> bool {
    let n = name.to_ascii_lowercase();
    let named =
        n == "year" || n == "yr" || n == "fy" || n.ends_with("_year") || n.starts_with("year_");
    named
        && values.iter().any(|v| !matches!(v, Value::Missing))
        && values.iter().all(|v| match v {
            Value::Number(x) => x.fract() == 0.0 && (1000.0..3000.0).contains(x),
            Value::Missing => true,
            _ => false,
        })
}

fn order_key(v: &Value) -> f64 {
    match v {
        Value::Number(x) => *x,
        Value::Date(d) => f64::from(*d),
        Value::Month(m) => f64::from(*m),
        Value::Year(y) => f64::from(*y),
        Value::Missing | Value::Text(_) => 0.0,
    }
}

fn show(ty: ColType, x: f64) -> String {
    use crescendo_data::time;
    match ty {
        ColType::Month => time::month_iso(x as i32),
        ColType::Date => time::date_iso(x as i32),
        ColType::Year => format!("{}", x as i64),
        _ => crescendo_data::format::number(x, None),
    }
}

/// A name the story language accepts (and not a reserved word).
pub(super) fn is_name(s: &str) -> bool {
    let mut chars = s.chars();
    let first_ok = chars
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic() || c == '_');
    first_ok
        && s.chars().all(|c| c.is_ascii_alphanumeric() || c == '_')
        && !matches!(s, "and" | "or" | "not" | "in")
}

/// The summary printed on the terminal.
pub fn summary(p: &Profile, shape: Option<&Shape>) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "{}: {} row{}, {} column{}",
        p.file,
        p.rows,
        if p.rows == 1 { "" } else { "s" },
        p.columns.len(),
        if p.columns.len() == 1 { "" } else { "s" }
    );
    let width = p
        .columns
        .iter()
        .map(|c| c.name.chars().count())
        .max()
        .unwrap_or(6)
        .max(6);
    let _ = writeln!(
        s,
        "  {:width$}  {:6}  {:>8}  {:>7}  range",
        "column", "type", "distinct", "missing"
    );
    for c in &p.columns {
        let range = match &c.range {
            Some((lo, hi)) => format!("{lo} to {hi}"),
            None if c.ty == ColType::Text => format!("names up to {} characters", c.longest),
            None => String::new(),
        };
        let note = if c.nameable {
            ""
        } else {
            "  (not a plain name: left out)"
        };
        let _ = writeln!(
            s,
            "  {:width$}  {:6}  {:>8}  {:>7}  {range}{note}",
            c.name,
            c.ty.name(),
            c.distinct,
            c.missing
        );
    }
    // the names of the columns `pick` takes, or "none"
    let names = |pick: &dyn Fn(&ColumnProfile) -> bool| {
        let v: Vec<&str> = (p.columns.iter().filter(|c| pick(c)))
            .map(|c| c.name.as_str())
            .collect();
        if v.is_empty() {
            "none".to_string()
        } else {
            v.join(", ")
        }
    };
    let _ = writeln!(s, "time columns: {}", names(&|c| c.ty.is_time()));
    let roles = |r: &dyn Fn(ColumnRole) -> bool| names(&|c| c.ty == ColType::Number && r(c.role));
    let _ = writeln!(
        s,
        "amounts (summed): {}",
        roles(&|r| r == ColumnRole::Amount)
    );
    let _ = writeln!(
        s,
        "rates and levels (averaged, never summed): {}",
        roles(&|r| r == ColumnRole::Rate)
    );
    let _ = writeln!(
        s,
        "codes and identifiers (not measures): {}",
        roles(&|r| r == ColumnRole::Code)
    );
    let _ = writeln!(
        s,
        "parts of a time (never measures): {}",
        roles(&|r| matches!(r, ColumnRole::Quarter | ColumnRole::MonthNumber))
    );
    let _ = writeln!(s, "categories: {}", names(&|c| c.ty == ColType::Text));
    if let Some(shape) = shape {
        let _ = writeln!(s, "chart: {}", why(shape));
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_the_language_accepts() {
        assert!(is_name("weekly_hours"));
        assert!(!is_name("weekly hours"));
        assert!(!is_name("2024"));
        assert!(!is_name("in"));
    }
}
