//! Numbers and dates written the way the host writes them: the story's
//! locale comes in the request ([`Request::writing`](crate::Request)), and
//! these methods apply it with the host's rounding (half away from zero on
//! the shortest decimal digits of the double, so `2.25` to one decimal is
//! `2.3`, and `0.145` as a percentage to no decimal is `15%`).
//!
//! ```
//! use crescendo_plugin::Writing;
//!
//! let english = Writing::default();
//! assert_eq!(english.number(1230.0, 0), "1,230");
//! assert_eq!(english.number(-2.25, 1), "\u{2212}2.3");
//! ```

use crate::message::Writing;

/// The shortest decimal digits of `|v|` with the point moved `shift`
/// places right, rounded half away from zero to `places` decimals: the
/// whole digits (at least `0`) and the decimals (exactly `places`).
fn rounded(v: f64, shift: i32, places: usize) -> (String, String) {
    let sci = format!("{:e}", v.abs());
    let (mantissa, exponent) = sci.split_once('e').unwrap_or((&sci, "0"));
    let mut digits: Vec<u8> = mantissa.bytes().filter(u8::is_ascii_digit).collect();
    let mut point = exponent.parse::<i32>().unwrap_or(0) + 1 + shift;
    if point < 0 {
        let pad = vec![b'0'; point.unsigned_abs() as usize];
        digits.splice(0..0, pad);
        point = 0;
    }
    let point = point as usize;
    let keep = point + places;
    if digits.len() < keep {
        digits.resize(keep, b'0');
    }
    let up = digits.get(keep).is_some_and(|&d| d >= b'5');
    digits.truncate(keep);
    let mut point = point;
    if up {
        let mut i = keep;
        loop {
            if i == 0 {
                digits.insert(0, b'1');
                point += 1;
                break;
            }
            i -= 1;
            if digits[i] == b'9' {
                digits[i] = b'0';
            } else {
                digits[i] += 1;
                break;
            }
        }
    }
    let whole = String::from_utf8_lossy(&digits[..point]);
    let whole = whole.trim_start_matches('0');
    let whole = if whole.is_empty() { "0" } else { whole };
    let decimals = String::from_utf8_lossy(&digits[point..]).into_owned();
    (whole.to_string(), decimals)
}

impl Writing {
    /// ASCII digits in this writing's digits.
    fn digits_of(&self, ascii: &str) -> String {
        let digits: Vec<char> = self.digits.chars().collect();
        ascii
            .chars()
            .map(|c| match c.to_digit(10) {
                Some(d) if digits.len() == 10 => digits[d as usize],
                _ => c,
            })
            .collect()
    }

    /// Whole digits, grouped by three from the right when there are at
    /// least `group_from` of them.
    fn grouped(&self, whole: &str) -> String {
        if whole.len() < self.group_from.max(1) {
            return self.digits_of(whole);
        }
        let mut out = String::new();
        for (i, c) in whole.chars().enumerate() {
            if i > 0 && (whole.len() - i).is_multiple_of(3) {
                out.push_str(&self.group);
            }
            out.push(c);
        }
        self.digits_of(&out)
    }

    /// Sign, grouped whole digits and decimals; a value that rounds to
    /// zero carries no sign.
    fn write(&self, negative: bool, whole: &str, decimals: &str) -> String {
        let zero = whole == "0" && decimals.chars().all(|c| c == '0');
        let sign = if negative && !zero {
            self.minus.as_str()
        } else {
            ""
        };
        let mut s = format!("{sign}{}", self.grouped(whole));
        if !decimals.is_empty() {
            s.push_str(&self.decimal);
            s.push_str(&self.digits_of(decimals));
        }
        s
    }

    /// A number to at most `decimals` decimals, without trailing zeros:
    /// `1230` → `1,230` (`1.230` under `de-DE`), `-2.25` to 1 → `−2.3`.
    pub fn number(&self, v: f64, decimals: usize) -> String {
        if !v.is_finite() {
            return "n/a".to_string();
        }
        let (whole, frac) = rounded(v, 0, decimals.min(12));
        self.write(v < 0.0, &whole, frac.trim_end_matches('0'))
    }

    /// A number to exactly `decimals` decimals (`2.50`).
    pub fn fixed(&self, v: f64, decimals: usize) -> String {
        if !v.is_finite() {
            return "n/a".to_string();
        }
        let (whole, frac) = rounded(v, 0, decimals.min(12));
        self.write(v < 0.0, &whole, &frac)
    }

    /// Like [`Writing::number`], with a `+` on numbers above zero (changes).
    pub fn signed(&self, v: f64, decimals: usize) -> String {
        let s = self.number(v, decimals);
        if v > 0.0 && s != self.number(0.0, decimals) {
            format!("+{s}")
        } else {
            s
        }
    }

    /// A share as a percentage to `decimals` decimals (`0.527` → `52.7%`,
    /// `52,7 %` under `de-DE`): the point moves, nothing is multiplied.
    pub fn percent(&self, share: f64, decimals: usize) -> String {
        if !share.is_finite() {
            return "n/a".to_string();
        }
        let (whole, frac) = rounded(share, 2, decimals.min(12));
        format!("{}{}", self.write(share < 0.0, &whole, &frac), self.percent)
    }

    /// A short form with the locale's compact steps to at most `decimals`
    /// decimals (`4,500,000` → `4.5M`, `4,5 Mio.` under `de-DE`); a value
    /// below the smallest step is written whole.
    pub fn compact(&self, v: f64, decimals: usize) -> String {
        if !v.is_finite() {
            return "n/a".to_string();
        }
        let places = decimals.min(12);
        let (whole, _) = rounded(v, 0, 0);
        let mut exponent = whole.len() as u32 - 1;
        for _ in 0..4 {
            let step = self.compact.iter().find(|s| exponent >= s.from);
            let unit = step.map_or(0, |s| s.unit);
            let (w, f) = rounded(v, -(unit as i32), places);
            let grown = w.len() as u32 - 1 + unit;
            // a carry into the next step (999,950 → 1.0M) writes that step
            let next = self.compact.iter().find(|s| grown >= s.from);
            if w != "0" && next.map(|s| s.unit) != step.map(|s| s.unit) && grown > exponent {
                exponent = grown;
                continue;
            }
            let suffix = step.map_or("", |s| s.suffix.as_str());
            return format!(
                "{}{suffix}",
                self.write(v < 0.0, &w, f.trim_end_matches('0'))
            );
        }
        self.number(v, places)
    }

    /// A time cell of the request (`2024-07`, `2024-07-31`) as the host
    /// writes it (`Jul 2024`, `31.07.2024`); other text as it is.
    pub fn time<'a>(&'a self, cell: &'a str) -> &'a str {
        self.times.get(cell).map_or(cell, String::as_str)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::CompactStep;

    /// The writing the host sends under `de-DE` (CLDR 49, as the host's
    /// own test in `crescendo_plan` derives it).
    fn german() -> Writing {
        let step = |n: u32, suffix: &str| CompactStep {
            from: n,
            unit: n,
            suffix: suffix.into(),
        };
        Writing {
            locale: Some("de-DE".into()),
            decimal: ",".into(),
            group: ".".into(),
            percent: "\u{a0}%".into(),
            compact: vec![
                step(12, "\u{a0}Bio."),
                step(9, "\u{a0}Mrd."),
                step(6, "\u{a0}Mio."),
            ],
            ..Writing::default()
        }
    }

    #[test]
    fn rounding_is_half_away_from_zero_on_the_decimal_digits() {
        // 2.675 is stored as 2.67499999999999982236431605997495353221893310546875,
        // yet its shortest digits are 2.675: the host rounds those
        assert_eq!(rounded(2.675, 0, 2), ("2".into(), "68".into()));
        assert_eq!(rounded(2.25, 0, 1), ("2".into(), "3".into()));
        assert_eq!(rounded(0.145, 2, 0), ("15".into(), String::new()));
        assert_eq!(rounded(9.96, 0, 1), ("10".into(), "0".into()));
        assert_eq!(rounded(0.0004, 0, 2), ("0".into(), "00".into()));
        assert_eq!(rounded(123456.0, -3, 1), ("123".into(), "5".into()));
    }

    #[test]
    fn numbers_read_like_the_frames() {
        let en = Writing::default();
        assert_eq!(en.number(1230.0, 0), "1,230");
        assert_eq!(en.number(1234.5, 2), "1,234.5");
        assert_eq!(en.fixed(2.5, 2), "2.50");
        assert_eq!(en.number(-0.001, 1), "0");
        assert_eq!(en.signed(120.0, 0), "+120");
        assert_eq!(en.signed(-45.0, 0), "\u{2212}45");
        assert_eq!(en.percent(0.527, 1), "52.7%");
        assert_eq!(en.compact(4_500_000.0, 1), "4.5M");
        assert_eq!(en.compact(999_950.0, 1), "1M");
        assert_eq!(en.compact(950.0, 1), "950");
        let de = german();
        assert_eq!(de.number(1230.0, 0), "1.230");
        assert_eq!(de.number(-1234.56, 1), "\u{2212}1.234,6");
        assert_eq!(de.percent(0.527, 1), "52,7\u{a0}%");
        assert_eq!(de.compact(4_500_000.0, 1), "4,5\u{a0}Mio.");
        // German has no thousands step: 548,000 is written whole
        assert_eq!(de.compact(548_000.0, 1), "548.000");
        let es = Writing {
            group: ".".into(),
            decimal: ",".into(),
            group_from: 5,
            ..Writing::default()
        };
        assert_eq!(es.number(1234.0, 0), "1234");
        assert_eq!(es.number(12345.0, 0), "12.345");
    }

    #[test]
    fn times_read_as_the_host_wrote_them() {
        let mut de = german();
        de.times.insert("2024-03".into(), "Mär 2024".into());
        assert_eq!(de.time("2024-03"), "Mär 2024");
        assert_eq!(de.time("East"), "East");
    }
}
