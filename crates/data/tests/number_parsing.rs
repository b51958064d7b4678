//! The number reader of CSV cells (`load::parse_number`, which hands a
//! checked decimal to fast-float2) gives bit for bit what the standard
//! library's `f64::from_str` gives (the correctly rounded double, ties to
//! even: IEEE 754 round to nearest, as both crates document), over random
//! decimals of every length, exponent and sign, and over long decimals
//! close to doubles, where a wrong parser rounds the other way.

use crescendo_data::load::parse_number;
use proptest::prelude::*;

fn std_parse(s: &str) -> Option<f64> {
    s.parse::<f64>().ok().filter(|v| v.is_finite())
}

fn same(a: Option<f64>, b: Option<f64>) -> bool {
    a.map(f64::to_bits) == b.map(f64::to_bits)
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(4000))]

    #[test]
    fn decimals_read_as_the_standard_library_reads_them(
        sign in prop::sample::select(vec!["", "-", "+"]),
        int in "[0-9]{0,22}",
        frac in prop::option::of("[0-9]{0,22}"),
        exp in prop::option::of(-330i32..330),
    ) {
        let mut s = format!("{sign}{int}");
        if let Some(f) = &frac {
            s.push('.');
            s.push_str(f);
        }
        if let Some(e) = exp {
            s.push_str(&format!("e{e}"));
        }
        let want = if int.is_empty() && frac.as_deref().is_none_or(str::is_empty) {
            None
        } else {
            std_parse(&s)
        };
        prop_assert!(same(parse_number(&s), want), "{s}: {:?} vs {want:?}", parse_number(&s));
    }

    #[test]
    fn long_decimals_near_doubles_round_as_the_standard_library_does(
        bits in 1u64..0x7fef_ffff_ffff_ffff,
    ) {
        // a double's shortest form, and long forms that sit between it
        // and its neighbours (more digits than a double holds)
        let x = f64::from_bits(bits);
        let forms = [format!("{x:e}"), format!("{x:.17e}"), format!("{x:.25e}"), format!("{x:.40e}")];
        for s in forms {
            prop_assert!(same(parse_number(&s), std_parse(&s)), "{s}");
        }
    }
}

#[test]
fn everyday_cells() {
    for s in [
        "0",
        "-0",
        "12.50",
        "1e3",
        "0.1",
        "0.30000000000000004",
        "9007199254740993",
        "2.2250738585072011e-308",
        "1e309",
    ] {
        assert!(same(parse_number(s), std_parse(s)), "{s}");
    }
    assert_eq!(
        parse_number("-0").map(f64::to_bits),
        Some((-0.0f64).to_bits())
    );
    assert_eq!(parse_number("1e309"), None);
    assert_eq!(parse_number("."), None);
}
