//! Properties of number formatting (`format.rs`) over random values: a
//! number printed with `d` decimals reads back (commas removed) within half
//! a unit of its last decimal, has exactly `d` decimals, groups thousands
//! by three, and never prints `-0`; printed without a precision it reads
//! back to twelve significant digits ([`format::MAX_SIGNIFICANT`]).

use crescendo_data::format;
use proptest::prelude::*;

/// Finite values of every magnitude an analyst meets, both signs.
fn value() -> impl Strategy<Value = f64> {
    (-1e6f64..1e6, -8i32..9).prop_map(|(m, e)| m * 10f64.powi(e) / 1e6)
}

fn read_back(s: &str) -> f64 {
    s.replace(',', "")
        .parse()
        .expect("a formatted number parses")
}

fn integer_part(s: &str) -> &str {
    let s = s.strip_prefix('-').unwrap_or(s);
    s.split('.').next().unwrap_or(s)
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]

    #[test]
    fn fixed_decimals_round_trip(v in value(), d in 0usize..7) {
        let s = format::number(v, Some(d));
        let back = read_back(&s);
        let half_unit = 0.5 * 10f64.powi(-(d as i32));
        // the rounding is of the shortest decimal form, so allow a relative
        // float error on top of half a unit
        prop_assert!((back - v).abs() <= half_unit + v.abs() * 1e-15, "{v} → {s}");
        let decimals = s.split_once('.').map_or(0, |(_, f)| f.len());
        prop_assert_eq!(decimals, d, "{} → {}", v, s);
        prop_assert!(s != "-0" && !s.starts_with("-0.") || back != 0.0, "{} → {}", v, s);
        // thousands in groups of three
        let groups: Vec<&str> = integer_part(&s).split(',').collect();
        prop_assert!(groups[0].len() <= 3 && !groups[0].is_empty(), "{}", s);
        prop_assert!(groups[1..].iter().all(|g| g.len() == 3), "{}", s);
    }

    #[test]
    fn shortest_form_keeps_twelve_significant_digits(v in value()) {
        let s = format::number(v, None);
        let back = read_back(&s);
        prop_assert!((back - v).abs() <= v.abs() * 1e-11, "{v} → {s}");
        prop_assert!(!s.contains('.') || !s.ends_with('0'), "trailing zero: {}", s);
    }
}
