//! Properties of Largest-Triangle-Three-Buckets downsampling (Steinarsson
//! 2013), over random series: the first and last points are kept, exactly
//! `threshold` points come out (when reducing), in order, and every point
//! out is a point in, unchanged (the method picks points, it never invents
//! one).

use crescendo_render::lttb::{downsample_runs, lttb};
use proptest::prelude::*;

/// A series sorted by x (distinct x), with arbitrary finite y.
fn series() -> impl Strategy<Value = Vec<(f64, f64)>> {
    prop::collection::vec((0.001f64..100.0, -1e9f64..1e9), 0..400).prop_map(|steps| {
        let mut x = 0.0;
        steps
            .into_iter()
            .map(|(dx, y)| {
                x += dx;
                (x, y)
            })
            .collect()
    })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn keeps_the_ends_and_only_real_points(points in series(), threshold in 0usize..500) {
        let kept = lttb(&points, threshold);
        let n = points.len();
        if threshold >= n || threshold < 3 {
            prop_assert_eq!(kept, (0..n).collect::<Vec<_>>());
        } else {
            prop_assert_eq!(kept.len(), threshold);
            prop_assert_eq!(kept.first().copied(), Some(0));
            prop_assert_eq!(kept.last().copied(), Some(n - 1));
            // strictly increasing indices: in order, no point twice
            for w in kept.windows(2) {
                prop_assert!(w[0] < w[1]);
            }
        }
    }

    #[test]
    fn downsampled_runs_are_made_of_input_points(
        runs in prop::collection::vec(series(), 1..4),
        target in 3usize..300,
    ) {
        let out = downsample_runs(&runs, target);
        prop_assert_eq!(out.len(), runs.len());
        for (run, thin) in runs.iter().zip(&out) {
            if let (Some(a), Some(b)) = (run.first(), run.last()) {
                prop_assert_eq!(thin.first(), Some(a));
                prop_assert_eq!(thin.last(), Some(b));
            }
            // every point out is bit-for-bit a point in, in the same order
            let mut at = 0;
            for p in thin {
                let found = run[at..].iter().position(|q| q.0.to_bits() == p.0.to_bits() && q.1.to_bits() == p.1.to_bits());
                prop_assert!(found.is_some(), "{p:?} is not an input point (in order)");
                at += found.unwrap_or(0) + 1;
            }
        }
    }
}
