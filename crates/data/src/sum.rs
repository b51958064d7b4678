//! An exact floating-point sum, shared by every engine that sums (the
//! table engine, the streamed CSV chunks and the Parquet row groups).

use smallvec::SmallVec;

/// 2^1020: below it, two terms and a partial cannot overflow when added.
const BIG: f64 = 1.123_558_209_288_947_4e307;
/// 2^-64 and 2^64: the scale of a sum kept scaled.
const DOWN: f64 = 5.421_010_862_427_522e-20;
const UP: f64 = 18_446_744_073_709_551_616.0;

/// The sum of `x` and `y` rounded (`hi`) and its exact error (`lo`), as
/// the loop of [`Sum::push`] computes them: Dekker's fast two-sum with
/// the larger magnitude first (T. J. Dekker, "A floating-point technique
/// for extending the available precision", 1971). Returns `(lo, hi)`.
#[inline(always)]
fn two_sum(x: f64, y: f64) -> (f64, f64) {
    let (a, b) = if x.abs() < y.abs() { (y, x) } else { (x, y) };
    let hi = a + b;
    (b - (hi - a), hi)
}

/// An exact floating-point sum: Shewchuk's non-overlapping partials
/// (J. R. Shewchuk, "Adaptive Precision Floating-Point Arithmetic and Fast
/// Robust Geometric Predicates", 1997), rounded once at the end to the
/// nearest double, ties to even, as Python's `math.fsum` does. The result is
/// the correctly rounded sum of the terms, so it does not depend on their
/// order or on how they are split into parts and merged: the streaming
/// reader sums file chunks in parallel and gets the same bits as one pass.
///
/// Partials could overflow on the way to a total that is a number again
/// (`1.7e308 + 1.7e308 - 1.7e308`), and a mean of huge values is a number
/// although their sum is not. So once a term or a partial reaches 2^1020,
/// the sum goes on scaled by 2^-64 (exact: a power of two; only terms
/// below about 1e-300 lose their lowest bits then, far below the rounding
/// of a total that large). [`Sum::total`] is then infinite only when the
/// total really is beyond the largest double, and [`Sum::mean`] never is.
///
/// A sum takes 40 bytes with three partials inline: with two, half the
/// groups of a million-customer file spilled their partials to the heap
/// (48 bytes and an allocation each), with three about one in thirty does.
#[derive(Clone, Debug, Default, PartialEq)]
pub(crate) struct Sum {
    /// Nearly always one to three partials: kept inline, so a sum per group
    /// allocates nothing.
    partials: SmallVec<[f64; 3]>,
    /// The number of terms; in the top bit ([`SCALED`]) whether the
    /// partials hold the sum times 2^-64.
    n: u64,
}

/// The bit of [`Sum::n`] that says the partials are scaled.
const SCALED: u64 = 1 << 63;

impl Sum {
    fn scaled(&self) -> bool {
        self.n & SCALED != 0
    }

    /// The number of terms.
    fn count(&self) -> u64 {
        self.n & !SCALED
    }

    pub(crate) fn add(&mut self, x: f64) {
        self.n += 1;
        // the common cases, one or two partials and no scaling: the loop of
        // `push` unrolled (the same two-sums, so the same partials)
        if !self.scaled() && x.abs() < BIG {
            match self.partials[..] {
                [y] if y.abs() < BIG => {
                    let (lo, hi) = two_sum(x, y);
                    if lo == 0.0 {
                        self.partials[0] = hi;
                    } else {
                        self.partials[0] = lo;
                        self.partials.push(hi);
                    }
                    return;
                }
                [y0, y1] if y1.abs() < BIG => {
                    let (lo0, x1) = two_sum(x, y0);
                    let (lo1, hi) = two_sum(x1, y1);
                    match (lo0 != 0.0, lo1 != 0.0) {
                        (false, false) => {
                            self.partials.truncate(1);
                            self.partials[0] = hi;
                        }
                        (true, true) => {
                            self.partials[0] = lo0;
                            self.partials[1] = lo1;
                            self.partials.push(hi);
                        }
                        (kept0, _) => {
                            self.partials[0] = if kept0 { lo0 } else { lo1 };
                            self.partials[1] = hi;
                        }
                    }
                    return;
                }
                _ => {}
            }
        }
        self.push(x, false);
    }

    /// Add `x` (already scaled by 2^-64 when `x_scaled`).
    fn push(&mut self, x: f64, x_scaled: bool) {
        if !self.scaled()
            && (x_scaled || x.abs() >= BIG || self.partials.last().is_some_and(|p| p.abs() >= BIG))
        {
            for p in &mut self.partials {
                *p *= DOWN;
            }
            self.n |= SCALED;
        }
        let mut x = if self.scaled() && !x_scaled {
            x * DOWN
        } else {
            x
        };
        let mut i = 0;
        for j in 0..self.partials.len() {
            let (lo, hi) = two_sum(x, self.partials[j]);
            if lo != 0.0 {
                self.partials[i] = lo;
                i += 1;
            }
            x = hi;
        }
        self.partials.truncate(i);
        self.partials.push(x);
    }

    /// No terms yet?
    pub(crate) fn is_empty(&self) -> bool {
        self.count() == 0
    }

    /// Add every term of `other` (exactly).
    pub(crate) fn merge(&mut self, other: &Sum) {
        for &p in &other.partials {
            self.push(p, other.scaled());
        }
        self.n += other.count();
    }

    /// The partials rounded once to the nearest double (as `math.fsum`).
    fn rounded(&self) -> f64 {
        let p = &self.partials;
        let Some(mut k) = p.len().checked_sub(1) else {
            return 0.0;
        };
        let mut hi = p[k];
        let mut lo = 0.0;
        while k > 0 {
            let x = hi;
            k -= 1;
            let y = p[k];
            hi = x + y;
            let yr = hi - x;
            lo = y - yr;
            if lo != 0.0 {
                break;
            }
        }
        // Round half to even across several partials (as `math.fsum`).
        if k > 0 && ((lo < 0.0 && p[k - 1] < 0.0) || (lo > 0.0 && p[k - 1] > 0.0)) {
            let y = lo * 2.0;
            let x = hi + y;
            let yr = x - hi;
            if y == yr {
                hi = x;
            }
        }
        // A sum of zeros is +0, never -0.
        hi + 0.0
    }

    /// The sum; infinite when it is beyond the largest double; `None`
    /// without terms.
    pub(crate) fn total(&self) -> Option<f64> {
        if self.count() == 0 {
            return None;
        }
        let t = self.rounded();
        Some(if self.scaled() { t * UP } else { t })
    }

    /// The mean of the terms; `None` without terms.
    pub(crate) fn mean(&self) -> Option<f64> {
        if self.count() == 0 {
            return None;
        }
        let m = self.rounded() / self.count() as f64;
        Some(if self.scaled() { m * UP } else { m })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// The loop of `push` as it was before `add` was unrolled (no scaling):
    /// the partials `add` must give.
    fn reference(partials: &mut Vec<f64>, mut x: f64) {
        let mut i = 0;
        for j in 0..partials.len() {
            let mut y = partials[j];
            if x.abs() < y.abs() {
                std::mem::swap(&mut x, &mut y);
            }
            let hi = x + y;
            let lo = y - (hi - x);
            if lo != 0.0 {
                partials[i] = lo;
                i += 1;
            }
            x = hi;
        }
        partials.truncate(i);
        partials.push(x);
    }

    fn term() -> impl Strategy<Value = f64> {
        prop_oneof![
            (-10_000_000i64..10_000_000).prop_map(|c| c as f64 / 100.0),
            (-1e20f64..1e20),
            (-1e-300f64..1e-300),
            Just(0.0),
            Just(-0.0),
            Just(1e16),
            Just(-1e16),
            Just(1.0),
        ]
    }

    proptest! {
        #[test]
        fn add_gives_the_partials_of_the_plain_loop(xs in prop::collection::vec(term(), 0..200)) {
            let mut s = Sum::default();
            let mut want = Vec::new();
            for &x in &xs {
                s.add(x);
                reference(&mut want, x);
                prop_assert_eq!(&s.partials[..], &want[..]);
            }
            prop_assert_eq!(s.count(), xs.len() as u64);
            prop_assert!(!s.scaled());
        }
    }
}
