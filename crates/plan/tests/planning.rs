//! Planning whole stories: frames after a broken chart, duplicate points,
//! the comparison's columns, gridlines through a sequence, and the frame
//! limit with `unfold`.

use crescendo_diag::{Diagnostic, Source};
use crescendo_plan::{plan_story, Chart, DeckPlan, Options, PlanResult};

/// Plan `story` against a fresh folder holding `data.csv`.
fn plan_with(tag: &str, story: &str, csv: &str) -> PlanResult {
    let dir = std::env::temp_dir().join(format!("crescendo-plan-{}-{tag}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join("data.csv"), csv).unwrap();
    let out = plan_story(&Source::file("t.cresc", story), &dir, &Options::default());
    let _ = std::fs::remove_dir_all(&dir);
    out
}

fn errors(result: PlanResult) -> Vec<Diagnostic> {
    match result {
        Ok(_) => Vec::new(),
        Err(d) => d.into_iter().filter(Diagnostic::is_error).collect(),
    }
}

const SALES: &str = "month,shop,sales\n2024-01,North,5\n2024-01,South,3\n\
                     2024-02,North,6\n2024-02,South,4\n";

#[test]
fn a_broken_chart_is_reported_once_not_in_every_frame_after_it() {
    // The chart names an unknown view: one error, and the frames that
    // build on it are not blamed for having no chart.
    let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                 frame \"a\" {\n  line sals: x month, y sales, series shop\n}\n\
                 frame \"b\" {\n  spotlight \"North\"\n}\n\
                 frame \"c\" {\n  hide \"South\"\n}\n";
    let errs = errors(plan_with("broken-chart", story, SALES));
    let codes: Vec<&str> = errs.iter().map(|d| d.code).collect();
    assert_eq!(codes, ["unknown-name"], "{errs:#?}");
}

#[test]
fn frames_after_a_broken_chart_are_not_checked_against_the_chart_before() {
    // Frame "c" builds on the failed bars chart of frame "b"; checking it
    // against the line chart of frame "a" would report a bogus error.
    let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                 view totals = sales\n  | by shop: sales = sum(sales)\n\
                 frame \"a\" {\n  line sales: x month, y sales, series shop\n}\n\
                 frame \"b\" {\n  bars totals: category shop, value sale\n}\n\
                 frame \"c\" {\n  spotlight \"Sales\"\n}\n";
    let errs = errors(plan_with("stale-chart", story, SALES));
    let codes: Vec<&str> = errs.iter().map(|d| d.code).collect();
    assert_eq!(codes, ["unknown-column"], "{errs:#?}");
}

#[test]
fn a_frame_without_a_chart_is_reported_once() {
    let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                 frame \"a\" {\n  hide \"South\"\n}\n\
                 frame \"b\" {\n  show all\n}\n";
    let errs = errors(plan_with("no-chart", story, SALES));
    assert_eq!(errs.len(), 1, "{errs:#?}");
    assert_eq!(errs[0].code, "no-chart");
    assert_eq!(errs[0].location().map(|l| l.1), Some(3));
}

#[test]
fn distinct_large_or_close_x_values_are_not_duplicates() {
    // x values beyond i64::MAX / 1e6 and values closer than 1e-6 are
    // still distinct points.
    let story = "story \"s\"\ndata d from \"data.csv\"\n\
                 frame \"a\" {\n  line d: x at, y v\n}\n";
    for csv in [
        "at,v\n1e13,1\n2e13,2\n3e13,3\n",
        "at,v\n0.0000001,1\n0.0000002,2\n0.0000003,3\n",
    ] {
        let result = plan_with("big-x", story, csv);
        assert!(result.is_ok(), "{csv}: {:#?}", result.err());
    }
    // and a true duplicate is still found
    let errs = errors(plan_with("dup-x", story, "at,v\n1,1\n1,2\n"));
    assert_eq!(errs.len(), 1, "{errs:#?}");
    assert_eq!(errs[0].code, "duplicate-point");
}

#[test]
fn a_misspelt_comparison_is_reported() {
    let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                 compare shops by sales\n\
                 frame \"a\" {\n  line sales: x month, y sales, series shop\n}\n";
    let errs = errors(plan_with("compare-typo", story, SALES));
    assert_eq!(errs.len(), 1, "{errs:#?}");
    assert_eq!(errs[0].code, "unknown-column");
    assert_eq!(errs[0].help.as_deref(), Some("did you mean `shop`?"));
    assert_eq!(errs[0].location(), Some(("t.cresc".into(), 3, 9)));
}

/// The `grid` flag of each frame's measure axis (of every panel's, for
/// small multiples).
fn grids(plan: &DeckPlan) -> Vec<Vec<bool>> {
    fn measure(chart: &Chart) -> Vec<bool> {
        match chart {
            Chart::Line(l) => vec![l.y.grid],
            Chart::Bars(b) => vec![b.value.grid],
            Chart::Parts(p) => vec![p.value.grid],
            Chart::Dots(d) => vec![d.value.grid],
            Chart::Scatter(s) => vec![s.y.grid],
            Chart::Panels(p) => p.panels.iter().flat_map(|x| measure(&x.chart)).collect(),
            _ => Vec::new(),
        }
    }
    plan.frames.iter().map(|f| measure(&f.chart)).collect()
}

#[test]
fn gridlines_persist_through_the_sequence_until_turned_off() {
    let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                 view totals = sales\n  | by shop: sales = sum(sales)\n\
                 frame \"a\" {\n  line sales: x month, y sales, series shop\n}\n\
                 frame \"b\" {\n  gridlines\n}\n\
                 frame \"c\" {\n  spotlight \"North\"\n}\n\
                 frame \"d\" {\n  split shop\n}\n\
                 frame \"e\" {\n  gridlines off\n}\n\
                 frame \"f\" {\n  bars totals: category shop, value sales\n  gridlines\n}\n\
                 frame \"g\" {\n  dots totals: category shop, value sales\n}\n";
    let planned = plan_with("gridlines", story, SALES).unwrap_or_else(|d| panic!("{d:#?}"));
    assert_eq!(
        grids(&planned.plan),
        [
            vec![false],
            vec![true],
            vec![true],
            vec![true, true],
            vec![false, false],
            vec![true],
            vec![false],
        ]
    );
    // the lint finds the statement in effect
    let spans: Vec<Option<usize>> = planned
        .anchors
        .frames
        .iter()
        .map(|a| a.gridlines.as_ref().map(|s| s.start))
        .collect();
    let at = story.find("gridlines\n").unwrap();
    assert_eq!(spans[1..4], [Some(at), Some(at), Some(at)]);
    assert_eq!(spans[4], None);
    assert!(spans[5].is_some() && spans[6].is_none());
    // without gridlines the plan says nothing about them
    let json = serde_json::to_string(&planned.plan.frames[0]).unwrap();
    assert!(!json.contains("grid"), "{json}");
    let json = serde_json::to_string(&planned.plan.frames[1]).unwrap();
    assert!(json.contains("\"grid\":true"), "{json}");
}

#[test]
fn gridlines_need_a_measure_axis() {
    let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                 view totals = sales\n  | by shop: sales = sum(sales)\n\
                 frame \"a\" {\n  table totals\n  gridlines\n}\n\
                 frame \"b\" {\n  pie totals: category shop, value sales\n  gridlines off\n}\n";
    let errs = errors(plan_with("gridlines-table", story, SALES));
    let codes: Vec<&str> = errs.iter().map(|d| d.code).collect();
    assert_eq!(codes, ["gridlines", "gridlines"], "{errs:#?}");
    assert_eq!(errs[0].location(), Some(("t.cresc".into(), 7, 3)));
    assert!(errs[0].message.contains("a table"), "{}", errs[0].message);
    assert!(errs[1].message.contains("a pie"), "{}", errs[1].message);
    assert!(errs[0].help.is_some());
}

/// A story whose second frame unfolds `series` hidden series, between a
/// first and a last frame.
fn unfolding(series: usize) -> (String, String) {
    let mut csv = String::from("month,shop,sales\n");
    for s in 0..series {
        csv.push_str(&format!("2024-01,S{s},1\n2024-02,S{s},2\n"));
    }
    let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                 frame \"a\" {\n  line sales: x month, y sales, series shop\n  hide all\n}\n\
                 frame \"b\" {\n  unfold\n}\n\
                 frame \"c\" {\n  show all\n}\n";
    (story.to_string(), csv)
}

#[test]
fn unfold_counts_against_the_frame_limit() {
    let options = Options {
        limits: crescendo_plan::limits::Limits {
            frames: 10,
            ..Default::default()
        },
        ..Options::default()
    };
    let plan = |tag: &str, series: usize| {
        let (story, csv) = unfolding(series);
        let dir = std::env::temp_dir().join(format!("crescendo-plan-{}-{tag}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        std::fs::write(dir.join("data.csv"), csv).unwrap();
        let out = plan_story(&Source::file("t.cresc", story), &dir, &options);
        let _ = std::fs::remove_dir_all(&dir);
        out
    };
    // 1 + 8 + 1 frames: at the limit
    let planned = plan("unfold-at-limit", 8).unwrap_or_else(|d| panic!("{d:#?}"));
    assert_eq!(planned.plan.frames.len(), 10);
    // 1 + 9 + 1: one over, refused at the `unfold` before any frame is made
    let errs = errors(plan("unfold-over-limit", 9));
    assert_eq!(errs.len(), 1, "{errs:#?}");
    assert_eq!(errs[0].code, "limit");
    assert_eq!(errs[0].location(), Some(("t.cresc".into(), 8, 3)));
    assert!(
        errs[0].message.contains("--max-frames"),
        "{}",
        errs[0].message
    );
    assert!(errs[0].message.contains("11 frames"), "{}", errs[0].message);
    // 600 series with a limit of 10: the same error, at once
    let errs = errors(plan("unfold-far-over-limit", 600));
    assert_eq!(errs.len(), 1, "{errs:#?}");
    assert_eq!(errs[0].code, "limit");
}

#[test]
fn claims_carry_their_room() {
    // worked by hand: a = 120, b = 100
    let csv = "k,v\na,120\nb,100\n";
    let story = r#"story "Room"
data t from "data.csv"
value a = sum(t.v where k = "a")
value b = sum(t.v where k = "b")
claim a > b "A leads"
claim b < a and a > 110 "Both"
claim a about 110 within 10% "Close"
claim a about 100 within 10 "Too far"
claim a > b or a < b "Either"
frame "A and B" {
  bars t: category k, value v
}
"#;
    let plan = plan_with("room", story, csv).unwrap().plan;
    let rooms: Vec<Option<f64>> = plan.claims.iter().map(|c| c.margin).collect();
    let near = |got: Option<f64>, want: f64| {
        assert!(
            got.is_some_and(|g| (g - want).abs() < 1e-9),
            "{got:?} ≠ {want}"
        )
    };
    near(rooms[0], 0.2); // (120 − 100) / 100
    near(rooms[1], (120.0 - 110.0) / 110.0); // the least of the two
    near(rooms[2], (11.0 - 10.0) / 11.0); // 10% of 110 = 11, 10 of it used
    near(rooms[3], (10.0 - 20.0) / 10.0); // fails: twice its tolerance used
    assert_eq!(rooms[4], None, "no room is given for `or`");
    assert!(!plan.claims[3].holds);
}

#[test]
fn table_columns_take_header_text() {
    let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                 frame \"a\" {\n  table sales: heading sales \"Sales in units\", heading shop \"Shop\"\n}\n";
    let plan = plan_with("heading", story, SALES).expect("plans").plan;
    let Chart::Table(t) = &plan.frames[0].chart else {
        panic!("a table");
    };
    let titles: Vec<&str> = t.columns.iter().map(|c| c.title.as_str()).collect();
    // the month keeps its readable name; the two others take the text given
    assert_eq!(titles, ["Month", "Shop", "Sales in units"]);
}

#[test]
fn table_headings_are_checked() {
    let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                 frame \"a\" {\n  table sales: heading salez \"Sales\"\n}\n\
                 frame \"b\" {\n  table sales: heading shop, heading month \"A\", heading month \"B\"\n}\n\
                 frame \"c\" {\n  bars sales: category shop, value sales, heading shop \"Shop\"\n}\n";
    let errs = errors(plan_with("heading-bad", story, SALES));
    let msgs: Vec<&str> = errs.iter().map(|d| d.message.as_str()).collect();
    assert!(
        msgs.iter().any(|m| m.contains("needs its text in quotes")),
        "{msgs:#?}"
    );
    assert!(msgs.iter().any(|m| m.contains("given twice")), "{msgs:#?}");
    assert!(
        msgs.iter().any(|m| m.contains("not an option of bars")),
        "{msgs:#?}"
    );
    // the unknown column is reported at its name, line 4
    assert!(
        errs.iter()
            .any(|d| d.location() == Some(("t.cresc".into(), 4, 24))),
        "{errs:#?}"
    );
}

#[test]
fn every_misused_chart_option_is_located_with_its_own_label() {
    let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                 frame \"a\" {\n  bars sales: category shop, value sales, x month\n}\n\
                 frame \"b\" {\n  bars sales: category shop, value sales, ordered, ordered\n}\n\
                 frame \"c\" {\n  bars sales: category, value sales\n}\n\
                 frame \"d\" {\n  bars sales: category shop, value sales, ordered shop\n}\n\
                 frame \"e\" {\n  bars sales: category shop, value sales \"Units\"\n}\n";
    let errs = errors(plan_with("option-misuse", story, SALES));
    let got: Vec<(String, usize, usize, String)> = errs
        .iter()
        .map(|d| {
            let (_, line, col) = d.location().expect("located");
            let label = d
                .primary
                .as_ref()
                .map_or(String::new(), |p| p.label.clone());
            (d.message.clone(), line, col, label)
        })
        .collect();
    let want = [
        ("`x` is not an option of bars", 4, 43, "not allowed here"),
        ("`ordered` is given twice", 7, 52, "again here"),
        ("`category` needs a column name", 10, 15, "which column?"),
        ("`ordered` takes no column", 13, 51, "remove this"),
        ("`value` takes no text", 16, 42, "remove this"),
    ];
    let want: Vec<(String, usize, usize, String)> = want
        .iter()
        .map(|(m, l, c, s)| (m.to_string(), *l, *c, s.to_string()))
        .collect();
    assert_eq!(got, want, "{errs:#?}");
}

#[test]
fn a_locale_or_fiscal_year_given_twice_points_at_both() {
    let story = "story \"s\"\nlocale \"de-DE\"\nfiscal year starts July\n\
                 locale \"fr-FR\"\nfiscal year starts April\n\
                 data sales from \"data.csv\"\n\
                 frame \"a\" {\n  line sales: x month, y sales, series shop\n}\n";
    let errs = errors(plan_with("twice", story, SALES));
    let messages: Vec<&str> = errs.iter().map(|d| d.message.as_str()).collect();
    assert_eq!(
        messages,
        [
            "the story sets its locale twice",
            "the story says twice when its year starts"
        ]
    );
    // each at the second statement (line, column), pointing back at the first
    let places: Vec<_> = errs
        .iter()
        .map(|d| (d.location().map(|(_, l, c)| (l, c)), d.secondary.len()))
        .collect();
    assert_eq!(places, [(Some((4, 1)), 1), (Some((5, 1)), 1)], "{errs:#?}");
}
