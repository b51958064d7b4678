use super::*;

fn ext(dmin: f64, dmax: f64, m: usize, loose: bool) -> Vec<f64> {
    extended(dmin, dmax, m, loose).expect("a labelling")
}

/// Rows of shared/refs/reference-values.md §4.1, flexible search. The
/// provenance comment of each row is quoted from that file.
#[test]
fn reference_rows_flexible() {
    // published: `labeling` package docs (`extended(8.1, 14.1, 4) # 8 10
    // 12 14`) and the paper's Fig. 1(d), x-axis panel.
    assert_eq!(ext(8.1, 14.1, 4, false), [8.0, 10.0, 12.0, 14.0]);
    // Output published: paper Fig. 1(d) second panel (40, 50, 60); the
    // data range 36.6..62.9 is "inferred, not verified" (shared/refs).
    assert_eq!(ext(36.6, 62.9, 4, false), [40.0, 50.0, 60.0]);
    // The remaining rows: own computation in shared/refs, a Python
    // transcription not checked against R.
    assert_eq!(ext(0.0, 100.0, 5, false), [0.0, 25.0, 50.0, 75.0, 100.0]);
    assert_eq!(ext(-4.2, 8.1, 5, false), [-4.0, 0.0, 4.0, 8.0]);
    assert_eq!(ext(0.97, 3.03, 5, false), [1.0, 1.5, 2.0, 2.5, 3.0]);
    assert_eq!(ext(-0.3, 17.2, 5, false), [0.0, 5.0, 10.0, 15.0]);
    assert_eq!(ext(1.0, 20.0, 5, false), [0.0, 5.0, 10.0, 15.0, 20.0]);
    assert_eq!(ext(0.0, 1.0, 5, false), [0.0, 0.25, 0.5, 0.75, 1.0]);
    assert_eq!(
        ext(105.0, 543.0, 5, false),
        [100.0, 200.0, 300.0, 400.0, 500.0]
    );
    assert_eq!(
        ext(-13.7, 2.3, 6, false),
        [-12.5, -10.0, -7.5, -5.0, -2.5, 0.0, 2.5]
    );
    assert_eq!(
        ext(0.001, 0.0092, 5, false),
        [0.0, 0.0025, 0.005, 0.0075, 0.01]
    );
}

/// Rows of shared/refs §4.1 with only.loose = TRUE. All are "own
/// computation" in shared/refs (a Python transcription not checked
/// against R); none is published.
#[test]
fn reference_rows_only_loose() {
    // own computation (shared/refs): 7.5, 10, 12.5, 15
    assert_eq!(ext(8.1, 14.1, 4, true), [7.5, 10.0, 12.5, 15.0]);
    // own computation (shared/refs): 0, 25, 50, 75, 100
    assert_eq!(ext(0.0, 100.0, 5, true), [0.0, 25.0, 50.0, 75.0, 100.0]);
    // own computation (shared/refs): -5, 0, 5, 10
    assert_eq!(ext(-4.2, 8.1, 5, true), [-5.0, 0.0, 5.0, 10.0]);
    // own computation (shared/refs): 0.8, 1.2, …, 3.2
    assert_eq!(
        ext(0.97, 3.03, 5, true),
        [0.8, 1.2, 1.6, 2.0, 2.4, 2.8, 3.2]
    );
    // own computation (shared/refs): -2.5 … 17.5 step 2.5, 9 labels
    assert_eq!(
        ext(-0.3, 17.2, 5, true),
        [-2.5, 0.0, 2.5, 5.0, 7.5, 10.0, 12.5, 15.0, 17.5]
    );
    // own computation (shared/refs): same as flexible
    assert_eq!(ext(1.0, 20.0, 5, true), [0.0, 5.0, 10.0, 15.0, 20.0]);
    // own computation (shared/refs): same as flexible
    assert_eq!(ext(0.0, 1.0, 5, true), [0.0, 0.25, 0.5, 0.75, 1.0]);
    // own computation (shared/refs): 100, 200, …, 600
    assert_eq!(
        ext(105.0, 543.0, 5, true),
        [100.0, 200.0, 300.0, 400.0, 500.0, 600.0]
    );
    // own computation (shared/refs): -15, -12.5, …, 2.5
    assert_eq!(
        ext(-13.7, 2.3, 6, true),
        [-15.0, -12.5, -10.0, -7.5, -5.0, -2.5, 0.0, 2.5]
    );
    // own computation (shared/refs): same as flexible
    assert_eq!(
        ext(0.001, 0.0092, 5, true),
        [0.0, 0.0025, 0.005, 0.0075, 0.01]
    );
}

#[test]
fn loose_labels_cover_the_data() {
    for &(a, b) in &[
        (8.1, 14.1),
        (-13.7, 2.3),
        (0.97, 3.03),
        (3.3, 3.31),
        (-7e-9, 2e-8),
    ] {
        let t = ext(a, b, 5, true);
        assert!(t[0] <= a && *t.last().unwrap() >= b, "{a}..{b}: {t:?}");
    }
}

#[test]
fn degenerate_reversed_and_extreme_inputs() {
    // Reversed bounds give the same labels.
    assert_eq!(ext(14.1, 8.1, 4, false), ext(8.1, 14.1, 4, false));
    // A single value is widened around itself (0 to [-1, 1]).
    let t = ext(0.0, 0.0, 5, false);
    assert!(
        t.contains(&0.0) && t[0] < 0.0 && *t.last().unwrap() > 0.0,
        "{t:?}"
    );
    let t = ext(5.0, 5.0, 5, true);
    assert!(
        t[0] <= 5.0 && *t.last().unwrap() >= 5.0 && t.len() >= 2,
        "{t:?}"
    );
    // Non-finite input.
    assert_eq!(extended(f64::NAN, 1.0, 5, false), None);
    assert_eq!(extended(0.0, f64::INFINITY, 5, false), None);
    // Tiny and huge magnitudes come out as clean decimals.
    assert_eq!(
        ext(1e-9, 9.2e-9, 5, false),
        [0.0, 2.5e-9, 5e-9, 7.5e-9, 1e-8]
    );
    assert_eq!(
        ext(1.05e12, 5.43e12, 5, false),
        [1e12, 2e12, 3e12, 4e12, 5e12]
    );
    assert_eq!(
        ext(1.05e250, 5.43e250, 5, false),
        [1e250, 2e250, 3e250, 4e250, 5e250]
    );
    assert_eq!(
        ext(1.05e-250, 5.43e-250, 5, false),
        [1e-250, 2e-250, 3e-250, 4e-250, 5e-250]
    );
    // Extremes terminate and stay finite (or give up cleanly).
    for &(a, b) in &[
        (-f64::MAX, f64::MAX),
        (f64::MIN_POSITIVE, 2.0 * f64::MIN_POSITIVE),
        (5e-324, 1e-323),
        (1e15, 1e15 + 1.0),
        (f64::MAX, f64::MAX),
        (-1e300, 1e-300),
    ] {
        if let Some(t) = extended(a, b, 5, false) {
            assert!(
                t.iter().all(|v| v.is_finite()) && !t.is_empty(),
                "{a}..{b}: {t:?}"
            );
        }
    }
    // Odd m values are clamped rather than rejected.
    assert!(extended(0.0, 1.0, 0, false).is_some());
    assert!(extended(0.0, 1.0, 10_000, false).is_some());
}

#[test]
fn no_float_noise_in_ticks() {
    for &(a, b) in &[(0.1, 0.7), (0.0, 0.3), (-0.07, 0.23), (1.1, 1.9)] {
        for loose in [false, true] {
            for v in ext(a, b, 5, loose) {
                let shortest = format!("{v}");
                assert!(shortest.len() <= 6, "{a}..{b}: {shortest}");
            }
        }
    }
}

fn labels(axis: &Axis) -> Vec<&str> {
    axis.ticks.iter().map(|t| t.label.as_str()).collect()
}

fn values(axis: &Axis) -> Vec<f64> {
    axis.ticks.iter().map(|t| t.value).collect()
}

#[test]
fn linear_axis_contains_data_and_zero() {
    let a = linear_axis(0.97, 3.03, false, Some("Rate".into()));
    assert_eq!(a.scale, ScaleKind::Linear);
    assert_eq!(a.title.as_deref(), Some("Rate"));
    // loose ticks: the axis ends on labelled values around the data
    assert_eq!(labels(&a), ["0.8", "1.2", "1.6", "2", "2.4", "2.8", "3.2"]);
    assert_eq!(a.domain, [0.8, 3.2]);

    // Bars: zero included; ticks from 0; the domain reaches the data.
    let a = linear_axis(12.0, 17.2, true, None);
    assert_eq!(labels(&a), ["0", "5", "10", "15", "20"]);
    assert_eq!(a.domain, [0.0, 20.0]);
    let a = linear_axis(-13.7, -2.0, true, None);
    assert!(a.domain[0] <= -13.7 && a.domain[1] == 0.0, "{:?}", a.domain);
    assert!(values(&a).iter().all(|&v| v <= 0.0), "{:?}", values(&a));
    assert_eq!(a.ticks.last().map(|t| t.label.as_str()), Some("0"));

    // Without zero the axis hugs the data.
    let a = linear_axis(1200.0, 1800.0, false, None);
    assert!(a.domain[0] > 0.0);
    assert!(labels(&a).contains(&"1,500"), "{:?}", labels(&a));

    // All-zero bars and a flat line.
    let a = linear_axis(0.0, 0.0, true, None);
    assert_eq!(a.domain, [0.0, 1.0]);
    assert_eq!(labels(&a), ["0", "0.25", "0.5", "0.75", "1"]);
    let a = linear_axis(5.0, 5.0, false, None);
    assert!(a.domain[0] < 5.0 && a.domain[1] > 5.0, "{:?}", a.domain);

    // Non-finite input still gives a usable axis.
    let a = linear_axis(f64::NAN, f64::NAN, true, None);
    assert_eq!(a.domain, [0.0, 1.0]);
}

// A measure axis runs from a labelled tick to a labelled tick that
// include all the data: no peak above the top label, the axis line on
// a labelled value (the loose variant of Talbot, Lin & Hanrahan 2010).
#[test]
fn linear_axes_end_on_labelled_ticks_around_the_data() {
    for (lo, hi, zero) in [
        (2318.0, 12_740.0, false),
        (0.0, 20_310.0, true),
        (-13.7, 2.3, true),
        (0.97, 3.03, false),
        (48.2, 48.9, false),
    ] {
        let a = linear_axis(lo, hi, zero, None);
        let v = values(&a);
        let (first, last) = (v[0], v[v.len() - 1]);
        assert_eq!(a.domain, [first, last], "{lo}..{hi}");
        assert!(first <= lo && last >= hi, "{lo}..{hi}: {v:?}");
    }
    // dots and scatter points keep off the edges
    let a = padded_axis(10.0, 50.0, None);
    assert!(a.domain[0] < 10.0 && a.domain[1] > 50.0, "{:?}", a.domain);
}

#[test]
fn linear_domain_always_contains_data_and_ticks() {
    let cases = [
        (8.1, 14.1),
        (-4.2, 8.1),
        (0.001, 0.0092),
        (-13.7, 2.3),
        (3.3, 3.31),
        (99.0, 101.0),
        (-1e6, -999_000.0),
    ];
    for (a, b) in cases {
        for zero in [false, true] {
            let axis = linear_axis(a, b, zero, None);
            let [lo, hi] = axis.domain;
            assert!(lo <= a && hi >= b && lo < hi, "{a}..{b}: {lo}..{hi}");
            assert!(axis.ticks.len() >= 2, "{a}..{b}: {:?}", axis.ticks);
            for t in &axis.ticks {
                assert!(t.value >= lo && t.value <= hi);
            }
            if zero {
                assert!(lo <= 0.0 && hi >= 0.0);
            }
        }
    }
}

fn month(y: i32, m: i32) -> f64 {
    (y * 12 + m - 1) as f64
}

#[test]
fn months_over_six_years_tick_yearly() {
    let a = time_axis(ScaleKind::Months, month(2019, 1), month(2024, 12), None);
    assert_eq!(a.domain, [month(2019, 1), month(2024, 12)]);
    assert_eq!(labels(&a), ["2019", "2020", "2021", "2022", "2023", "2024"]);
    assert_eq!(values(&a)[0], month(2019, 1));
}

#[test]
fn months_within_a_year_tick_bimonthly() {
    let a = time_axis(ScaleKind::Months, month(2024, 1), month(2024, 12), None);
    assert_eq!(labels(&a), ["Jan 2024", "Mar", "May", "Jul", "Sep", "Nov"]);
    let a = time_axis(ScaleKind::Months, month(2024, 3), month(2024, 8), None);
    assert_eq!(labels(&a), ["Mar 2024", "Apr", "May", "Jun", "Jul", "Aug"]);
}

/// The time axis from `lo` to `hi` in a fiscal year that starts in July
/// (see `crescendo_data::locale`): July 2024 to June 2025 is FY2025.
fn fiscal_axis(kind: ScaleKind, lo: f64, hi: f64) -> Axis {
    let july = crescendo_data::locale::Conventions::of(None, Some(7));
    crescendo_data::locale::scoped(july, || time_axis(kind, lo, hi, None))
}

#[test]
fn fiscal_quarters_halves_and_years() {
    // Worked example: 2023-07 .. 2024-12 by quarters. July 2023 starts
    // FY2024 (July 2023 to June 2024, named by the year it ends in), so
    // Jul-Sep 2023 is FY2024 Q1, Oct-Dec Q2, Jan-Mar 2024 Q3, Apr-Jun
    // Q4; July 2024 starts FY2025.
    let a = fiscal_axis(ScaleKind::Months, month(2023, 7), month(2024, 12));
    assert_eq!(
        labels(&a),
        ["FY2024 Q1", "Q2", "Q3", "Q4", "FY2025 Q1", "Q2"]
    );
    assert_eq!(a.ticks[0].value, month(2023, 7));
    // Starting mid-quarter: the first tick names its fiscal year.
    let a = fiscal_axis(ScaleKind::Months, month(2023, 9), month(2025, 2));
    assert_eq!(
        labels(&a),
        ["FY2024 Q2", "Q3", "Q4", "FY2025 Q1", "Q2", "Q3"]
    );
    // ...unless the next tick starts one (Q4 of FY2023, then FY2024).
    let a = fiscal_axis(ScaleKind::Months, month(2023, 4), month(2024, 9));
    assert_eq!(
        labels(&a),
        ["Q4", "FY2024 Q1", "Q2", "Q3", "Q4", "FY2025 Q1"]
    );
    // Three years: half-years from July. The first tick is the second
    // half of FY2022 and the next starts FY2023, so it says only "H2".
    let a = fiscal_axis(ScaleKind::Months, month(2022, 1), month(2024, 12));
    assert_eq!(
        labels(&a),
        ["H2", "FY2023 H1", "H2", "FY2024 H1", "H2", "FY2025 H1"]
    );
    // Twenty-five years: fiscal years, each tick at a July.
    let a = fiscal_axis(ScaleKind::Months, month(1999, 6), month(2024, 6));
    assert_eq!(
        labels(&a),
        ["FY2000", "FY2005", "FY2010", "FY2015", "FY2020"]
    );
    assert_eq!(a.ticks[0].value, month(1999, 7));
    // Months stay months.
    let a = fiscal_axis(ScaleKind::Months, month(2024, 1), month(2024, 6));
    assert_eq!(labels(&a), ["Jan 2024", "Feb", "Mar", "Apr", "May", "Jun"]);
    // Days over a year and a half: fiscal quarters on the 1st.
    let a = fiscal_axis(ScaleKind::Days, day(2023, 7, 1), day(2024, 12, 31));
    assert_eq!(
        labels(&a),
        ["FY2024 Q1", "Q2", "Q3", "Q4", "FY2025 Q1", "Q2"]
    );
}

#[test]
fn months_over_eighteen_months_and_three_years() {
    // 2023-07 .. 2024-12: quarters, the year at January.
    let a = time_axis(ScaleKind::Months, month(2023, 7), month(2024, 12), None);
    assert_eq!(
        labels(&a),
        ["Jul 2023", "Oct", "Jan 2024", "Apr", "Jul", "Oct"]
    );
    // 2022-01 .. 2024-12: half-years.
    let a = time_axis(ScaleKind::Months, month(2022, 1), month(2024, 12), None);
    assert_eq!(
        labels(&a),
        ["Jan 2022", "Jul", "Jan 2023", "Jul", "Jan 2024", "Jul"]
    );
    // Twenty-five years: every five years.
    let a = time_axis(ScaleKind::Months, month(1999, 6), month(2024, 6), None);
    assert_eq!(labels(&a), ["2000", "2005", "2010", "2015", "2020"]);
    // Reversed bounds and a single month.
    let a = time_axis(ScaleKind::Months, month(2024, 12), month(2024, 1), None);
    assert_eq!(a.domain, [month(2024, 1), month(2024, 12)]);
    let a = time_axis(ScaleKind::Months, month(2024, 5), month(2024, 5), None);
    assert_eq!(labels(&a), ["May 2024"]);
    assert!(a.domain[0] < a.domain[1]);
}

#[test]
fn time_ticks_stay_in_domain_and_few() {
    for (lo, hi) in [
        (0.0, 5.0),
        (-500.0, 30_000.0),
        (24_000.0, 24_290.0),
        (1.5, 1.7),
    ] {
        for scale in [ScaleKind::Months, ScaleKind::Days, ScaleKind::Years] {
            let a = time_axis(scale, lo, hi, None);
            assert!(a.ticks.len() <= MAX_TIME_TICKS, "{scale:?} {lo}..{hi}");
            for t in &a.ticks {
                assert!(t.value >= lo && t.value <= hi, "{scale:?} {lo}..{hi}");
            }
        }
    }
    // Enormous spans still terminate with few ticks.
    let a = time_axis(ScaleKind::Days, -1e12, 1e12, None);
    assert!(a.ticks.len() <= MAX_TIME_TICKS);
    let a = time_axis(ScaleKind::Months, -1e15, 1e15, None);
    assert!(a.ticks.len() <= MAX_TIME_TICKS);
}

fn day(y: i32, m: u32, d: u32) -> f64 {
    days_from_civil(y, m, d) as f64
}

#[test]
fn day_axes() {
    // One week: every day.
    let a = time_axis(ScaleKind::Days, day(2024, 3, 4), day(2024, 3, 10), None);
    assert_eq!(
        labels(&a),
        [
            "Mar 4, 2024",
            "Mar 5",
            "Mar 6",
            "Mar 7",
            "Mar 8",
            "Mar 9",
            "Mar 10"
        ]
    );
    // Six weeks: Mondays (2024-03-04 was a Monday).
    let a = time_axis(ScaleKind::Days, day(2024, 3, 1), day(2024, 4, 12), None);
    assert_eq!(
        labels(&a),
        [
            "Mar 4, 2024",
            "Mar 11",
            "Mar 18",
            "Mar 25",
            "Apr 1",
            "Apr 8"
        ]
    );
    // Across New Year with daily ticks every other day.
    let a = time_axis(ScaleKind::Days, day(2023, 12, 27), day(2024, 1, 6), None);
    assert_eq!(
        labels(&a),
        ["Dec 27, 2023", "Dec 29", "Jan 1, 2024", "Jan 3", "Jan 5"]
    );
    // One year of days: bi-monthly on the 1st.
    let a = time_axis(ScaleKind::Days, day(2024, 1, 1), day(2024, 12, 31), None);
    assert_eq!(labels(&a), ["Jan 2024", "Mar", "May", "Jul", "Sep", "Nov"]);
    assert_eq!(values(&a)[1], day(2024, 3, 1));
    // Five years of days: yearly on 1 January.
    let a = time_axis(ScaleKind::Days, day(2019, 6, 1), day(2024, 6, 1), None);
    assert_eq!(labels(&a), ["2020", "2021", "2022", "2023", "2024"]);
    assert_eq!(a.domain, [day(2019, 6, 1), day(2024, 6, 1)]);
}

#[test]
fn year_axes() {
    let a = time_axis(ScaleKind::Years, 2015.0, 2024.0, Some("Year".into()));
    assert_eq!(a.domain, [2015.0, 2024.0]);
    assert!(labels(&a).iter().all(|l| l.len() == 4 && !l.contains(',')));
    assert!(a.ticks.iter().all(|t| t.value.fract() == 0.0));
    assert!(a.ticks.len() >= 3, "{:?}", labels(&a));
    // A short span must still tick whole years, never 2020.5.
    let a = time_axis(ScaleKind::Years, 2020.0, 2022.0, None);
    assert_eq!(labels(&a), ["2020", "2021", "2022"]);
    let a = time_axis(ScaleKind::Years, 2024.0, 2024.0, None);
    assert_eq!(labels(&a), ["2024"]);
    assert!(a.domain[0] < a.domain[1]);
}
