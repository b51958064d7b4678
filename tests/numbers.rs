//! The number policy against an outside reference: Python's `decimal`
//! module with `ROUND_HALF_UP` (half away from zero), on about four
//! thousand values. The fixture `tests/numbers/decimal_rounding.csv` is
//! written by `tests/numbers/decimal_rounding.py` (committed beside it).

use crescendo_lang::ast::{FormatSpec, NumberStyle};
use crescendo_plan::numbers;

fn spec(style: NumberStyle, decimals: Option<usize>) -> FormatSpec {
    FormatSpec {
        sign: false,
        decimals,
        style,
    }
}

#[test]
fn rounding_matches_python_decimal_round_half_up() {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/numbers/decimal_rounding.csv"
    ))
    .expect("fixture");
    let mut checked = 0;
    let mut wrong = Vec::new();
    for line in text.lines().skip(1) {
        let f: Vec<&str> = line.split(',').collect();
        let [value, kind, param, expected] = f[..] else {
            panic!("bad row {line}")
        };
        let v: f64 = value.parse().expect("a number");
        let n: usize = param.parse().expect("a count");
        let got = match kind {
            "fixed" => numbers::figure(v, &spec(NumberStyle::Plain, Some(n))),
            "percent" => numbers::figure(v, &spec(NumberStyle::Percent, Some(n)))
                .trim_end_matches('%')
                .to_string(),
            "sig" => {
                assert_eq!(n, 3, "the default keeps three significant digits");
                numbers::figure(v, &spec(NumberStyle::Plain, None))
            }
            other => panic!("unknown kind {other}"),
        }
        .replace(',', "");
        if got != expected {
            wrong.push(format!(
                "{kind} {n} of {value}: got {got}, Python {expected}"
            ));
        }
        checked += 1;
    }
    assert!(checked > 12_000, "only {checked} rows");
    assert!(
        wrong.is_empty(),
        "{} differ:\n{}",
        wrong.len(),
        wrong.join("\n")
    );
}
