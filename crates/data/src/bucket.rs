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
mod tests {
    use super::*;

    fn day(y: i32, m: u32, d: u32) -> Cell<'static> {
        Cell::Date(days_from_civil(y, m, d))
    }

    fn text(s: &str) -> Value {
        Value::Text(s.to_string())
    }

    #[test]
    fn a_year_and_a_quarter_are_one_time() {
        let m = |y: i32, q: u32| Some(y * 12 + (q as i32 - 1) * 3);
        // 2024 Q3 starts in July: month index 2024 * 12 + 6 (worked by hand)
        assert_eq!(
            year_quarter(Cell::Year(2024), Cell::Number(3.0)),
            m(2024, 3)
        );
        assert_eq!(
            year_quarter(Cell::Number(1999.0), Cell::Text("Q4")),
            m(1999, 4)
        );
        assert_eq!(
            year_quarter(Cell::Number(1999.0), Cell::Text(" q1 ")),
            m(1999, 1)
        );
        assert_eq!(year_quarter(Cell::Year(2024), Cell::Text("2")), m(2024, 2));
        for bad in [
            Cell::Number(0.0),
            Cell::Number(5.0),
            Cell::Number(2.5),
            Cell::Text("Q5"),
            Cell::Text("III"),
            Cell::Missing,
        ] {
            assert_eq!(year_quarter(Cell::Year(2024), bad), None, "{bad:?}");
        }
        for bad in [
            Cell::Number(2024.5),
            Cell::Number(0.0),
            Cell::Text("2024"),
            Cell::Missing,
        ] {
            assert_eq!(year_quarter(bad, Cell::Number(1.0)), None, "{bad:?}");
        }
        let label =
            crate::time::month_iso(year_quarter(Cell::Year(2024), Cell::Number(3.0)).unwrap_or(0));
        assert_eq!(label, "2024-07");
    }

    #[test]
    fn a_bad_quarter_names_the_cell_at_fault() {
        let bad = |y, q| bad_quarter(7, y, q);
        assert_eq!(bad(Cell::Year(2024), Cell::Number(4.0)), None);
        // a missing cell stays missing: no fault
        assert_eq!(bad(Cell::Missing, Cell::Number(9.0)), None);
        assert_eq!(bad(Cell::Number(2024.5), Cell::Missing), None);
        let q5 = bad(Cell::Year(2024), Cell::Text("Q5")).unwrap();
        assert_eq!(
            (q5.row, q5.year, q5.cell),
            (7, false, Value::Text("Q5".into()))
        );
        // both wrong: the year is named
        let y = bad(Cell::Number(2024.5), Cell::Number(5.0)).unwrap();
        assert_eq!((y.year, y.cell), (true, Value::Number(2024.5)));
    }

    #[test]
    fn iso_weeks_at_year_ends() {
        // Worked examples of ISO 8601 week dates (common practice; the
        // same as Python's `datetime.date.isocalendar()`):
        // 2021-01-03 is 2020-W53-7, 2024-12-30 is 2025-W01-1,
        // 2026-01-01 is 2026-W01-4, 2008-12-29 is 2009-W01-1,
        // 2010-01-03 is 2009-W53-7.
        let cases = [
            ((2021, 1, 3), "2020-W53", "Sun"),
            ((2024, 12, 30), "2025-W01", "Mon"),
            ((2026, 1, 1), "2026-W01", "Thu"),
            ((2008, 12, 29), "2009-W01", "Mon"),
            ((2010, 1, 3), "2009-W53", "Sun"),
            ((2024, 2, 29), "2024-W09", "Thu"),
        ];
        for ((y, m, d), week, wd) in cases {
            assert_eq!(Bucket::Week.apply(day(y, m, d)), text(week), "{y}-{m}-{d}");
            assert_eq!(Bucket::Weekday.apply(day(y, m, d)), text(wd), "{y}-{m}-{d}");
        }
        // the Monday of 2021-01-03's week is 2020-12-28
        assert_eq!(
            Bucket::WeekStart.apply(day(2021, 1, 3)),
            Value::Date(days_from_civil(2020, 12, 28))
        );
        assert_eq!(
            Bucket::WeekStart.apply(day(2020, 12, 28)),
            Value::Date(days_from_civil(2020, 12, 28))
        );
    }

    #[test]
    fn calendar_and_fiscal_periods() {
        let may = day(2024, 5, 17);
        assert_eq!(Bucket::Month.apply(may), Value::Month(2024 * 12 + 4));
        assert_eq!(Bucket::Year.apply(may), Value::Year(2024));
        assert_eq!(Bucket::Quarter.apply(may), text("2024 Q2"));
        // a year starting in July: July 2024 to June 2025 is FY2025
        assert_eq!(
            Bucket::FiscalYear(Fiscal::starting(7)).apply(may),
            text("FY2024")
        );
        assert_eq!(
            Bucket::FiscalQuarter(Fiscal::starting(7)).apply(may),
            text("FY2024 Q4")
        );
        let july = Cell::Month(2024 * 12 + 6);
        assert_eq!(
            Bucket::FiscalYear(Fiscal::starting(7)).apply(july),
            text("FY2025")
        );
        assert_eq!(
            Bucket::FiscalQuarter(Fiscal::starting(7)).apply(july),
            text("FY2025 Q1")
        );
        assert_eq!(Bucket::Quarter.apply(july), text("2024 Q3"));
        assert_eq!(Bucket::Year.apply(july), Value::Year(2024));
        // a month has no month, week or weekday bucket
        assert_eq!(Bucket::Month.apply(july), Value::Missing);
        assert_eq!(Bucket::Weekday.apply(july), Value::Missing);
        assert_eq!(Bucket::Year.apply(Cell::Missing), Value::Missing);
        // a year from January is the calendar year, without a prefix
        assert_eq!(
            Bucket::FiscalYear(Fiscal::starting(1)).apply(may),
            text("2024")
        );
        // a story's own names
        let named = Fiscal {
            start_month: 4,
            names: &crate::locale::FiscalNames {
                year: "GJ ",
                quarter: "Quartal ",
                half: "HJ",
            },
        };
        assert_eq!(Bucket::FiscalYear(named).apply(may), text("GJ 2025"));
        assert_eq!(
            Bucket::FiscalQuarter(named).apply(may),
            text("GJ 2025 Quartal 1")
        );
    }

    #[test]
    fn result_types() {
        assert_eq!(Bucket::Month.result(ColType::Date), Some(ColType::Month));
        assert_eq!(Bucket::Month.result(ColType::Month), None);
        assert_eq!(Bucket::Quarter.result(ColType::Month), Some(ColType::Text));
        assert_eq!(Bucket::WeekStart.result(ColType::Date), Some(ColType::Date));
        assert_eq!(Bucket::Year.result(ColType::Text), None);
        assert_eq!(Bucket::Weekday.result(ColType::Month), None);
    }

    #[test]
    fn iso_week_matches_a_count_over_eight_centuries() {
        // Week 1 holds 4 January (ISO 8601); every week has 7 days, so
        // walking day by day the week only changes on Mondays.
        let mut last = iso_week(days_from_civil(1600, 1, 3));
        for d in days_from_civil(1600, 1, 4)..days_from_civil(2400, 1, 1) {
            let w = iso_week(d);
            if weekday(d) == 0 {
                assert!(w.1 == last.1 + 1 || (w.1 == 1 && w.0 == last.0 + 1), "{d}");
            } else {
                assert_eq!(w, last);
            }
            last = w;
            let (y, m, dd) = civil_from_days(d);
            if m == 1 && dd == 4 {
                assert_eq!(w, (y, 1));
            }
        }
    }
}
