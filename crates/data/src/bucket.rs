//! Time buckets of row expressions: the month, quarter, year (calendar or
//! fiscal), week and weekday a date (or a month) falls in.
//!
//! | bucket | of | gives |
//! | --- | --- | --- |
//! | `Month` | date | its month |
//! | `Year` | date, month | its calendar year |
//! | `Quarter` | date, month | text `2025 Q3` |
//! | `FiscalYear(f)` | date, month | text `FY2025` (named by the calendar year it ends in, with the story's prefix) |
//! | `FiscalQuarter(f)` | date, month | text `FY2025 Q1` (with the story's names) |
//! | `WeekStart` | date | the Monday that starts its ISO 8601 week (a date) |
//! | `Week` | date | text `2025-W07`: its ISO 8601 week-numbering year and week |
//! | `Weekday` | date | text `Mon` … `Sun` |
//!
//! The labels are the ones the axis ticks of quarters and fiscal years use
//! (`crate::locale::Fiscal`). ISO 8601 weeks start on Monday; week 1 is the
//! week holding the year's first Thursday (ISO 8601-1:2019, 5.2.4.2), so
//! 2021-01-03 is in `2020-W53` and 2024-12-30 in `2025-W01`.

use crate::locale::Fiscal;
use crate::model::{Cell, ColType, Expr, Table, Value};
use crate::time::{civil_from_days, days_from_civil, month_of_year, month_year};

/// A time bucket (see the module docs).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Bucket {
    Month,
    Year,
    Quarter,
    /// The fiscal year (its first month and its names).
    FiscalYear(Fiscal),
    FiscalQuarter(Fiscal),
    WeekStart,
    Week,
    Weekday,
}

const WEEKDAYS: [&str; 7] = ["Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun"];

impl Bucket {
    /// The type of the bucket of a value of type `of`; `None` when it takes
    /// no value of that type.
    pub fn result(self, of: ColType) -> Option<ColType> {
        let from_month = matches!(of, ColType::Date | ColType::Month);
        match self {
            Bucket::Month if of == ColType::Date => Some(ColType::Month),
            Bucket::Year if from_month => Some(ColType::Year),
            Bucket::Quarter | Bucket::FiscalYear(_) | Bucket::FiscalQuarter(_) if from_month => {
                Some(ColType::Text)
            }
            Bucket::WeekStart if of == ColType::Date => Some(ColType::Date),
            Bucket::Week | Bucket::Weekday if of == ColType::Date => Some(ColType::Text),
            _ => None,
        }
    }

    /// The bucket of a cell; missing for a missing cell or one of a type
    /// the bucket does not take.
    pub fn apply(self, c: Cell<'_>) -> Value {
        let (y, m, day) = match c {
            Cell::Date(d) => {
                let (y, m, _) = civil_from_days(d);
                (y, m, Some(d))
            }
            Cell::Month(i) => (month_year(i), month_of_year(i), None),
            _ => return Value::Missing,
        };
        match (self, day) {
            (Bucket::Month, Some(_)) => Value::Month(y * 12 + m as i32 - 1),
            (Bucket::Year, _) => Value::Year(y),
            (Bucket::Quarter, _) => Value::Text(Fiscal::default().quarter_label(y, m)),
            (Bucket::FiscalYear(f), _) => Value::Text(f.year_label(y, m)),
            (Bucket::FiscalQuarter(f), _) => Value::Text(f.quarter_label(y, m)),
            (Bucket::WeekStart, Some(d)) => Value::Date(d - weekday(d)),
            (Bucket::Week, Some(d)) => {
                let (wy, w) = iso_week(d);
                Value::Text(format!("{wy:04}-W{w:02}"))
            }
            (Bucket::Weekday, Some(d)) => Value::Text(WEEKDAYS[weekday(d) as usize].to_string()),
            _ => Value::Missing,
        }
    }
}

/// A year and a quarter (two columns of a table that counts time in
/// quarters) as one time: the month index of the quarter's first month.
/// The year is a year, or a whole number from 1 to 9999; the quarter a
/// number 1 to 4, or a text `1` to `4` or `Q1` to `Q4` (any case, spaces
/// around it ignored). Anything else gives none (a missing value).
pub fn year_quarter(year: Cell<'_>, quarter: Cell<'_>) -> Option<i32> {
    let (y, q) = (quarter_year(year)?, quarter_number(quarter)?);
    Some(y * 12 + (q - 1) * 3)
}

/// The year of [`year_quarter`]: a year, or a whole number 1 to 9999.
pub fn quarter_year(year: Cell<'_>) -> Option<i32> {
    match year {
        Cell::Year(y) => Some(y),
        Cell::Number(x) if x.fract() == 0.0 && (1.0..=9999.0).contains(&x) => Some(x as i32),
        _ => None,
    }
}

/// The quarter of [`year_quarter`], 1 to 4: a number, or a text `1` to
/// `4` or `Q1` to `Q4` (any case, spaces around it ignored).
pub fn quarter_number(quarter: Cell<'_>) -> Option<i32> {
    match quarter {
        Cell::Number(x) if [1.0, 2.0, 3.0, 4.0].contains(&x) => Some(x as i32),
        Cell::Text(t) => {
            let t = t.trim_matches(' ');
            let t = t.strip_prefix(['Q', 'q']).unwrap_or(t);
            match t {
                "1" | "2" | "3" | "4" => t.parse().ok(),
                _ => None,
            }
        }
        _ => None,
    }
}

/// A row whose year and quarter cells are both present but make no quarter
/// ([`year_quarter`] gives none): the row, which cell is at fault (the
/// year's when both are), and that cell.
#[derive(Clone, Debug, PartialEq)]
pub struct BadQuarter {
    /// The row's index in the table (0-based).
    pub row: usize,
    /// The year's cell is at fault (else the quarter's).
    pub year: bool,
    /// The cell at fault.
    pub cell: Value,
}

/// Checks one row's cells for [`year_quarter`]: `None` when they make a
/// quarter or either is missing (a missing cell stays missing).
pub fn bad_quarter(row: usize, year: Cell<'_>, quarter: Cell<'_>) -> Option<BadQuarter> {
    if matches!(year, Cell::Missing) || matches!(quarter, Cell::Missing) {
        return None;
    }
    if quarter_year(year).is_none() {
        return Some(BadQuarter {
            row,
            year: true,
            cell: year.to_value(),
        });
    }
    quarter_number(quarter).is_none().then(|| BadQuarter {
        row,
        year: false,
        cell: quarter.to_value(),
    })
}

/// 0 for Monday … 6 for Sunday (1970-01-01 was a Thursday).
pub fn weekday(d: i32) -> i32 {
    (d + 3).rem_euclid(7)
}

/// The ISO 8601 week-numbering year and week (1 to 53) of a day: the week
/// of the Thursday of the day's week, counted from that Thursday's year.
pub fn iso_week(d: i32) -> (i32, u32) {
    let thursday = d - weekday(d) + 3;
    let (y, _, _) = civil_from_days(thursday);
    let week = (thursday - days_from_civil(y, 1, 1)) / 7 + 1;
    (y, week as u32)
}

/// The rows of `t` (up to `most`) where `year_quarter(year, quarter)`
/// meets two cells that make no quarter (see
/// [`bad_quarter`]), in row order.
pub fn bad_quarters(t: &Table, (year, quarter): (&Expr, &Expr), most: usize) -> Vec<BadQuarter> {
    (0..crate::view::row_count(t))
        .filter_map(|r| {
            let row = crate::view::row_of(t, r);
            bad_quarter(
                r,
                crate::view::eval(&row, year),
                crate::view::eval(&row, quarter),
            )
        })
        .take(most)
        .collect()
}

#[cfg(test)]
mod tests;
