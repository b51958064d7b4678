//! Marks bound to the data: `reference` and `band` at values, `moment`
//! markers on a time axis, callouts on every form and the claims footnote.
//! Stories and data in `tests/marks/`; pictures are snapshot-tested, and
//! geometry is read from display lists: every mark inside the plot, no
//! label on another text or on the data it does not annotate.

mod common;

use std::fs;
use std::path::{Path, PathBuf};
use std::sync::Arc;

use common::{crescendo, root, scratch};
use crescendo_diag::Source;
use crescendo_look::display::{Item, NoteOf, Part};
use crescendo_plan::{Annotation, Chart, DeckPlan};
use crescendo_render::DisplayList;

fn marks_dir() -> PathBuf {
    root().join("tests/marks")
}

/// The plan of a story file and the display list of each frame.
fn laid_out(path: &Path) -> (DeckPlan, Vec<DisplayList>) {
    let text = fs::read_to_string(path).expect("read story");
    let src: Arc<Source> = Source::file(path.display().to_string(), text);
    let planned = crescendo_plan::plan_story(&src, path.parent().unwrap(), &Default::default())
        .unwrap_or_else(|d| panic!("{}", crescendo_diag::render(&d, false)));
    let lists = (planned.plan.frames.iter())
        .map(|f| crescendo_render::display_list(&planned.plan, f, None).expect("layout"))
        .collect();
    (planned.plan, lists)
}

/// A copy of a story of `tests/marks/` in a scratch folder, with its data
/// file replaced by `csv`.
fn with_data(story: &str, csv: &str, tag: &str) -> PathBuf {
    let dir = scratch(&format!("marks-{tag}"));
    fs::create_dir_all(dir.join("data")).unwrap();
    fs::copy(marks_dir().join(story), dir.join(story)).unwrap();
    fs::write(dir.join("data/visits.csv"), csv).unwrap();
    dir.join(story)
}

/// The month-by-site data of the tests, with `lift` added to North's
/// visits from the 16th month on.
fn visits_csv(lift: f64) -> String {
    let mut out = String::from("month,site,visits\n");
    for i in 0..24 {
        let (y, m) = (2023 + i / 12, i % 12 + 1);
        for (site, base, growth) in [("North", 400.0, 6.0), ("South", 300.0, 3.0)] {
            let season = (60.0 * (f64::from(i) / 12.0 * std::f64::consts::TAU).sin()).trunc();
            let mut v = base + growth * f64::from(i) + season;
            if site == "North" && i >= 15 {
                v += lift;
            }
            out.push_str(&format!("{y}-{m:02},{site},{v}\n"));
        }
    }
    out
}

/// North's mean, computed here from the file's text, not by crescendo.
fn north_mean(csv: &str) -> f64 {
    let v: Vec<f64> = csv
        .lines()
        .skip(1)
        .filter_map(|l| l.strip_prefix_site("North"))
        .collect();
    v.iter().sum::<f64>() / v.len() as f64
}

trait Site {
    fn strip_prefix_site(&self, site: &str) -> Option<f64>;
}

impl Site for str {
    fn strip_prefix_site(&self, site: &str) -> Option<f64> {
        let mut f = self.split(',');
        let (_, s, v) = (f.next()?, f.next()?, f.next()?);
        (s == site).then(|| v.parse().ok()).flatten()
    }
}

fn references(plan: &DeckPlan) -> Vec<(f64, String)> {
    let Chart::Line(l) = &plan.frames[0].chart else {
        panic!("a line chart")
    };
    l.annotations
        .iter()
        .filter_map(|a| match a {
            Annotation::Reference { value, text } => Some((*value, text.clone())),
            _ => None,
        })
        .collect()
}

/// Thin horizontal rules drawn across the chart above its baseline (the
/// reference lines), by y.
fn rules(list: &DisplayList) -> Vec<f64> {
    let mut ys: Vec<f64> = list
        .flat()
        .into_iter()
        .filter_map(|i| match i {
            Item::Polyline {
                points, width: 1, ..
            } if points.len() == 2
                && points[0].1 == points[1].1
                && points[1].0 - points[0].0 > 300.0 =>
            {
                Some(points[0].1)
            }
            _ => None,
        })
        .collect();
    let base = ys.iter().copied().fold(f64::MIN, f64::max);
    ys.retain(|y| *y < base);
    ys
}

// A reference written as a value follows the data: with North's later
// months lifted, the average and the 10% target rise, and so do their
// lines and labels on the picture.
#[test]
fn references_at_values_move_with_refreshed_data() {
    let (before_csv, after_csv) = (visits_csv(0.0), visits_csv(200.0));
    let before = with_data("reference.cresc", &before_csv, "before");
    let after = with_data("reference.cresc", &after_csv, "after");
    let ((p0, l0), (p1, l1)) = (laid_out(&before), laid_out(&after));
    let (r0, r1) = (references(&p0), references(&p1));
    assert_eq!(r0.len(), 2);
    for (refs, csv) in [(&r0, &before_csv), (&r1, &after_csv)] {
        let mean = north_mean(csv);
        assert!((refs[0].0 - mean).abs() < 1e-9, "{refs:?} vs {mean}");
        assert!((refs[1].0 - mean * 1.1).abs() < 1e-9);
    }
    assert!(r1[0].0 > r0[0].0 + 50.0, "{r0:?} -> {r1:?}");
    // on each picture the rules stand where the axis puts the values
    for (plan, lists, refs) in [(&p0, &l0, &r0), (&p1, &l1, &r1)] {
        let to_px = y_scale(plan, &lists[0]);
        let ys = rules(&lists[0]);
        assert_eq!(ys.len(), 2, "{ys:?}");
        for ((v, _), y) in refs.iter().zip(&ys) {
            assert!((to_px(*v) - y).abs() < 1.5, "{v} drawn at {y}");
        }
    }
}

/// Data to px along the line chart's y axis, read from the centres of its
/// first and last tick labels on the picture.
fn y_scale(plan: &DeckPlan, list: &DisplayList) -> impl Fn(f64) -> f64 {
    let Chart::Line(l) = &plan.frames[0].chart else {
        panic!("a line chart")
    };
    let centre = |label: &str| {
        let t = (list.texts().into_iter())
            .filter(|t| t.text == label)
            .min_by(|a, b| a.bounds().x0.total_cmp(&b.bounds().x0))
            .unwrap_or_else(|| panic!("no tick {label}"));
        (t.bounds().y0 + t.bounds().y1) / 2.0
    };
    let (lo, hi) = (l.y.ticks.first().unwrap(), l.y.ticks.last().unwrap());
    let (y_lo, y_hi) = (centre(&lo.label), centre(&hi.label));
    let (v_lo, v_hi) = (lo.value, hi.value);
    move |v| y_lo + (v - v_lo) / (v_hi - v_lo) * (y_hi - y_lo)
}

/// Builds `story` of `tests/marks/` and returns the SVG of its frames.
fn svgs(story: &str) -> Vec<(String, String)> {
    let out = scratch(&format!("svg-{}", story.trim_end_matches(".cresc")));
    let r = crescendo(
        &marks_dir(),
        &["build", story, "--out", out.to_str().unwrap()],
    );
    assert!(r.status.success(), "{}", String::from_utf8_lossy(&r.stderr));
    let mut files: Vec<(String, String)> = fs::read_dir(&out)
        .unwrap()
        .filter_map(|e| {
            let p = e.unwrap().path();
            let name = p.file_name()?.to_string_lossy().to_string();
            name.ends_with(".svg")
                .then(|| (name, fs::read_to_string(&p).unwrap()))
        })
        .collect();
    files.sort();
    let _ = fs::remove_dir_all(&out);
    files
}

#[test]
fn references_at_values_draw_as_their_snapshot() {
    for (name, svg) in svgs("reference.cresc") {
        insta::assert_snapshot!(format!("marks_reference_{name}"), svg);
    }
}

/// What `crescendo check` prints for a story fragment after the header of
/// `reference.cresc`.
fn check_error(fragment: &str, tag: &str) -> String {
    let dir = scratch(&format!("err-{tag}"));
    fs::create_dir_all(dir.join("data")).unwrap();
    fs::write(dir.join("data/visits.csv"), visits_csv(0.0)).unwrap();
    let head = fs::read_to_string(marks_dir().join("reference.cresc")).unwrap();
    let head = head.split("frame ").next().unwrap().to_string();
    fs::write(dir.join("story.cresc"), head + fragment).unwrap();
    let r = crescendo(&dir, &["check", "story.cresc"]);
    assert!(!r.status.success());
    let err = String::from_utf8_lossy(&r.stderr).to_string();
    assert!(!err.contains("panicked"), "{err}");
    err
}

#[test]
fn positions_that_are_not_values_of_the_axis_are_located_errors() {
    let line = "frame \"F\" {\n  line monthly: x month, y visits, series site\n";
    let cases = [
        ("reference_month", "  reference first_month \"Start\"\n}\n"),
        ("reference_unknown", "  reference avrage \"Average\"\n}\n"),
        ("band_number", "  band average to \"2024-01\"\n}\n"),
    ];
    for (tag, stmt) in cases {
        let err = check_error(&format!("{line}{stmt}"), tag);
        insta::assert_snapshot!(format!("marks_error_{tag}"), err);
    }
}

/// Data lines (2 px or more) of a frame, as segments.
fn data_lines(list: &DisplayList) -> Vec<((f64, f64), (f64, f64))> {
    let mut out = Vec::new();
    for item in list.flat() {
        if let Item::Polyline { points, width, .. } = item {
            if *width >= 2 {
                out.extend(points.windows(2).map(|w| (w[0], w[1])));
            }
        }
    }
    out
}

/// The plot's box: left and right from the baseline, top from the top
/// tick label's centre.
fn plot_box(plan: &DeckPlan, list: &DisplayList) -> crescendo_look::display::Rect {
    let to_px = y_scale(plan, list);
    let Chart::Line(l) = &plan.frames[0].chart else {
        panic!("a line chart")
    };
    let bottom = to_px(l.y.domain[0]);
    let base = list
        .flat()
        .into_iter()
        .find_map(|i| match i {
            Item::Polyline { points, .. }
                if points.len() == 2 && (points[0].1 - bottom).abs() < 1.0 =>
            {
                Some((points[0].0, points[1].0))
            }
            _ => None,
        })
        .expect("the baseline");
    crescendo_look::display::Rect {
        x0: base.0,
        y0: to_px(l.y.domain[1]) - 12.0,
        x1: base.1,
        y1: bottom,
    }
}

// The moments of the test story: planned where the story says (the one
// written as a value at the month it computes to), their labels inside
// the plot, off the data lines and every other text, and in the same
// place on both frames of the sequence.
#[test]
fn moments_mark_their_times_and_their_labels_keep_off_the_data() {
    let (plan, lists) = laid_out(&marks_dir().join("moments.cresc"));
    let Chart::Line(l) = &plan.frames[0].chart else {
        panic!("a line chart")
    };
    // months are counted as year * 12 + month - 1
    let month = |y: f64, m: f64| y * 12.0 + m - 1.0;
    let marks: Vec<(f64, Option<f64>, &str)> = (l.annotations.iter())
        .filter_map(|a| match a {
            Annotation::Moment { from, to, text } => Some((*from, *to, text.as_str())),
            _ => None,
        })
        .collect();
    assert_eq!(
        marks,
        vec![
            (month(2024.0, 4.0), None, "New hall opens"),
            (month(2023.0, 7.0), Some(month(2023.0, 9.0)), "Roof repairs"),
            (month(2024.0, 1.0), None, "Fees cut"),
        ]
    );
    let mut places = Vec::new();
    for list in &lists {
        let plot = plot_box(&plan, list);
        let lines = data_lines(list);
        let texts = list.texts();
        let mut here = Vec::new();
        for (_, _, label) in &marks {
            let t = texts
                .iter()
                .find(|t| t.text == *label)
                .unwrap_or_else(|| panic!("no label {label}"));
            let b = t.bounds();
            assert!(b.inside(&plot), "{label}: {b:?} outside {plot:?}");
            let inner = b.grow(-1.0);
            assert!(
                !lines.iter().any(|(p, q)| inner.hit_by(*p, *q)),
                "{label} crosses a data line"
            );
            for other in texts.iter().filter(|o| o.text != *label) {
                assert!(
                    !inner.overlaps(&other.bounds(), 0.0),
                    "{label} on {}",
                    other.text
                );
            }
            here.push(b);
        }
        places.push(here);
    }
    assert_eq!(places[0], places[1], "labels keep their place");
    // a dashed line at each point moment, drawn at its month's x
    let list = &lists[0];
    let dash_xs: Vec<f64> = (list.flat().into_iter())
        .filter_map(|i| match i {
            Item::Polyline {
                points, width: 1, ..
            } if points.len() == 2
                && points[0].0 == points[1].0
                && (points[1].1 - points[0].1 - 6.0).abs() < 1e-9 =>
            {
                Some(points[0].0)
            }
            _ => None,
        })
        .collect();
    let plot = plot_box(&plan, list);
    let x_of = |m: f64| {
        plot.x0 + (m - l.x.domain[0]) / (l.x.domain[1] - l.x.domain[0]) * (plot.x1 - plot.x0)
    };
    for m in [month(2024.0, 4.0), month(2024.0, 1.0)] {
        let n = dash_xs
            .iter()
            .filter(|x| (**x - x_of(m)).abs() < 0.5)
            .count();
        assert!(n > 20, "{n} dashes at month {m}");
    }
}

#[test]
fn moments_draw_as_their_snapshot() {
    for (name, svg) in svgs("moments.cresc") {
        insta::assert_snapshot!(format!("marks_moments_{name}"), svg);
    }
}

#[test]
fn moments_off_a_time_axis_are_located_errors() {
    let line = "frame \"F\" {\n  line monthly: x month, y visits, series site\n";
    let cases = [
        (
            "moment_on_bars",
            "frame \"F\" {\n  bars by_site: category site, value visits\n  moment \"2024-01\" \"Fees cut\"\n}\n".to_string(),
        ),
        ("moment_outside", format!("{line}  moment \"2026-01\" \"Later\"\n}}\n")),
        (
            "moment_backwards",
            format!("{line}  moment \"2024-03\" to \"2024-01\" \"Works\"\n}}\n"),
        ),
        ("moment_number", format!("{line}  moment average \"Average\"\n}}\n")),
    ];
    for (tag, story) in cases {
        let err = check_error(&story, tag);
        insta::assert_snapshot!(format!("marks_error_{tag}"), err);
    }
}

/// The y of the chart's baseline (the lowest long horizontal rule).
fn baseline_y(list: &DisplayList) -> f64 {
    (list.flat().into_iter())
        .filter_map(|i| match i {
            Item::Polyline { points, .. }
                if points.len() == 2
                    && points[0].1 == points[1].1
                    && points[1].0 - points[0].0 > 300.0 =>
            {
                Some(points[0].1)
            }
            _ => None,
        })
        .fold(f64::MIN, f64::max)
}

// `footnote claims` prints each claim the frame's texts rest on, with its
// operands' figures, in small type above the source note; a frame without
// it prints none, and both frames keep the same chart region (one grid).
#[test]
fn the_claims_footnote_lists_the_claims_a_frame_rests_on() {
    let (plan, lists) = laid_out(&marks_dir().join("claims.cresc"));
    let notes = &plan.frames[0].claim_notes;
    assert_eq!(
        notes,
        &vec![
            "Holds: \u{201c}North had over a third more visits than South\u{201d} \u{2014} lead > 1.3: 1.54 > 1.3".to_string(),
            "Holds: \u{201c}North grew by over a quarter in two years\u{201d} \u{2014} north_rise > 0.25: 0.573 > 0.25".to_string(),
            "Holds: \u{201c}South is not a small site\u{201d} \u{2014} south > 1000: 8,026 > 1,000".to_string(),
        ]
    );
    assert!(plan.frames[1].claim_notes.is_empty(), "off by default");
    // drawn above the source note, on the first frame only
    let texts = lists[0].texts();
    let source = texts
        .iter()
        .find(|t| t.text == "Invented test data")
        .unwrap();
    let foot: Vec<_> = texts
        .iter()
        .filter(|t| t.text.starts_with("Holds"))
        .collect();
    assert_eq!(foot.len(), 3);
    assert!(foot
        .iter()
        .all(|t| t.bounds().y1 <= source.bounds().y0 + 0.5));
    assert!(foot.iter().all(|t| t.bounds().y0 > baseline_y(&lists[0])));
    assert!(!lists[1].texts().iter().any(|t| t.text.starts_with("Holds")));
    assert_eq!(baseline_y(&lists[0]), baseline_y(&lists[1]), "one grid");
}

// A claim the data no longer supports is printed as failing (in a draft
// build), with the figures that break it.
#[test]
fn the_claims_footnote_says_when_a_claim_fails() {
    let story = with_data("claims.cresc", &visits_csv(-300.0), "claims-fail");
    let (plan, _) = laid_out(&story);
    let notes = &plan.frames[0].claim_notes;
    assert!(
        notes[0].starts_with("Fails: \u{201c}North had over a third more"),
        "{notes:?}"
    );
    // the figure is North's total over South's, read here from the file
    let csv = visits_csv(-300.0);
    let total = |site: &str| -> f64 {
        (csv.lines().skip(1))
            .filter_map(|l| l.strip_prefix_site(site))
            .sum()
    };
    let lead = format!("{:.2}", total("North") / total("South"));
    assert!(
        notes[0].contains(&format!("lead > 1.3: {lead} > 1.3")),
        "{notes:?} {lead}"
    );
    assert!(notes[1].contains("\u{2212}0."), "a drawn minus: {notes:?}");
    assert!(notes[2].starts_with("Holds:"), "{notes:?}");
    // the build stops without --draft, and a draft build draws the frame
    let dir = story.parent().unwrap();
    let r = crescendo(dir, &["build", "claims.cresc", "--out", "deck"]);
    assert!(!r.status.success());
    let r = crescendo(dir, &["build", "claims.cresc", "--draft", "--out", "deck"]);
    assert!(r.status.success(), "{}", String::from_utf8_lossy(&r.stderr));
    let svg = fs::read_to_string(dir.join("deck/01-north-had-south-s-visits.svg")).unwrap();
    assert!(svg.contains("Fails: "), "the failing claim is drawn");
}

#[test]
fn the_claims_footnote_draws_as_its_snapshot() {
    for (name, svg) in svgs("claims.cresc") {
        insta::assert_snapshot!(format!("marks_claims_{name}"), svg);
    }
}

/// The notes of `callouts.cresc`, by frame: the text's first line.
const NOTES: [&str; 6] = [
    "New reading room",
    "Harbour's e-books passed",
    "Print still leads here",
    "The one branch where",
    "Above the line for its hours",
    "Highest per staff member",
];

// A callout on every form but lines: each note is drawn, inside the chart
// region (below the headline, above the source), on no other text, and on
// no data mark (a bar, segment or dot) — its leader may cross the mark it
// names, its text may not.
#[test]
fn callouts_on_every_form_keep_off_texts_and_marks() {
    use crescendo_look::display::Rect;
    let (plan, lists) = laid_out(&marks_dir().join("callouts.cresc"));
    assert_eq!(plan.frames.len(), NOTES.len());
    for ((f, list), note) in plan.frames.iter().zip(&lists).zip(NOTES) {
        assert_eq!(f.mark_notes.len(), 1, "frame {}", f.number);
        let texts = list.texts();
        let t = (texts.iter())
            .find(|t| t.text.starts_with(note))
            .unwrap_or_else(|| panic!("frame {}: no note \"{note}\"", f.number));
        let headline = texts.iter().find(|t| t.text == f.headline).unwrap();
        let source = texts
            .iter()
            .find(|t| t.text == "Invented test data")
            .unwrap();
        assert!(t.bounds().y0 > headline.bounds().y1 && t.bounds().y1 < source.bounds().y0);
        let inner = t.bounds().grow(-1.0);
        for other in texts.iter().filter(|o| o.text != t.text) {
            assert!(
                !inner.overlaps(&other.bounds(), 0.0),
                "frame {}: note on \"{}\"",
                f.number,
                other.text
            );
        }
        let mut marks: Vec<Rect> = Vec::new();
        for item in list.flat() {
            match item {
                Item::Rect { a, b, .. } => marks.push(Rect {
                    x0: a.0.min(b.0),
                    y0: a.1.min(b.1),
                    x1: a.0.max(b.0),
                    y1: a.1.max(b.1),
                }),
                Item::Dot { at, radius, .. } => {
                    let r = f64::from(*radius);
                    marks.push(Rect {
                        x0: at.0 - r,
                        y0: at.1 - r,
                        x1: at.0 + r,
                        y1: at.1 + r,
                    })
                }
                _ => {}
            }
        }
        // a table's row shading is a background, not a mark
        if !matches!(f.chart, Chart::Table(_)) {
            assert!(
                !marks.iter().any(|m| inner.overlaps(m, 0.0)),
                "frame {}: note on a mark",
                f.number
            );
        }
    }
}

#[test]
fn callouts_on_every_form_draw_as_their_snapshot() {
    for (name, svg) in svgs("callouts.cresc") {
        insta::assert_snapshot!(format!("marks_callouts_{name}"), svg);
    }
}

/// What `crescendo check` prints for a frame after the header of
/// `callouts.cresc`.
fn callout_error(frame: &str, tag: &str) -> String {
    let dir = scratch(&format!("callout-{tag}"));
    fs::create_dir_all(dir.join("data")).unwrap();
    fs::copy(
        marks_dir().join("data/branches.csv"),
        dir.join("data/branches.csv"),
    )
    .unwrap();
    let head = fs::read_to_string(marks_dir().join("callouts.cresc")).unwrap();
    let head = head.split("frame ").next().unwrap().to_string();
    fs::write(dir.join("story.cresc"), head + frame).unwrap();
    let r = crescendo(&dir, &["check", "story.cresc"]);
    assert!(!r.status.success());
    let err = String::from_utf8_lossy(&r.stderr).to_string();
    assert!(!err.contains("panicked"), "{err}");
    err
}

#[test]
fn callouts_that_name_no_mark_are_located_errors() {
    let bars = "frame \"F\" {\n  bars totals: category branch, value loans\n";
    let dots = "frame \"F\" {\n  dots loans: category branch, value loans, series format\n";
    let cases = [
        ("pie", "frame \"F\" {\n  pie totals: category branch, value loans\n  callout \"Harbour\" \"Note\"\n}\n".to_string()),
        ("unknown", format!("{bars}  callout \"Harbor\" \"Note\"\n}}\n")),
        ("number", format!("{bars}  callout 2 \"Note\"\n}}\n")),
        ("parts_on_bars", format!("{bars}  callout \"Harbour\" on \"Print\" \"Note\"\n}}\n")),
        ("dots_ambiguous", format!("{dots}  callout \"Harbour\" \"Note\"\n}}\n")),
    ];
    for (tag, frame) in cases {
        let err = callout_error(&frame, tag);
        insta::assert_snapshot!(format!("marks_error_callout_{tag}"), err);
    }
}

// `--claims-footnote` prints the footnote on every frame whose texts rest
// on a claim, without editing the story.
#[test]
fn the_claims_footnote_option_covers_every_frame() {
    let r = crescendo(&marks_dir(), &["plan", "claims.cresc", "--claims-footnote"]);
    assert!(r.status.success(), "{}", String::from_utf8_lossy(&r.stderr));
    let plan: DeckPlan = serde_json::from_slice(&r.stdout).unwrap();
    assert_eq!(plan.frames[0].claim_notes.len(), 3);
    // frame 2 quotes only `lead` (North's total over South's): the claims
    // about `lead` and about `south` rest on it, the one about the rise not
    let notes = &plan.frames[1].claim_notes;
    assert_eq!(notes.len(), 2, "{notes:?}");
    assert!(notes[0].contains("lead > 1.3") && notes[1].contains("south > 1000"));
    let r = crescendo(&marks_dir(), &["plan", "claims.cresc"]);
    let plan: DeckPlan = serde_json::from_slice(&r.stdout).unwrap();
    assert!(plan.frames[1].claim_notes.is_empty(), "off by default");
}

// A note that finds no spot clear of the data is a warning naming the
// frame, located at its statement: six long callouts on one bar fill the
// room around it, so the last ones go over the bars or are left out.
#[test]
fn callouts_that_can_only_cover_the_data_are_warnings_naming_the_frame() {
    let notes = [
        "A new reading room opened in the spring",
        "Longer hours on Saturdays all year",
        "A school visit every week of term",
        "The mobile van stops here on Mondays",
        "Volunteers run a homework club",
        "The café reopened after the works",
    ];
    let mut frame = String::from(
        "frame \"Every branch has a story\" {\n  bars totals: category branch, value loans\n  y title \"Loans\"\n",
    );
    for n in notes {
        frame.push_str(&format!("  callout \"Central\" \"{n}\"\n"));
    }
    frame.push_str("}\n");
    let dir = scratch("callout-crowded");
    fs::create_dir_all(dir.join("data")).unwrap();
    fs::copy(
        marks_dir().join("data/branches.csv"),
        dir.join("data/branches.csv"),
    )
    .unwrap();
    let head = fs::read_to_string(marks_dir().join("callouts.cresc")).unwrap();
    let head = head.split("frame ").next().unwrap().to_string();
    fs::write(dir.join("story.cresc"), head + &frame).unwrap();
    let r = crescendo(&dir, &["check", "story.cresc"]);
    let err = String::from_utf8_lossy(&r.stderr).to_string();
    assert!(
        r.status.success(),
        "a warning does not stop the check:\n{err}"
    );
    let warnings: Vec<&str> = err
        .split("\n\n")
        .filter(|w| w.contains("warning[note-covers-data]"))
        .collect();
    assert!(!warnings.is_empty(), "no warning:\n{err}");
    for w in &warnings {
        assert!(w.contains("in frame 1 \"Every branch has a story\""), "{w}");
        assert!(
            w.contains("callout \"Central\""),
            "located at the callout: {w}"
        );
    }
    // the first notes found room; the last found none clear of text
    assert!(!err.contains(notes[0]) && !err.contains(notes[1]), "{err}");
    let last = (warnings.iter())
        .find(|w| w.contains(notes[5]))
        .unwrap_or_else(|| panic!("the last note is not reported:\n{err}"));
    assert!(last.contains("was left out"), "{last}");
    // the display list agrees: every note reported is one that covers data
    // or was left out, and the first one is drawn clear
    let (_, lists) = laid_out(&dir.join("story.cresc"));
    let groups = lists[0].groups(|p| matches!(p, Part::Note { .. }));
    assert_eq!(groups.len(), notes.len());
    let covering = (groups.iter())
        .filter(|(p, _)| matches!(p, Part::Note { covers: true, .. }))
        .count();
    assert_eq!(covering, warnings.len());
    assert!(matches!(
        groups[0].0,
        Part::Note {
            of: NoteOf::Callout(0),
            covers: false
        }
    ));
}
