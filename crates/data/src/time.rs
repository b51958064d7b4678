//! Calendar arithmetic for the time column types (proleptic Gregorian).
//!
//! Days are counted from 1970-01-01 with the days-from-civil method of
//! H. Hinnant ("chrono-Compatible Low-Level Date Algorithms", common practice
//! in date libraries); months are `year * 12 + (month - 1)`.

/// Days since 1970-01-01 of a valid civil date.
pub fn days_from_civil(y: i32, m: u32, d: u32) -> i32 {
    let y = if m <= 2 { y - 1 } else { y };
    let era = if y >= 0 { y } else { y - 399 } / 400;
    let yoe = y - era * 400;
    let mp = (m as i32 + 9) % 12;
    let doy = (153 * mp + 2) / 5 + d as i32 - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

/// The civil date `(year, month, day)` of a day count.
pub fn civil_from_days(z: i32) -> (i32, u32, u32) {
    let z = z + 719_468;
    let era = if z >= 0 { z } else { z - 146_096 } / 146_097;
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    (if m <= 2 { y + 1 } else { y }, m, d)
}

fn days_in_month(y: i32, m: u32) -> u32 {
    match m {
        1 | 3 | 5 | 7 | 8 | 10 | 12 => 31,
        4 | 6 | 9 | 11 => 30,
        _ if (y % 4 == 0 && y % 100 != 0) || y % 400 == 0 => 29,
        _ => 28,
    }
}

fn digits(s: &str) -> Option<i32> {
    if s.is_empty() || !s.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    s.parse().ok()
}

/// Parse `YYYY` (four digits).
pub fn parse_year(s: &str) -> Option<i32> {
    if s.len() == 4 {
        digits(s)
    } else {
        None
    }
}

/// Parse `YYYY-MM` into a month index.
pub fn parse_month(s: &str) -> Option<i32> {
    let (y, m) = s.split_once('-')?;
    if m.len() != 2 {
        return None;
    }
    let (y, m) = (parse_year(y)?, digits(m)?);
    (1..=12).contains(&m).then_some(y * 12 + (m - 1))
}

/// Parse a month cell: `YYYY-MM`, or a date `YYYY-MM-DD` read as its month
/// (a `month` column of a daily file).
pub fn parse_month_or_date(s: &str) -> Option<i32> {
    parse_month(s).or_else(|| parse_date(s).map(month_of_day))
}

/// The month index of a day count.
pub fn month_of_day(d: i32) -> i32 {
    let (y, m, _) = civil_from_days(d);
    y * 12 + (m as i32 - 1)
}

/// Parse `YYYY-MM-DD` into days since 1970-01-01, rejecting impossible dates.
pub fn parse_date(s: &str) -> Option<i32> {
    if s.len() != 10 || s.as_bytes()[7] != b'-' {
        return None;
    }
    let m = parse_month(&s[..7])?;
    let d = digits(&s[8..])? as u32;
    let (y, mo) = (m.div_euclid(12), (m.rem_euclid(12) + 1) as u32);
    (d >= 1 && d <= days_in_month(y, mo)).then(|| days_from_civil(y, mo, d))
}

const MONTHS: [&str; 12] = [
    "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec",
];

/// The 1-based number of an English month name or its three-letter
/// abbreviation, in any case: `July`, `jul` → 7.
pub fn month_from_name(name: &str) -> Option<u32> {
    const FULL: [&str; 12] = [
        "january",
        "february",
        "march",
        "april",
        "may",
        "june",
        "july",
        "august",
        "september",
        "october",
        "november",
        "december",
    ];
    let lower = name.to_ascii_lowercase();
    FULL.iter()
        .position(|f| *f == lower || (lower.len() == 3 && f.starts_with(&lower)))
        .map(|i| i as u32 + 1)
}

/// Year of a month index.
pub fn month_year(m: i32) -> i32 {
    m.div_euclid(12)
}

/// 1-based month number of a month index.
pub fn month_of_year(m: i32) -> u32 {
    (m.rem_euclid(12) + 1) as u32
}

/// Short month name ("Jan") of a 1-based month number, in the story's
/// locale when it names one (`crate::locale`), else in English.
pub fn month_name(month: u32) -> std::borrow::Cow<'static, str> {
    match &crate::locale::current().locale {
        Some(l) => l.month_name(month).into(),
        None => MONTHS[(month.clamp(1, 12) - 1) as usize].into(),
    }
}

/// A month of a year as people read it: "Jan 2024" (or the story's
/// locale: "janv. 2024").
pub fn month_label(m: i32) -> String {
    let (y, mo) = (month_year(m), month_of_year(m));
    match &crate::locale::current().locale {
        Some(l) => l.month_year(y, mo),
        None => format!("{} {y}", MONTHS[(mo - 1) as usize]),
    }
}

/// A day as people read it: "Mar 4" or "Mar 4, 2024" (or the story's
/// locale: "04.03.2024").
pub fn day_label(y: i32, m: u32, d: u32, with_year: bool) -> String {
    match &crate::locale::current().locale {
        Some(l) => l.day(y, m, d, with_year),
        None if with_year => format!("{} {d}, {y}", MONTHS[(m.clamp(1, 12) - 1) as usize]),
        None => format!("{} {d}", MONTHS[(m.clamp(1, 12) - 1) as usize]),
    }
}

/// `YYYY-MM` text of a month index (as written in stories and CSVs).
pub fn month_iso(m: i32) -> String {
    format!("{:04}-{:02}", month_year(m), month_of_year(m))
}

/// A date quoted in a text: as the axis writes a day with its year in the
/// story's locale ("20.06.2024", "20 juin 2024"), ISO without a locale.
pub fn date_text(d: i32) -> String {
    let (y, m, day) = civil_from_days(d);
    match &crate::locale::current().locale {
        Some(l) => l.day(y, m, day, true),
        None => date_iso(d),
    }
}

/// `YYYY-MM-DD` text of a day count.
pub fn date_iso(d: i32) -> String {
    let (y, m, day) = civil_from_days(d);
    format!("{y:04}-{m:02}-{day:02}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn epoch_and_known_dates() {
        // 1970-01-01 is day 0 by definition; 2000-03-01 is day 11017
        // (common practice: the Unix day number of that date).
        assert_eq!(days_from_civil(1970, 1, 1), 0);
        assert_eq!(days_from_civil(2000, 3, 1), 11_017);
        assert_eq!(civil_from_days(11_017), (2000, 3, 1));
        assert_eq!(civil_from_days(-1), (1969, 12, 31));
    }

    #[test]
    fn round_trip_over_four_centuries() {
        for z in (-150_000..150_000).step_by(7) {
            let (y, m, d) = civil_from_days(z);
            assert_eq!(days_from_civil(y, m, d), z);
        }
    }

    #[test]
    fn parsing_rejects_impossible_values() {
        assert_eq!(parse_month("2024-07"), Some(2024 * 12 + 6));
        assert_eq!(parse_month("2024-13"), None);
        assert_eq!(parse_month("2024-7"), None);
        assert_eq!(parse_date("2024-02-29"), Some(days_from_civil(2024, 2, 29)));
        assert_eq!(parse_date("2023-02-29"), None);
        assert_eq!(parse_date("1900-02-29"), None);
        assert_eq!(parse_date("2000-02-29"), Some(days_from_civil(2000, 2, 29)));
        assert_eq!(parse_year("2019"), Some(2019));
        assert_eq!(parse_year("19"), None);
        assert_eq!(month_iso(2024 * 12 + 6), "2024-07");
        assert_eq!(date_iso(days_from_civil(2024, 2, 29)), "2024-02-29");
        // a month column of a daily file reads each date as its month
        assert_eq!(parse_month_or_date("2024-02-29"), Some(2024 * 12 + 1));
        assert_eq!(parse_month_or_date("2024-02"), Some(2024 * 12 + 1));
        assert_eq!(parse_month_or_date("2023-02-29"), None);
    }
}
