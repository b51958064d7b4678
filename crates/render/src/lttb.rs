//! Largest-Triangle-Three-Buckets downsampling (S. Steinarsson,
//! *Downsampling Time Series for Visual Representation*, MSc thesis,
//! University of Iceland, 2013), used to thin lines that have more points
//! than the plot has room to show.
//!
//! Bucket convention: the interior points (all but the first and last) are
//! split into `threshold − 2` contiguous buckets the way
//! `numpy.array_split` splits them, larger buckets first, as the `lttb`
//! package (PyPI, 0.3.1) does. Ties between equal triangle areas go to the
//! first point of the bucket (numpy `argmax`). Checked against that package
//! in the tests below and in `tests/lttb_reference.rs`.

/// Indices of the points LTTB keeps when reducing `points` (sorted by x) to
/// `threshold` points. The first and last points are always kept.
///
/// When `threshold` is at least the number of points, or below 3 (too few
/// for buckets), every index is returned. Non-finite coordinates make
/// areas NaN, which never win a bucket unless every area in it is NaN (the
/// first point is kept then).
pub fn lttb(points: &[(f64, f64)], threshold: usize) -> Vec<usize> {
    let n = points.len();
    if threshold >= n || threshold < 3 {
        return (0..n).collect();
    }
    let buckets = threshold - 2;
    let interior = n - 2;
    // numpy.array_split: the first `interior % buckets` buckets hold one
    // point more than the others.
    let base = interior / buckets;
    let extra = interior % buckets;
    let bounds: Vec<(usize, usize)> = (0..buckets)
        .map(|i| {
            let start = 1 + i * base + i.min(extra);
            let len = base + usize::from(i < extra);
            (start, start + len)
        })
        .collect();

    let mut out = Vec::with_capacity(threshold);
    out.push(0);
    let mut a = points[0];
    for (i, &(start, end)) in bounds.iter().enumerate() {
        let c = match bounds.get(i + 1) {
            Some(&(s, e)) => centroid(&points[s..e]),
            None => points[n - 1],
        };
        let mut best = start;
        let mut best_area = f64::NEG_INFINITY;
        for (j, &b) in points.iter().enumerate().take(end).skip(start) {
            let area = 0.5 * ((a.0 - c.0) * (b.1 - a.1) - (a.0 - b.0) * (c.1 - a.1)).abs();
            if area > best_area {
                best_area = area;
                best = j;
            }
        }
        out.push(best);
        a = points[best];
    }
    out.push(n - 1);
    out
}

/// Mean x and mean y, summed in order (as numpy reduces along axis 0).
fn centroid(points: &[(f64, f64)]) -> (f64, f64) {
    let (mut sx, mut sy) = (0.0, 0.0);
    for p in points {
        sx += p.0;
        sy += p.1;
    }
    let k = points.len().max(1) as f64;
    (sx / k, sy / k)
}

/// Downsamples a line that a missing value may break into several runs:
/// each run keeps a share of `target` points proportional to its length
/// (at least 3, and never more than it has), so the whole line comes out
/// at about `target` points. Runs are returned in order; a line with no
/// more than `target` points is returned unchanged.
pub fn downsample_runs(runs: &[Vec<(f64, f64)>], target: usize) -> Vec<Vec<(f64, f64)>> {
    let total: usize = runs.iter().map(Vec::len).sum();
    if total <= target || total == 0 {
        return runs.to_vec();
    }
    runs.iter()
        .map(|run| {
            let share = (run.len() as f64 * target as f64 / total as f64).round() as usize;
            let keep = share.max(3);
            lttb(run, keep).into_iter().map(|i| run[i]).collect()
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn indexed(ys: &[f64]) -> Vec<(f64, f64)> {
        ys.iter().enumerate().map(|(i, &y)| (i as f64, y)).collect()
    }

    /// The series of examples A and C: (7i² + 3i) mod 23 for i below `n`.
    fn wave(n: i32) -> Vec<(f64, f64)> {
        let ys: Vec<f64> = (0..n).map(|i| ((7 * i * i + 3 * i) % 23) as f64).collect();
        indexed(&ys)
    }

    // Examples A, B and C of shared/refs/reference-values.md §6.2,
    // "computed with lttb 0.3.1" (`lttb.downsample(points, 6)`).
    #[test]
    fn example_a() {
        assert_eq!(lttb(&wave(20), 6), vec![0, 1, 9, 13, 18, 19]);
    }

    #[test]
    fn example_b_separates_the_bucket_conventions() {
        let ys: Vec<f64> = (0..20).map(|i| ((i * i) % 13) as f64).collect();
        // array_split buckets 5, 5, 4, 4; the floor(i·every) rule would
        // give [0, 3, 8, 13, 16, 19].
        assert_eq!(lttb(&indexed(&ys), 6), vec![0, 5, 8, 13, 16, 19]);
    }

    #[test]
    fn example_c() {
        assert_eq!(lttb(&wave(22), 6), vec![0, 1, 9, 13, 20, 21]);
    }

    #[test]
    fn small_inputs_pass_through() {
        let p = indexed(&[1.0, 2.0, 3.0]);
        assert_eq!(lttb(&p, 3), vec![0, 1, 2]);
        assert_eq!(lttb(&p, 10), vec![0, 1, 2]);
        assert_eq!(lttb(&p, 2), vec![0, 1, 2]);
        assert!(lttb(&[], 5).is_empty());
        let four = indexed(&[0.0, 5.0, 1.0, 0.0]);
        // One bucket [1, 2]; C is the last point; the peak at 1 wins.
        assert_eq!(lttb(&four, 3), vec![0, 1, 3]);
    }

    #[test]
    fn ties_go_to_the_first_point() {
        let flat = indexed(&[0.0; 10]);
        assert_eq!(lttb(&flat, 4), vec![0, 1, 5, 9]);
    }

    #[test]
    fn runs_are_downsampled_separately() {
        let a: Vec<(f64, f64)> = (0..1000).map(|i| (i as f64, (i % 7) as f64)).collect();
        let b: Vec<(f64, f64)> = (1001..1500).map(|i| (i as f64, (i % 5) as f64)).collect();
        let out = downsample_runs(&[a.clone(), b.clone()], 300);
        assert_eq!(out.len(), 2);
        assert_eq!(out[0].len(), 200);
        assert_eq!(out[1].len(), 100);
        assert_eq!(out[0][0], a[0]);
        assert_eq!(out[0].last(), a.last());
        assert_eq!(out[1][0], b[0]);
        assert_eq!(out[1].last(), b.last());
        // Short lines are untouched.
        let short = vec![a[..10].to_vec()];
        assert_eq!(downsample_runs(&short, 300), short);
    }
}
