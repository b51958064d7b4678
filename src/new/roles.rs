//! What each number column of a profiled file is, before any chart is
//! chosen: a measure to aggregate (an amount, summed, or a rate or level,
//! averaged), a code or identifier (never a measure), or a part of a time
//! (a quarter or a month number beside a year column).
//!
//! The rules, in order (common practice of data profiling; the name lists
//! are our own choice):
//! 1. a whole-number column named like a quarter (`quarter`, `qtr`) with
//!    values 1 to 4, or like a month (`month`, `mon`) with 1 to 12, next to a
//!    year column, is a part of the time;
//! 2. a column named like an identifier or code (`id`, `code`, `key`,
//!    `obs`, … or ending in `_id`, `_code`, `_no`) is a code, and so is a
//!    whole-number column with few distinct values that repeat (at most
//!    [`FEW`] values, each on three rows or more on average) or one that
//!    numbers the rows 1, 2, 3, …;
//! 3. any other number column is a measure: a rate or level (averaged,
//!    never summed) when its name says so (`rate`, `pct`, `index`, `price`,
//!    `infl`, `unemp`, …) or its values are fractions between 0 and 1, or
//!    when it has decimals and its name does not name an amount; an amount
//!    (summed) when its name names one (`count`, `total`, `sales`, …) or
//!    its values are whole numbers.

use crescendo_data::{ColType, Table, Value};

/// Most distinct values of a whole-number code found by its values alone.
pub const FEW: usize = 7;

/// The kind of a column for a starter story.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ColumnRole {
    /// A quantity that adds up over rows (summed).
    Amount,
    /// A rate, ratio or level: averaged over rows, never summed.
    Rate,
    /// An identifier or code: never aggregated, never a measure.
    Code,
    /// The quarter (1–4) of a year column.
    Quarter,
    /// The month number (1–12) of a year column.
    MonthNumber,
    /// A time column (month, date or year) or a text column.
    Other,
}

impl ColumnRole {
    /// A measure a chart may draw.
    pub fn is_measure(self) -> bool {
        matches!(self, ColumnRole::Amount | ColumnRole::Rate)
    }

    /// The aggregate a `by` step uses for it.
    pub fn aggregate(self) -> &'static str {
        match self {
            ColumnRole::Amount => "sum",
            _ => "mean",
        }
    }
}

/// Does a lower-case column name contain one of `words` as a whole word
/// (between underscores or at the ends), or start with one?
fn names(name: &str, words: &[&str]) -> bool {
    let parts: Vec<&str> = name.split(['_', ' ', '-', '.']).collect();
    words
        .iter()
        .any(|w| parts.contains(w) || parts.first().is_some_and(|p| p.starts_with(w)))
}

const CODE_WORDS: &[&str] = &[
    "id",
    "code",
    "key",
    "obs",
    "observation",
    "index_no",
    "no",
    "fips",
    "zip",
    "postcode",
    "serial",
    "row",
    "case_id",
];
const RATE_WORDS: &[&str] = &[
    "rate",
    "pct",
    "percent",
    "percentage",
    "share",
    "ratio",
    "avg",
    "average",
    "mean",
    "median",
    "index",
    "price",
    "infl",
    "inflation",
    "unemp",
    "unemployment",
    "interest",
    "yield",
    "level",
    "per",
    "density",
    "temp",
    "temperature",
    "score",
    "cpi",
    "growth",
    "prop",
    "proportion",
    "fraction",
    "realint",
    "wage",
    "wages",
    "age",
    "pop",
    "population",
];
const AMOUNT_WORDS: &[&str] = &[
    "count", "total", "sum", "sales", "amount", "number", "num", "qty", "quantity", "visits",
    "loans", "riders", "cases", "deaths", "births", "orders", "units", "revenue", "spend",
    "spending", "cost", "costs", "visitors", "trips",
];

/// The role of column `i` of `table` (after the year columns were typed).
pub fn role_of(table: &Table, i: usize) -> ColumnRole {
    let Some(c) = table.columns.get(i) else {
        return ColumnRole::Other;
    };
    if c.ty != ColType::Number {
        return ColumnRole::Other;
    }
    let name = c.name.to_ascii_lowercase();
    let xs: Vec<f64> = c
        .values
        .iter()
        .filter_map(|v| match v {
            Value::Number(x) => Some(x),
            _ => None,
        })
        .collect();
    let whole = !xs.is_empty() && xs.iter().all(|x| x.fract() == 0.0);
    let within = |lo: f64, hi: f64| xs.iter().all(|x| (lo..=hi).contains(x));
    let has_year = table.columns.iter().any(|c| c.ty == ColType::Year);
    if whole && has_year {
        if names(&name, &["quarter", "qtr", "q"]) && within(1.0, 4.0) {
            return ColumnRole::Quarter;
        }
        if names(&name, &["month", "mon", "mo"]) && within(1.0, 12.0) {
            return ColumnRole::MonthNumber;
        }
    }
    if names(&name, CODE_WORDS) || name.ends_with("_id") || name.ends_with("_code") {
        return ColumnRole::Code;
    }
    let mut distinct: Vec<f64> = xs.clone();
    distinct.sort_by(f64::total_cmp);
    distinct.dedup();
    let counts_rows = whole
        && distinct.len() == xs.len()
        && xs.len() > 2
        && xs.iter().enumerate().all(|(k, x)| *x == (k + 1) as f64);
    if whole && ((distinct.len() <= FEW && xs.len() >= 3 * distinct.len()) || counts_rows) {
        return ColumnRole::Code;
    }
    if names(&name, AMOUNT_WORDS) {
        return ColumnRole::Amount;
    }
    let fractions = !whole && within(0.0, 1.0);
    if names(&name, RATE_WORDS) || fractions || !whole {
        return ColumnRole::Rate;
    }
    ColumnRole::Amount
}

#[cfg(test)]
mod tests {
    use super::*;
    use crescendo_data::Column;

    fn table(cols: &[(&str, ColType, Vec<Value>)]) -> Table {
        Table {
            columns: cols
                .iter()
                .map(|(n, t, v)| Column {
                    name: (*n).to_string(),
                    ty: *t,
                    values: v.clone().into(),
                })
                .collect(),
        }
    }

    fn nums(v: &[f64]) -> Vec<Value> {
        v.iter().map(|x| Value::Number(*x)).collect()
    }

    /// A number column for [`table`].
    fn number<'a>(name: &'a str, v: &[f64]) -> (&'a str, ColType, Vec<Value>) {
        (name, ColType::Number, nums(v))
    }

    #[test]
    fn quarters_codes_rates_and_amounts() {
        let years: Vec<Value> = (0..8).map(|k| Value::Year(2000 + k / 4)).collect();
        let t = table(&[
            ("year", ColType::Year, years),
            number("quarter", &[1., 2., 3., 4., 1., 2., 3., 4.]),
            number("unemp", &[5., 5., 6., 6., 7., 6., 5., 5.]),
            number("realgdp", &[2.5, 2.6, 2.7, 2.8, 2.9, 3.0, 3.1, 3.2]),
            number("visits", &[1., 2., 3., 4., 5., 6., 7., 9.]),
            number("region_id", &[10., 11., 12., 13., 14., 15., 16., 17.]),
            number("n", &[1., 2., 3., 4., 5., 6., 7., 8.]),
            number("share", &[0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8]),
        ]);
        let roles: Vec<ColumnRole> = (0..8).map(|i| role_of(&t, i)).collect();
        assert_eq!(
            roles,
            [
                ColumnRole::Other,
                ColumnRole::Quarter,
                ColumnRole::Rate,
                ColumnRole::Rate,
                ColumnRole::Amount,
                ColumnRole::Code,
                ColumnRole::Code,
                ColumnRole::Rate,
            ]
        );
    }

    #[test]
    fn few_repeating_whole_numbers_are_a_code() {
        let t = table(&[number("group", &[1., 2., 3., 1., 2., 3., 1., 2., 3., 1.])]);
        assert_eq!(role_of(&t, 0), ColumnRole::Code);
        // Anscombe's x: 11 values, not few.
        let x: Vec<f64> = (4..15).map(f64::from).collect();
        let t = table(&[number("x", &[x.clone(), x].concat())]);
        assert_eq!(role_of(&t, 0), ColumnRole::Amount);
    }
}
