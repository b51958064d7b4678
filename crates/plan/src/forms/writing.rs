//! How a plugin is told to write numbers and dates: the story's locale as
//! the number policy applies it, taken from the same formatters (ICU4X's
//! CLDR data and the locale's percent and compact patterns), never from a
//! table of its own; and each time cell of the view as the axis writes it.

use std::collections::BTreeMap;

use crescendo_data::{locale, time, Table, Value};
use crescendo_plugin::{CompactStep, Writing};

use crate::numbers::MINUS;

/// The writing of the story being planned, with the labels of `table`'s
/// time cells.
pub(crate) fn of(table: &Table) -> Writing {
    let conventions = locale::current();
    let mut w = Writing::default();
    if let Some(l) = &conventions.locale {
        w.locale = Some(l.tag().to_string());
        // `-12,345.6` in the locale: the minus, the group and the decimal
        // separator are what stands between the digits
        let sample = l.number("-12,345.6");
        let (sign, rest) = sample.split_at(sample.find("12").unwrap_or(0));
        let rest = &rest[2.min(rest.len())..];
        if let Some(at) = rest.find("345") {
            w.group = rest[..at].to_string();
            let after = &rest[at + 3..];
            w.decimal = after.strip_suffix('6').unwrap_or(after).to_string();
        }
        w.minus = match sign {
            "-" | "" => MINUS.to_string(),
            other => other.to_string(),
        };
        // a locale that leaves `1234` whole (CLDR's minimum grouping digits)
        w.group_from = if l.number("1,234").chars().count() == 4 {
            5
        } else {
            4
        };
        w.digits = (0..10).map(|d| l.number(&d.to_string())).collect();
        w.percent = l.percent_suffix().to_string();
        w.compact = l
            .compact_steps()
            .iter()
            .map(|&(from, unit, suffix)| CompactStep {
                from: from as u32,
                unit: unit as u32,
                suffix: suffix.to_string(),
            })
            .collect();
    }
    w.times = times(table);
    w
}

/// Each time cell as the request carries it (ISO) and as the axis writes it.
fn times(table: &Table) -> BTreeMap<String, String> {
    let mut out = BTreeMap::new();
    for column in &table.columns {
        for v in column.values.iter() {
            let (iso, label) = match v {
                Value::Month(m) => (time::month_iso(m), time::month_label(m)),
                Value::Date(d) => {
                    let (y, m, day) = time::civil_from_days(d);
                    (time::date_iso(d), time::day_label(y, m, day, true))
                }
                _ => continue,
            };
            out.entry(iso).or_insert(label);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn with(tag: Option<&str>) -> Writing {
        locale::scoped(locale::Conventions::of(tag, None), || of(&Table::default()))
    }

    // CLDR 49 (ICU4X 2.4 compiled data), as `crescendo_data::locale`'s
    // tests: de groups with `.` and writes a decimal comma, fr groups with
    // U+202F, es leaves four-digit numbers whole (minimum grouping digits 2).
    #[test]
    fn writing_follows_the_locale_formatters() {
        let en = with(None);
        assert_eq!(en, Writing::default());
        let de = with(Some("de-DE"));
        assert_eq!(de.locale.as_deref(), Some("de-DE"));
        assert_eq!((de.group.as_str(), de.decimal.as_str()), (".", ","));
        assert_eq!((de.minus.as_str(), de.group_from), ("\u{2212}", 4));
        assert_eq!(de.percent, "\u{a0}%");
        assert_eq!(de.compact[2].suffix, "\u{a0}Mio.");
        let fr = with(Some("fr-FR"));
        assert_eq!((fr.group.as_str(), fr.decimal.as_str()), ("\u{202f}", ","));
        let es = with(Some("es-ES"));
        assert_eq!(es.group_from, 5);
        assert_eq!(es.digits, "0123456789");
    }
}
