//! Number formatting for labels, tick marks and quoted numbers.
//!
//! Conventions (common practice for charts meant for presentation):
//! - thousands are grouped with a comma: `12,345`;
//! - the minus sign is the ASCII hyphen-minus `-` (it survives copy and paste,
//!   search and every font; the typographic U+2212 is left to the renderer if
//!   a theme ever wants it);
//! - no trailing zeros unless a fixed number of decimals is asked for;
//! - `-0` is never printed: anything that rounds to zero prints as `0`;
//! - NaN and infinities print as `n/a` (they should never reach a label).
//!
//! # Rounding rule
//!
//! Rounding is **half away from zero, applied to the shortest decimal
//! representation** of the `f64` (the shortest digit string that reads back
//! to the same `f64`, as printed by Rust's `{}`/`{:e}`). A reader who sees
//! `2.675` in a CSV expects two decimals to give `2.68`, although the binary
//! double nearest to 2.675 is 2.67499999999999982236…, which a rounding of
//! the exact binary value would turn into `2.67`. We follow the decimal
//! reader: `number(2.675, Some(2)) == "2.68"`, `number(1.005, Some(2)) ==
//! "1.01"`, `number(-2.5, Some(0)) == "-3"`.

/// Significant digits kept when no number of decimals is given. Twelve is
/// below the 15 to 17 digits an `f64` carries, so the noise left by binary
/// arithmetic (`0.1 + 0.2 = 0.30000000000000004`) and by summing many values
/// is rounded away, while every value an analyst types (money to the cent up
/// to ten billion, measurements, rates) survives unchanged.
pub const MAX_SIGNIFICANT: usize = 12;

/// Upper bound on a requested number of decimals, so that a careless caller
/// cannot ask for a gigantic string. Far beyond what any chart needs.
pub const MAX_DECIMALS: usize = 40;

/// Text printed for NaN and infinities.
const NOT_A_NUMBER: &str = "n/a";

/// A non-negative decimal number `0.d1 d2 d3 … × 10^point`, digits 0 to 9.
#[derive(Clone, Debug)]
struct Decimal {
    digits: Vec<u8>,
    /// Number of digits before the decimal point (may be negative or exceed
    /// `digits.len()`).
    point: i64,
}

impl Decimal {
    /// The shortest round-trip decimal form of `|v|` (`v` must be finite).
    fn of(v: f64) -> Decimal {
        // `{:e}` prints the shortest digits that read back to the same f64,
        // e.g. "2.675e0", "3.0000000000000004e-1", "5e-4", "0e0".
        let text = format!("{:e}", v.abs());
        let (mantissa, exponent) = text.split_once('e').unwrap_or((text.as_str(), "0"));
        let exponent: i64 = exponent.parse().unwrap_or(0);
        let digits: Vec<u8> = mantissa
            .bytes()
            .filter(u8::is_ascii_digit)
            .map(|b| b - b'0')
            .collect();
        let mut d = Decimal {
            digits,
            point: exponent + 1,
        };
        d.trim();
        d
    }

    /// `|v| × 10^shift`, exactly (the decimal point moves; no binary
    /// product), or `None` for NaN and infinities.
    fn shifted(v: f64, shift: i64) -> Option<Decimal> {
        if !v.is_finite() {
            return None;
        }
        let mut d = Decimal::of(v);
        if !d.is_zero() {
            d.point += shift;
        }
        Some(d)
    }

    /// Drop trailing zero digits and normalise zero to an empty digit list.
    fn trim(&mut self) {
        while self.digits.last() == Some(&0) {
            self.digits.pop();
        }
        if self.digits.is_empty() {
            self.point = 0;
        }
    }

    fn is_zero(&self) -> bool {
        self.digits.is_empty()
    }

    /// Round half away from zero so that at most `keep` digits remain
    /// (counted from the first stored digit). `keep` may be negative.
    fn round_keep(&mut self, keep: i64) {
        if keep < 0 {
            // Even the first digit is more than one place beyond the cut.
            self.digits.clear();
            self.point = 0;
            return;
        }
        let keep = keep as usize;
        if keep >= self.digits.len() {
            return;
        }
        let round_up = self.digits[keep] >= 5;
        self.digits.truncate(keep);
        if round_up {
            let mut i = keep;
            loop {
                if i == 0 {
                    // Carry out of the first digit: 9.99 -> 10.0
                    self.digits.insert(0, 1);
                    self.point += 1;
                    break;
                }
                i -= 1;
                if self.digits[i] == 9 {
                    self.digits[i] = 0;
                } else {
                    self.digits[i] += 1;
                    break;
                }
            }
        }
        self.trim();
    }

    /// Round to `decimals` places after the point.
    fn round_decimals(&mut self, decimals: usize) {
        let keep = self.point.saturating_add(decimals as i64);
        self.round_keep(keep);
    }

    /// Round to `sig` significant digits.
    fn round_significant(&mut self, sig: usize) {
        self.round_keep(sig as i64);
    }

    /// Digits after the point that carry information (after trimming).
    fn decimals_needed(&self) -> usize {
        (self.digits.len() as i64 - self.point).max(0) as usize
    }

    /// The integer part grouped by thousands, and exactly `decimals` fraction
    /// digits (padded with zeros).
    fn render(&self, decimals: usize) -> String {
        let digit_at = |i: i64| -> u8 {
            if i < 0 {
                0
            } else {
                self.digits.get(i as usize).copied().unwrap_or(0)
            }
        };
        let int_len = self.point.max(1);
        let mut out = String::new();
        for pos in 0..int_len {
            // Position `pos` in the integer part corresponds to digit index
            // `pos - (int_len - point)`.
            let index = pos - (int_len - self.point);
            if pos > 0 && (int_len - pos) % 3 == 0 {
                out.push(',');
            }
            out.push(char::from(b'0' + digit_at(index)));
        }
        if decimals > 0 {
            out.push('.');
            for k in 0..decimals as i64 {
                out.push(char::from(b'0' + digit_at(self.point + k)));
            }
        }
        out
    }
}

fn with_sign(negative: bool, d: &Decimal, body: String) -> String {
    if negative && !d.is_zero() {
        format!("-{body}")
    } else {
        body
    }
}

/// Format a number for people.
///
/// - `decimals: None`: the shortest form, rounded to [`MAX_SIGNIFICANT`]
///   significant digits, without trailing zeros: `0.1 + 0.2` gives `"0.3"`,
///   `2.50` gives `"2.5"`, `20.0` gives `"20"`, `12345.0` gives `"12,345"`.
/// - `decimals: Some(d)`: exactly `d` decimals, zeros kept (`Some(1)` on
///   `1.0` gives `"1.0"`), for columns of figures that must line up. `d` is
///   capped at [`MAX_DECIMALS`].
///
/// Rounding is half away from zero on the decimal digits (see the module
/// docs). Never prints `-0`; NaN and infinities print as `"n/a"`.
pub fn number(v: f64, decimals: Option<usize>) -> String {
    crate::locale::localize_number(number_ascii(v, decimals))
}

/// [`number`] in the crescendo convention whatever the story's locale
/// (comma groups, `.` for decimals): for text that is parsed again.
pub fn number_ascii(v: f64, decimals: Option<usize>) -> String {
    if let Some(places) = decimals {
        return fixed_ascii(v, 0, places);
    }
    if !v.is_finite() {
        return NOT_A_NUMBER.to_string();
    }
    let mut d = Decimal::of(v);
    d.round_significant(MAX_SIGNIFICANT);
    let shown = d.decimals_needed();
    with_sign(v < 0.0, &d, d.render(shown))
}

/// Significant digits the default format keeps (the number policy: a
/// figure without `to N decimals`, a data label, a table cell).
pub const DEFAULT_SIGNIFICANT: usize = 3;

/// `v × 10^shift` (exact: the decimal point moves, no binary product), at
/// least `sig` significant digits and never fewer than its whole digits,
/// without trailing zeros: `(0.001234, 0, 3)` → `"0.00123"`, `(12345.6, 0,
/// 3)` → `"12,346"`, `(0.145, 2, 3)` → `"14.5"`. A non-zero value never
/// prints as `0`: its first significant digit is always kept. Rounding is
/// half away from zero on the decimal digits.
pub fn significant_ascii(v: f64, shift: i64, sig: usize) -> String {
    let Some(mut d) = Decimal::shifted(v, shift) else {
        return NOT_A_NUMBER.to_string();
    };
    let sig = sig.clamp(1, MAX_SIGNIFICANT) as i64;
    if d.point >= sig {
        d.round_decimals(0);
    } else {
        d.round_keep(sig);
    }
    let shown = d.decimals_needed().min(MAX_DECIMALS);
    with_sign(v < 0.0, &d, d.render(shown))
}

/// The number of digits before the decimal point of `v`'s first
/// significant digit (`123.4` → 3, `0.05` → -1, `0` → 0): with `sig`
/// significant digits a figure needs `sig - point` decimals.
pub fn decimal_point(v: f64) -> i64 {
    if v.is_finite() {
        Decimal::of(v).point
    } else {
        0
    }
}

/// `v × 10^shift` (the point moved exactly) with exactly `decimals`
/// decimals: `(0.145, 2, 0)` → `"15"`, where the binary product
/// `0.145 * 100 = 14.499999999999998` would give 14.
pub fn fixed_ascii(v: f64, shift: i64, decimals: usize) -> String {
    let Some(mut d) = Decimal::shifted(v, shift) else {
        return NOT_A_NUMBER.to_string();
    };
    let places = decimals.min(MAX_DECIMALS);
    d.round_decimals(places);
    with_sign(v < 0.0, &d, d.render(places))
}

/// Significant digits a written figure shows: the digits from its first
/// non-zero digit to its last digit, trailing zeros after a decimal point
/// included (`"5.40"` → 3, `"0.05"` → 1, `"12,345"` → 5, `"12.3k"` → 3,
/// `"1,200"` → 4: whole zeros count, they were printed).
pub fn shown_significant(figure: &str) -> usize {
    figure
        .chars()
        .filter(char::is_ascii_digit)
        .skip_while(|&c| c == '0')
        .count()
}

/// Number of decimals needed to write `step` exactly (after rounding away
/// float noise at [`MAX_SIGNIFICANT`] digits): `0.25` → 2, `2.5` → 1,
/// `5` → 0, `0.1 * 3` → 1. Zero, negative steps count by magnitude; NaN and
/// infinities give `None`.
fn step_decimals(step: f64) -> Option<usize> {
    if !step.is_finite() || step == 0.0 {
        return None;
    }
    let mut d = Decimal::of(step);
    d.round_significant(MAX_SIGNIFICANT);
    Some(d.decimals_needed().min(MAX_DECIMALS))
}

/// Labels for the ticks of one axis.
///
/// All labels are rounded to the decimals that the `step` between ticks
/// needs, which removes float noise (`0.1 * 3` prints `"0.3"`), and then
/// trailing zeros are stripped label by label (common practice: `0`,
/// `0.25`, `0.5`, `0.75`, `1`). Thousands are grouped with commas. If the
/// step is zero or not finite, each value is formatted with [`number`].
pub fn tick_labels(values: &[f64], step: f64) -> Vec<String> {
    tick_labels_ascii(values, step)
        .into_iter()
        .map(crate::locale::localize_number)
        .collect()
}

/// [`tick_labels`] in the crescendo convention whatever the locale.
pub fn tick_labels_ascii(values: &[f64], step: f64) -> Vec<String> {
    let places = step_decimals(step);
    values
        .iter()
        .map(|&v| {
            if !v.is_finite() {
                return NOT_A_NUMBER.to_string();
            }
            match places {
                None => number_ascii(v, None),
                Some(places) => {
                    let mut d = Decimal::of(v);
                    d.round_decimals(places);
                    let shown = d.decimals_needed();
                    with_sign(v < 0.0, &d, d.render(shown))
                }
            }
        })
        .collect()
}

/// One step of a compact form: from 10^`from` up, the value is written in
/// units of 10^`unit` followed by `suffix` (`(6, 6, "M")`: 4,500,000 is
/// "4.5M"). Steps are listed from the largest `from` down.
pub type CompactStep = (i64, i64, &'static str);

/// The crescendo convention: thousand, million, billion, trillion (short
/// scale, the common practice of English-language business writing). A
/// locale brings its own steps (`crate::locale`).
pub const COMPACT_STEPS: &[CompactStep] = &[(12, 12, "T"), (9, 9, "B"), (6, 6, "M"), (3, 3, "k")];

/// Significant digits shown by [`compact`].
pub const COMPACT_SIGNIFICANT: usize = 3;

/// The step for a value whose decimal exponent is `exponent`.
fn step_for(steps: &[CompactStep], exponent: i64) -> Option<CompactStep> {
    steps.iter().copied().find(|&(from, _, _)| exponent >= from)
}

/// A short form for long labels: three significant digits and a suffix
/// `k`, `M`, `B` or `T` from a thousand up: `12_300` → `"12.3k"`,
/// `4_500_000` → `"4.5M"`, `1_234` → `"1.23k"`, `950` → `"950"`,
/// `999_950` → `"1M"` (the rounding carry moves to the next suffix).
/// Values below a thousand are rounded to three significant digits without
/// a suffix (`0.012345` → `"0.0123"`); from 10^15 up the `T` suffix is kept
/// with a grouped mantissa (`2e15` → `"2,000T"`). Trailing zeros are
/// stripped; NaN and infinities print as `"n/a"`. In a story with a locale
/// the locale's own steps and symbols are used (`"1,2 Mio."` in German).
pub fn compact(v: f64) -> String {
    let c = crate::locale::current();
    match &c.locale {
        Some(l) => l.number(&compact_with(v, l.compact_steps())),
        None => compact_ascii(v),
    }
}

/// [`compact`] with exactly `decimals` decimals in the suffix's unit. The
/// suffix is chosen after rounding, so a carry moves to the next suffix
/// (`999_950` to one decimal is `"1.0M"`, not `"1,000.0k"`), and `T` is the
/// last (`2e12` → `"2.0T"`).
pub fn compact_fixed_ascii(v: f64, decimals: usize) -> String {
    compact_fixed_with(v, decimals, COMPACT_STEPS)
}

/// [`compact_fixed_ascii`] with the given steps (ASCII digits, comma
/// groups; the suffix as the steps write it).
pub fn compact_fixed_with(v: f64, decimals: usize, steps: &[CompactStep]) -> String {
    if !v.is_finite() {
        return NOT_A_NUMBER.to_string();
    }
    let places = decimals.min(MAX_DECIMALS);
    let d = Decimal::of(v);
    let mut exponent = if d.is_zero() { i64::MIN } else { d.point - 1 };
    // a carry can move the value up one step; a step further is impossible
    for _ in 0..4 {
        let step = step_for(steps, exponent);
        let unit = step.map_or(0, |s| s.1);
        let mut scaled = d.clone();
        if !scaled.is_zero() {
            scaled.point -= unit;
        }
        scaled.round_decimals(places);
        let rounded = if scaled.is_zero() {
            i64::MIN
        } else {
            scaled.point - 1 + unit
        };
        if step_for(steps, rounded) != step && rounded > exponent {
            exponent = rounded;
            continue;
        }
        let suffix = step.map_or("", |s| s.2);
        return with_sign(
            v < 0.0,
            &scaled,
            format!("{}{suffix}", scaled.render(places)),
        );
    }
    NOT_A_NUMBER.to_string()
}

/// [`compact`] in the crescendo convention whatever the locale.
pub fn compact_ascii(v: f64) -> String {
    compact_with(v, COMPACT_STEPS)
}

/// [`compact`] with the given steps (ASCII digits, comma groups).
pub fn compact_with(v: f64, steps: &[CompactStep]) -> String {
    if !v.is_finite() {
        return NOT_A_NUMBER.to_string();
    }
    let mut d = Decimal::of(v);
    d.round_significant(COMPACT_SIGNIFICANT);
    // `point - 1` is the decimal exponent of the (rounded) value
    if let Some((_, unit, suffix)) = step_for(steps, d.point - 1).filter(|_| !d.is_zero()) {
        let scaled = Decimal {
            digits: d.digits.clone(),
            point: d.point - unit,
        };
        let shown = scaled.decimals_needed();
        return with_sign(v < 0.0, &d, format!("{}{suffix}", scaled.render(shown)));
    }
    let shown = d.decimals_needed();
    with_sign(v < 0.0, &d, d.render(shown))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn number_table() {
        // (value, decimals, expected). Expected strings follow the rules in
        // the module docs (our own conventions, common practice of the
        // trade: comma grouping, no trailing zeros, half away from zero).
        let cases: &[(f64, Option<usize>, &str)] = &[
            (0.0, None, "0"),
            (-0.0, None, "0"),
            (-0.0, Some(2), "0.00"),
            (20.0, None, "20"),
            (2.50, None, "2.5"),
            (0.1 + 0.2, None, "0.3"),
            (0.1 + 0.2, Some(2), "0.30"),
            (12345.0, None, "12,345"),
            (-12345.678, None, "-12,345.678"),
            (1234567.891, Some(1), "1,234,567.9"),
            (999.0, None, "999"),
            (1000.0, None, "1,000"),
            (100000.0, None, "100,000"),
            (999.95, Some(1), "1,000.0"),
            (999.95, Some(0), "1,000"),
            (-999.95, Some(1), "-1,000.0"),
            (0.0005, None, "0.0005"),
            (0.0005, Some(3), "0.001"),
            (0.0005, Some(2), "0.00"),
            (0.00049, Some(3), "0.000"),
            (-0.0004, Some(3), "0.000"),
            (-0.0006, Some(3), "-0.001"),
            (-0.0004, Some(2), "0.00"),
            (-0.0004, Some(0), "0"),
            (1.5, Some(0), "2"),
            (2.5, Some(0), "3"),
            (-2.5, Some(0), "-3"),
            (0.5, Some(0), "1"),
            (0.4, Some(0), "0"),
            (1.0, Some(1), "1.0"),
            (7.0, Some(3), "7.000"),
            (1e21, None, "1,000,000,000,000,000,000,000"),
            (-1.5e15, None, "-1,500,000,000,000,000"),
            (123_456_789_012_345_680.0, None, "123,456,789,012,000,000"),
            (1e-7, None, "0.0000001"),
            // 14 significant digits in, MAX_SIGNIFICANT (12) out.
            (3700.6622516556, None, "3,700.66225166"),
            (3700.66225, None, "3,700.66225"),
            (3700.6622516556, Some(1), "3,700.7"),
            (0.9999999999999999, None, "1"),
            (f64::NAN, None, "n/a"),
            (f64::INFINITY, Some(2), "n/a"),
            (f64::NEG_INFINITY, None, "n/a"),
        ];
        for &(v, d, want) in cases {
            assert_eq!(number(v, d), want, "number({v:?}, {d:?})");
        }
    }

    #[test]
    fn rounding_is_on_the_decimal_string() {
        // The binary double nearest 2.675 lies below it
        // (2.67499999999999982236431605997495353221893310546875), so Rust's
        // own `{:.2}` prints "2.67". We round the decimal a reader sees,
        // half away from zero: "2.68". Same for 1.005 (binary
        // 1.00499999999999989...).
        assert_eq!(format!("{:.2}", 2.675), "2.67");
        assert_eq!(number(2.675, Some(2)), "2.68");
        assert_eq!(number(-2.675, Some(2)), "-2.68");
        assert_eq!(number(1.005, Some(2)), "1.01");
        assert_eq!(number(2.665, Some(2)), "2.67");
        assert_eq!(number(0.125, Some(2)), "0.13");
    }

    #[test]
    fn huge_decimals_are_capped() {
        let s = number(1.0, Some(usize::MAX));
        assert_eq!(s.len(), 2 + MAX_DECIMALS);
    }

    #[test]
    fn tick_label_table() {
        let cases: &[(&[f64], f64, &[&str])] = &[
            (
                &[0.0, 0.25, 0.5, 0.75, 1.0],
                0.25,
                &["0", "0.25", "0.5", "0.75", "1"],
            ),
            (
                &[0.0, 0.1, 0.2, 0.1 * 3.0, 0.4],
                0.1,
                &["0", "0.1", "0.2", "0.3", "0.4"],
            ),
            (&[-5.0, 0.0, 5.0, 10.0], 5.0, &["-5", "0", "5", "10"]),
            (
                &[0.0, 2500.0, 5000.0, 7500.0, 10000.0],
                2500.0,
                &["0", "2,500", "5,000", "7,500", "10,000"],
            ),
            (
                &[-12.5, -10.0, -7.5, -2.5, 0.0, 2.5],
                2.5,
                &["-12.5", "-10", "-7.5", "-2.5", "0", "2.5"],
            ),
            (
                &[0.0, 0.0025, 0.005, 0.0075, 0.01],
                0.0025,
                &["0", "0.0025", "0.005", "0.0075", "0.01"],
            ),
            // A value carrying noise below the step's precision, and a tiny
            // negative that must not print as "-0".
            (&[1.0000000001, -1e-12], 0.5, &["1", "0"]),
            // Step given with noise: 0.30000000000000004 still means 1 decimal.
            (&[0.0, 0.1 + 0.2], 0.1 + 0.2, &["0", "0.3"]),
            // Degenerate steps fall back to `number`.
            (&[1.25], 0.0, &["1.25"]),
            (&[1.25, f64::NAN], f64::NAN, &["1.25", "n/a"]),
        ];
        for &(values, step, want) in cases {
            assert_eq!(tick_labels(values, step), want, "step {step}");
        }
    }

    #[test]
    fn compact_table() {
        let cases: &[(f64, &str)] = &[
            (0.0, "0"),
            (-0.0, "0"),
            (950.0, "950"),
            (999.0, "999"),
            (999.6, "1k"),
            (1_000.0, "1k"),
            (1_234.0, "1.23k"),
            (12_300.0, "12.3k"),
            (-12_300.0, "-12.3k"),
            (123_456.0, "123k"),
            (999_950.0, "1M"),
            (4_500_000.0, "4.5M"),
            (2.5e9, "2.5B"),
            (7e12, "7T"),
            (2e15, "2,000T"),
            (0.012345, "0.0123"),
            (12.345, "12.3"),
            (f64::NAN, "n/a"),
        ];
        for &(v, want) in cases {
            assert_eq!(compact(v), want, "compact({v:?})");
        }
    }
}
