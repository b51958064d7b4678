//! Tests of the chart forms beyond lines and bars, and of line notes and
//! downsampling, over hand-made plans: well-formed SVG, every text inside
//! the canvas, no two texts overlapping, focus in the accent and context
//! not, hidden items not drawn while nothing else moves, and a snapshot
//! per form.

use crate::inspect::{canvas_size, text_boxes, TextBox};
use crate::render_frame;
use crescendo_frame::*;

const ACCENT: &str = "#8E3005";

/// A tick label as the planner writes one: at most one decimal, no
/// trailing zeros, thousands grouped.
fn tick_label(v: f64) -> String {
    let s = format!("{:.1}", v.abs());
    let s = s.trim_end_matches('0').trim_end_matches('.');
    let (int, frac) = s.split_once('.').unwrap_or((s, ""));
    let body = grouped_digits(int)
        + &if frac.is_empty() {
            String::new()
        } else {
            format!(".{frac}")
        };
    if v < 0.0 && body.chars().any(|c| c.is_ascii_digit() && c != '0') {
        format!("-{body}")
    } else {
        body
    }
}

/// A whole number with thousands separators, as the planner writes one.
fn grouped(n: usize) -> String {
    grouped_digits(&n.to_string())
}

fn grouped_digits(digits: &str) -> String {
    let mut out = String::new();
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

fn axis(title: Option<&str>, domain: [f64; 2], ticks: &[f64]) -> Axis {
    Axis {
        title: title.map(str::to_string),
        scale: ScaleKind::Linear,
        domain,
        ticks: ticks
            .iter()
            .map(|v| Tick {
                value: *v,
                label: tick_label(*v),
            })
            .collect(),
        grid: false,
    }
}

fn frame(headline: &str, chart: Chart) -> FramePlan {
    FramePlan {
        number: 1,
        slug: "f".to_string(),
        sequence: 1,
        headline: headline.to_string(),
        takeaway: Some("A takeaway sentence under the headline.".to_string()),
        notes: None,
        source: Some("Source: invented figures".to_string()),
        description: String::new(),
        quoted: Default::default(),
        templates: Default::default(),
        notices: Vec::new(),
        cites: Vec::new(),
        claim_notes: Vec::new(),
        mark_notes: Vec::new(),
        chart,
    }
}

fn render(chart: Chart) -> String {
    let f = frame("A headline for the form", chart);
    let d = DeckPlan {
        title: "t".to_string(),
        byline: None,
        source: None,
        theme: "clear".to_string(),
        conclusion: None,
        accent: None,
        style: None,
        values: Default::default(),
        exact: Default::default(),
        claims: Vec::new(),
        frames: vec![f.clone()],
        locale: None,
        fiscal_start: None,
    };
    render_frame(&d, &f).unwrap()
}

/// Writes `svg` to `$CRESCENDO_DUMP/name.svg` when that variable is set,
/// to look at the pictures.
fn dump(name: &str, svg: &str) {
    if let Some(dir) = std::env::var_os("CRESCENDO_DUMP") {
        let _ = std::fs::write(std::path::Path::new(&dir).join(format!("{name}.svg")), svg);
    }
}

/// Well-formed, texts inside the canvas and apart; returns the text boxes.
fn check(svg: &str) -> Vec<TextBox> {
    let doc = roxmltree::Document::parse(svg).expect("well-formed SVG");
    assert_eq!(canvas_size(svg).unwrap(), (1280.0, 720.0));
    for n in doc.descendants().filter(|n| n.is_element()) {
        assert!(n.attribute("transform").is_none(), "nothing rotated");
        if n.has_tag_name("text") {
            let size: f64 = n.attribute("font-size").unwrap().parse().unwrap();
            assert!(size >= 14.0, "text under 14 px");
        }
    }
    let boxes = text_boxes(svg).unwrap();
    for b in &boxes {
        assert!(
            b.x0 >= 0.0 && b.y0 >= 0.0 && b.x1 <= 1280.0 && b.y1 <= 720.0,
            "outside the canvas: {b:?}"
        );
    }
    for (i, a) in boxes.iter().enumerate() {
        for b in &boxes[i + 1..] {
            assert!(!a.overlaps(b, 0.0), "overlap:\n  {a:?}\n  {b:?}");
        }
    }
    boxes
}

fn has(boxes: &[TextBox], text: &str) -> bool {
    boxes.iter().any(|b| b.text == text)
}

fn find<'a>(boxes: &'a [TextBox], text: &str) -> &'a TextBox {
    boxes
        .iter()
        .find(|b| b.text == text)
        .unwrap_or_else(|| panic!("no text {text}"))
}

/// Elements with a given tag and fill (or stroke) colour.
fn count(svg: &str, tag: &str, attr: &str, colour: &str) -> usize {
    let doc = roxmltree::Document::parse(svg).unwrap();
    doc.descendants()
        .filter(|n| n.has_tag_name(tag) && n.attribute(attr) == Some(colour))
        .count()
}

/// Every element of `svg` as one line of text (tag, attributes, text).
fn elements(svg: &str) -> Vec<String> {
    let doc = roxmltree::Document::parse(svg).unwrap();
    doc.descendants()
        .filter(|n| n.is_element() && !n.has_tag_name("svg"))
        .map(|n| {
            let attrs: Vec<String> = n
                .attributes()
                .map(|a| format!("{}={}", a.name(), a.value()))
                .collect();
            format!(
                "{} {} {}",
                n.tag_name().name(),
                attrs.join(" "),
                n.text().unwrap_or("").trim()
            )
        })
        .collect()
}

/// Hiding the top part of stacks removes its marks and moves nothing but
/// the totals, which sit on the parts still shown (and say their sum).
fn hidden_moves_only_totals(hidden: &str, shown: &str) {
    let texts = |svg: &str| text_boxes(svg).unwrap();
    let totals = ["25", "24", "22", "9", "20", "13", "7"];
    let keep = |e: &String| !totals.iter().any(|t| e.ends_with(&format!(" {t}")));
    let shown_set: std::collections::BTreeSet<String> =
        elements(shown).into_iter().filter(keep).collect();
    for e in elements(hidden).iter().filter(|e| keep(e)) {
        assert!(shown_set.contains(e), "moved or changed: {e}");
    }
    // North's total: 25 over three parts, 20 over the two still shown,
    // lower by the hidden part's length
    let full = find(&texts(shown), "25").clone();
    let part = texts(hidden)
        .into_iter()
        .filter(|b| b.text == "20")
        .min_by(|a, b| {
            let d = |x: &TextBox| (x.x0 - full.x0).abs() + (x.y0 - full.y0).abs();
            d(a).total_cmp(&d(b))
        })
        .unwrap();
    let moved = (part.x0 - full.x0).abs().max(part.y0 - full.y0);
    assert!(
        moved > 10.0,
        "the total stays over the hidden part: {full:?} {part:?}"
    );
}

/// Hiding an item removes its marks and nothing else moves: every element
/// of the frame with the item hidden appears unchanged in the frame with
/// it shown, and the shown frame has more.
fn hidden_changes_nothing_else(hidden: &str, shown: &str) {
    let shown_set: std::collections::BTreeSet<String> = elements(shown).into_iter().collect();
    let h = elements(hidden);
    for e in &h {
        assert!(shown_set.contains(e), "moved or changed: {e}");
    }
    assert!(
        elements(shown).len() > h.len(),
        "the shown item draws something"
    );
}

fn part(name: &str, role: Role) -> Part {
    Part {
        name: name.to_string(),
        role,
    }
}

fn parts_chart(mode: PartsMode, orientation: Orientation, hide: bool) -> Chart {
    let cats = [
        ("North", [12.0, 8.0, 5.0]),
        ("South", [9.0, 11.0, 4.0]),
        ("East", [6.0, 7.0, 9.0]),
        ("West", [4.0, 3.0, 2.0]),
    ];
    let max = if mode == PartsMode::Stacked {
        30.0
    } else {
        12.0
    };
    Chart::Parts(PartsChart {
        mode,
        orientation,
        category_title: Some("Region".to_string()),
        value: axis(
            Some("Visits (thousands)"),
            [0.0, max],
            &[0.0, max / 3.0, 2.0 * max / 3.0, max],
        ),
        parts: vec![
            part("Walk-in", Role::Context),
            part("Booked online", Role::Focus),
            part("Referred", if hide { Role::Hidden } else { Role::Context }),
        ],
        categories: cats
            .iter()
            .enumerate()
            .map(|(i, (label, v))| PartCategory {
                label: label.to_string(),
                values: v.iter().map(|x| Some(*x)).collect(),
                // the plan's total covers the parts shown
                total_label: format!("{}", v.iter().take(if hide { 2 } else { 3 }).sum::<f64>()),
                role: if i == 2 { Role::Focus } else { Role::Context },
            })
            .collect(),
    })
}

#[test]
fn stacked_vertical_parts() {
    let svg = render(parts_chart(
        PartsMode::Stacked,
        Orientation::Vertical,
        false,
    ));
    let boxes = check(&svg);
    for name in ["Walk-in", "Booked online", "Referred", "25", "22", "North"] {
        assert!(has(&boxes, name), "{name}");
    }
    assert_eq!(
        count(&svg, "rect", "fill", ACCENT),
        4,
        "focus part in every bar"
    );
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let fills: std::collections::BTreeSet<&str> = doc
        .descendants()
        .filter(|n| n.has_tag_name("rect"))
        .filter_map(|n| n.attribute("fill"))
        .collect();
    assert_eq!(
        fills.len(),
        3,
        "two distinct greys and the accent: {fills:?}"
    );
    // The names stand right of the last bar, not in a legend.
    let last_bar_right = doc
        .descendants()
        .filter(|n| n.has_tag_name("rect"))
        .map(|n| {
            n.attribute("x").unwrap().parse::<f64>().unwrap()
                + n.attribute("width").unwrap().parse::<f64>().unwrap()
        })
        .fold(0.0, f64::max);
    assert!(find(&boxes, "Referred").x0 > last_bar_right);
    let hidden = render(parts_chart(PartsMode::Stacked, Orientation::Vertical, true));
    check(&hidden);
    assert!(!has(&text_boxes(&hidden).unwrap(), "Referred"));
    hidden_moves_only_totals(&hidden, &svg);
    dump("parts_stacked_vertical", &svg);
    insta::assert_snapshot!("parts_stacked_vertical", svg);
}

#[test]
fn grouped_vertical_parts() {
    let svg = render(parts_chart(
        PartsMode::Grouped,
        Orientation::Vertical,
        false,
    ));
    let boxes = check(&svg);
    assert!(has(&boxes, "Booked online"));
    assert!(!has(&boxes, "25"), "grouped bars carry no totals");
    assert_eq!(count(&svg, "rect", "fill", ACCENT), 4);
    assert_eq!(
        roxmltree::Document::parse(&svg)
            .unwrap()
            .descendants()
            .filter(|n| n.has_tag_name("rect"))
            .count(),
        12
    );
    let hidden = render(parts_chart(PartsMode::Grouped, Orientation::Vertical, true));
    check(&hidden);
    hidden_changes_nothing_else(&hidden, &svg);
    dump("parts_grouped_vertical", &svg);
    insta::assert_snapshot!("parts_grouped_vertical", svg);
}

#[test]
fn horizontal_parts() {
    for mode in [PartsMode::Stacked, PartsMode::Grouped] {
        let svg = render(parts_chart(mode, Orientation::Horizontal, false));
        let boxes = check(&svg);
        assert!(has(&boxes, "Walk-in"), "{mode:?}");
        assert_eq!(count(&svg, "rect", "fill", ACCENT), 4);
        let hidden = render(parts_chart(mode, Orientation::Horizontal, true));
        check(&hidden);
        if mode == PartsMode::Stacked {
            hidden_moves_only_totals(&hidden, &svg);
        } else {
            hidden_changes_nothing_else(&hidden, &svg);
        }
        if mode == PartsMode::Stacked {
            dump("parts_stacked_horizontal", &svg);
            insta::assert_snapshot!("parts_stacked_horizontal", svg);
        } else {
            dump("parts_grouped_horizontal", &svg);
            insta::assert_snapshot!("parts_grouped_horizontal", svg);
        }
    }
}

fn dots_chart(hide: bool) -> Chart {
    let rows = [
        ("Library cards issued", [41.0, 55.0]),
        ("Events held", [18.0, 26.0]),
        ("Study rooms booked", [30.0, 33.0]),
        ("Computer sessions", [62.0, 48.0]),
        ("Home deliveries", [8.0, 12.0]),
    ];
    Chart::Dots(DotChart {
        category_title: None,
        value: axis(
            Some("Per 1,000 residents"),
            [0.0, 70.0],
            &[0.0, 20.0, 40.0, 60.0],
        ),
        series: vec![part("2019", Role::Context), part("2024", Role::Focus)],
        rows: rows
            .iter()
            .enumerate()
            .map(|(i, (l, v))| DotRow {
                label: l.to_string(),
                values: v.iter().map(|x| Some(*x)).collect(),
                role: if hide && i == 4 {
                    Role::Hidden
                } else {
                    Role::Context
                },
            })
            .collect(),
    })
}

#[test]
fn dot_plot() {
    let svg = render(dots_chart(false));
    let boxes = check(&svg);
    assert!(
        has(&boxes, "2019") && has(&boxes, "2024"),
        "series named directly"
    );
    assert_eq!(count(&svg, "circle", "fill", ACCENT), 5);
    assert_eq!(count(&svg, "circle", "fill", "#848484"), 5);
    // Series names sit above the top row.
    let top_row = find(&boxes, "Library cards issued");
    assert!(find(&boxes, "2024").y1 <= top_row.y0);
    let hidden = render(dots_chart(true));
    check(&hidden);
    hidden_changes_nothing_else(&hidden, &svg);
    dump("dots", &svg);
    insta::assert_snapshot!("dots", svg);
}

fn scatter_chart(hide: bool) -> Chart {
    scatter_of(hide, 10)
}

/// A scatter of `n` named points (at most 16), two in focus.
fn scatter_of(hide: bool, count: usize) -> Chart {
    let names = [
        "Ashford", "Brook", "Carrow", "Dunmore", "Ellery", "Fenwick", "Glenby", "Harlow", "Ivel",
        "Jessop", "Kelso", "Lorne", "Marden", "Nash", "Orwell", "Pelham",
    ];
    let points = names
        .iter()
        .take(count)
        .enumerate()
        .map(|(i, n)| {
            let x = 10.0 + i as f64 * 80.0 / count as f64;
            ScatterPoint {
                x,
                y: 5.0 + x * 0.6 + ((i * 7) % 5) as f64 * 4.0,
                label: n.to_string(),
                series: String::new(),
                role: match i {
                    3 | 8 => Role::Focus,
                    5 if hide => Role::Hidden,
                    _ => Role::Context,
                },
            }
        })
        .collect();
    Chart::Scatter(ScatterChart {
        x: axis(
            Some("Median rent (index)"),
            [0.0, 100.0],
            &[0.0, 25.0, 50.0, 75.0, 100.0],
        ),
        y: axis(
            Some("Waiting list (weeks)"),
            [0.0, 80.0],
            &[0.0, 20.0, 40.0, 60.0, 80.0],
        ),
        points,
        fit: Some(Fit {
            slope: 0.6,
            intercept: 9.0,
            r: Some(0.8204),
            label: "fit: r = 0.82".to_string(),
        }),
    })
}

#[test]
fn scatter_with_fit() {
    let svg = render(scatter_chart(false));
    let boxes = check(&svg);
    assert!(has(&boxes, "fit: r = 0.82"));
    assert!(
        has(&boxes, "Dunmore") && has(&boxes, "Ivel"),
        "focus points named"
    );
    assert!(
        has(&boxes, "Ashford") && has(&boxes, "Jessop"),
        "with up to 12 points every point is named"
    );
    assert_eq!(count(&svg, "circle", "fill", ACCENT), 2);
    assert_eq!(count(&svg, "circle", "fill", "#848484"), 8);
    assert_eq!(
        count(&svg, "polyline", "stroke", "#848484"),
        1,
        "the fit line, in the context grey"
    );
    let hidden = render(scatter_chart(true));
    check(&hidden);
    hidden_changes_nothing_else(&hidden, &svg);
    dump("scatter", &svg);
    insta::assert_snapshot!("scatter", svg);
}

#[test]
fn scatter_names_only_focus_points_when_many() {
    let svg = render(scatter_of(false, 14));
    let boxes = check(&svg);
    assert!(has(&boxes, "Dunmore") && has(&boxes, "Ivel"));
    assert!(!has(&boxes, "Ashford"), "context points are not named");
}

fn figures_chart(hide: bool) -> Chart {
    Chart::Figures(FigureChart {
        figures: vec![
            Figure {
                text: "2.3×".to_string(),
                caption: "as many evening swims at Westbrook as at Alder Park".to_string(),
                role: Role::Focus,
            },
            Figure {
                text: "41%".to_string(),
                caption: "of all visits came after 6 pm".to_string(),
                role: if hide { Role::Hidden } else { Role::Context },
            },
        ],
    })
}

#[test]
fn figures() {
    let svg = render(figures_chart(false));
    dump("figures", &svg);
    let boxes = check(&svg);
    let big = find(&boxes, "2.3×");
    let other = find(&boxes, "41%");
    assert!(svg.contains("font-size=\"118\""), "figures at 118 px");
    let caption = crate::figures::caption_size(&crate::theme::CLEAR);
    assert!(caption > crate::theme::TAKEAWAY_SIZE, "{caption}");
    assert!(
        svg.contains(&format!("font-size=\"{caption}\"")),
        "captions at {caption} px"
    );
    assert_eq!(big.y0, other.y0, "side by side");
    // composed on the grid: the block's middle near the canvas's middle
    // band, nothing like an empty bottom 40%
    let cap_last = find(&boxes, "of all visits came after 6 pm").y1;
    let middle = (big.y0 + cap_last) / 2.0;
    assert!(
        (300.0..=420.0).contains(&middle),
        "block middle at {middle}"
    );
    assert!(big.x1 < other.x0);
    let cap = find(&boxes, "of all visits came after 6 pm");
    assert!(
        cap.y0 >= other.y1 && (cap.x0 - other.x0).abs() < 1.0,
        "caption under, left-aligned"
    );
    assert_eq!(count(&svg, "text", "fill", ACCENT), 1);
    let hidden = render(figures_chart(true));
    check(&hidden);
    hidden_changes_nothing_else(&hidden, &svg);
    dump("figures", &svg);
    insta::assert_snapshot!("figures", svg);
}

fn table_chart(rows: usize, hide: bool) -> Chart {
    let names = [
        "Alder Park",
        "Westbrook",
        "Kingsmead Leisure Centre and Lido (outdoor season only)",
        "Riverside",
        "Training tank",
    ];
    Chart::Table(TableChart {
        columns: vec![
            TableColumn {
                title: "Pool".to_string(),
                numeric: false,
            },
            TableColumn {
                title: "Visits".to_string(),
                numeric: true,
            },
            TableColumn {
                title: "Change".to_string(),
                numeric: true,
            },
        ],
        rows: (0..rows)
            .map(|i| TableRow {
                cells: vec![
                    names[i % names.len()].to_string(),
                    grouped(1234 * (i + 1)),
                    format!("+{}%", i * 3),
                ],
                role: match i {
                    1 => Role::Focus,
                    3 if hide => Role::Hidden,
                    _ => Role::Context,
                },
                focus_cell: if i == 2 { Some(2) } else { None },
                shaded: i % 2 == 1,
            })
            .collect(),
    })
}

#[test]
fn table() {
    let svg = render(table_chart(5, false));
    let boxes = check(&svg);
    // Numbers right-aligned: the right edges of a numeric column agree.
    let a = find(&boxes, "1,234");
    let b = find(&boxes, "12,340".get(..0).map(|_| "6,170").unwrap());
    assert!((a.x1 - b.x1).abs() < 1.0, "{a:?} {b:?}");
    assert!((find(&boxes, "Pool").x0 - find(&boxes, "Alder Park").x0).abs() < 1.0);
    // Focus row (3 cells) and focus cell in the accent.
    assert_eq!(count(&svg, "text", "fill", ACCENT), 4);
    assert_eq!(
        roxmltree::Document::parse(&svg)
            .unwrap()
            .descendants()
            .filter(|n| n.has_tag_name("rect"))
            .count(),
        2,
        "two shaded rows"
    );
    let hidden = render(table_chart(5, true));
    check(&hidden);
    hidden_changes_nothing_else(&hidden, &svg);
    dump("table", &svg);
    insta::assert_snapshot!("table", svg);
    // Too many rows: capped, with a count of the rest.
    let long = render(table_chart(60, false));
    let boxes = check(&long);
    assert!(boxes
        .iter()
        .any(|b| b.text.starts_with('…') && b.text.ends_with("more rows")));
}

#[test]
fn a_spotlighted_row_beyond_the_visible_rows_is_drawn() {
    let mut chart = table_chart(60, false);
    if let Chart::Table(t) = &mut chart {
        t.rows[55].role = Role::Focus;
    }
    let svg = render(chart);
    let boxes = check(&svg);
    // row 55 ("+165%" in its last column) is drawn, in the accent, after
    // the count of the rows left out
    let lit = find(&boxes, "+165%");
    let note = boxes
        .iter()
        .find(|b| b.text.starts_with('…') && b.text.ends_with("more rows"))
        .expect("a count of the rows left out");
    assert!(lit.y0 > note.y0, "{lit:?} {note:?}");
    assert!(!has(&boxes, "+162%"), "row 54 is not drawn");
    assert_eq!(count(&svg, "text", "fill", ACCENT), 3 + 1 + 3);
}

fn pie_chart(hide: bool) -> Chart {
    let slices = [
        ("Westbrook", 0.38),
        ("Alder Park", 0.27),
        ("Kingsmead", 0.2),
        ("Riverside", 0.1),
        ("Other pools", 0.05),
    ];
    Chart::Pie(PieChart {
        slices: slices
            .iter()
            .enumerate()
            .map(|(i, (l, s))| Slice {
                label: l.to_string(),
                value: s * 1000.0,
                share: *s,
                share_label: format!("{}%", (s * 100.0).round()),
                role: match i {
                    0 => Role::Focus,
                    3 if hide => Role::Hidden,
                    _ => Role::Context,
                },
            })
            .collect(),
    })
}

#[test]
fn pie() {
    let svg = render(pie_chart(false));
    let boxes = check(&svg);
    assert!(has(&boxes, "Westbrook 38%") && has(&boxes, "Other pools 5%"));
    // slices are true arcs: SVG paths with an elliptical-arc command, no
    // polygons (and no placeholder left behind)
    assert_eq!(count(&svg, "path", "fill", ACCENT), 1);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let paths: Vec<&str> = doc
        .descendants()
        .filter(|n| n.has_tag_name("path"))
        .filter_map(|n| n.attribute("d"))
        .collect();
    assert_eq!(paths.len(), 5);
    assert!(paths.iter().all(|d| d.contains(" A") && d.ends_with('Z')));
    assert_eq!(
        doc.descendants()
            .filter(|n| n.has_tag_name("polygon"))
            .count(),
        0
    );
    // The first slice starts at twelve o'clock and runs clockwise, so the
    // focus label is on the right.
    assert!(find(&boxes, "Westbrook 38%").x0 > 640.0);
    let hidden = render(pie_chart(true));
    check(&hidden);
    hidden_changes_nothing_else(&hidden, &svg);
    dump("pie", &svg);
    insta::assert_snapshot!("pie", svg);
}

fn small_line(peak: f64, role: Role, domain: [f64; 2]) -> Chart {
    Chart::Line(LineChart {
        x: Axis {
            title: None,
            scale: ScaleKind::Years,
            domain: [2015.0, 2024.0],
            ticks: [2015.0, 2020.0, 2024.0]
                .iter()
                .map(|v| Tick {
                    value: *v,
                    label: format!("{v}"),
                })
                .collect(),
            grid: false,
        },
        y: axis(Some("Share of homes (%)"), domain, &[0.0, 20.0, 40.0]),
        series: vec![Series {
            name: "s".to_string(),
            label: "s".to_string(),
            role,
            points: (0..10)
                .map(|i| Point {
                    x: 2015.0 + i as f64,
                    y: Some(domain[0] + (peak - domain[0]) * i as f64 / 9.0),
                })
                .collect(),
            end_values: Vec::new(),
        }],
        annotations: Vec::new(),
        end_labels: false,
    })
}

fn panels_chart(common: bool, trimmed: bool, hide: bool) -> Chart {
    let names = ["Coast", "Uplands", "Valley", "Islands", "Moor", "Fen"];
    Chart::Panels(PanelChart {
        key: "region".to_string(),
        common_scale: common,
        trimmed,
        panels: names
            .iter()
            .enumerate()
            .map(|(i, n)| {
                let role = match i {
                    1 => Role::Focus,
                    4 if hide => Role::Hidden,
                    _ => Role::Context,
                };
                let top = if trimmed { 10.0 + 6.0 * i as f64 } else { 40.0 };
                Panel {
                    title: n.to_string(),
                    role,
                    chart: small_line(5.0 + 5.0 * i as f64, Role::Context, [0.0, top]),
                }
            })
            .collect(),
    })
}

#[test]
fn panels_with_a_common_scale() {
    let svg = render(panels_chart(true, false, false));
    let boxes = check(&svg);
    for n in ["Coast", "Uplands", "Fen"] {
        assert!(has(&boxes, n));
    }
    // Six panels in two rows of four and two; y labels once per row.
    assert_eq!(boxes.iter().filter(|b| b.text == "40").count(), 2);
    assert_eq!(count(&svg, "polyline", "stroke", ACCENT), 1);
    assert_eq!(count(&svg, "polyline", "stroke", "#848484"), 5);
    // The same units per pixel: every panel's baseline is equally long.
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let bases: Vec<String> = doc
        .descendants()
        .filter(|n| n.has_tag_name("polyline") && n.attribute("stroke") == Some("#C8C8C8"))
        .map(|n| {
            let pts: Vec<f64> = n
                .attribute("points")
                .unwrap()
                .split([' ', ','])
                .filter_map(|s| s.parse().ok())
                .collect();
            format!("{}", pts[2] - pts[0])
        })
        .collect();
    assert_eq!(bases.len(), 6);
    // Equal up to rounding to whole pixels.
    let lens: Vec<f64> = bases.iter().map(|b| b.parse().unwrap()).collect();
    assert!(lens.iter().all(|l| (l - lens[0]).abs() <= 1.0), "{bases:?}");
    let hidden = render(panels_chart(true, false, true));
    check(&hidden);
    hidden_changes_nothing_else(&hidden, &svg);
    dump("panels", &svg);
    insta::assert_snapshot!("panels", svg);
}

#[test]
fn trimmed_panels_keep_units_per_pixel() {
    let svg = render(panels_chart(true, true, false));
    check(&svg);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    // Each line rises from its domain's bottom to its peak; with the same
    // units per pixel, rise in px / rise in units is the same everywhere.
    let mut ratios = Vec::new();
    for (i, n) in doc
        .descendants()
        .filter(|n| {
            n.has_tag_name("polyline")
                && matches!(n.attribute("stroke"), Some("#848484") | Some(ACCENT))
        })
        .enumerate()
    {
        let pts: Vec<f64> = n
            .attribute("points")
            .unwrap()
            .split([' ', ','])
            .filter_map(|s| s.parse().ok())
            .collect();
        let rise_px = pts[1] - pts[pts.len() - 1];
        let rise = 5.0 + 5.0 * i as f64;
        ratios.push(rise_px / rise);
    }
    assert_eq!(ratios.len(), 6);
    for r in &ratios {
        assert!((r - ratios[0]).abs() < 0.2, "{ratios:?}");
    }
    dump("panels_trimmed", &svg);
    insta::assert_snapshot!("panels_trimmed", svg);
}

fn annotated(end_labels: bool) -> Chart {
    let mut chart = small_line(34.0, Role::Focus, [0.0, 40.0]);
    if let Chart::Line(l) = &mut chart {
        l.series[0].name = "Uplands".to_string();
        l.series[0].label = "Uplands".to_string();
        l.series.push(Series {
            name: "Coast".to_string(),
            label: "Coast".to_string(),
            role: Role::Context,
            points: (0..10)
                .map(|i| Point {
                    x: 2015.0 + i as f64,
                    y: Some(4.0 + i as f64 * 1.3),
                })
                .collect(),
            end_values: Vec::new(),
        });
        l.annotations = vec![
            Annotation::Band {
                from: 2019.5,
                to: 2021.5,
                text: Some("Grant scheme".to_string()),
            },
            Annotation::Reference {
                value: 25.0,
                text: "National target".to_string(),
            },
            Annotation::Callout {
                x: 2021.0,
                y: 34.0 * 6.0 / 9.0,
                text: "Grants doubled installations".to_string(),
            },
        ];
        l.end_labels = end_labels;
        if end_labels {
            // the values at the ends of the focus line, as the plan writes them
            l.series[0].end_values = vec!["0".to_string(), "34".to_string()];
        }
    }
    chart
}

#[test]
fn line_annotations_and_end_labels() {
    let svg = render(annotated(true));
    dump("line_annotations", &svg);
    let boxes = check(&svg);
    for t in ["Grant scheme", "National target", "0", "34"] {
        assert!(has(&boxes, t), "{t}");
    }
    let callout = boxes
        .iter()
        .find(|b| b.text.starts_with("Grants doubled"))
        .expect("the callout");
    // Near its point (2021, 22.7): within 130 px.
    let (px, py): (f64, f64) = (
        88.0 + (1139.0 - 88.0) * 6.0 / 9.0,
        632.0 - (632.0 - 166.0) * 22.67 / 40.0,
    );
    let dx = px.clamp(callout.x0, callout.x1) - px;
    let dy = py.clamp(callout.y0, callout.y1) - py;
    assert!((dx * dx + dy * dy).sqrt() < 130.0, "{callout:?}");
    // End values at the ends of the focus line only.
    assert!(!has(&boxes, "4"), "context line has no end values");
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let band = doc
        .descendants()
        .find(|n| n.has_tag_name("rect"))
        .expect("the band");
    let band_pos = elements(&svg)
        .iter()
        .position(|e| e.starts_with("rect"))
        .unwrap();
    let first_line = elements(&svg)
        .iter()
        .position(|e| e.contains(&format!("stroke={ACCENT}")))
        .unwrap();
    assert!(band_pos < first_line, "the band is under the data");
    assert_ne!(band.attribute("fill"), Some(ACCENT));
    // Reference name is above its line, at the right end.
    let target = find(&boxes, "National target");
    let uplands = find(&boxes, "Uplands");
    assert!(target.x1 < uplands.x0 && target.x1 > 900.0);
    // Without end labels nothing else moves.
    let plain = render(annotated(false));
    check(&plain);
    hidden_changes_nothing_else(&plain, &svg);
    dump("line_annotations", &svg);
    insta::assert_snapshot!("line_annotations", svg);
}

#[test]
fn long_lines_are_downsampled() {
    let n = 20_000;
    let chart = Chart::Line(LineChart {
        x: axis(None, [0.0, n as f64], &[0.0, 10000.0, 20000.0]),
        y: axis(None, [-2.0, 2.0], &[-2.0, 0.0, 2.0]),
        series: vec![Series {
            name: "signal".to_string(),
            label: "signal".to_string(),
            role: Role::Focus,
            points: (0..n)
                .map(|i| Point {
                    x: i as f64,
                    // A gap in the middle splits the line in two runs.
                    y: if (9_990..10_010).contains(&i) {
                        None
                    } else {
                        Some((i as f64 / 50.0).sin() + if i == 15_000 { 1.0 } else { 0.0 })
                    },
                })
                .collect(),
            end_values: Vec::new(),
        }],
        annotations: Vec::new(),
        end_labels: false,
    });
    let svg = render(chart);
    check(&svg);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let runs: Vec<usize> = doc
        .descendants()
        .filter(|n| n.has_tag_name("polyline") && n.attribute("stroke") == Some(ACCENT))
        .map(|n| n.attribute("points").unwrap().split(' ').count())
        .collect();
    assert_eq!(runs.len(), 2, "the gap still breaks the line");
    let total: usize = runs.iter().sum();
    assert!(
        total > 1500 && total < 2600,
        "about two points per pixel: {total}"
    );
}

/// A house style with larger text and wider margins than the default theme:
/// 18 px labels, a 22 px takeaway (so figure captions are 24 px), a 15 px
/// source (which plotters alone would write as 15.000000000000002) and
/// 80 px side margins.
fn large_style() -> style::HouseStyle {
    style::HouseStyle {
        label_size: Some(18.0),
        takeaway_size: Some(22.0),
        source_size: Some(15.0),
        margin_sides: Some(80.0),
        margin_top: Some(44.0),
        margin_bottom: Some(32.0),
        ..Default::default()
    }
}

fn render_styled(chart: Chart, style: &style::HouseStyle) -> String {
    let f = frame("A headline for the form", chart);
    let d = DeckPlan {
        title: "t".to_string(),
        byline: None,
        source: None,
        theme: "clear".to_string(),
        conclusion: None,
        accent: None,
        style: Some(style.clone()),
        values: Default::default(),
        exact: Default::default(),
        claims: Vec::new(),
        frames: vec![f.clone()],
        locale: None,
        fiscal_start: None,
    };
    render_frame(&d, &f).unwrap()
}

/// The `font-size` attribute of every `<text>`, by its collapsed content.
fn font_sizes(svg: &str) -> Vec<(String, String)> {
    let doc = roxmltree::Document::parse(svg).unwrap();
    doc.descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| {
            let content: String = n
                .descendants()
                .filter(|n| n.is_text())
                .filter_map(|n| n.text())
                .collect();
            (
                crate::metrics::normalize(&content),
                n.attribute("font-size").unwrap_or("").to_string(),
            )
        })
        .collect()
}

#[test]
fn every_form_takes_sizes_and_margins_from_the_house_style() {
    let style = large_style();
    // (name, chart, texts that are labels and must be 18 px)
    let forms: Vec<(&str, Chart, &[&str])> = vec![
        (
            "parts stacked vertical",
            parts_chart(PartsMode::Stacked, Orientation::Vertical, false),
            &["Walk-in", "Booked online", "North", "25", "Region"],
        ),
        (
            "parts grouped vertical",
            parts_chart(PartsMode::Grouped, Orientation::Vertical, false),
            &["Booked online", "East", "Visits (thousands)"],
        ),
        (
            "parts stacked horizontal",
            parts_chart(PartsMode::Stacked, Orientation::Horizontal, false),
            &["Walk-in", "West", "Visits (thousands)"],
        ),
        (
            "parts grouped horizontal",
            parts_chart(PartsMode::Grouped, Orientation::Horizontal, false),
            &["Referred", "South"],
        ),
        (
            "dots",
            dots_chart(false),
            &["2019", "2024", "Events held", "Per 1,000 residents", "60"],
        ),
        (
            "scatter",
            scatter_chart(false),
            &["Dunmore", "fit: r = 0.82", "Median rent (index)", "75"],
        ),
        ("figures", figures_chart(false), &[]),
        (
            "table",
            table_chart(5, false),
            &["Pool", "Visits", "Alder Park", "6,170"],
        ),
        (
            "table, capped",
            table_chart(60, false),
            &["Pool", "Alder Park"],
        ),
        (
            "pie",
            pie_chart(false),
            &["Westbrook 38%", "Other pools 5%"],
        ),
        (
            "panels",
            panels_chart(true, false, false),
            &["Coast", "Fen", "Share of homes (%)"],
        ),
        (
            "trimmed panels",
            panels_chart(true, true, false),
            &["Uplands", "Islands"],
        ),
        (
            "line notes",
            annotated(true),
            &["Grant scheme", "National target", "Uplands", "34"],
        ),
    ];
    for (name, chart, labels) in forms {
        let svg = render_styled(chart, &style);
        dump(&format!("styled {name}"), &svg);
        let boxes = check(&svg);
        // Every text inside the style's margins (1 px for rounding).
        for b in &boxes {
            assert!(
                b.x0 >= 80.0 - 1.0
                    && b.x1 <= 1280.0 - 80.0 + 1.0
                    && b.y0 >= 44.0 - 1.0
                    && b.y1 <= 720.0 - 32.0 + 1.0,
                "{name}: outside the margins: {b:?}"
            );
        }
        let sizes = font_sizes(&svg);
        for label in labels {
            let (_, size) = sizes
                .iter()
                .find(|(t, _)| t == label)
                .unwrap_or_else(|| panic!("{name}: no text {label}"));
            assert_eq!(size, "18", "{name}: {label}");
        }
        // Nothing is left at a default size: every text is at one of the
        // style's sizes, written exactly (figures add their own two).
        for (text, size) in &sizes {
            let allowed = match size.as_str() {
                "36" | "22" | "18" | "15" => true,
                "24" | "118" => name == "figures",
                _ => false,
            };
            assert!(allowed, "{name}: `{text}` at font-size {size}");
        }
        // Panels write their small ticks at the source size.
        if name == "panels" {
            assert!(sizes.iter().any(|(t, s)| t == "40" && s == "15"));
        }
        if name == "figures" {
            let caption = "of all visits came after 6 pm";
            assert!(
                sizes.iter().any(|(t, s)| t == caption && s == "24"),
                "captions 2 px over the 22 px takeaway"
            );
        }
    }
}

/// The same chart with gridlines asked for on its measure's axis.
fn with_grid(chart: &Chart) -> Chart {
    let mut c = chart.clone();
    match &mut c {
        Chart::Line(l) => l.y.grid = true,
        Chart::Bars(b) => b.value.grid = true,
        Chart::Parts(p) => p.value.grid = true,
        Chart::Dots(d) => d.value.grid = true,
        Chart::Scatter(s) => s.y.grid = true,
        Chart::Panels(p) => {
            for panel in &mut p.panels {
                panel.chart = with_grid(&panel.chart);
            }
        }
        _ => panic!("no measure's axis"),
    }
    c
}

fn plain_bars(orientation: Orientation) -> Chart {
    Chart::Bars(BarChart {
        orientation,
        category_title: None,
        value: axis(Some("Loans"), [0.0, 60.0], &[0.0, 20.0, 40.0, 60.0]),
        bars: ["Books", "E-books", "Audio", "Film"]
            .iter()
            .zip([52.0, 38.0, 21.0, 9.0])
            .enumerate()
            .map(|(i, (l, v))| Bar {
                label: l.to_string(),
                value: Some(v),
                value_label: format!("{v}"),
                role: if i == 1 { Role::Focus } else { Role::Context },
            })
            .collect(),
    })
}

#[test]
fn gridlines_are_light_under_the_data_and_only_on_request() {
    const GRID: &str = "#ECECEC";
    let forms: Vec<(&str, Chart, usize)> = vec![
        // (name, chart, gridlines expected: ticks off the baseline)
        ("line", small_line(30.0, Role::Focus, [0.0, 40.0]), 2),
        ("bars", plain_bars(Orientation::Vertical), 3),
        ("bars-horizontal", plain_bars(Orientation::Horizontal), 3),
        (
            "stacked",
            parts_chart(PartsMode::Stacked, Orientation::Vertical, false),
            3,
        ),
        (
            "grouped-horizontal",
            parts_chart(PartsMode::Grouped, Orientation::Horizontal, false),
            3,
        ),
        // dots have no bar baseline to skip: every tick gets one
        ("dots", dots_chart(false), 4),
        ("scatter", scatter_chart(false), 0),
        // six panels, five drawn (one hidden still draws its axes)
        ("panels", panels_chart(true, false, false), 12),
    ];
    for (name, chart, expected) in forms {
        let plain = render(chart.clone());
        assert_eq!(
            count(&plain, "polyline", "stroke", GRID),
            0,
            "{name}: no gridlines unless asked"
        );
        let gridded = render(with_grid(&chart));
        check(&gridded);
        let lines = count(&gridded, "polyline", "stroke", GRID);
        if expected > 0 {
            assert_eq!(lines, expected, "{name}");
        } else {
            assert!(lines >= 2, "{name}: {lines}");
        }
        // Gridlines only add: everything else is drawn exactly as before.
        hidden_changes_nothing_else(&plain, &gridded);
        // 1 px, and drawn before every mark they cross, so they stay under
        // the data (panels draw one panel after the other).
        let doc = roxmltree::Document::parse(&gridded).unwrap();
        let shapes: Vec<(bool, [f64; 4])> = doc
            .descendants()
            .filter_map(|n| {
                let colour = [n.attribute("stroke"), n.attribute("fill")]
                    .into_iter()
                    .flatten()
                    .find(|c| *c != "none");
                let grid = colour == Some(GRID);
                if grid {
                    assert_eq!(n.attribute("stroke-width"), Some("1"), "{name}");
                } else if ![Some(ACCENT), Some("#848484")].contains(&colour) {
                    return None;
                }
                Some((grid, bounds(&n)?))
            })
            .collect();
        assert!(shapes.iter().any(|s| !s.0), "{name}: marks found");
        for (i, (grid, g)) in shapes.iter().enumerate() {
            if !grid {
                continue;
            }
            for (_, m) in shapes[..i].iter().filter(|s| !s.0) {
                let apart = m[2] < g[0] || g[2] < m[0] || m[3] < g[1] || g[3] < m[1];
                assert!(apart, "{name}: a gridline {g:?} drawn over a mark {m:?}");
            }
        }
        dump(&format!("grid-{name}"), &gridded);
    }
}

/// The box of a polyline, rect or circle: `[x0, y0, x1, y1]`.
fn bounds(n: &roxmltree::Node) -> Option<[f64; 4]> {
    let num = |a: &str| n.attribute(a).and_then(|v| v.parse::<f64>().ok());
    match n.tag_name().name() {
        "polyline" | "polygon" => {
            let pts: Vec<(f64, f64)> = n
                .attribute("points")?
                .split_whitespace()
                .filter_map(|p| {
                    let (x, y) = p.split_once(',')?;
                    Some((x.parse().ok()?, y.parse().ok()?))
                })
                .collect();
            let xs = pts.iter().map(|p| p.0);
            let ys = pts.iter().map(|p| p.1);
            Some([
                xs.clone().fold(f64::INFINITY, f64::min),
                ys.clone().fold(f64::INFINITY, f64::min),
                xs.fold(f64::NEG_INFINITY, f64::max),
                ys.fold(f64::NEG_INFINITY, f64::max),
            ])
        }
        "rect" => {
            let (x, y) = (num("x")?, num("y")?);
            Some([x, y, x + num("width")?, y + num("height")?])
        }
        "circle" => {
            let (x, y, r) = (num("cx")?, num("cy")?, num("r")?);
            Some([x - r, y - r, x + r, y + r])
        }
        _ => None,
    }
}

/// Small multiples of bars, both ways: the panel drawer lays both out on
/// one band transform, and this picture holds every pixel of it.
#[test]
fn panels_of_bars_both_ways() {
    for (name, orientation) in [
        ("panels_bars_vertical", Orientation::Vertical),
        ("panels_bars_horizontal", Orientation::Horizontal),
    ] {
        let panels = ["North", "South", "East"]
            .iter()
            .enumerate()
            .map(|(i, n)| Panel {
                title: n.to_string(),
                role: if i == 1 { Role::Focus } else { Role::Context },
                chart: plain_bars(orientation),
            })
            .collect();
        let svg = render(Chart::Panels(PanelChart {
            key: "area".to_string(),
            common_scale: true,
            trimmed: false,
            panels,
        }));
        let boxes = check(&svg);
        assert!(has(&boxes, "E-books"), "{name}");
        insta::assert_snapshot!(name, svg);
    }
}

/// The bounding box of a frame's plots (`Part::Plot`): one rectangle, or
/// the cells of a split scatter together.
fn plot_box(list: &crate::DisplayList) -> crescendo_look::display::Rect {
    use crescendo_look::display::{Part, Rect};
    let plots = list.groups(|p| matches!(p, Part::Plot(_)));
    assert!(!plots.is_empty(), "no plot");
    (plots.iter())
        .filter_map(|(p, _)| match p {
            Part::Plot(r) => Some(*r),
            _ => None,
        })
        .fold(
            Rect {
                x0: f64::MAX,
                y0: f64::MAX,
                x1: f64::MIN,
                y1: f64::MIN,
            },
            |a, r| Rect {
                x0: a.x0.min(r.x0),
                y0: a.y0.min(r.y0),
                x1: a.x1.max(r.x1),
                y1: a.y1.max(r.y1),
            },
        )
}

/// A split scatter's cells subdivide the deck's plot rectangle: together
/// they span exactly the plot of a whole scatter and of vertical bars in
/// the same deck.
#[test]
fn a_split_scatter_subdivides_the_decks_plot() {
    let panels = ["North", "South", "East", "West"]
        .iter()
        .map(|n| Panel {
            title: n.to_string(),
            role: Role::Context,
            chart: scatter_of(false, 6),
        })
        .collect();
    let split = Chart::Panels(PanelChart {
        key: "area".to_string(),
        common_scale: true,
        trimmed: false,
        panels,
    });
    let frames: Vec<FramePlan> = [
        scatter_chart(false),
        split,
        plain_bars(Orientation::Vertical),
    ]
    .into_iter()
    .enumerate()
    .map(|(i, c)| FramePlan {
        number: i + 1,
        ..frame("A headline for the form", c)
    })
    .collect();
    let d = DeckPlan {
        title: "t".to_string(),
        byline: None,
        source: None,
        theme: "clear".to_string(),
        conclusion: None,
        accent: None,
        style: None,
        values: Default::default(),
        exact: Default::default(),
        claims: Vec::new(),
        frames: frames.clone(),
        locale: None,
        fiscal_start: None,
    };
    let boxes: Vec<_> = (frames.iter())
        .map(|f| plot_box(&crate::display_list(&d, f, None).unwrap()))
        .collect();
    for (i, b) in boxes.iter().enumerate() {
        let [p, q] = [b, &boxes[0]].map(|r| [r.x0, r.y0, r.x1, r.y1]);
        let same = p.iter().zip(q).all(|(a, b)| (a - b).abs() < 0.01);
        assert!(same, "frame {}: {b:?}, the deck's {:?}", i + 1, boxes[0]);
    }
}

/// A scatter's x tick label too wide for the plot is cut and noted
/// (`Part::Cut`) for the text-cut lint.
#[test]
fn a_cut_tick_label_is_noted() {
    use crescendo_look::display::Part;
    let Chart::Scatter(mut chart) = scatter_chart(false) else {
        unreachable!()
    };
    let long = "A tick label written far too long for any plot ".repeat(4);
    chart.x.ticks = vec![Tick {
        value: 50.0,
        label: long.clone(),
    }];
    let f = frame("A headline for the form", Chart::Scatter(chart));
    let d = DeckPlan {
        title: "t".to_string(),
        byline: None,
        source: None,
        theme: "clear".to_string(),
        conclusion: None,
        accent: None,
        style: None,
        values: Default::default(),
        exact: Default::default(),
        claims: Vec::new(),
        frames: vec![f.clone()],
        locale: None,
        fiscal_start: None,
    };
    let list = crate::display_list(&d, &f, None).unwrap();
    let cut: Vec<&str> = (list.groups(|p| matches!(p, Part::Cut { .. })).iter())
        .filter_map(|(p, _)| match p {
            Part::Cut { full } => Some(full.as_str()),
            _ => None,
        })
        .collect();
    assert_eq!(cut, [long.trim_end()]);
}
