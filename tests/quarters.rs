//! A year column and a quarter column as one quarterly time
//! (`year_quarter`): a point per quarter on a time axis, quoted as a
//! quarter; a wrong argument is a located error. (The database computes
//! the same: `tests/database.rs`, `quarters`.)

mod common;

use std::fs;
use std::sync::atomic::{AtomicUsize, Ordering};

use common::scratch;
use crescendo_diag::Source;
use crescendo_plan::Chart;

const DATA: &str = "year,quarter,output\n2022,1,10\n2022,2,11\n2022,3,12.5\n2022,4,12\n\
                    2023,Q1,13\n2023,Q2,13.5\n2023,Q3,14\n2023,Q4,15\n";

fn plan(view: &str) -> crescendo_plan::PlanResult {
    static RUN: AtomicUsize = AtomicUsize::new(0);
    let dir = scratch(&format!("quarters-{}", RUN.fetch_add(1, Ordering::SeqCst)));
    fs::write(dir.join("q.csv"), DATA).unwrap();
    let story = format!(
        "story \"Q\"\ndata d from \"q.csv\" {{ year: year, quarter: text }}\n{view}\n\
         frame \"Output reached {{last(v.output)}} in {{last(v.time) as quarter}}\" {{\n  line v: x time, y output\n}}\n"
    );
    let src = Source::file("q.cresc", story);
    let out = crescendo_plan::plan_story(&src, &dir, &Default::default());
    let _ = fs::remove_dir_all(&dir);
    out
}

#[test]
fn a_year_and_a_quarter_make_one_point_per_quarter() {
    let planned =
        plan("view v = d | add time = year_quarter(year, quarter) | by time: output = sum(output)")
            .unwrap_or_else(|e| panic!("{}", crescendo_diag::render(&e, false)));
    let f = &planned.plan.frames[0];
    assert_eq!(f.headline, "Output reached 15 in 2023 Q4");
    let Chart::Line(l) = &f.chart else {
        panic!("not a line")
    };
    // month indices year * 12 + month - 1 of Jan, Apr, Jul, Oct (worked by hand)
    let xs: Vec<f64> = l.series[0].points.iter().map(|p| p.x).collect();
    let want: Vec<f64> = [2022, 2023]
        .iter()
        .flat_map(|y| [0, 3, 6, 9].map(|m| f64::from(y * 12 + m)))
        .collect();
    assert_eq!(xs, want);
    let ys: Vec<Option<f64>> = l.series[0].points.iter().map(|p| p.y).collect();
    assert_eq!(ys[2], Some(12.5));
    // ticks name quarters (never the months between them); so does the
    // description
    let ticks: Vec<&str> = l.x.ticks.iter().map(|t| t.label.as_str()).collect();
    assert_eq!(
        ticks,
        ["2022 Q1", "Q2", "Q3", "Q4", "2023 Q1", "Q2", "Q3", "Q4"]
    );
    assert!(
        f.description.contains("from 2022 Q1 to 2023 Q4"),
        "{}",
        f.description
    );
    // two quarters: a tick at each, none at the months between
    let planned = plan("view v = d | add time = year_quarter(year, quarter) | keep time >= \"2023-07\" | by time: output = sum(output)")
        .unwrap_or_else(|e| panic!("{}", crescendo_diag::render(&e, false)));
    let Chart::Line(l) = &planned.plan.frames[0].chart else {
        panic!("not a line")
    };
    let ticks: Vec<&str> = l.x.ticks.iter().map(|t| t.label.as_str()).collect();
    assert_eq!(ticks, ["2023 Q3", "Q4"]);
}

#[test]
fn wrong_arguments_are_located_errors() {
    let cases = [
        ("view v = d | add time = year_quarter(year) | by time: output = sum(output)", "takes a year column and a quarter column", (3, 25)),
        ("view v = d | add time = year_quarter(quarter, quarter) | by time: output = sum(output)", "the year of `year_quarter` must be a year or number column", (3, 38)),
        ("view v = d | add time = year_quarter(year, year) | by time: output = sum(output)", "the quarter of `year_quarter` must be", (3, 44)),
    ];
    for (view, message, at) in cases {
        let errs = match plan(view) {
            Ok(_) => panic!("{view}: expected an error"),
            Err(e) => e,
        };
        let t = crescendo_diag::render(&errs, false);
        assert!(t.contains(message), "{view}: {t}");
        assert_eq!(errs[0].location().map(|(_, l, c)| (l, c)), Some(at), "{t}");
    }
}
