//! Scale domains and ticks for the frame plan.
//!
//! - [`extended`]: the "extended Wilkinson" tick search of J. Talbot, S. Lin
//!   and P. Hanrahan, "An Extension of Wilkinson's Algorithm for Positioning
//!   Tick Labels on Axes", IEEE TVCG 16(6), 2010, following the description
//!   in `shared/refs/reference-values.md` §4.1 (itself a reading of the first
//!   author's R package `labeling`).
//! - [`linear_axis`]: a numeric axis whose domain always contains the data.
//! - [`time_axis`]: month, day and year axes with ticks on calendar
//!   boundaries.
//!
//! Everything here is deterministic and free of panics; every loop is
//! bounded.

use crate::model::{Axis, ScaleKind, Tick};
// tick labels come from the number policy (`crate::numbers::ticks`)
use crescendo_data::locale::Fiscal;
use crescendo_data::time::{civil_from_days, day_label, days_from_civil, month_label, month_name};

/// Nice step bases in order of preference (`labeling::extended` default,
/// published in its documentation; see `shared/refs` §4.1).
const Q: [f64; 6] = [1.0, 5.0, 2.0, 2.5, 4.0, 3.0];
/// `Q` times ten, as exact integers: ticks are built from integers and a
/// power of ten so that they carry no float noise.
const Q10: [i64; 6] = [10, 50, 20, 25, 40, 30];
/// Weights of simplicity, coverage, density and legibility
/// (`labeling::extended` default, published; `shared/refs` §4.1).
const W: [f64; 4] = [0.25, 0.2, 0.5, 0.05];

/// Largest skip factor `j` tried. The pruning bound stops the search long
/// before this in practice (at `j` ≤ 13 even when nothing was found yet).
const MAX_J: i64 = 64;
/// Bounds on the target label count `m`; larger requests are clamped.
const MIN_M: usize = 2;
const MAX_M: usize = 50;
/// Powers of ten tried per (j, q, k) before giving up on larger steps.
const MAX_Z_STEPS: usize = 40;
/// Hard cap on scored candidates: a guarantee of quick termination whatever
/// the input. Ordinary inputs score a few hundred to a few thousand.
const MAX_CANDIDATES: usize = 2_000_000;
/// Relative width under which a range counts as a single value.
const DEGENERATE_RELATIVE: f64 = 1e-12;
/// Ranges outside `10^±EXTREME_EXPONENT` are rescaled by a power of ten
/// before the search so that the squared terms of the coverage score
/// neither overflow nor underflow.
const EXTREME_EXPONENT: i32 = 100;

/// Target tick count of [`linear_axis`].
const LINEAR_TICKS: usize = 5;
/// At most this many ticks on a time axis.
const MAX_TIME_TICKS: usize = 8;

/// The winning labelling of the search, in exact integer terms: label `i`
/// is `(start + i * j) * Q10[qi] * 10^(exp)`, and the step is
/// `j * Q10[qi] * 10^(exp)`.
#[derive(Clone, Copy, Debug)]
struct Labeling {
    start: f64,
    j: i64,
    qi: usize,
    k: usize,
    exp: i32,
}

/// Ticks with their step, both free of float noise.
#[derive(Clone, Debug)]
struct NiceTicks {
    values: Vec<f64>,
    step: f64,
}

/// `10^z` as the nearest `f64` (exact table for |z| ≤ 22, where both the
/// power and its reciprocal come out correctly rounded).
fn pow10(z: i32) -> f64 {
    const TABLE: [f64; 23] = [
        1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
        1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
    ];
    match z {
        0..=22 => TABLE[z as usize],
        -22..=-1 => 1.0 / TABLE[(-z) as usize],
        _ => 10f64.powi(z),
    }
}

/// Multiply by `10^p` in chunks, so that intermediate powers stay finite.
fn scale_pow10(x: f64, p: i32) -> f64 {
    let mut x = x;
    let mut p = p;
    while p != 0 {
        let chunk = p.clamp(-100, 100);
        x *= pow10(chunk);
        p -= chunk;
    }
    x
}

/// The `f64` nearest to the decimal `n × 10^exp` (`n` an integer value).
fn decimal(n: f64, exp: i32) -> f64 {
    format!("{n}e{exp}").parse().unwrap_or(f64::NAN)
}

/// Whether `n × 10^exp` is an integer (`n` an integer value).
fn is_integer_decimal(n: f64, exp: i32) -> bool {
    if exp >= 0 {
        return true;
    }
    if exp < -18 {
        return n == 0.0;
    }
    n % pow10(-exp) == 0.0
}

// The four scoring components of Talbot et al., as described in
// shared/refs §4.1 (and as the `labeling` package computes them).

fn simplicity(qi: usize, j: i64, zero_is_label: bool) -> f64 {
    let v = if zero_is_label { 1.0 } else { 0.0 };
    1.0 - qi as f64 / (Q.len() - 1) as f64 - j as f64 + v
}

fn simplicity_max(qi: usize, j: i64) -> f64 {
    1.0 - qi as f64 / (Q.len() - 1) as f64 - j as f64 + 1.0
}

fn coverage(dmin: f64, dmax: f64, lmin: f64, lmax: f64) -> f64 {
    let range = dmax - dmin;
    1.0 - 0.5 * ((dmax - lmax).powi(2) + (dmin - lmin).powi(2)) / (0.1 * range).powi(2)
}

fn coverage_max(dmin: f64, dmax: f64, span: f64) -> f64 {
    let range = dmax - dmin;
    if span > range {
        let half = (span - range) / 2.0;
        1.0 - 0.5 * (2.0 * half * half) / (0.1 * range).powi(2)
    } else {
        1.0
    }
}

fn density(k: usize, m: usize, dmin: f64, dmax: f64, lmin: f64, lmax: f64) -> f64 {
    let r = (k - 1) as f64 / (lmax - lmin);
    let rt = (m - 1) as f64 / (lmax.max(dmax) - dmin.min(lmin));
    2.0 - (r / rt).max(rt / r)
}

fn density_max(k: usize, m: usize) -> f64 {
    if k >= m {
        2.0 - (k - 1) as f64 / (m - 1) as f64
    } else {
        1.0
    }
}

/// Legibility is fixed at 1, as in the `labeling` package (its comment says
/// the legibility tests lived in the authors' C# code). Our labels are
/// always plain decimals in one format, and overlap is the renderer's
/// concern.
const LEGIBILITY: f64 = 1.0;

/// The pruned search over j, q, k, z and start (loop order of
/// shared/refs §4.1). `dmin < dmax`, both finite, range not extreme.
/// `exp_shift` is added to the exponent of the result (the caller rescaled
/// the data by `10^-exp_shift`). With `integer_only`, only labellings whose
/// labels are all integers (after the shift) are considered.
fn search(
    dmin: f64,
    dmax: f64,
    m: usize,
    only_loose: bool,
    integer_only: bool,
    exp_shift: i32,
) -> Option<Labeling> {
    let mut best: Option<Labeling> = None;
    let mut best_score = -2.0;
    let mut budget = MAX_CANDIDATES;
    // the requested count is a target; twice it is a hard bound
    let max_k = 2 * m;
    'outer: for j in 1..=MAX_J {
        for (qi, &q) in Q.iter().enumerate() {
            let sm = simplicity_max(qi, j);
            if W[0] * sm + W[1] + W[2] + W[3] < best_score {
                break 'outer;
            }
            for k in 2..=max_k {
                let dm = density_max(k, m);
                if W[0] * sm + W[1] + W[2] * dm + W[3] < best_score {
                    break;
                }
                let delta = (dmax - dmin) / (k + 1) as f64 / j as f64 / q;
                let mut z = delta.log10().ceil() as i32;
                for _ in 0..MAX_Z_STEPS {
                    let step = j as f64 * q * pow10(z);
                    let cm = coverage_max(dmin, dmax, step * (k - 1) as f64);
                    if W[0] * sm + W[1] * cm + W[2] * dm + W[3] < best_score {
                        break;
                    }
                    let jf = j as f64;
                    let min_start = (dmax / step).floor() * jf - (k - 1) as f64 * jf;
                    let max_start = (dmin / step).ceil() * jf;
                    if min_start > max_start || !step.is_finite() {
                        z += 1;
                        continue;
                    }
                    let exp = z - 1 + exp_shift;
                    let step_n = (j * Q10[qi]) as f64;
                    let step_is_integer = is_integer_decimal(step_n, exp);
                    let mut start = min_start;
                    while start <= max_start {
                        if budget == 0 {
                            break 'outer;
                        }
                        budget -= 1;
                        let this = start;
                        start += 1.0;
                        if integer_only
                            && !(step_is_integer && is_integer_decimal(this * Q10[qi] as f64, exp))
                        {
                            continue;
                        }
                        let lmin = this * (step / jf);
                        let lmax = lmin + step * (k - 1) as f64;
                        // Zero is a label when it lies within the labels and
                        // the first label is a whole number of steps from it,
                        // i.e. `start` is a multiple of `j` (exact integer
                        // test; `labeling` uses a float remainder instead).
                        let zero_is_label = lmin <= 0.0 && lmax >= 0.0 && this % jf == 0.0;
                        let s = simplicity(qi, j, zero_is_label);
                        let c = coverage(dmin, dmax, lmin, lmax);
                        let g = density(k, m, dmin, dmax, lmin, lmax);
                        let score = W[0] * s + W[1] * c + W[2] * g + W[3] * LEGIBILITY;
                        if score > best_score && (!only_loose || (lmin <= dmin && lmax >= dmax)) {
                            best_score = score;
                            best = Some(Labeling {
                                start: this,
                                j,
                                qi,
                                k,
                                exp,
                            });
                        }
                    }
                    z += 1;
                }
            }
        }
    }
    best
}

/// Widen a single value (or a range too narrow to resolve) to a range the
/// search can label: zero becomes `[-1, 1]`, any other value `v` becomes
/// `v ± |v|/10`.
fn widen(center: f64) -> (f64, f64) {
    if center == 0.0 {
        (-1.0, 1.0)
    } else {
        let half = center.abs() * 0.1;
        (center - half, center + half)
    }
}

/// The search with all input handling: order, degenerate and extreme
/// ranges, label construction.
fn nice_ticks(
    dmin: f64,
    dmax: f64,
    m: usize,
    only_loose: bool,
    integer_only: bool,
) -> Option<NiceTicks> {
    if !dmin.is_finite() || !dmax.is_finite() {
        return None;
    }
    let (mut dmin, mut dmax) = if dmin <= dmax {
        (dmin, dmax)
    } else {
        (dmax, dmin)
    };
    let m = m.clamp(MIN_M, MAX_M);
    // Halves keep the range finite even for ±f64::MAX.
    let half_range = dmax * 0.5 - dmin * 0.5;
    let magnitude = dmin.abs().max(dmax.abs());
    if half_range <= magnitude * DEGENERATE_RELATIVE {
        let (lo, hi) = widen(dmin * 0.5 + dmax * 0.5);
        if !lo.is_finite() || !hi.is_finite() {
            return None;
        }
        dmin = lo;
        dmax = hi;
    }
    let e = (dmax * 0.5 - dmin * 0.5).log10().floor() as i32;
    let shift = if e.abs() > EXTREME_EXPONENT { e } else { 0 };
    let (smin, smax) = (scale_pow10(dmin, -shift), scale_pow10(dmax, -shift));
    let best = search(smin, smax, m, only_loose, integer_only, shift)?;
    let q10 = Q10[best.qi] as f64;
    let values: Vec<f64> = (0..best.k)
        .map(|i| decimal((best.start + (i as i64 * best.j) as f64) * q10, best.exp))
        .collect();
    let step = decimal(best.j as f64 * q10, best.exp);
    if values.iter().all(|v| v.is_finite()) && step.is_finite() && step > 0.0 {
        // Normalise -0 (a start of -0.0 times a positive base).
        let values = values.into_iter().map(|v| v + 0.0).collect();
        Some(NiceTicks { values, step })
    } else {
        None
    }
}

/// Tick values for the data range `[dmin, dmax]` by the extended Wilkinson
/// algorithm (Talbot, Lin & Hanrahan 2010), aiming at about `m` labels and
/// never more than `2m` (the paper's density term makes `m` a target, not a
/// cap: two labels asked for over [-0.049, -0.039] give three; the search
/// does not consider more than `2m`, and a two-label loose labelling always
/// exists, so a labelling is always found).
///
/// - Q = [1, 5, 2, 2.5, 4, 3], weights 0.25, 0.2, 0.5, 0.05 for simplicity,
///   coverage, density and legibility (legibility fixed at 1).
/// - `only_loose`: the first and last labels must lie on or outside the
///   data range.
/// - The bounds may be given in either order. A single value (or a range
///   narrower than 10^-12 of its magnitude) is widened first: 0 to
///   `[-1, 1]`, `v` to `v ± |v|/10`.
/// - `m` is clamped to 2..=50.
/// - Values are exact decimals (`0.1 * 3` never appears as
///   `0.30000000000000004`): each is the `f64` nearest to an integer times a
///   power of ten.
///
/// Returns `None` for non-finite input, or when no labelling exists within
/// the search bounds or the labels would overflow `f64`.
pub fn extended(dmin: f64, dmax: f64, m: usize, only_loose: bool) -> Option<Vec<f64>> {
    nice_ticks(dmin, dmax, m, only_loose, false).map(|t| t.values)
}

/// Replace non-finite bounds: by the other bound if that is finite, else 0.
fn sanitize(lo: f64, hi: f64) -> (f64, f64) {
    match (lo.is_finite(), hi.is_finite()) {
        (true, true) => (lo, hi),
        (true, false) => (lo, lo),
        (false, true) => (hi, hi),
        (false, false) => (0.0, 0.0),
    }
}

/// Make sure a domain has positive width (the renderer divides by it).
fn nonzero_domain(lo: f64, hi: f64) -> [f64; 2] {
    if hi > lo {
        [lo, hi]
    } else {
        let (a, b) = widen(lo);
        [a, b]
    }
}

/// A linear axis for values in `[dmin, dmax]`.
///
/// About five ticks by [`extended`], loose: the first and last ticks lie on
/// or outside the data, and the domain runs from the first tick to the
/// last, so the axis starts and ends on a labelled value, its line sits on
/// a labelled tick and no peak rises above the top label. (Should the
/// search give none, the domain is `[min(first tick, dmin), max(last tick,
/// dmax)]`, so no data point ever leaves the plot.) With `include_zero` (bars) the
/// range is extended to contain 0; all-zero data then gets the axis
/// `[0, 1]`, and ticks on the side of zero where there is no data are
/// dropped (bars of positive values never get a negative tick). Labels come
/// from the number policy (`crate::numbers::ticks`). Non-finite bounds are replaced by the other bound,
/// or 0.
pub fn linear_axis(dmin: f64, dmax: f64, include_zero: bool, title: Option<String>) -> Axis {
    let (lo, hi) = sanitize(dmin, dmax);
    let (mut lo, mut hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    if include_zero {
        lo = lo.min(0.0);
        hi = hi.max(0.0);
        if lo == 0.0 && hi == 0.0 {
            hi = 1.0;
        }
    }
    let mut ticks = Vec::new();
    let mut domain = nonzero_domain(lo, hi);
    if let Some(nice) = nice_ticks(lo, hi, LINEAR_TICKS, true, false) {
        let mut values = nice.values;
        if include_zero {
            values.retain(|&v| (v >= 0.0 || lo < 0.0) && (v <= 0.0 || hi > 0.0));
        }
        if let (Some(&first), Some(&last)) = (values.first(), values.last()) {
            domain = nonzero_domain(first.min(lo), last.max(hi));
        }
        let labels = crate::numbers::ticks(&values, nice.step);
        ticks = values
            .into_iter()
            .zip(labels)
            .map(|(value, label)| Tick { value, label })
            .collect();
    }
    Axis {
        title,
        scale: ScaleKind::Linear,
        domain,
        ticks,
        grid: false,
    }
}

/// A time axis over exactly `[lo, hi]` (lines start and end at the data).
///
/// Share of the data's range kept free at each end of a dot or scatter
/// axis, so no dot touches the axis line or the plot's edge.
pub const DOT_PAD: f64 = 0.04;

/// A linear axis for dots and scatter points: [`linear_axis`] over the
/// data's range widened by [`DOT_PAD`] at each end, so the loose ticks
/// (which include the widened range) keep every dot off the edges.
pub fn padded_axis(dmin: f64, dmax: f64, title: Option<String>) -> Axis {
    let (lo, hi) = sanitize(dmin, dmax);
    let (lo, hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    let pad = (hi - lo) * DOT_PAD;
    let (plo, phi) = (lo - pad, hi + pad);
    if plo.is_finite() && phi.is_finite() {
        linear_axis(plo, phi, false, title)
    } else {
        linear_axis(lo, hi, false, title)
    }
}

/// Ticks sit on calendar boundaries inside the domain, at most eight; the
/// finest spacing that keeps to that limit wins.
///
/// - [`ScaleKind::Months`] (month index `year * 12 + month - 1`): every 1,
///   2, 3 or 6 months (aligned on January: bi-monthly ticks fall on Jan,
///   Mar, May…, quarterly on Jan, Apr, Jul, Oct), labelled "Mar", with the
///   year added ("Jan 2024") at each January and on the first tick; or
///   every 1, 2, 5, 10, 20, 50… years at January, labelled "2024".
/// - [`ScaleKind::Days`] (days since 1970-01-01): every day, every other
///   day (the 1st, 3rd … 29th of each month), weekly or fortnightly on
///   Mondays (ISO weeks; fortnights counted from Monday 1970-01-05),
///   labelled "Mar 4" with the year on the first tick and whenever the year
///   changes ("Mar 4, 2024"); then month and year spacings as for months,
///   on the first day of the month.
/// - [`ScaleKind::Years`]: integer ticks by [`extended`] restricted to
///   integer labels, labelled without separators ("2024").
/// - [`ScaleKind::Linear`] is passed on to [`linear_axis`] (without zero).
///
/// The bounds may come in either order; non-finite bounds are replaced by
/// the other bound, or 0. A zero-width domain is widened (see [`extended`])
/// so that the renderer can map it; its ticks still come from the original
/// single value.
pub fn time_axis(scale: ScaleKind, lo: f64, hi: f64, title: Option<String>) -> Axis {
    let (lo, hi) = sanitize(lo, hi);
    let (lo, hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    let ticks = match scale {
        // Categories carry their own labels; callers build that axis.
        ScaleKind::Linear | ScaleKind::Categories => return linear_axis(lo, hi, false, title),
        ScaleKind::Months => month_ticks(lo, hi, false),
        ScaleKind::Days => day_ticks(lo, hi),
        ScaleKind::Years => year_ticks(lo, hi),
    };
    Axis {
        title,
        scale,
        domain: nonzero_domain(lo, hi),
        ticks,
        grid: false,
    }
}

/// The time axis of quarterly data (every point on a quarter's first
/// month, as `year_quarter` makes them): ticks every quarter or more,
/// never between quarters, labelled as quarters ("2024 Q1", "Q2", …, or
/// fiscal quarters under a fiscal year) or years.
pub fn quarter_axis(lo: f64, hi: f64, title: Option<String>) -> Axis {
    let (lo, hi) = sanitize(lo, hi);
    let (lo, hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    Axis {
        title,
        scale: ScaleKind::Months,
        domain: nonzero_domain(lo, hi),
        ticks: month_ticks(lo, hi, true),
        grid: false,
    }
}

/// Clamp a float bound to an integer range (after rounding inwards).
fn int_bounds(lo: f64, hi: f64, limit: i64) -> Option<(i64, i64)> {
    let first = lo.ceil().clamp(-(limit as f64), limit as f64) as i64;
    let last = hi.floor().clamp(-(limit as f64), limit as f64) as i64;
    (first <= last).then_some((first, last))
}

/// Year spacings after the sub-year ones: 1, 2, 5, 10, 20, 50, …
fn year_steps() -> impl Iterator<Item = i64> {
    (0..12).flat_map(|p| [1, 2, 5].map(|b| b * 10i64.pow(p)))
}

/// Smallest multiple of `step` that is ≥ `x`.
fn ceil_to(x: i64, step: i64) -> i64 {
    let r = x.rem_euclid(step);
    if r == 0 {
        x
    } else {
        x - r + step
    }
}

/// Month indices are limited to years within ±100 million.
const MONTH_LIMIT: i64 = 1_200_000_000;
/// Day counts are limited to ±100 million (about ±270 000 years), safely
/// inside the range of the calendar functions.
const DAY_LIMIT: i64 = 100_000_000;

fn month_ticks(lo: f64, hi: f64, quarterly: bool) -> Vec<Tick> {
    let Some((first, last)) = int_bounds(lo, hi, MONTH_LIMIT) else {
        return Vec::new();
    };
    // A fiscal year moves the alignment of quarters, halves and years to
    // its first month (offset 0 for the calendar year). Fiscal year N
    // starts at month index (N - 1) * 12 + offset, hence the `- 12`: year
    // ticks every five years fall on FY2000, FY2005…
    let fiscal = crescendo_data::locale::current().fiscal;
    let offset = if fiscal.is_fiscal() {
        fiscal.offset() - 12
    } else {
        0
    };
    let finest: &[i64] = if quarterly { &[3] } else { &[1, 2, 3, 6] };
    let steps = finest.iter().copied().chain(year_steps().map(|y| 12 * y));
    for step in steps {
        let count = (last - offset).div_euclid(step) - ceil_to(first - offset, step) / step + 1;
        if count as usize <= MAX_TIME_TICKS || step >= MONTH_LIMIT {
            let mut ticks = Vec::new();
            let mut idx = ceil_to(first - offset, step) + offset;
            while idx <= last && ticks.len() < MAX_TIME_TICKS {
                let year = idx.div_euclid(12);
                let month = (idx.rem_euclid(12) + 1) as u32;
                let label = if (fiscal.is_fiscal() || quarterly) && step >= 3 {
                    fiscal_label(fiscal, step, year as i32, month, ticks.is_empty())
                } else if step >= 12 {
                    year.to_string()
                } else if month == 1 || ticks.is_empty() {
                    month_label(idx as i32)
                } else {
                    month_name(month).to_string()
                };
                ticks.push(Tick {
                    value: idx as f64,
                    label,
                });
                idx += step;
            }
            return ticks;
        }
    }
    Vec::new()
}

/// The label of a fiscal tick every `step` months (3 or more) at `month`
/// of `year`: "FY2025" for years; "FY2025 Q1" at the start of a fiscal
/// year, then "Q2", "Q3", "Q4"; likewise "FY2025 H1", "H2" for halves (with
/// the story's or the locale's fiscal names). The
/// first tick names its fiscal year too, unless the next tick starts one
/// (two long labels side by side would crowd each other out).
fn fiscal_label(fiscal: Fiscal, step: i64, year: i32, month: u32, first: bool) -> String {
    let quarter = fiscal.quarter_of(month);
    if step >= 12 {
        fiscal.year_label(year, month)
    } else if step == 6 {
        let half = if quarter <= 2 { 1 } else { 2 };
        if half == 1 {
            format!(
                "{} {}",
                fiscal.year_label(year, month),
                fiscal.half_name(half)
            )
        } else {
            fiscal.half_name(half)
        }
    } else if quarter == 1 || (first && quarter < 4) {
        fiscal.quarter_label(year, month)
    } else {
        fiscal.quarter_name(quarter)
    }
}

/// Spacings for day axes, finest first.
#[derive(Clone, Copy, Debug)]
enum DayStep {
    /// Every `n` days (1, or 2 on the odd days of the month).
    Days(u32),
    /// Every `n` weeks on Mondays.
    Weeks(i64),
    /// Every `n` months on the 1st.
    Months(i64),
    /// Every `n` years on 1 January.
    Years(i64),
}

/// Ticks of one spacing, at most `MAX_TIME_TICKS + 1` (one more than
/// allowed, so the caller can tell it does not fit).
fn day_candidates(step: DayStep, first: i64, last: i64) -> Vec<i64> {
    let cap = MAX_TIME_TICKS + 1;
    let mut out = Vec::new();
    match step {
        DayStep::Days(n) => {
            let mut d = first;
            // At most two days between accepted ticks, so this loop stays
            // within 2 × cap + 2 iterations.
            while d <= last && out.len() < cap {
                let (_, _, day) = civil_from_days(d as i32);
                if n == 1 || (day % 2 == 1 && day < 31) {
                    out.push(d);
                }
                d += 1;
            }
        }
        DayStep::Weeks(n) => {
            // 1970-01-05 (day 4) was a Monday.
            let period = 7 * n;
            let mut d = 4 + ceil_to(first - 4, period);
            while d <= last && out.len() < cap {
                out.push(d);
                d += period;
            }
        }
        DayStep::Months(n) => {
            let (y, m, day) = civil_from_days(first as i32);
            let mut idx = y as i64 * 12 + m as i64 - 1;
            if day > 1 {
                idx += 1;
            }
            let offset = crescendo_data::locale::current().fiscal.offset();
            idx = ceil_to(idx - offset, n) + offset;
            loop {
                let (y, m) = (idx.div_euclid(12), (idx.rem_euclid(12) + 1) as u32);
                let d = days_from_civil(y as i32, m, 1) as i64;
                if d > last || out.len() >= cap {
                    break;
                }
                out.push(d);
                idx += n;
            }
        }
        DayStep::Years(n) => {
            let (y, m, day) = civil_from_days(first as i32);
            let mut year = y as i64;
            if m > 1 || day > 1 {
                year += 1;
            }
            year = ceil_to(year, n);
            loop {
                let d = days_from_civil(year as i32, 1, 1) as i64;
                if d > last || out.len() >= cap {
                    break;
                }
                out.push(d);
                year += n;
            }
        }
    }
    out
}

fn day_ticks(lo: f64, hi: f64) -> Vec<Tick> {
    let Some((first, last)) = int_bounds(lo, hi, DAY_LIMIT) else {
        return Vec::new();
    };
    let steps = [
        DayStep::Days(1),
        DayStep::Days(2),
        DayStep::Weeks(1),
        DayStep::Weeks(2),
        DayStep::Months(1),
        DayStep::Months(2),
        DayStep::Months(3),
        DayStep::Months(6),
    ]
    .into_iter()
    .chain(
        year_steps()
            .take_while(|&y| y <= 1_000_000)
            .map(DayStep::Years),
    );
    for step in steps {
        let days = day_candidates(step, first, last);
        if days.len() > MAX_TIME_TICKS {
            continue;
        }
        let mut ticks: Vec<Tick> = Vec::new();
        let mut previous_year = None;
        let fiscal = crescendo_data::locale::current().fiscal;
        for d in days {
            let (y, m, day) = civil_from_days(d as i32);
            let new_year = previous_year != Some(y);
            previous_year = Some(y);
            let label = match step {
                DayStep::Days(_) | DayStep::Weeks(_) => day_label(y, m, day, new_year),
                DayStep::Months(n) if fiscal.is_fiscal() && n >= 3 => {
                    fiscal_label(fiscal, n, y, m, ticks.is_empty())
                }
                DayStep::Months(_) if m == 1 || ticks.is_empty() => {
                    month_label(y * 12 + m as i32 - 1)
                }
                DayStep::Months(_) => month_name(m).to_string(),
                DayStep::Years(_) => y.to_string(),
            };
            ticks.push(Tick {
                value: d as f64,
                label,
            });
        }
        return ticks;
    }
    Vec::new()
}

/// Years beyond ±1 billion are not calendar years; no ticks there.
const YEAR_LIMIT: f64 = 1e9;

fn year_ticks(lo: f64, hi: f64) -> Vec<Tick> {
    if lo.abs() > YEAR_LIMIT || hi.abs() > YEAR_LIMIT {
        return Vec::new();
    }
    let values: Vec<f64> = if hi - lo < 1.0 {
        // Too short for a search: the whole years inside, if any.
        int_bounds(lo, hi, YEAR_LIMIT as i64)
            .map(|(a, b)| (a..=b).map(|y| y as f64).collect())
            .unwrap_or_default()
    } else {
        nice_ticks(lo, hi, LINEAR_TICKS, false, true)
            .map(|t| t.values)
            .unwrap_or_default()
    };
    values
        .into_iter()
        .filter(|&v| v >= lo && v <= hi)
        .map(|v| Tick {
            value: v,
            label: format!("{}", v as i64),
        })
        .collect()
}

/// A value label: the number policy's default (three significant digits,
/// never the axis ticks' coarser precision: a bar of 5.42 reads "5.42").
pub(crate) fn value_label(v: f64) -> String {
    crate::numbers::label(v)
}

#[cfg(test)]
mod tests;
