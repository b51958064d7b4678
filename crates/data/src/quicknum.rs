//! The common case of a number cell read at once: a plain decimal of at
//! most 15 digits without exponent (`256.99`, `-3`, `.5`), the form of
//! almost every number cell in a ledger.
//!
//! Such a decimal is `m / 10^k` with `m < 10^15 < 2^53` and `k <= 15`:
//! both are exact doubles, and one IEEE 754 division rounds their quotient
//! correctly, so it is the nearest double to the decimal, the value a
//! correctly rounding parser gives (Clinger, "How to read floating point
//! numbers accurately", PLDI 1990: the "fast path").

/// Powers of ten exact as doubles.
const POW10: [f64; 16] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15,
];

/// The value of `s` when it is a sign, at most 15 digits and at most one
/// decimal point (and at least one digit); `None` for anything else (the
/// full parser decides those).
#[inline]
pub(crate) fn short_decimal(s: &[u8]) -> Option<f64> {
    let (negative, b) = match s.split_first() {
        Some((b'-', rest)) => (true, rest),
        Some((b'+', rest)) => (false, rest),
        _ => (false, s),
    };
    if b.is_empty() || b.len() > 16 {
        return None;
    }
    // every byte is a digit but at most one point: the digits are the
    // bytes less the point
    let (mut m, mut point) = (0u64, usize::MAX);
    for (i, &c) in b.iter().enumerate() {
        let d = c.wrapping_sub(b'0');
        if d < 10 {
            m = m * 10 + u64::from(d);
        } else if c == b'.' && point == usize::MAX {
            point = i;
        } else {
            return None;
        }
    }
    let k = if point == usize::MAX {
        0
    } else {
        b.len() - point - 1
    };
    let digits = b.len() - usize::from(point != usize::MAX);
    if digits == 0 || digits > 15 {
        return None;
    }
    // (a whole number needs no division, the slowest step here)
    let v = if k == 0 {
        m as f64
    } else {
        m as f64 / POW10[k]
    };
    Some(if negative { -v } else { v })
}

#[cfg(test)]
mod tests {
    use proptest::prelude::*;

    use super::*;

    /// The full parser without this fast path.
    fn full(s: &str) -> Option<f64> {
        fast_float2::parse::<f64, _>(s.as_bytes()).ok()
    }

    #[test]
    fn the_forms_of_a_plain_decimal() {
        let bits = |s: &str| short_decimal(s.as_bytes()).map(f64::to_bits);
        assert_eq!(bits("256.99"), Some(256.99f64.to_bits()));
        assert_eq!(bits("-0"), Some((-0.0f64).to_bits()));
        assert_eq!(bits("+5."), Some(5f64.to_bits()));
        assert_eq!(bits(".5"), Some(0.5f64.to_bits()));
        assert_eq!(bits("007"), Some(7f64.to_bits()));
        assert_eq!(
            bits("999999999999999"),
            Some(999_999_999_999_999f64.to_bits())
        );
        for s in [
            "",
            "-",
            ".",
            "1.2.3",
            "1e3",
            "1,5",
            " 1",
            "1 ",
            "--1",
            "1234567890123456",
            "inf",
        ] {
            assert_eq!(short_decimal(s.as_bytes()), None, "{s}");
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(20000))]
        #[test]
        fn equals_the_full_parser(s in "[-+]?[0-9]{0,9}\\.?[0-9]{0,9}") {
            if let Some(v) = short_decimal(s.as_bytes()) {
                prop_assert_eq!(Some(v.to_bits()), full(&s).map(f64::to_bits));
            }
        }

        #[test]
        fn equals_the_full_parser_on_long_fractions(m in 0u64..1_000_000_000_000_000, k in 0usize..16) {
            let digits = format!("{m:015}");
            let s = format!("{}.{}", &digits[..15 - k], &digits[15 - k..]);
            let v = short_decimal(s.as_bytes());
            prop_assert_eq!(v.map(f64::to_bits), full(&s).map(f64::to_bits));
        }
    }
}
