//! Labels agree across a build-up sequence: a quantity one frame's text
//! quotes prints the same way (or, for a percentage, with no fewer
//! significant digits) in every frame of the sequence, in the chart and in
//! the description alike.

mod common;

use std::fs;
use std::sync::atomic::{AtomicUsize, Ordering};

use common::scratch;
use crescendo_diag::Source;
use crescendo_plan::{Chart, Planned};
use proptest::prelude::*;

/// Plan three frames of one sequence over bars a, b, c; the second frame's
/// headline quotes `a` as `quote`.
fn plan(values: [f64; 3], quote: &str) -> Planned {
    static RUN: AtomicUsize = AtomicUsize::new(0);
    let dir = scratch(&format!(
        "sequence-labels-{}",
        RUN.fetch_add(1, Ordering::SeqCst)
    ));
    let mut csv = String::from("k,x\n");
    for (k, v) in ["a", "b", "c"].iter().zip(values) {
        csv.push_str(&format!("{k},{v}\n"));
    }
    fs::write(dir.join("d.csv"), csv).unwrap();
    let story = format!(
        "story \"S\"\ndata d from \"d.csv\"\nview v = d | by k: x = sum(x)\n\
         value a = sum(v.x where k = \"a\")\n\
         frame \"Three branches\" {{\n  bars v: category k, value x\n}}\n\
         frame \"A stands at {{{quote}}}\" {{\n  spotlight \"a\"\n}}\n\
         frame \"And the others\" {{\n  spotlight none\n}}\n"
    );
    let src = Source::file("s.cresc", story);
    let planned = crescendo_plan::plan_story(&src, &dir, &Default::default())
        .unwrap_or_else(|e| panic!("{}", crescendo_diag::render(&e, false)));
    let _ = fs::remove_dir_all(&dir);
    planned
}

/// The label of bar `a` in each frame, and each frame's description.
fn labels(p: &Planned) -> Vec<(String, String)> {
    p.plan
        .frames
        .iter()
        .map(|f| match &f.chart {
            Chart::Bars(b) => {
                let a = b.bars.iter().find(|bar| bar.label == "a").expect("bar a");
                (a.value_label.clone(), f.description.clone())
            }
            other => panic!("not bars: {other:?}"),
        })
        .collect()
}

/// The figure the second frame's headline shows.
fn quoted(p: &Planned) -> String {
    p.plan.frames[1]
        .headline
        .trim_start_matches("A stands at ")
        .to_string()
}

#[test]
fn a_quoted_figure_prints_the_same_in_every_frame_of_its_sequence() {
    // (values, quote, label expected in all three frames); worked by hand
    let cases = [
        // the default would show 3 significant digits ("5.42"); the quote
        // shows 1 decimal: every frame prints "5.4" (same quantity, same way)
        ([5.4213, 4.78, 2.0], "a to 1 decimal", "5.4"),
        // more digits than the default: raised everywhere
        ([8.6, 4.78, 2.0], "a to 3 decimals", "8.600"),
        // half away from zero on the decimal digits
        ([2.25, 1.0, 3.0], "a to 1 decimal", "2.3"),
        // the true minus sign in the drawn label
        ([-64.25, 1.0, 3.0], "a to 0 decimals", "\u{2212}64"),
    ];
    for (values, quote, want) in cases {
        let p = plan(values, quote);
        let got = labels(&p);
        assert_eq!(got.len(), 3, "{quote}");
        for (i, (label, description)) in got.iter().enumerate() {
            assert_eq!(label, want, "{quote}: frame {}", i + 1);
            assert!(
                description.contains(want),
                "{quote}: frame {}: {description}",
                i + 1
            );
        }
    }
}

#[test]
fn a_percentage_quote_raises_the_labels_of_the_whole_sequence() {
    // 0.12345 quoted as 12.35% (4 significant digits): labels show at least 4
    let p = plan([0.12345, 0.5, 0.25], "a as percent to 2 decimals");
    assert_eq!(quoted(&p), "12.35%");
    for (label, _) in labels(&p) {
        assert_eq!(label, "0.1235");
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]

    /// For random values and decimals, the bar the second frame quotes
    /// reads as the quote in all three frames (a plain figure), and its
    /// descriptions say it so.
    #[test]
    fn labels_agree_with_a_quote_anywhere_in_the_sequence(
        raw in proptest::collection::vec(-1e6f64..1e6, 3),
        digits in 0u32..5,
        places in 0usize..5,
    ) {
        let scale = 10f64.powi(digits as i32);
        let values: Vec<f64> = raw.iter().map(|v| (v * scale).round() / scale).collect();
        let values = [values[0], values[1], values[2]];
        let p = plan(values, &format!("a to {places} decimals"));
        let fig = quoted(&p);
        // a quote that shows no significant digit ("0.00") has nothing to
        // agree with
        prop_assume!(fig.chars().any(|c| ('1'..='9').contains(&c)));
        for (i, (label, description)) in labels(&p).iter().enumerate() {
            prop_assert_eq!(label, &fig, "frame {}", i + 1);
            prop_assert!(description.contains(&fig), "frame {}: {}", i + 1, description);
        }
    }
}
