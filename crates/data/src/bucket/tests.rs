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
