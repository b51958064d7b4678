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

/// The errors of `crescendo check` on `view` over `csv` (no declared
/// types: the year and quarter columns are read as numbers or texts).
fn check_errors(csv: &str, view: &str) -> Vec<crescendo_diag::Diagnostic> {
    static RUN: AtomicUsize = AtomicUsize::new(0);
    let dir = scratch(&format!(
        "quarters-bad-{}",
        RUN.fetch_add(1, Ordering::SeqCst)
    ));
    fs::write(dir.join("q.csv"), csv).unwrap();
    let story = format!(
        "story \"Q\"\ndata d from \"q.csv\"\n{view}\n\
         frame \"Output\" {{\n  line v: x time, y output\n}}\n"
    );
    let src = Source::file("q.cresc", story);
    let out = crescendo_plan::plan_story(&src, &dir, &Default::default());
    let _ = fs::remove_dir_all(&dir);
    match out {
        Ok(_) => Vec::new(),
        Err(e) => e,
    }
}

/// A quarter of 5 or `Q5`, or a year of 2024.5, is a located data error
/// naming the row and the cell (never a silent missing time); every such
/// row is reported at once; a missing cell stays missing.
#[test]
fn cells_that_make_no_quarter_are_located_errors() {
    let view =
        "view v = d | add time = year_quarter(year, quarter) | by time: output = sum(output)";
    let numbers = "year,quarter,output\n2022,1,10\n2022,5,11\n2022.5,2,12\n2023,3,14\n2023,,13\n";
    let errs = check_errors(numbers, view);
    let t = crescendo_diag::render(&errs, false);
    assert_eq!(errs.len(), 2, "{t}");
    assert!(errs.iter().all(|e| e.code == "bad-value"), "{t}");
    assert!(
        t.contains("row 2 of `d`, column `quarter`: 5 is not a quarter (1 to 4, or `Q1` to `Q4`)"),
        "{t}"
    );
    assert!(
        t.contains("row 3 of `d`, column `year`: 2022.5 is not a year"),
        "{t}"
    );
    // located at the call in the story (line 3, column 25)
    for e in &errs {
        assert_eq!(e.location().map(|(_, l, c)| (l, c)), Some((3, 25)), "{t}");
    }
    // texts; rows reaching the step after a `keep`
    let texts = "year,quarter,output\n2022,Q1,10\n2022,Q5,11\n2023,q2,12\n2023,III,13\n";
    let errs = check_errors(texts, view);
    let t = crescendo_diag::render(&errs, false);
    assert_eq!(errs.len(), 2, "{t}");
    assert!(
        t.contains("row 2 of `d`, column `quarter`: \"Q5\" is not a quarter"),
        "{t}"
    );
    assert!(
        t.contains("row 4 of `d`, column `quarter`: \"III\" is not a quarter"),
        "{t}"
    );
    let kept = "view v = d | keep output > 10 | add time = year_quarter(year, quarter) | by time: output = sum(output)";
    let errs = check_errors(texts, kept);
    let t = crescendo_diag::render(&errs, false);
    assert!(
        t.contains("row 1 reaching this step, column `quarter`: \"Q5\""),
        "{t}"
    );
    // a row left out before the step is not checked
    let fixed = "view v = d | keep quarter != \"Q5\" and quarter != \"III\" | add time = year_quarter(year, quarter) | by time: output = sum(output)";
    assert!(check_errors(texts, fixed).is_empty());
    // all at once, up to the cap of one read, the last saying so
    let mut many = String::from("year,quarter,output\n");
    for i in 0..30 {
        many.push_str(&format!("2022,{},1\n", 5 + i));
    }
    let errs = check_errors(&many, view);
    assert_eq!(errs.len(), crescendo_data::load::MAX_ERRORS);
    let last = crescendo_diag::render(&errs[errs.len() - 1..], false);
    assert!(last.contains("stopped at 20 errors"), "{last}");
}
