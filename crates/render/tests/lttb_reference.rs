//! LTTB against the `lttb` package (PyPI 0.3.1): the expected indices in
//! `fixtures/lttb_expected.json` were computed by
//! `fixtures/make_lttb_expected.py` (see its header for how to rerun it).

use crescendo_render::lttb;

const FIXTURE: &str = include_str!("fixtures/lttb_expected.json");

/// The integers of the fixture's `"indices": [...]` array.
fn expected() -> Vec<usize> {
    let start = FIXTURE.find("\"indices\"").expect("indices key") + "\"indices\"".len();
    let open = start + FIXTURE[start..].find('[').expect("[");
    let close = open + FIXTURE[open..].find(']').expect("]");
    FIXTURE[open + 1..close]
        .split(',')
        .map(|s| s.trim().parse().expect("an index"))
        .collect()
}

#[test]
fn five_thousand_points_to_four_hundred_match_the_package() {
    let points: Vec<(f64, f64)> = (0..5000)
        .map(|i| {
            let x = i as f64;
            (x, (x / 37.0).sin() * 100.0 + ((i * 7919) % 101) as f64)
        })
        .collect();
    let want = expected();
    assert_eq!(want.len(), 400);
    assert_eq!(lttb(&points, 400), want);
}
