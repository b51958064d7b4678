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

/// The scale of the fixed-point part of a sum: it counts units of 2^-72.
const FIXED_BITS: i32 = 72;
/// 2^-72 (biased exponent 1023 - 72), to turn the fixed-point part back
/// into a double (exact: a power of two, and every nonzero part is at
/// least one unit, far above the smallest normal double).
const FIXED_UNIT: f64 = f64::from_bits((1023 - 72) << 52);
/// The fixed-point part is moved into the partials before it reaches
/// 2^125 units, so that adding one more term (below 2^124 units) never
/// overflows an `i128` and the part always converts to a double below 2^127.
const FIXED_LIMIT: u128 = 1 << 125;

/// An exact floating-point sum, rounded once at the end to the nearest
/// double, ties to even, as Python's `math.fsum` does. The result is the
/// correctly rounded sum of the terms, so it does not depend on their order
/// or on how they are split into parts and merged: the streaming reader
/// sums file chunks in parallel and gets the same bits as one pass.
///
/// Two exact parts make up the sum:
/// - a fixed-point integer counting units of 2^-72: every double from 2^-20
///   (about 1e-6) up to 2^52 is a whole number of units (money, counts, measures:
///   nearly every term), and a whole number of units adds with one integer
///   addition;
/// - Shewchuk's non-overlapping partials for every other term (J. R.
///   Shewchuk, "Adaptive Precision Floating-Point Arithmetic and Fast
///   Robust Geometric Predicates", 1997), kept on the heap, since few sums
///   ever need them.
///
/// Partials could overflow on the way to a total that is a number again
/// (`1.7e308 + 1.7e308 - 1.7e308`), and a mean of huge values is a number
/// although their sum is not. So once a term or a partial reaches 2^1020,
/// the partials go on scaled by 2^-64 (exact: a power of two; only terms
/// below about 1e-300 lose their lowest bits then, far below the rounding
/// of a total that large). [`Sum::total`] is then infinite only when the
/// total really is beyond the largest double, and [`Sum::mean`] never is.
///
/// A sum takes 32 bytes and allocates nothing unless a term falls outside
/// the fixed-point range: a million groups' sums in 32 MB.
#[derive(Clone, Debug, Default, PartialEq)]
pub(crate) struct Sum {
    /// The terms that are whole numbers of 2^-72, in those units.
    fixed: i128,
    /// The partials of the other terms (and of fixed parts moved out before
    /// they grow too large); `None` while there are none.
    partials: Option<Box<Partials>>,
    /// The number of terms; in the top bit ([`SCALED`]) whether the
    /// partials hold their sum times 2^-64.
    n: u64,
}

/// Shewchuk's partials, smallest first.
type Partials = SmallVec<[f64; 4]>;

/// The bit of [`Sum::n`] that says the partials are scaled.
const SCALED: u64 = 1 << 63;

/// `x` as a whole number of 2^-72 units, if it is one below 2^124 units
/// (`|x|` below 2^52); `None` for other values, infinities and NaN.
#[inline(always)]
fn fixed_units(x: f64) -> Option<i128> {
    let bits = x.to_bits();
    let biased = ((bits >> 52) & 0x7ff) as i32;
    let fraction = bits & ((1 << 52) - 1);
    if biased == 0 {
        // zero, or a subnormal (never a whole number of units)
        return (fraction == 0).then_some(0);
    }
    // x = m * 2^(biased - 1075) with a 53-bit m; in units: m * 2^shift
    let m = fraction | (1 << 52);
    let shift = biased - 1075 + FIXED_BITS;
    let units = if shift >= 0 {
        if shift > 124 - 53 {
            return None;
        }
        (m as i128) << shift
    } else {
        if shift < -52 || m.trailing_zeros() < shift.unsigned_abs() {
            return None;
        }
        (m >> shift.unsigned_abs()) as i128
    };
    Some(if bits >> 63 == 1 { -units } else { units })
}

/// `units` (below 2^125 in magnitude) as at most three doubles whose sum is
/// exactly `units` times 2^-72, largest first, zeros left out.
fn fixed_parts(units: i128) -> impl Iterator<Item = f64> {
    let mut rest = units;
    std::iter::from_fn(move || {
        (rest != 0).then(|| {
            // rounded to 53 bits, so exactly an integer below 2^126
            let d = rest as f64;
            rest -= d as i128;
            d * FIXED_UNIT
        })
    })
}

impl Sum {
    fn scaled(&self) -> bool {
        self.n & SCALED != 0
    }

    /// The number of terms.
    fn count(&self) -> u64 {
        self.n & !SCALED
    }

    #[inline]
    pub(crate) fn add(&mut self, x: f64) {
        self.n += 1;
        match fixed_units(x) {
            Some(units) => self.add_units(units),
            None => self.push(x, false),
        }
    }

    /// Add a whole number of units (below 2^125 in magnitude).
    #[inline(always)]
    fn add_units(&mut self, units: i128) {
        self.fixed += units;
        if self.fixed.unsigned_abs() >= FIXED_LIMIT {
            let fixed = std::mem::take(&mut self.fixed);
            fixed_parts(fixed).for_each(|p| self.push(p, false));
        }
    }

    /// Add `x` (already scaled by 2^-64 when `x_scaled`) to the partials.
    fn push(&mut self, x: f64, x_scaled: bool) {
        let partials = self.partials.get_or_insert_with(Default::default);
        if self.n & SCALED == 0
            && (x_scaled || x.abs() >= BIG || partials.last().is_some_and(|p| p.abs() >= BIG))
        {
            for p in partials.iter_mut() {
                *p *= DOWN;
            }
            self.n |= SCALED;
        }
        let x = if self.n & SCALED != 0 && !x_scaled {
            x * DOWN
        } else {
            x
        };
        add_partial(partials, x);
    }

    /// No terms yet?
    pub(crate) fn is_empty(&self) -> bool {
        self.count() == 0
    }

    /// Add every term of `other` (exactly).
    pub(crate) fn merge(&mut self, other: &Sum) {
        self.add_units(other.fixed);
        for &p in other.partials.iter().flat_map(|p| p.iter()) {
            self.push(p, other.scaled());
        }
        self.n += other.count();
    }

    /// The whole sum rounded once to the nearest double (as `math.fsum`),
    /// times 2^-64 when the partials are scaled.
    fn rounded(&self) -> f64 {
        let Some(partials) = &self.partials else {
            // correctly rounded by the conversion; the unit is a power of two
            return self.fixed as f64 * FIXED_UNIT;
        };
        let mut all = partials.clone();
        for p in fixed_parts(self.fixed) {
            add_partial(&mut all, if self.scaled() { p * DOWN } else { p });
        }
        rounded(&all)
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

/// Add `x` to non-overlapping partials (Shewchuk's "grow-expansion" with
/// zeros left out).
fn add_partial(partials: &mut Partials, mut x: f64) {
    let mut i = 0;
    for j in 0..partials.len() {
        let (lo, hi) = two_sum(x, partials[j]);
        if lo != 0.0 {
            partials[i] = lo;
            i += 1;
        }
        x = hi;
    }
    partials.truncate(i);
    partials.push(x);
}

/// Non-overlapping partials rounded once to the nearest double, ties to
/// even (as `math.fsum`).
fn rounded(p: &[f64]) -> f64 {
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

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// The sum as it was before the fixed-point part: every term through
    /// Shewchuk's partials in the order given, rounded once (no scaling),
    /// the published method (Shewchuk 1997, as Python's `math.fsum`). The
    /// outside check of the totals themselves is the `math.fsum` fixture
    /// made by `crates/data/tests/fixtures/make_values_expected.py`.
    fn reference(xs: &[f64]) -> f64 {
        let mut partials = Partials::new();
        xs.iter().for_each(|&x| add_partial(&mut partials, x));
        rounded(&partials)
    }

    fn term() -> impl Strategy<Value = f64> {
        prop_oneof![
            (-10_000_000i64..10_000_000).prop_map(|c| c as f64 / 100.0),
            (-1e20f64..1e20),
            (-1e-300f64..1e-300),
            (-1e-5f64..1e-5),
            (-4e15f64..4e15),
            // either side of the fixed-point range's ends
            prop_oneof![Just(2f64.powi(52)), Just(2f64.powi(52) - 1.0)],
            prop_oneof![Just(2f64.powi(-20)), Just(2f64.powi(-21) * 3.0)],
            Just(0.0),
            Just(-0.0),
            Just(1e16),
            Just(-1e16),
            Just(1.0),
        ]
    }

    #[test]
    fn whole_units_are_found_exactly() {
        // 2^-72 is one unit; 2^-73 and a subnormal are not whole units
        assert_eq!(FIXED_UNIT, 2f64.powi(-72));
        assert_eq!(fixed_units(FIXED_UNIT), Some(1));
        assert_eq!(fixed_units(-2.5), Some(-5 << 71));
        assert_eq!(fixed_units(2f64.powi(-73)), None);
        // the last bit of a double just below 2^-20 is half a unit
        let odd = (1.0 + f64::EPSILON) * 2f64.powi(-20);
        assert_eq!(fixed_units(odd), Some((1 << 52) + 1));
        assert_eq!(fixed_units(odd / 2.0), None);
        assert_eq!(fixed_units(3.0 * 2f64.powi(-72)), Some(3));
        assert_eq!(fixed_units(5e-324), None);
        assert_eq!(fixed_units(0.1), Some((0.1f64 / FIXED_UNIT) as i128));
        assert_eq!(
            fixed_units(2f64.powi(52) - 1.0),
            Some(((1i128 << 52) - 1) << 72)
        );
        assert_eq!(fixed_units(2f64.powi(52)), None);
        assert_eq!(fixed_units(f64::INFINITY), None);
        assert_eq!(fixed_units(f64::NAN), None);
        // the parts of a large part add up to it exactly
        let units = (1i128 << 124) + (1i128 << 70) + 12_345;
        let back: i128 = fixed_parts(units).map(|p| (p / FIXED_UNIT) as i128).sum();
        assert_eq!(back, units);
        assert_eq!(fixed_parts(units).count(), 3);
    }

    #[test]
    fn a_fixed_part_near_its_limit_moves_to_the_partials() {
        // 2^51 added 2^22 times: 2^73, i.e. 2^145 units, beyond the limit
        let mut s = Sum::default();
        let big = 2f64.powi(51);
        (0..1 << 22).for_each(|_| s.add(big));
        s.add(0.25);
        assert!(s.partials.is_some());
        assert_eq!(s.total(), Some(2f64.powi(73)));
        assert_eq!(s.total(), Some(reference(&vec![big; 1 << 22])));
    }

    proptest! {
        #[test]
        fn the_total_is_the_correctly_rounded_sum(xs in prop::collection::vec(term(), 0..200)) {
            let mut s = Sum::default();
            xs.iter().for_each(|&x| s.add(x));
            prop_assert_eq!(s.count(), xs.len() as u64);
            prop_assert!(!s.scaled());
            if xs.is_empty() {
                prop_assert_eq!(s.total(), None);
            } else {
                prop_assert_eq!(s.total().map(f64::to_bits), Some(reference(&xs).to_bits()));
            }
        }

        #[test]
        fn tiny_terms_are_summed_exactly(xs in prop::collection::vec(-4e-6f64..4e-6, 1..50)) {
            // about a quarter below 2^-20: through the partials
            let mut s = Sum::default();
            xs.iter().for_each(|&x| s.add(x));
            prop_assert_eq!(s.total().map(f64::to_bits), Some(reference(&xs).to_bits()));
        }

        #[test]
        fn parts_merged_equal_one_pass(
            xs in prop::collection::vec(term(), 1..200),
            cut in any::<prop::sample::Index>(),
        ) {
            let cut = cut.index(xs.len());
            let (mut a, mut b, mut whole) = (Sum::default(), Sum::default(), Sum::default());
            xs[..cut].iter().for_each(|&x| a.add(x));
            xs[cut..].iter().for_each(|&x| b.add(x));
            xs.iter().for_each(|&x| whole.add(x));
            a.merge(&b);
            prop_assert_eq!(a.total().map(f64::to_bits), whole.total().map(f64::to_bits));
            prop_assert_eq!(a.mean().map(f64::to_bits), whole.mean().map(f64::to_bits));
        }
    }
}
