//! `cite VALUE`: every function × form combination drawn from the rows the
//! value was computed from, placed clear of text and of the data marks it
//! does not annotate; the errors; and a refresh where the cited row moves.

mod common;

use std::fs;
use std::path::Path;

use common::{root, scratch};
use crescendo_diag::Source;
use crescendo_look::display::{Item, Rect, Text};
use crescendo_plan::model::{CiteShape, DeckPlan, FramePlan, MarkRef};

const DATA: &str = r#"story "Cited"
data stores from "stores.csv"
data kinds from "kinds.csv"
data months from "months.csv" {
  month: month
  store: text
  sales: number
}
value north_shop = sum(stores.sales where store = "Northgate")
value river_shop = sum(stores.sales where store = "Riverside")
value shop_ratio = north_shop / river_shop
value shop_gap = north_shop - river_shop
value top_shop = max(stores.sales)
value north_share = share(stores.sales where store = "Northgate")
value hours_slope = slope(stores.sales by hours)
value fresh_north = sum(kinds.sales where store = "Northgate" and kind = "Fresh")
value pantry_north = sum(kinds.sales where store = "Northgate" and kind = "Pantry")
value fresh_ratio = fresh_north / pantry_north
value pantry_share = share(kinds.sales where store = "Old Town" and kind = "Pantry")
value least_kind = min(kinds.sales)
value north_change = change(months.sales by month where store = "North")
value north_rise = percent_change(months.sales by month where store = "North")
value north_growth = growth(months.sales by month where store = "North")
value south_slope = slope(months.sales by month where store = "South")
value south_last = last(months.sales by month where store = "South")
value first_north = first(months.sales by month where store = "North")
value first_south = first(months.sales by month where store = "South")
value first_gap = first_south - first_north
value north_peak = max(months.sales where store = "North")
value first_to_last = percent_change(stores.sales)
"#;

/// (name, frame) for every function × form combination.
const FRAMES: &[(&str, &str)] = &[
    (
        "bars_ratio",
        "frame \"Northgate sells {shop_ratio to 2 decimals}× Riverside\" {\n  bars stores: category store, value sales\n  cite shop_ratio\n}",
    ),
    (
        "bars_difference",
        "frame \"Northgate sells {shop_gap} more\" {\n  bars stores: category store, value sales\n  cite shop_gap\n}",
    ),
    (
        "bars_max",
        "frame \"The best store sells {top_shop}\" {\n  bars stores: category store, value sales\n  cite top_shop\n}",
    ),
    (
        "bars_share",
        "frame \"Northgate is {north_share as percent to 0 decimals} of sales\" {\n  bars stores: category store, value sales, horizontal\n  cite north_share\n}",
    ),
    (
        "pie_share",
        "frame \"Northgate is {north_share as percent to 1 decimal} of sales\" {\n  pie stores: category store, value sales\n  cite north_share\n}",
    ),
    (
        "bars_change",
        "frame \"Bayview sells {first_to_last as signed percent to 0 decimals} against Northgate\" {\n  bars stores: category store, value sales\n  cite first_to_last\n}",
    ),
    (
        "sideways_grouped_ratio",
        "frame \"Fresh is {fresh_ratio as percent to 0 decimals} of pantry at Northgate\" {\n  bars kinds: category store, value sales, group kind, horizontal\n  cite fresh_ratio\n}",
    ),
    (
        "pie_ratio",
        "frame \"Northgate sells {shop_ratio to 2 decimals}× Riverside\" {\n  pie stores: category store, value sales\n  cite shop_ratio\n}",
    ),
    (
        "scatter_slope",
        "frame \"Each opening hour brings {hours_slope to 1 decimal} in sales\" {\n  scatter stores: x hours, y sales, label store\n  cite hours_slope\n}",
    ),
    (
        "scatter_max",
        "frame \"The best store sells {top_shop}\" {\n  scatter stores: x hours, y sales, label store\n  cite top_shop\n}",
    ),
    (
        "grouped_ratio",
        "frame \"Fresh is {fresh_ratio as percent to 0 decimals} of pantry at Northgate\" {\n  bars kinds: category store, value sales, group kind\n  cite fresh_ratio\n}",
    ),
    (
        "stacked_share",
        "frame \"Old Town's pantry is {pantry_share as percent to 0 decimals} of sales\" {\n  bars kinds: category store, value sales, stack kind\n  cite pantry_share\n}",
    ),
    (
        "dots_min",
        "frame \"The smallest line sells {least_kind}\" {\n  dots kinds: category store, value sales, series kind\n  cite least_kind\n}",
    ),
    (
        "dots_ratio",
        "frame \"Fresh is {fresh_ratio as percent to 0 decimals} of pantry at Northgate\" {\n  dots kinds: category store, value sales, series kind\n  cite fresh_ratio\n}",
    ),
    (
        "line_change",
        "frame \"North rose by {north_change}\" {\n  line months: x month, y sales, series store\n  cite north_change\n}",
    ),
    (
        "line_percent_change",
        "frame \"North rose {north_rise as signed percent to 0 decimals}\" {\n  line months: x month, y sales, series store\n  cite north_rise\n}",
    ),
    (
        "line_growth",
        "frame \"North grew {north_growth as percent to 1 decimal} a year\" {\n  line months: x month, y sales, series store\n  cite north_growth\n}",
    ),
    (
        "line_slope",
        "frame \"South lost {south_slope to 1 decimal} a month\" {\n  line months: x month, y sales, series store\n  cite south_slope\n}",
    ),
    (
        "line_last",
        "frame \"South ended at {south_last}\" {\n  line months: x month, y sales, series store\n  cite south_last\n}",
    ),
    (
        "line_max",
        "frame \"North peaked at {north_peak}\" {\n  line months: x month, y sales, series store\n  cite north_peak\n}",
    ),
    (
        "line_difference",
        "frame \"South started {first_gap} ahead\" {\n  line months: x month, y sales, series store\n  cite first_gap\n}",
    ),
];

fn plan(dir: &Path, story: &str) -> crescendo_plan::Planned {
    let src = Source::file("cite.cresc", story.to_string());
    match crescendo_plan::plan_story(&src, dir, &Default::default()) {
        Ok(p) => p,
        Err(d) => panic!("{}", crescendo_diag::render(&d, false)),
    }
}

fn story() -> String {
    let frames: Vec<&str> = FRAMES.iter().map(|f| f.1).collect();
    format!("{DATA}\n{}\n", frames.join("\n\n"))
}

/// Every item of a display list, groups flattened.
fn flat(items: &[Item], out: &mut Vec<Item>) {
    for i in items {
        match i {
            Item::Group { items, .. } => flat(items, out),
            other => out.push(other.clone()),
        }
    }
}

fn boxed(a: (f64, f64), b: (f64, f64)) -> Rect {
    Rect {
        x0: a.0.min(b.0),
        y0: a.1.min(b.1),
        x1: a.0.max(b.0),
        y1: a.1.max(b.1),
    }
}

/// The cite's figure as drawn: inside the chart's part of the page, on no
/// other text and on no data mark.
fn check_geometry(name: &str, deck: &DeckPlan, frame: &FramePlan) -> Text {
    let list = crescendo_render::display_list(deck, frame, None).expect("layout");
    let mut items = Vec::new();
    flat(&list.items, &mut items);
    let figure = &frame.cites[0].figure;
    let texts: Vec<&Text> = items
        .iter()
        .filter_map(|i| match i {
            Item::Text(t) => Some(t),
            _ => None,
        })
        .collect();
    let drawn: Vec<&&Text> = texts
        .iter()
        .filter(|t| t.text == *figure && t.bold && t.size < 30.0)
        .collect();
    assert_eq!(drawn.len(), 1, "{name}: the figure {figure:?} once");
    let f = drawn[0].bounds();
    // inside the page, below the headline and above the source
    let headline_bottom = texts
        .iter()
        .filter(|t| t.size > 30.0)
        .map(|t| t.bounds().y1)
        .fold(0.0, f64::max);
    assert!(
        f.y0 > headline_bottom && f.x0 >= 0.0 && f.x1 <= 1280.0,
        "{name}: {f:?}"
    );
    for t in &texts {
        if std::ptr::eq(*t, *drawn[0]) {
            continue;
        }
        assert_eq!(f.overlap(&t.bounds()), 0.0, "{name}: on {:?}", t.text);
    }
    for i in &items {
        let mark = match i {
            Item::Rect { a, b, .. } => boxed(*a, *b),
            Item::Dot { at, radius, .. } => {
                let r = f64::from(*radius);
                boxed((at.0 - r, at.1 - r), (at.0 + r, at.1 + r))
            }
            Item::Polyline { points, width, .. } if *width >= 2 => {
                for w in points.windows(2) {
                    assert!(!f.hit_by(w[0], w[1]), "{name}: the figure crosses a line");
                }
                continue;
            }
            _ => continue,
        };
        assert_eq!(
            f.overlap(&mark),
            0.0,
            "{name}: the figure covers a mark {mark:?}"
        );
    }
    // and inside the plot: above the lowest mark's bottom (the baseline)
    let lowest = items
        .iter()
        .filter_map(|i| match i {
            Item::Rect { a, b, .. } => Some(a.1.max(b.1)),
            Item::Dot { at, .. } => Some(at.1),
            _ => None,
        })
        .filter(|y| *y < 700.0)
        .fold(0.0, f64::max);
    if lowest > 0.0 {
        assert!(f.y1 <= lowest + 30.0, "{name}: below the plot {f:?}");
    }
    (*drawn[0]).clone()
}

#[test]
fn every_function_and_form_draws_its_evidence() {
    let dir = root().join("tests/cite");
    let planned = plan(&dir, &story());
    let deck = &planned.plan;
    assert_eq!(deck.frames.len(), FRAMES.len());
    for (frame, (name, _)) in deck.frames.iter().zip(FRAMES) {
        assert_eq!(frame.cites.len(), 1, "{name}");
        let c = &frame.cites[0];
        // the figure prints as the headline quotes it
        assert!(
            frame.headline.contains(&c.figure),
            "{name}: {:?} not in {:?}",
            c.figure,
            frame.headline
        );
        let kind = match &c.shape {
            CiteShape::Between { .. } => "between",
            CiteShape::Change { .. } => "change",
            CiteShape::Part { .. } => "part",
            CiteShape::One { .. } => "one",
            CiteShape::Path { .. } => "path",
        };
        let want = match *name {
            n if n.ends_with("ratio") || n.ends_with("difference") => "between",
            // a change between two bars is a bracket
            "bars_change" => "between",
            n if n.ends_with("share") => "part",
            n if n.ends_with("change") => "change",
            n if n.ends_with("growth") || n.ends_with("slope") => "path",
            _ => "one",
        };
        assert_eq!(kind, want, "{name}");
        check_geometry(name, deck, frame);
        let svg = crescendo_render::render_frame(deck, frame).expect("svg");
        insta::assert_snapshot!(format!("cite_{name}"), svg);
    }
}

/// The marks each cite points at, from the rows its value came from.
#[test]
fn cites_point_at_the_rows_their_values_came_from() {
    let dir = root().join("tests/cite");
    let deck = plan(&dir, &story()).plan;
    let shape = |name: &str| {
        let k = FRAMES.iter().position(|f| f.0 == name).unwrap();
        deck.frames[k].cites[0].shape.clone()
    };
    let m = |item, part| MarkRef { item, part };
    // Northgate is bar 0, Riverside bar 1
    assert_eq!(
        shape("bars_ratio"),
        CiteShape::Between {
            from: m(0, 0),
            to: m(1, 0)
        }
    );
    assert_eq!(shape("bars_max"), CiteShape::One { mark: m(0, 0) });
    // Hillcrest's fresh line (80) is the least
    assert_eq!(shape("dots_min"), CiteShape::One { mark: m(3, 0) });
    // North is series 0; from its first month to its last (24 months)
    assert_eq!(
        shape("line_change"),
        CiteShape::Change {
            from: m(0, 0),
            to: m(0, 23)
        }
    );
    assert_eq!(shape("line_last"), CiteShape::One { mark: m(1, 23) });
    // the compound path meets the first and last points of North
    let CiteShape::Path { points } = shape("line_growth") else {
        panic!()
    };
    assert_eq!(points.len(), 24);
    assert_eq!(points[0].1, 100.0);
}

/// The cited row moves with the data: the annotation moves with it.
#[test]
fn a_refreshed_value_moves_its_annotation() {
    let dir = scratch("cite-refresh");
    for f in ["stores.csv", "kinds.csv", "months.csv"] {
        fs::copy(root().join("tests/cite").join(f), dir.join(f)).unwrap();
    }
    let frame = FRAMES.iter().find(|f| f.0 == "line_max").unwrap().1;
    let story = format!("{DATA}\n{frame}\n");
    let before = plan(&dir, &story).plan;
    let one = |m| CiteShape::One {
        mark: MarkRef { item: 0, part: m },
    };
    // North rises: its peak is late, in October 2024
    assert_eq!(before.frames[0].cites[0].shape, one(21));
    let at_before = check_geometry("before", &before, &before.frames[0]);
    let text = fs::read_to_string(dir.join("months.csv")).unwrap();
    fs::write(
        dir.join("months.csv"),
        text.replace("2023-03,North,109", "2023-03,North,240"),
    )
    .unwrap();
    let after = plan(&dir, &story).plan;
    assert_eq!(after.frames[0].cites[0].shape, one(2));
    let at_after = check_geometry("after", &after, &after.frames[0]);
    assert_eq!(at_after.text, "240");
    assert!(
        at_after.bounds().x1 < at_before.bounds().x0 - 300.0,
        "the figure moved to March 2023: {:?} -> {:?}",
        at_before.bounds(),
        at_after.bounds()
    );
    let _ = fs::remove_dir_all(&dir);
}

/// A cite stays through its sequence, and keeps its place while the
/// build-up shows, hides and lights other marks.
#[test]
fn a_cite_keeps_its_place_through_the_sequence() {
    let dir = root().join("tests/cite");
    let frames = "frame \"a\" {\n  line months: x month, y sales, series store\n  hide all\n  show \"North\"\n  cite north_peak\n}\n\
                  frame \"b\" {\n  show all\n}\n\
                  frame \"c\" {\n  spotlight \"South\"\n}\n\
                  frame \"d\" {\n  bars stores: category store, value sales\n  cite shop_ratio\n}\n\
                  frame \"e\" {\n  spotlight \"Northgate\"\n}\n";
    let deck = plan(&dir, &format!("{DATA}{frames}")).plan;
    let at: Vec<Rect> = (deck.frames.iter())
        .map(|f| check_geometry(&f.headline, &deck, f).bounds())
        .collect();
    assert_eq!(at[0], at[1], "line: showing South moved the figure");
    assert_eq!(at[0], at[2], "line: lighting South moved the figure");
    assert_eq!(at[3], at[4], "bars: lighting Northgate moved the figure");
}

/// Marks hidden in the citing frame and shown later (bars, parts, dots)
/// keep their places from the start: the figure does not move when they
/// appear.
#[test]
fn a_cite_keeps_its_place_when_hidden_marks_appear() {
    let dir = root().join("tests/cite");
    // the first two moved before hidden marks were reserved: a sideways
    // bar or group shown later took the figure's spot
    let cases = [
        (
            "sideways_bars",
            "bars stores: category store, value sales, horizontal\n  hide \"Northgate\", \"Old Town\"",
            "river_shop",
        ),
        (
            "sideways_group",
            "bars kinds: category store, value sales, group kind, horizontal\n  hide \"Fresh\"",
            "pantry_share",
        ),
        (
            "bars_ratio",
            "bars stores: category store, value sales\n  hide all\n  show \"Northgate\", \"Riverside\"",
            "shop_ratio",
        ),
        (
            "stack",
            "bars kinds: category store, value sales, stack kind\n  hide \"Pantry\"",
            "fresh_north",
        ),
        (
            "dots",
            "dots kinds: category store, value sales, series kind\n  hide \"Pantry\"",
            "fresh_north",
        ),
    ];
    let mut moved = Vec::new();
    for (name, chart, value) in cases {
        let frames = format!(
            "frame \"{name} a\" {{\n  {chart}\n  cite {value}\n}}\nframe \"{name} b\" {{\n  show all\n}}\n"
        );
        let deck = plan(&dir, &format!("{DATA}{frames}")).plan;
        let at: Vec<Rect> = (deck.frames.iter())
            .map(|f| check_geometry(&f.headline, &deck, f).bounds())
            .collect();
        if at[0] != at[1] {
            moved.push(format!("{name}: {:?} -> {:?}", at[0], at[1]));
        }
    }
    assert!(moved.is_empty(), "the figure moved:\n{}", moved.join("\n"));
}

/// Small multiples end the cites of their sequence: each panel is a chart
/// of its own.
#[test]
fn a_split_ends_the_cites() {
    let dir = root().join("tests/cite");
    let frames =
        "frame \"a\" {\n  line months: x month, y sales, series store\n  cite north_peak\n}\n\
                  frame \"b\" {\n  split store\n}\n";
    let deck = plan(&dir, &format!("{DATA}{frames}")).plan;
    assert_eq!(deck.frames[0].cites.len(), 1);
    assert!(deck.frames[1].cites.is_empty());
}

/// A value of a view cited on a chart of a view of the same rows that
/// kept its row: drawn there.
#[test]
fn a_kept_row_of_another_view_is_cited() {
    let dir = root().join("tests/cite");
    let frame = "view big = stores | keep sales > 200\nframe \"f\" {\n  bars big: category store, value sales\n  cite top_shop\n}";
    let deck = plan(&dir, &format!("{DATA}{frame}\n")).plan;
    assert_eq!(
        deck.frames[0].cites[0].shape,
        CiteShape::One {
            mark: MarkRef { item: 0, part: 0 }
        }
    );
}

#[test]
fn cite_errors_are_located() {
    let dir = root().join("tests/cite");
    let cases = [
        (
            "different_view",
            "frame \"f\" {\n  bars stores: category store, value sales\n  cite fresh_ratio\n}",
        ),
        (
            "literal",
            "value ten = 4 + 6\nframe \"f\" {\n  bars stores: category store, value sales\n  cite ten\n}",
        ),
        (
            "filtered_out",
            "view big = stores | keep sales > 200\nvalue small = min(stores.sales)\nframe \"f\" {\n  bars big: category store, value sales\n  cite small\n}",
        ),
        (
            "many_rows",
            "value all = sum(stores.sales)\nframe \"f\" {\n  bars stores: category store, value sales\n  cite all\n}",
        ),
        (
            "hidden",
            "frame \"f\" {\n  line months: x month, y sales, series store\n  hide all\n  show \"South\"\n  cite north_peak\n}",
        ),
        (
            "unknown",
            "frame \"f\" {\n  bars stores: category store, value sales\n  cite top_shoq\n}",
        ),
    ];
    for (name, frame) in cases {
        let src = Source::file("cite.cresc", format!("{DATA}{frame}\n"));
        let Err(d) = crescendo_plan::plan_story(&src, &dir, &Default::default()) else {
            panic!("{name}: expected an error");
        };
        let text = crescendo_diag::render(&d, false);
        assert!(d[0].location().is_some(), "{name}: located");
        insta::assert_snapshot!(format!("cite_error_{name}"), text);
    }
}
