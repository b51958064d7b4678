//! Properties of the number-axis ticks (`scale.rs`), over random data
//! ranges: ticks cover the data, rise strictly, are evenly spaced, and
//! stay within the requested count. The count `m` is the target of the
//! density term of Talbot, Lin & Hanrahan (2010), not a hard cap: the
//! search may trade a tick or two more for simpler steps (m = 2 over
//! [-0.049, -0.039] gives three ticks). `extended` promises at most 2m
//! (its search bound), so the property is "at most 2m"; the axes the
//! renderer draws (m = 5) never get more than ten.

use crescendo_plan::scale::{extended, linear_axis};
use proptest::prelude::*;

/// Data bounds as analysts meet them: magnitudes from 1e-6 to 1e12, of
/// either sign, possibly equal.
fn bounds() -> impl Strategy<Value = (f64, f64)> {
    (-12i32..12, -1e6f64..1e6, 0f64..1e6).prop_map(|(e, a, w)| {
        let s = 10f64.powi(e) / 1e6;
        (a * s, (a + w) * s)
    })
}

/// Found by this property on a CI run before `extended` bounded its search:
/// eight ticks for m = 3.
#[test]
fn three_asked_for_never_give_more_than_six() {
    let t = extended(-0.5698333065793559, 0.009910129021075787, 3, true).expect("ticks");
    assert!(t.len() <= 6, "{t:?}");
    assert!(t[0] <= -0.5698333065793559 && t[t.len() - 1] >= 0.009910129021075787);
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(4000))]

    #[test]
    fn loose_ticks_cover_the_data_within_the_count((lo, hi) in bounds(), m in 2usize..12) {
        let found = extended(lo, hi, m, true);
        prop_assert!(found.is_some(), "no labelling for [{lo}, {hi}], m = {m}");
        if let Some(t) = found {
            prop_assert!(t.len() >= 2, "{t:?}");
            prop_assert!(t.len() <= 2 * m, "{} ticks for m = {m}: {t:?}", t.len());
            let (first, last) = (t[0], t[t.len() - 1]);
            prop_assert!(first <= lo && last >= hi, "{t:?} does not cover [{lo}, {hi}]");
            for w in t.windows(2) {
                prop_assert!(w[1] > w[0], "{t:?}");
            }
            let step = t[1] - t[0];
            for w in t.windows(2) {
                // a tick is computed to within a few units in the last place
                // of its own size, which on a narrow range far from zero is
                // more than a billionth of the step
                let rounding = 4.0 * f64::EPSILON * w[0].abs().max(w[1].abs());
                prop_assert!(((w[1] - w[0]) - step).abs() <= step * 1e-9 + rounding, "{t:?}");
            }
        }
    }

    #[test]
    fn an_axis_domain_holds_the_data_and_its_ticks((lo, hi) in bounds(), zero in any::<bool>()) {
        let a = linear_axis(lo, hi, zero, None);
        let [d0, d1] = a.domain;
        prop_assert!(d0 < d1);
        prop_assert!(d0 <= lo && d1 >= hi, "{:?} vs [{lo}, {hi}]", a.domain);
        if zero {
            prop_assert!(d0 <= 0.0 && d1 >= 0.0);
        }
        prop_assert!(!a.ticks.is_empty());
        prop_assert!(a.ticks.len() <= 10, "{} ticks", a.ticks.len());
        for t in &a.ticks {
            prop_assert!(t.value >= d0 && t.value <= d1, "tick {} outside {:?}", t.value, a.domain);
            prop_assert!(!t.label.is_empty());
        }
    }
}
