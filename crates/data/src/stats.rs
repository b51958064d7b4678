//! The numeric core of story *values* and *claims*: summaries of a list of
//! numbers (sum, mean, median, extremes, variance), comparisons of two
//! numbers (share, ratio, change, percent change, compound growth), ranking,
//! and a straight-line fit with Pearson's correlation.
//!
//! Every function is pure, deterministic and total: it never panics, and it
//! answers either a finite number or a [`StatError`] that says in plain words
//! why there is no number. Missing cells are removed by the caller before a
//! slice reaches this module; a NaN or infinite input is still rejected with
//! [`StatError::NotFinite`] rather than silently propagated.
//!
//! Choices made here:
//!
//! * **An empty list is an error for every summary, `sum` included.** A claim
//!   such as "the night routes carry no riders" must not pass because a
//!   filter matched no rows (a typo in a route name, say); `Err(Empty)` makes
//!   the build say "no rows were selected" instead. This also matches the
//!   view engine, where `sum` of a group with no values is a missing cell.
//! * **`Empty` means nothing was selected; `TooFew` means something was, but
//!   not enough** (variance, fit and correlation need two points).
//! * Sums are exact, rounded once (the view engine's sum), and the
//!   variance and line fit use two-pass centred sums (common practice for
//!   accuracy: the textbook one-pass formula Σx² − (Σx)²/n cancels badly).

use std::fmt;

/// Why a value could not be computed.
#[derive(Clone, Debug, PartialEq)]
pub enum StatError {
    /// No values were selected.
    Empty,
    /// The computation would divide by zero: the share of a zero total, the
    /// percent change from 0, a ratio to 0.
    DivideByZero,
    /// Fewer values than the computation needs (variance, line fit and
    /// correlation need two).
    TooFew { needed: usize, got: usize },
    /// A slope or correlation over x values that are all equal, or a
    /// correlation over y values that are all equal.
    NoVariation,
    /// A growth rate from a start ≤ 0 or to an end < 0.
    NotPositive,
    /// A growth rate over a period ≤ 0 (or one that is not a finite number).
    BadPeriod,
    /// An input or the result is infinite or not a number (overflow), or an
    /// intermediate sum of squares underflowed to zero.
    NotFinite,
    /// The exact sum is beyond the largest number (about ±1.8 × 10^308).
    Overflow,
    /// The value to rank is not among the values it is ranked in.
    NotAmong,
    /// A line fit or correlation was given different numbers of x and y
    /// values.
    LengthMismatch { xs: usize, ys: usize },
}

impl StatError {
    /// A short phrase for diagnostics, written to follow "cannot compute
    /// this value: ".
    pub fn message(&self) -> String {
        match self {
            StatError::Empty => "no rows were selected".to_owned(),
            StatError::DivideByZero => "it would divide by zero".to_owned(),
            StatError::TooFew { needed, got } => {
                let values = if *got == 1 {
                    "value was"
                } else {
                    "values were"
                };
                format!("it needs at least {needed} values, but only {got} {values} selected")
            }
            StatError::NoVariation => "the values are all the same, so there is no slope or \
                 correlation"
                .to_owned(),
            StatError::NotPositive => "a growth rate needs a starting value above zero and an \
                 ending value of zero or more"
                .to_owned(),
            StatError::BadPeriod => "a growth rate needs a period longer than zero".to_owned(),
            StatError::NotFinite => {
                "the numbers are too large or too small to compute with".to_owned()
            }
            StatError::Overflow => {
                "the sum is beyond the largest number (about ±1.8 × 10^308)".to_owned()
            }
            StatError::NotAmong => "the value is not among the values it is ranked in".to_owned(),
            StatError::LengthMismatch { xs, ys } => {
                format!("there are {xs} x values but {ys} y values")
            }
        }
    }
}

impl fmt::Display for StatError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message())
    }
}

impl std::error::Error for StatError {}

/// `Ok(x)` when `x` is finite, else `Err(NotFinite)`.
fn finite(x: f64) -> Result<f64, StatError> {
    if x.is_finite() {
        Ok(x)
    } else {
        Err(StatError::NotFinite)
    }
}

/// Rejects an empty slice and any non-finite value in it.
fn checked(xs: &[f64]) -> Result<&[f64], StatError> {
    if xs.is_empty() {
        Err(StatError::Empty)
    } else if xs.iter().all(|x| x.is_finite()) {
        Ok(xs)
    } else {
        Err(StatError::NotFinite)
    }
}

/// The sum of the terms, exact and rounded once: the view engine's
/// [`crate::view::Sum`] (Shewchuk's partials, as Python's `math.fsum`), so
/// a value and a view summing the same cells give the same bits, whatever
/// their order. May be non-finite on overflow.
fn exact_sum(terms: impl Iterator<Item = f64>) -> f64 {
    let mut sum = crate::view::Sum::default();
    for x in terms {
        sum.add(x);
    }
    sum.total().unwrap_or(0.0)
}

/// Σ xᵢ, exact (see [`exact_sum`]); 0 for no terms. What charts total
/// (stacks, pies, orders by total) with.
pub fn total(xs: impl IntoIterator<Item = f64>) -> f64 {
    exact_sum(xs.into_iter())
}

/// Σ xᵢ, exact (see [`exact_sum`]).
///
/// An empty list is `Err(Empty)`, not 0 (see the module notes: a claim over
/// no rows must not pass silently).
///
/// The sum is exact, so a total that is a number again after a running
/// sum would have overflowed (`1.7e308 + 1.7e308 - 1.7e308`) is given, and
/// one beyond the largest number is `Err(Overflow)`, as a view's `sum`
/// reports it.
pub fn sum(xs: &[f64]) -> Result<f64, StatError> {
    let total = exact_sum(checked(xs)?.iter().copied());
    if total.is_finite() {
        Ok(total)
    } else {
        Err(StatError::Overflow)
    }
}

/// Arithmetic mean x̄ = (Σ xᵢ) / n.
///
/// The sum is exact; if it would overflow, the terms are divided by n
/// first. The result is kept within [min, max], so the mean of equal values
/// is exactly that value.
pub fn mean(xs: &[f64]) -> Result<f64, StatError> {
    let xs = checked(xs)?;
    // the view engine's mean (one exact summation everywhere: a value's
    // `mean` and a view's `mean` of the same cells give the same bits; a
    // total beyond the largest number is carried scaled, so the mean of
    // huge values is still found)
    let mut sum = crate::view::Sum::default();
    for &x in xs {
        sum.add(x);
    }
    let m = finite(sum.mean().unwrap_or(f64::NAN))?;
    Ok(m.clamp(min(xs)?, max(xs)?))
}

/// The median: the middle value of the sorted list, or for an even count the
/// mean of the two middle values, x₍ₙ/₂₎/2 + x₍ₙ/₂₊₁₎/2 (halved before adding
/// so that it cannot overflow).
pub fn median(xs: &[f64]) -> Result<f64, StatError> {
    let mut sorted = checked(xs)?.to_vec();
    sorted.sort_by(f64::total_cmp);
    let n = sorted.len();
    let upper = sorted.get(n / 2).copied().ok_or(StatError::Empty)?;
    if n % 2 == 1 {
        return Ok(upper);
    }
    let lower = sorted.get(n / 2 - 1).copied().ok_or(StatError::Empty)?;
    finite(lower / 2.0 + upper / 2.0)
}

/// The smallest value.
pub fn min(xs: &[f64]) -> Result<f64, StatError> {
    Ok(checked(xs)?.iter().copied().fold(f64::INFINITY, f64::min))
}

/// The largest value.
pub fn max(xs: &[f64]) -> Result<f64, StatError> {
    Ok(checked(xs)?
        .iter()
        .copied()
        .fold(f64::NEG_INFINITY, f64::max))
}

/// Sample variance s² = Σ (xᵢ − x̄)² / (n − 1): [`sample_variance`].
pub fn variance(xs: &[f64]) -> Result<f64, StatError> {
    sample_variance(xs)
}

/// Which divisor a spread uses: n − 1 for a sample that stands for a
/// larger group (Bessel's correction, common practice), n for a whole
/// population.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Divisor {
    /// n − 1: the spread of a sample, as an estimate of its population's.
    Sample,
    /// n: the spread of exactly these values.
    Population,
}

/// Sample variance s² = Σ (xᵢ − x̄)² / (n − 1). Needs at least two values.
///
/// The sum of squares is exact (see [`spread`]), so the result is the exact
/// variance rounded to a double, as Python's `statistics.variance` gives it
/// (within the last bit in rare ties).
pub fn sample_variance(xs: &[f64]) -> Result<f64, StatError> {
    spread(xs, Divisor::Sample).map(|s| s.variance)
}

/// Population variance σ² = Σ (xᵢ − x̄)² / n (as `statistics.pvariance`).
pub fn population_variance(xs: &[f64]) -> Result<f64, StatError> {
    spread(xs, Divisor::Population).map(|s| s.variance)
}

/// Sample standard deviation s = √(Σ (xᵢ − x̄)² / (n − 1)) (as
/// `statistics.stdev`). Needs at least two values.
pub fn sample_standard_deviation(xs: &[f64]) -> Result<f64, StatError> {
    spread(xs, Divisor::Sample).map(|s| s.deviation)
}

/// Population standard deviation σ = √(Σ (xᵢ − x̄)² / n) (as
/// `statistics.pstdev`).
pub fn population_standard_deviation(xs: &[f64]) -> Result<f64, StatError> {
    spread(xs, Divisor::Population).map(|s| s.deviation)
}

/// A variance and its square root.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Spread {
    pub variance: f64,
    pub deviation: f64,
}

/// The variance and standard deviation of `xs` with the given divisor.
///
/// Exact where the view engine is exact: with the rounded mean m, each
/// deviation xᵢ − m is split exactly into two doubles (Knuth's TwoSum) and
/// squared exactly into products and their errors (a fused multiply-add
/// gives each product's error exactly, common practice), and all these
/// terms go into the engine's exact sum. The sum of squares about the true
/// mean x̄ is then Σ (xᵢ − m)² − D²/n with D = Σ (xᵢ − m) (the identity
/// Σ (xᵢ − c)² = Σ (xᵢ − x̄)² + n (x̄ − c)², common practice), so the
/// rounding of m costs nothing. The sum is kept as a pair hi + lo for the
/// division and the square root, each corrected by one Newton step, so the
/// results are the exact figures rounded once, but for a rare last bit.
///
/// The sample divisor needs two values (`TooFew`); the population divisor
/// one. A sum of squares beyond the largest double is `NotFinite`.
pub fn spread(xs: &[f64], divisor: Divisor) -> Result<Spread, StatError> {
    let xs = checked(xs)?;
    let n = xs.len();
    let k = match divisor {
        Divisor::Sample if n < 2 => return Err(StatError::TooFew { needed: 2, got: n }),
        Divisor::Sample => (n - 1) as f64,
        Divisor::Population => n as f64,
    };
    let m = mean(xs)?;
    let (hi, lo) = exact_centred_ss(xs, m)?;
    if hi <= 0.0 {
        return Ok(Spread {
            variance: 0.0,
            deviation: 0.0,
        });
    }
    // (hi + lo) / k: a quotient, then its remainder divided again.
    let v = hi / k;
    let v_lo = ((-v).mul_add(k, hi) + lo) / k;
    let variance = finite(v + v_lo)?;
    // √(v + v_lo): the root of the rounded part, then one Newton step
    // on the remainder (s² taken exactly with a fused multiply-add).
    let s = v.sqrt();
    let sq_lo = s.mul_add(s, -(s * s));
    let rest = ((v - s * s) - sq_lo) + v_lo;
    let deviation = finite(s + rest / (2.0 * s))?;
    Ok(Spread {
        variance: variance.max(0.0),
        deviation: deviation.max(0.0),
    })
}

/// Σ (xᵢ − m)² − (Σ (xᵢ − m))² / n, both sums exact (for the line fit).
fn centred_ss(xs: &[f64], m: f64) -> f64 {
    let n = xs.len() as f64;
    let d = exact_sum(xs.iter().map(|x| x - m));
    exact_sum(xs.iter().map(|x| (x - m) * (x - m))) - d * d / n
}

/// a + b as a rounded sum and its exact error (Knuth's TwoSum).
fn two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    let bb = s - a;
    (s, (a - (s - bb)) + (b - bb))
}

/// a · b as a rounded product and its exact error (a fused multiply-add).
fn two_product(a: f64, b: f64) -> (f64, f64) {
    let p = a * b;
    (p, a.mul_add(b, -p))
}

/// Σ (xᵢ − x̄)² about the true mean, exactly, as hi + lo (hi the sum rounded
/// once, lo the rest rounded once), given the rounded mean `m`.
fn exact_centred_ss(xs: &[f64], m: f64) -> Result<(f64, f64), StatError> {
    let mut squares = crate::view::Sum::default();
    let mut deviations = crate::view::Sum::default();
    for &x in xs {
        let (dh, dl) = two_sum(x, -m);
        deviations.add(dh);
        deviations.add(dl);
        let (p1, e1) = two_product(dh, dh);
        let (p2, e2) = two_product(2.0 * dh, dl);
        let (p3, e3) = two_product(dl, dl);
        for t in [p1, e1, p2, e2, p3, e3] {
            squares.add(t);
        }
    }
    let n = xs.len() as f64;
    let d = finite(deviations.total().unwrap_or(0.0))?;
    let (q1, q2) = two_product(d, d);
    squares.add(-(q1 / n));
    squares.add(-(q2 / n));
    let hi = finite(squares.total().unwrap_or(0.0))?;
    let mut rest = squares.clone();
    rest.add(-hi);
    let lo = finite(rest.total().unwrap_or(0.0))?;
    Ok((hi, lo))
}

/// The share of `part` in `total` as a fraction: part / total (0.25 is a
/// quarter). A zero total is `Err(DivideByZero)`.
pub fn share(part: f64, total: f64) -> Result<f64, StatError> {
    ratio(part, total)
}

/// The ratio a / b. A zero `b` is `Err(DivideByZero)`.
pub fn ratio(a: f64, b: f64) -> Result<f64, StatError> {
    finite(a)?;
    finite(b)?;
    if b == 0.0 {
        return Err(StatError::DivideByZero);
    }
    finite(a / b)
}

/// The absolute change last − first.
pub fn change(first: f64, last: f64) -> Result<f64, StatError> {
    finite(first)?;
    finite(last)?;
    finite(last - first)
}

/// The relative change (last − first) / |first| as a fraction (0.5 is a 50 %
/// rise). Dividing by |first| keeps the sign of the change: from −100 to −50
/// is +0.5, an improvement. A zero `first` is `Err(DivideByZero)`.
pub fn percent_change(first: f64, last: f64) -> Result<f64, StatError> {
    let delta = change(first, last)?;
    if first == 0.0 {
        return Err(StatError::DivideByZero);
    }
    finite(delta / first.abs())
}

/// Compound annual growth rate g = (last / first)^(1 / years) − 1, as a
/// fraction per year (0.1 is 10 % a year).
///
/// Computed as expm1(ln(last / first) / years), which keeps full precision
/// for small rates. Needs first > 0, last ≥ 0 (`NotPositive` otherwise; a
/// last of 0 is a rate of −1) and years > 0 (`BadPeriod` otherwise).
///
/// Worked by hand:
/// * 2,000 → 2,662 over 3 years: 2662 / 2000 = 1.331 = 1.1 × 1.1 × 1.1, so
///   g = 1.1 − 1 = 0.1, 10 % a year exactly.
/// * 1,250 → 1,800 over 2 years: 1800 / 1250 = 1.44 = 1.2², so g = 0.2.
/// * 500 → 800 over 4 years: 800 / 500 = 1.6; 1.6^(1/4) = √√1.6;
///   √1.6 = 1.264911064…, √1.264911064… = 1.124682650…, so g ≈ 0.1246827,
///   about 12.47 % a year. Check: 1.1246827² = 1.2649110…, squared again
///   1.6000000….
pub fn growth_rate(first: f64, last: f64, years: f64) -> Result<f64, StatError> {
    finite(first)?;
    finite(last)?;
    if !(years.is_finite() && years > 0.0) {
        return Err(StatError::BadPeriod);
    }
    if first <= 0.0 || last < 0.0 {
        return Err(StatError::NotPositive);
    }
    if last == 0.0 {
        return Ok(-1.0);
    }
    let q = last / first;
    // ln(last / first), without the quotient overflowing or underflowing.
    let log_q = if q.is_finite() && q > 0.0 {
        q.ln()
    } else {
        last.ln() - first.ln()
    };
    finite((log_q / years).exp_m1())
}

/// The rank of `value` among `all` from the largest down: 1 is the largest,
/// and equal values share the best rank ("1224" standard competition ranking,
/// common practice), i.e. 1 + the number of values strictly greater than
/// `value`. `value` must occur in `all` (`Err(NotAmong)` otherwise).
pub fn rank_descending(value: f64, all: &[f64]) -> Result<usize, StatError> {
    let all = checked(all)?;
    finite(value)?;
    if !all.contains(&value) {
        return Err(StatError::NotAmong);
    }
    Ok(1 + all.iter().filter(|&&x| x > value).count())
}

/// An ordinary-least-squares line y = intercept + slope · x.
#[derive(Clone, Debug, PartialEq)]
pub struct LinearFit {
    /// Sxy / Sxx.
    pub slope: f64,
    /// ȳ − slope · x̄.
    pub intercept: f64,
    /// Pearson's r = Sxy / √(Sxx · Syy); `None` when every y is equal.
    pub r: Option<f64>,
    /// The number of (x, y) points.
    pub n: usize,
}

/// Centred sums of a paired sample.
struct Centred {
    x_mean: f64,
    y_mean: f64,
    sxx: f64,
    syy: f64,
    sxy: f64,
    x_constant: bool,
    y_constant: bool,
}

fn centred(xs: &[f64], ys: &[f64]) -> Result<Centred, StatError> {
    if xs.len() != ys.len() {
        return Err(StatError::LengthMismatch {
            xs: xs.len(),
            ys: ys.len(),
        });
    }
    let (xs, ys) = (checked(xs)?, checked(ys)?);
    if xs.len() < 2 {
        return Err(StatError::TooFew {
            needed: 2,
            got: xs.len(),
        });
    }
    let (x_mean, y_mean) = (mean(xs)?, mean(ys)?);
    let sxy = exact_sum(xs.iter().zip(ys).map(|(x, y)| (x - x_mean) * (y - y_mean)));
    let constant = |v: &[f64]| v.iter().all(|&a| Some(&a) == v.first());
    Ok(Centred {
        x_mean,
        y_mean,
        sxx: finite(centred_ss(xs, x_mean))?.max(0.0),
        syy: finite(centred_ss(ys, y_mean))?.max(0.0),
        sxy: finite(sxy)?,
        x_constant: constant(xs),
        y_constant: constant(ys),
    })
}

impl Centred {
    /// r = Sxy / (√Sxx · √Syy), held within [−1, 1] against rounding.
    fn r(&self) -> Result<f64, StatError> {
        if self.x_constant || self.y_constant {
            return Err(StatError::NoVariation);
        }
        // √(Sxx·Syy) is exact more often (a perfect line gives r = ±1
        // exactly); the product of roots survives when the product overflows.
        let product = self.sxx * self.syy;
        let denominator = if product.is_finite() && product > 0.0 {
            product.sqrt()
        } else {
            self.sxx.sqrt() * self.syy.sqrt()
        };
        if denominator == 0.0 {
            // The values vary, but their squared deviations underflowed.
            return Err(StatError::NotFinite);
        }
        Ok(finite(self.sxy / denominator)?.clamp(-1.0, 1.0))
    }
}

/// Fits y = intercept + slope · x by ordinary least squares over the points
/// (xsᵢ, ysᵢ):
///
/// slope = Sxy / Sxx, intercept = ȳ − slope · x̄, r = Sxy / √(Sxx · Syy),
///
/// with the centred sums Sxx = Σ (xᵢ − x̄)², Syy = Σ (yᵢ − ȳ)²,
/// Sxy = Σ (xᵢ − x̄)(yᵢ − ȳ) taken in a second pass after the means (for
/// accuracy). Needs at least two points (`Empty` for none, `TooFew` for one)
/// and x values that are not all equal (`NoVariation`). When every y is
/// equal the line is flat and `r` is `None`.
pub fn linear_fit(xs: &[f64], ys: &[f64]) -> Result<LinearFit, StatError> {
    let c = centred(xs, ys)?;
    if c.x_constant {
        return Err(StatError::NoVariation);
    }
    if c.sxx == 0.0 {
        // The x values vary, but their squared deviations underflowed.
        return Err(StatError::NotFinite);
    }
    let slope = finite(c.sxy / c.sxx)?;
    let intercept = finite(c.y_mean - slope * c.x_mean)?;
    let r = if c.y_constant { None } else { Some(c.r()?) };
    Ok(LinearFit {
        slope,
        intercept,
        r,
        n: xs.len(),
    })
}

/// Pearson's correlation coefficient r = Sxy / √(Sxx · Syy) of the points
/// (xsᵢ, ysᵢ), with the centred sums of [`linear_fit`]. Needs at least two
/// points, and neither the x nor the y values may be all equal
/// (`NoVariation`).
pub fn correlation(xs: &[f64], ys: &[f64]) -> Result<f64, StatError> {
    centred(xs, ys)?.r()
}

/// The days in a mean Gregorian year: 146,097 days per 400-year cycle / 400.
pub const DAYS_PER_YEAR: f64 = 365.2425;

/// Years from day `d0` to day `d1` (days since 1970-01-01, as in
/// [`crate::time`]): (d1 − d0) / 365.2425.
///
/// Dividing by the mean Gregorian year is common practice for growth rates
/// over dates: it averages the leap days over the 400-year cycle, so the
/// result does not depend on where in the span the 29ths of February fall,
/// and whole spans of years come out close to whole numbers (one calendar
/// year of 365 or 366 days is 0.9993 or 1.0021 years; four calendar years,
/// 1,461 days, are 4.0001, or 3.9973 across a skipped leap day as in 2100).
pub fn years_between_days(d0: i32, d1: i32) -> f64 {
    (i64::from(d1) - i64::from(d0)) as f64 / DAYS_PER_YEAR
}

/// Years from month index `m0` to `m1` (`year * 12 + month - 1`, as in
/// [`crate::time`]): (m1 − m0) / 12. Whole years come out exact.
pub fn years_between_months(m0: i32, m1: i32) -> f64 {
    (i64::from(m1) - i64::from(m0)) as f64 / 12.0
}

#[cfg(test)]
mod tests {
    #[test]
    fn a_mean_of_huge_values_is_found_as_a_view_finds_it() {
        // the total overflows; the scaled exact sum still gives the mean
        assert_eq!(mean(&[1.7e308, 1.7e308]), Ok(1.7e308));
        let m = mean(&[1.7e308, 1.5e308, -1.2e308]).expect("a mean");
        // (1.7 + 1.5 - 1.2) / 3 × 10^308, worked by hand
        assert!((m / 6.666_666_666_666_667e307 - 1.0).abs() < 1e-15, "{m}");
    }

    use super::*;
    use crate::time::days_from_civil;

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol * a.abs().max(b.abs()).max(1.0)
    }

    macro_rules! assert_close {
        ($got:expr, $want:expr, $tol:expr) => {{
            let (got, want): (f64, f64) = ($got, $want);
            assert!(close(got, want, $tol), "got {got}, want {want}");
        }};
    }

    #[test]
    fn every_error_has_a_distinct_message() {
        let all = [
            StatError::Empty,
            StatError::DivideByZero,
            StatError::TooFew { needed: 2, got: 1 },
            StatError::TooFew { needed: 2, got: 0 },
            StatError::NoVariation,
            StatError::NotPositive,
            StatError::BadPeriod,
            StatError::NotFinite,
            StatError::NotAmong,
            StatError::LengthMismatch { xs: 3, ys: 2 },
        ];
        let messages: Vec<String> = all.iter().map(StatError::message).collect();
        for (i, m) in messages.iter().enumerate() {
            assert!(!m.is_empty());
            assert!(!m.ends_with('.'), "{m}");
            assert_eq!(messages.iter().filter(|o| *o == m).count(), 1, "{m}");
            assert_eq!(all[i].to_string(), *m);
        }
        assert_eq!(StatError::Empty.message(), "no rows were selected");
        assert_eq!(
            StatError::TooFew { needed: 2, got: 1 }.message(),
            "it needs at least 2 values, but only 1 value was selected"
        );
        assert_eq!(
            StatError::TooFew { needed: 2, got: 0 }.message(),
            "it needs at least 2 values, but only 0 values were selected"
        );
        assert_eq!(
            StatError::LengthMismatch { xs: 3, ys: 2 }.message(),
            "there are 3 x values but 2 y values"
        );
    }

    #[test]
    fn sum_is_exact_and_empty_is_an_error() {
        assert_eq!(sum(&[1.0, 2.0, 3.5]), Ok(6.5));
        assert_eq!(sum(&[-2.0]), Ok(-2.0));
        // Naive left-to-right summation gives 0 and 2 here.
        assert_eq!(sum(&[1.0, 1e100, 1.0, -1e100]), Ok(2.0));
        assert_eq!(sum(&[1e16, 1.0, -1e16]), Ok(1.0));
        // 0.1 ten times: naive gives 0.9999999999999999.
        assert_eq!(sum(&[0.1; 10]), Ok(1.0));
        assert_eq!(sum(&[]), Err(StatError::Empty));
        assert_eq!(sum(&[f64::MAX, f64::MAX]), Err(StatError::Overflow));
        assert_eq!(sum(&[-f64::MAX, -1e308]), Err(StatError::Overflow));
        // the running sum overflows, the total does not (exact: 1.7e308)
        assert_eq!(sum(&[1.7e308, 1.7e308, -1.7e308]), Ok(1.7e308));
        assert_eq!(sum(&[1.0, f64::NAN]), Err(StatError::NotFinite));
        assert_eq!(sum(&[f64::INFINITY]), Err(StatError::NotFinite));
    }

    #[test]
    fn mean_handles_overflow_and_constant_lists() {
        assert_eq!(mean(&[1.0, 2.0, 3.0, 4.0]), Ok(2.5));
        assert_eq!(mean(&[-7.25]), Ok(-7.25));
        // The sum overflows; the mean does not.
        assert_eq!(mean(&[f64::MAX, f64::MAX]), Ok(f64::MAX));
        assert_close!(
            mean(&[f64::MAX, -f64::MAX / 2.0]).unwrap(),
            f64::MAX / 4.0,
            1e-15
        );
        // A constant list has exactly its value as mean.
        assert_eq!(mean(&[0.1, 0.1, 0.1]), Ok(0.1));
        assert_eq!(mean(&[]), Err(StatError::Empty));
        assert_eq!(mean(&[f64::NAN]), Err(StatError::NotFinite));
        assert_eq!(mean(&[1.0, f64::NEG_INFINITY]), Err(StatError::NotFinite));
    }

    #[test]
    fn median_odd_even_and_unsorted() {
        assert_eq!(median(&[5.0, 1.0, 3.0]), Ok(3.0));
        assert_eq!(median(&[4.0, 1.0, 3.0, 2.0]), Ok(2.5));
        assert_eq!(median(&[9.0]), Ok(9.0));
        assert_eq!(median(&[-1.0, -3.0]), Ok(-2.0));
        // Halving before adding avoids overflow.
        assert_eq!(median(&[f64::MAX, f64::MAX]), Ok(f64::MAX));
        assert_eq!(median(&[]), Err(StatError::Empty));
        assert_eq!(median(&[1.0, f64::NAN]), Err(StatError::NotFinite));
    }

    #[test]
    fn min_and_max() {
        let xs = [3.0, -2.5, 10.0, 0.0];
        assert_eq!(min(&xs), Ok(-2.5));
        assert_eq!(max(&xs), Ok(10.0));
        assert_eq!(min(&[4.0]), Ok(4.0));
        assert_eq!(max(&[4.0]), Ok(4.0));
        assert_eq!(min(&[]), Err(StatError::Empty));
        assert_eq!(max(&[]), Err(StatError::Empty));
        assert_eq!(min(&[1.0, f64::NAN]), Err(StatError::NotFinite));
        assert_eq!(max(&[f64::INFINITY]), Err(StatError::NotFinite));
    }

    #[test]
    fn variance_is_sample_and_two_pass() {
        // Worked by hand: 2, 4, 4, 4, 5, 5, 7, 9 has mean 5, squared
        // deviations 9+1+1+1+0+0+4+16 = 32, and 32 / 7 as sample variance.
        let xs = [2.0, 4.0, 4.0, 4.0, 5.0, 5.0, 7.0, 9.0];
        assert_close!(variance(&xs).unwrap(), 32.0 / 7.0, 1e-15);
        assert_eq!(variance(&[1.0, 3.0]), Ok(2.0));
        assert_eq!(variance(&[6.0, 6.0, 6.0]), Ok(0.0));
        // A large offset: the one-pass formula Σx² − (Σx)²/n loses every
        // digit here (it gives 0 or worse); the centred sums keep them.
        // 1e9 + {4, 7, 13, 16}: mean 1e9 + 10, deviations −6, −3, 3, 6,
        // squares 36 + 9 + 9 + 36 = 90, variance 90 / 3 = 30.
        let shifted = [1e9 + 4.0, 1e9 + 7.0, 1e9 + 13.0, 1e9 + 16.0];
        assert_eq!(variance(&shifted), Ok(30.0));
        assert_eq!(variance(&[]), Err(StatError::Empty));
        assert_eq!(
            variance(&[1.0]),
            Err(StatError::TooFew { needed: 2, got: 1 })
        );
        assert_eq!(variance(&[1.0, f64::NAN]), Err(StatError::NotFinite));
        assert_eq!(variance(&[f64::MAX, -f64::MAX]), Err(StatError::NotFinite));
    }

    #[test]
    fn share_and_ratio() {
        assert_eq!(share(25.0, 100.0), Ok(0.25));
        assert_eq!(share(0.0, 4.0), Ok(0.0));
        assert_eq!(share(3.0, 0.0), Err(StatError::DivideByZero));
        assert_eq!(share(3.0, -0.0), Err(StatError::DivideByZero));
        assert_eq!(share(f64::NAN, 1.0), Err(StatError::NotFinite));
        assert_eq!(ratio(5.0, 2.0), Ok(2.5));
        assert_eq!(ratio(-6.0, 3.0), Ok(-2.0));
        assert_eq!(ratio(1.0, 0.0), Err(StatError::DivideByZero));
        assert_eq!(ratio(0.0, 0.0), Err(StatError::DivideByZero));
        assert_eq!(ratio(f64::MAX, 0.5), Err(StatError::NotFinite));
        assert_eq!(ratio(1.0, f64::INFINITY), Err(StatError::NotFinite));
    }

    #[test]
    fn change_and_percent_change() {
        assert_eq!(change(120.0, 90.0), Ok(-30.0));
        assert_eq!(change(-5.0, 5.0), Ok(10.0));
        assert_eq!(change(-f64::MAX, f64::MAX), Err(StatError::NotFinite));
        assert_eq!(change(f64::NAN, 1.0), Err(StatError::NotFinite));
        assert_eq!(percent_change(200.0, 250.0), Ok(0.25));
        assert_eq!(percent_change(200.0, 150.0), Ok(-0.25));
        // From a negative start the sign follows the direction of change.
        assert_eq!(percent_change(-100.0, -50.0), Ok(0.5));
        assert_eq!(percent_change(-100.0, -150.0), Ok(-0.5));
        assert_eq!(percent_change(0.0, 5.0), Err(StatError::DivideByZero));
        assert_eq!(percent_change(0.0, 0.0), Err(StatError::DivideByZero));
        assert_eq!(percent_change(1e-300, 1e300), Err(StatError::NotFinite));
        assert_eq!(
            percent_change(1.0, f64::INFINITY),
            Err(StatError::NotFinite)
        );
    }

    #[test]
    fn growth_rate_worked_by_hand() {
        // Worked by hand: 2,000 → 2,662 over 3 years. 2662 / 2000 = 1.331,
        // and 1.1³ = 1.1 × 1.1 × 1.1 = 1.21 × 1.1 = 1.331, so the rate is
        // 1.1 − 1 = 0.1, 10 % a year exactly.
        assert_close!(growth_rate(2000.0, 2662.0, 3.0).unwrap(), 0.1, 1e-14);
        // Worked by hand: 1,250 → 1,800 over 2 years. 1800 / 1250 = 1.44 =
        // 1.2², so 20 % a year.
        assert_close!(growth_rate(1250.0, 1800.0, 2.0).unwrap(), 0.2, 1e-14);
        // Worked by hand (not round): 500 → 800 over 4 years.
        // 800 / 500 = 1.6. The fourth root is a square root taken twice:
        // √1.6 = 1.2649110640673518 (1.2649110640673518² = 1.6000000000),
        // √1.2649110640673518 = 1.1246826503806981
        // (1.12468265² = 1.26491106). So the rate is 0.1246826503806981,
        // about 12.47 % a year.
        assert_close!(
            growth_rate(500.0, 800.0, 4.0).unwrap(),
            0.124_682_650_380_698_1,
            1e-13
        );
        // Worked by hand: halving over 1 year is −50 %; 100 → 25 over 2
        // years is 0.25 = 0.5², also −50 % a year.
        assert_close!(growth_rate(100.0, 50.0, 1.0).unwrap(), -0.5, 1e-15);
        assert_close!(growth_rate(100.0, 25.0, 2.0).unwrap(), -0.5, 1e-15);
        // Half a year of doubling compounds to 300 % a year (2² − 1).
        assert_close!(growth_rate(10.0, 20.0, 0.5).unwrap(), 3.0, 1e-14);
        // No change is exactly 0; everything lost is −100 %.
        assert_eq!(growth_rate(7.0, 7.0, 5.0), Ok(0.0));
        assert_eq!(growth_rate(7.0, 0.0, 5.0), Ok(-1.0));
        // Tiny rates keep their precision: 1 → 1 + 1e-12 over one year.
        assert_close!(growth_rate(1.0, 1.0 + 1e-12, 1.0).unwrap(), 1e-12, 1e-3);
        assert!((growth_rate(1.0, 1.0 + 1e-12, 1.0).unwrap() - 1e-12).abs() < 1e-16);
        // An extreme quotient that overflows as a division still works.
        assert_close!(
            growth_rate(1e-300, 1e300, 600.0).unwrap(),
            9.0, // (1e600)^(1/600) − 1 = 10 − 1
            1e-12
        );
    }

    #[test]
    fn growth_rate_errors() {
        assert_eq!(growth_rate(0.0, 10.0, 1.0), Err(StatError::NotPositive));
        assert_eq!(growth_rate(-5.0, 10.0, 1.0), Err(StatError::NotPositive));
        assert_eq!(growth_rate(5.0, -1.0, 1.0), Err(StatError::NotPositive));
        assert_eq!(growth_rate(5.0, 10.0, 0.0), Err(StatError::BadPeriod));
        assert_eq!(growth_rate(5.0, 10.0, -2.0), Err(StatError::BadPeriod));
        assert_eq!(growth_rate(5.0, 10.0, f64::NAN), Err(StatError::BadPeriod));
        assert_eq!(
            growth_rate(5.0, 10.0, f64::INFINITY),
            Err(StatError::BadPeriod)
        );
        assert_eq!(growth_rate(f64::NAN, 10.0, 1.0), Err(StatError::NotFinite));
        // Doubling every 1e-300 years overflows.
        assert_eq!(growth_rate(1.0, 2.0, 1e-300), Err(StatError::NotFinite));
    }

    #[test]
    fn rank_is_competition_ranking() {
        let all = [30.0, 50.0, 50.0, 10.0, 40.0];
        // Sorted descending: 50, 50, 40, 30, 10 → ranks 1, 1, 3, 4, 5.
        assert_eq!(rank_descending(50.0, &all), Ok(1));
        assert_eq!(rank_descending(40.0, &all), Ok(3));
        assert_eq!(rank_descending(30.0, &all), Ok(4));
        assert_eq!(rank_descending(10.0, &all), Ok(5));
        assert_eq!(rank_descending(7.0, &[7.0]), Ok(1));
        assert_eq!(rank_descending(0.0, &[-0.0, 1.0]), Ok(2));
        assert_eq!(rank_descending(35.0, &all), Err(StatError::NotAmong));
        assert_eq!(rank_descending(1.0, &[]), Err(StatError::Empty));
        assert_eq!(rank_descending(f64::NAN, &all), Err(StatError::NotFinite));
        assert_eq!(
            rank_descending(1.0, &[1.0, f64::NAN]),
            Err(StatError::NotFinite)
        );
    }

    #[test]
    fn linear_fit_exact_line_and_worked_example() {
        // Points on y = 1 + 2x fit exactly with r = 1.
        let fit = linear_fit(&[0.0, 1.0, 2.0, 3.0], &[1.0, 3.0, 5.0, 7.0]).unwrap();
        assert_eq!(fit.slope, 2.0);
        assert_eq!(fit.intercept, 1.0);
        assert_eq!(fit.r, Some(1.0));
        assert_eq!(fit.n, 4);
        // Worked by hand: x = 1, 2, 3, y = 2, 1, 6. x̄ = 2, ȳ = 3;
        // dx = −1, 0, 1; dy = −1, −2, 3; Sxx = 2, Sxy = 1 + 0 + 3 = 4,
        // Syy = 1 + 4 + 9 = 14. slope = 4/2 = 2, intercept = 3 − 2·2 = −1,
        // r = 4 / √(2·14) = 4 / √28 = 0.7559289460184544.
        let fit = linear_fit(&[1.0, 2.0, 3.0], &[2.0, 1.0, 6.0]).unwrap();
        assert_eq!(fit.slope, 2.0);
        assert_eq!(fit.intercept, -1.0);
        assert_close!(fit.r.unwrap(), 4.0 / 28f64.sqrt(), 1e-15);
        assert_close!(fit.r.unwrap(), 0.755_928_946_018_454_4, 1e-15);
        // A falling line has a negative slope and r = −1.
        let fit = linear_fit(&[1.0, 2.0, 3.0], &[9.0, 6.0, 3.0]).unwrap();
        assert_eq!((fit.slope, fit.intercept, fit.r), (-3.0, 12.0, Some(-1.0)));
        // Constant y: a flat line, and no correlation.
        let fit = linear_fit(&[1.0, 2.0, 3.0], &[4.0, 4.0, 4.0]).unwrap();
        assert_eq!((fit.slope, fit.intercept, fit.r), (0.0, 4.0, None));
        // Big offsets in x (dates as day numbers, say) lose nothing: the
        // same worked example shifted by 1e9 in x.
        let fit = linear_fit(&[1e9 + 1.0, 1e9 + 2.0, 1e9 + 3.0], &[2.0, 1.0, 6.0]).unwrap();
        assert_eq!(fit.slope, 2.0);
        assert_close!(fit.r.unwrap(), 4.0 / 28f64.sqrt(), 1e-15);
    }

    #[test]
    fn linear_fit_errors() {
        assert_eq!(linear_fit(&[], &[]), Err(StatError::Empty));
        assert_eq!(
            linear_fit(&[1.0], &[2.0]),
            Err(StatError::TooFew { needed: 2, got: 1 })
        );
        assert_eq!(
            linear_fit(&[1.0, 2.0, 3.0], &[1.0, 2.0]),
            Err(StatError::LengthMismatch { xs: 3, ys: 2 })
        );
        assert_eq!(
            linear_fit(&[0.1, 0.1, 0.1], &[1.0, 2.0, 3.0]),
            Err(StatError::NoVariation)
        );
        assert_eq!(
            linear_fit(&[1.0, f64::NAN], &[1.0, 2.0]),
            Err(StatError::NotFinite)
        );
        // A slope of 1e300 / 1e-10 = 1e310 overflows.
        assert_eq!(
            linear_fit(&[0.0, 1e-10], &[0.0, 1e300]),
            Err(StatError::NotFinite)
        );
        // Varying x whose squared deviations underflow to 0.
        assert_eq!(
            linear_fit(&[0.0, 1e-300], &[0.0, 1.0]),
            Err(StatError::NotFinite)
        );
        assert_eq!(
            correlation(&[0.0, 1e-300], &[0.0, 1.0]),
            Err(StatError::NotFinite)
        );
        // Deviations whose squares overflow.
        assert_eq!(
            linear_fit(&[-f64::MAX, f64::MAX], &[0.0, 1.0]),
            Err(StatError::NotFinite)
        );
    }

    #[test]
    fn correlation_values_and_errors() {
        assert_close!(
            correlation(&[1.0, 2.0, 3.0], &[2.0, 1.0, 6.0]).unwrap(),
            4.0 / 28f64.sqrt(),
            1e-15
        );
        assert_eq!(correlation(&[1.0, 2.0], &[5.0, 3.0]), Ok(-1.0));
        // Symmetric in its arguments.
        let (a, b) = ([3.0, 1.0, 4.0, 1.0, 5.0], [9.0, 2.0, 6.0, 5.0, 3.0]);
        assert_eq!(correlation(&a, &b), correlation(&b, &a));
        // Uncorrelated by construction: y symmetric around x̄.
        assert_eq!(correlation(&[1.0, 2.0, 3.0], &[1.0, 0.0, 1.0]), Ok(0.0));
        assert_eq!(correlation(&[], &[]), Err(StatError::Empty));
        assert_eq!(
            correlation(&[1.0], &[1.0]),
            Err(StatError::TooFew { needed: 2, got: 1 })
        );
        assert_eq!(
            correlation(&[1.0], &[1.0, 2.0]),
            Err(StatError::LengthMismatch { xs: 1, ys: 2 })
        );
        assert_eq!(
            correlation(&[2.0, 2.0], &[1.0, 2.0]),
            Err(StatError::NoVariation)
        );
        assert_eq!(
            correlation(&[1.0, 2.0], &[3.0, 3.0]),
            Err(StatError::NoVariation)
        );
        assert_eq!(
            correlation(&[1.0, 2.0], &[3.0, f64::INFINITY]),
            Err(StatError::NotFinite)
        );
    }

    #[test]
    fn years_between_days_and_months() {
        let d = |y, m, day| days_from_civil(y, m, day);
        // 400 Gregorian years are exactly 146,097 days.
        assert_eq!(years_between_days(d(2000, 1, 1), d(2400, 1, 1)), 400.0);
        assert_eq!(years_between_days(d(2400, 1, 1), d(2000, 1, 1)), -400.0);
        assert_eq!(years_between_days(5, 5), 0.0);
        // One calendar year is 365 or 366 days.
        assert_close!(
            years_between_days(d(2021, 3, 1), d(2022, 3, 1)),
            365.0 / 365.2425,
            1e-15
        );
        assert_close!(
            years_between_days(d(2023, 3, 1), d(2024, 3, 1)),
            366.0 / 365.2425,
            1e-15
        );
        assert!((years_between_days(d(2020, 1, 1), d(2024, 1, 1)) - 4.0).abs() < 0.003);
        // The whole i32 range does not overflow.
        assert_close!(
            years_between_days(i32::MIN, i32::MAX),
            4_294_967_295.0 / 365.2425,
            1e-15
        );
        let m = |y: i32, month: i32| y * 12 + month - 1;
        assert_eq!(years_between_months(m(2019, 6), m(2024, 6)), 5.0);
        assert_eq!(years_between_months(m(2024, 1), m(2024, 7)), 0.5);
        assert_eq!(years_between_months(m(2024, 7), m(2024, 1)), -0.5);
        assert_eq!(
            years_between_months(i32::MIN, i32::MAX),
            4_294_967_295.0 / 12.0
        );
        // Growth over a month column: 2,000 riders in 2021-01, 2,662 in
        // 2024-01 is 10 % a year (the worked example above).
        let years = years_between_months(m(2021, 1), m(2024, 1));
        assert_close!(growth_rate(2000.0, 2662.0, years).unwrap(), 0.1, 1e-14);
    }
}
