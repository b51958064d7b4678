//! Whole-frame tests: snapshots, bounds and overlap checks over synthetic
//! plans, determinism, escaping, sequence stability and the HTML deck.

use crate::inspect::{canvas_size, text_boxes, TextBox};
use crate::{render_deck_html, render_frame};
use crescendo_frame::*;

fn axis(title: Option<&str>, scale: ScaleKind, domain: [f64; 2], ticks: &[(f64, &str)]) -> Axis {
    Axis {
        title: title.map(str::to_string),
        scale,
        domain,
        ticks: ticks
            .iter()
            .map(|(v, l)| Tick {
                value: *v,
                label: l.to_string(),
            })
            .collect(),
        grid: false,
    }
}

fn series(name: &str, role: Role, ys: &[Option<f64>]) -> Series {
    Series {
        name: name.to_string(),
        label: name.to_string(),
        role,
        points: ys
            .iter()
            .enumerate()
            .map(|(i, y)| Point {
                x: 2015.0 + i as f64,
                y: *y,
            })
            .collect(),
        end_values: Vec::new(),
    }
}

fn year_axis() -> Axis {
    axis(
        None,
        ScaleKind::Years,
        [2015.0, 2024.0],
        &[
            (2015.0, "2015"),
            (2018.0, "2018"),
            (2021.0, "2021"),
            (2024.0, "2024"),
        ],
    )
}

fn pct_axis() -> Axis {
    axis(
        Some("Households with a heat pump (%)"),
        ScaleKind::Linear,
        [0.0, 40.0],
        &[
            (0.0, "0"),
            (10.0, "10"),
            (20.0, "20"),
            (30.0, "30"),
            (40.0, "40"),
        ],
    )
}

fn frame(
    number: usize,
    sequence: usize,
    headline: &str,
    takeaway: Option<&str>,
    chart: Chart,
) -> FramePlan {
    FramePlan {
        number,
        slug: format!("frame-{number}"),
        sequence,
        headline: headline.to_string(),
        takeaway: takeaway.map(str::to_string),
        notes: Some("Pause here & ask: <who> saw this coming?".to_string()),
        source: Some("Source: invented survey of 4,000 households, 2015–2024".to_string()),
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

fn deck(frames: Vec<FramePlan>) -> DeckPlan {
    DeckPlan {
        title: "Heat at home".to_string(),
        theme: "clear".to_string(),
        frames,
        ..Default::default()
    }
}

fn line_chart() -> Chart {
    let f = |v: f64| Some(v);
    Chart::Line(LineChart {
        annotations: Vec::new(),
        end_labels: false,
        x: year_axis(),
        y: pct_axis(),
        series: vec![
            series(
                "Coastal",
                Role::Context,
                &[
                    f(4.0),
                    f(5.0),
                    f(6.5),
                    f(8.0),
                    f(9.0),
                    f(11.0),
                    f(12.5),
                    f(14.0),
                    f(15.0),
                    f(16.0),
                ],
            ),
            series(
                "Uplands",
                Role::Focus,
                &[
                    f(2.0),
                    f(3.0),
                    f(4.5),
                    f(7.0),
                    f(10.0),
                    f(14.0),
                    f(19.0),
                    f(24.0),
                    f(29.0),
                    f(34.0),
                ],
            ),
            series(
                "Valley",
                Role::Context,
                &[
                    f(6.0),
                    f(6.5),
                    f(7.0),
                    None,
                    f(8.0),
                    f(9.0),
                    f(10.0),
                    f(11.0),
                    f(12.0),
                    f(13.0),
                ],
            ),
            series(
                "Islands",
                Role::Hidden,
                &[
                    f(1.0),
                    f(1.0),
                    f(2.0),
                    f(2.0),
                    f(3.0),
                    f(3.0),
                    f(4.0),
                    f(5.0),
                    f(6.0),
                    f(7.0),
                ],
            ),
        ],
    })
}

fn bar(label: &str, value: f64, role: Role) -> Bar {
    Bar {
        label: label.to_string(),
        value: Some(value),
        value_label: format!("{value}"),
        role,
    }
}

fn bar_chart(orientation: Orientation) -> Chart {
    Chart::Bars(BarChart {
        orientation,
        category_title: Some("Depot".to_string()),
        value: axis(
            Some("Parcels delivered late (thousands)"),
            ScaleKind::Linear,
            [0.0, 60.0],
            &[(0.0, "0"), (20.0, "20"), (40.0, "40"), (60.0, "60")],
        ),
        bars: vec![
            bar("Harbourside", 52.0, Role::Focus),
            bar("Old Mill Road", 38.0, Role::Context),
            bar("Airport cargo park", 31.0, Role::Context),
            bar("Riverside", 24.0, Role::Hidden),
            bar("Northgate", 12.0, Role::Context),
        ],
    })
}

/// Every check the look requires of a rendered SVG; returns the text boxes.
fn check(svg: &str) -> Vec<TextBox> {
    let doc = roxmltree::Document::parse(svg).expect("SVG must be well-formed XML");
    assert_eq!(canvas_size(svg).unwrap(), (1280.0, 720.0));
    for node in doc.descendants().filter(|n| n.is_element()) {
        assert!(node.attribute("transform").is_none(), "nothing is rotated");
        if node.has_tag_name("rect") {
            let w: f64 = node.attribute("width").unwrap().parse().unwrap();
            let h: f64 = node.attribute("height").unwrap().parse().unwrap();
            assert!(w < 1280.0 && h < 720.0, "no background or border rect");
            assert_eq!(
                node.attribute("stroke"),
                Some("none"),
                "bars have no outline"
            );
        }
        if node.has_tag_name("text") {
            let size: f64 = node.attribute("font-size").unwrap().parse().unwrap();
            assert!(size >= 14.0, "text under 14px: {size}");
            assert_eq!(
                node.attribute("font-family"),
                Some("DejaVu Sans, Helvetica, Arial, sans-serif")
            );
        }
    }
    let boxes = text_boxes(svg).unwrap();
    for b in &boxes {
        assert!(
            b.x0 >= 0.0 && b.y0 >= 0.0 && b.x1 <= 1280.0 && b.y1 <= 720.0,
            "text outside the canvas: {b:?}"
        );
    }
    for (i, a) in boxes.iter().enumerate() {
        for b in &boxes[i + 1..] {
            assert!(!a.overlaps(b, 0.0), "texts overlap:\n  {a:?}\n  {b:?}");
        }
    }
    boxes
}

fn texts(boxes: &[TextBox]) -> Vec<&str> {
    boxes.iter().map(|b| b.text.as_str()).collect()
}

fn elements<'a>(doc: &'a roxmltree::Document<'a>, tag: &str) -> Vec<roxmltree::Node<'a, 'a>> {
    doc.descendants().filter(|n| n.has_tag_name(tag)).collect()
}

#[test]
fn line_frame_snapshot_and_look() {
    let f = frame(
        1,
        1,
        "Uplands overtook every other region",
        Some("Heat pumps in the uplands went from 2% to 34% of homes in ten years."),
        line_chart(),
    );
    let d = deck(vec![f.clone()]);
    let svg = render_frame(&d, &f).unwrap();
    let boxes = check(&svg);
    let t = texts(&boxes);
    for want in [
        "Uplands overtook every other region",
        "Coastal",
        "Uplands",
        "Valley",
        "2015",
        "2024",
        "40",
        "Households with a heat pump (%)",
    ] {
        assert!(t.contains(&want), "missing {want}: {t:?}");
    }
    assert!(!t.contains(&"Islands"), "hidden series is not labelled");

    let doc = roxmltree::Document::parse(&svg).unwrap();
    let lines = elements(&doc, "polyline");
    let grey = lines
        .iter()
        .filter(|n| n.attribute("stroke") == Some("#848484"))
        .count();
    let accent: Vec<_> = lines
        .iter()
        .filter(|n| n.attribute("stroke") == Some("#8E3005"))
        .collect();
    assert_eq!(
        grey, 3,
        "Coastal plus Valley broken in two by its missing value"
    );
    assert_eq!(accent.len(), 1);
    assert_eq!(accent[0].attribute("stroke-width"), Some("4"));
    assert!(elements(&doc, "circle").is_empty(), "no point markers");
    // Focus is drawn after (on top of) the context lines.
    let last_line = lines
        .iter()
        .rev()
        .find(|n| n.attribute("stroke") != Some("#C8C8C8"))
        .unwrap();
    assert_eq!(last_line.attribute("stroke"), Some("#8E3005"));
    // Sizes on screen are the intended ones.
    let sizes: std::collections::BTreeSet<&str> = elements(&doc, "text")
        .iter()
        .filter_map(|n| n.attribute("font-size"))
        .collect();
    assert_eq!(
        sizes.into_iter().collect::<Vec<_>>(),
        vec!["16", "20", "24", "36"]
    );
    // Direct labels sit to the right of every line.
    let uplands = boxes.iter().find(|b| b.text == "Uplands").unwrap();
    let tick_2024 = boxes.iter().find(|b| b.text == "2024").unwrap();
    assert!(uplands.x0 > tick_2024.x1);
    insta::assert_snapshot!("line_frame", svg);
}

#[test]
fn horizontal_bar_snapshot_and_look() {
    let f = frame(
        2,
        2,
        "Harbourside runs late most often",
        None,
        bar_chart(Orientation::Horizontal),
    );
    let d = deck(vec![f.clone()]);
    let svg = render_frame(&d, &f).unwrap();
    let boxes = check(&svg);
    let t = texts(&boxes);
    assert!(t.contains(&"52"), "focus bar carries its value");
    assert!(!t.contains(&"38"), "context bars do not");
    assert!(
        t.contains(&"Riverside"),
        "hidden bar keeps its slot and label"
    );
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let rects = elements(&doc, "rect");
    assert_eq!(rects.len(), 4, "hidden bar leaves its slot empty");
    assert_eq!(
        rects
            .iter()
            .filter(|r| r.attribute("fill") == Some("#8E3005"))
            .count(),
        1
    );
    // Category labels are right-aligned left of the bars.
    let harbour = boxes.iter().find(|b| b.text == "Harbourside").unwrap();
    let north = boxes.iter().find(|b| b.text == "Northgate").unwrap();
    assert!((harbour.x1 - north.x1).abs() < 1e-9);
    let bar_left: f64 = rects[0].attribute("x").unwrap().parse().unwrap();
    assert!(harbour.x1 < bar_left);
    insta::assert_snapshot!("horizontal_bar_frame", svg);
}

#[test]
fn vertical_bar_snapshot_and_look() {
    let f = frame(
        3,
        3,
        "Harbourside runs late most often",
        Some("Twice the late parcels of Northgate's four."),
        bar_chart(Orientation::Vertical),
    );
    let d = deck(vec![f.clone()]);
    let svg = render_frame(&d, &f).unwrap();
    let boxes = check(&svg);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let rects = elements(&doc, "rect");
    assert_eq!(rects.len(), 4);
    // Bars start at zero: all bottoms sit on one line.
    let bottoms: Vec<i64> = rects
        .iter()
        .map(|r| {
            r.attribute("y").unwrap().parse::<i64>().unwrap()
                + r.attribute("height").unwrap().parse::<i64>().unwrap()
        })
        .collect();
    assert!(bottoms.windows(2).all(|w| w[0] == w[1]), "{bottoms:?}");
    // The focus value sits above its bar.
    let value = boxes.iter().find(|b| b.text == "52").unwrap();
    let top: f64 = rects[0].attribute("y").unwrap().parse().unwrap();
    assert!(value.y1 <= top);
    insta::assert_snapshot!("vertical_bar_frame", svg);
}

#[test]
fn output_is_deterministic() {
    let f = frame(1, 1, "Same in, same out", None, line_chart());
    let d = deck(vec![f.clone()]);
    assert_eq!(render_frame(&d, &f).unwrap(), render_frame(&d, &f).unwrap());
}

#[test]
fn plan_text_is_escaped() {
    let headline = r#"Sales <b> & "profit" 'up'"#;
    let f = frame(1, 1, headline, None, bar_chart(Orientation::Vertical));
    let d = deck(vec![f.clone()]);
    let svg = render_frame(&d, &f).unwrap();
    assert!(
        svg.contains("Sales &lt;b&gt; &amp; &quot;profit&quot; &apos;up&apos;"),
        "{svg}"
    );
    let boxes = check(&svg);
    assert_eq!(boxes[0].text, headline);
}

// XML 1.0 (Fifth Edition) §2.2 `Char`: C0 controls other than tab, line
// feed and carriage return, U+FFFE and U+FFFF cannot appear in a document.
#[test]
fn characters_xml_cannot_carry_never_reach_the_svg() {
    let bad = "\u{0}\u{1}\u{8}\u{B}\u{C}\u{E}\u{1B}\u{1F}\u{FFFE}\u{FFFF}";
    let mut chart = bar_chart(Orientation::Horizontal);
    if let Chart::Bars(b) = &mut chart {
        b.bars[0].label = format!("Harbour{bad}side");
        b.bars[0].value_label = format!("52{bad}");
    }
    let mut f = frame(
        1,
        1,
        &format!("Sales{bad} rose"),
        Some(&format!("Up{bad}")),
        chart,
    );
    f.description = format!("Bars{bad}");
    f.source = Some(format!("Survey{bad}"));
    let d = deck(vec![f.clone()]);
    let svg = render_frame(&d, &f).unwrap();
    roxmltree::Document::parse(&svg).expect("a well-formed SVG");
    assert!(!svg.chars().any(|c| !crate::svg::xml_char(c)));
    assert!(svg.contains("Harbour\u{FFFD}"), "{svg}");
    // the display list keeps the text as planned; only the writer substitutes
    let list = crate::display_list(&d, &f, None).unwrap();
    assert!(list
        .texts()
        .iter()
        .any(|t| t.text.starts_with("Sales\u{0}")));
}

#[test]
fn unknown_theme_is_an_error() {
    let f = frame(1, 1, "x", None, line_chart());
    let mut d = deck(vec![f.clone()]);
    d.theme = "sunset".to_string();
    let e = render_frame(&d, &f).unwrap_err();
    assert!(e.to_string().contains("sunset"), "{e}");
}

#[test]
fn non_finite_domain_is_an_error() {
    let mut chart = line_chart();
    if let Chart::Line(l) = &mut chart {
        l.y.domain = [0.0, f64::NAN];
    }
    let f = frame(1, 1, "x", None, chart);
    assert!(render_frame(&deck(vec![f.clone()]), &f).is_err());
}

#[test]
fn long_headline_and_takeaway_wrap_and_stay_inside() {
    let long = "Across every one of the eleven regions we surveyed, the share of homes heated by a heat pump rose faster in the last three years than in the seven years before, and the uplands led by a wide margin in every single year";
    let f = frame(1, 1, long, Some(long), line_chart());
    let svg = render_frame(&deck(vec![f.clone()]), &f).unwrap();
    let boxes = check(&svg);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let big = elements(&doc, "text")
        .iter()
        .filter(|n| n.attribute("font-size") == Some("36"))
        .count();
    let medium = elements(&doc, "text")
        .iter()
        .filter(|n| n.attribute("font-size") == Some("24"))
        .count();
    assert_eq!((big, medium), (2, 2));
    assert!(boxes[1].text.ends_with('\u{2026}'));
}

#[test]
fn many_series_with_close_ends_do_not_collide() {
    let names = [
        "Alder", "Birch", "Cedar", "Damson", "Elm", "Fir", "Ginkgo", "Hazel", "Juniper", "Larch",
    ];
    let series: Vec<Series> = names
        .iter()
        .enumerate()
        .map(|(i, n)| {
            let end = 20.0 + i as f64 * 0.2;
            let role = match i {
                3 => Role::Focus,
                7 => Role::Hidden,
                _ => Role::Context,
            };
            let ys: Vec<Option<f64>> = (0..10)
                .map(|k| Some(10.0 + k as f64 * (end - 10.0) / 9.0))
                .collect();
            super::tests::series(n, role, &ys)
        })
        .collect();
    let chart = Chart::Line(LineChart {
        annotations: Vec::new(),
        end_labels: false,
        x: year_axis(),
        y: pct_axis(),
        series,
    });
    let f = frame(1, 1, "Ten species, one story", None, chart);
    let boxes = check(&render_frame(&deck(vec![f.clone()]), &f).unwrap());
    assert_eq!(
        boxes
            .iter()
            .filter(|b| names.contains(&b.text.as_str()))
            .count(),
        9
    );
}

#[test]
fn labels_at_the_extremes_stay_in_the_plot() {
    let f = |v: f64| Some(v);
    let chart = Chart::Line(LineChart {
        annotations: Vec::new(),
        end_labels: false,
        x: year_axis(),
        y: pct_axis(),
        series: vec![
            series("Top one", Role::Focus, &[f(40.0), f(40.0)]),
            series("Top two", Role::Context, &[f(39.9), f(40.0)]),
            series("Floor one", Role::Context, &[f(0.0), f(0.0)]),
            series("Floor two", Role::Context, &[f(0.1), f(0.0)]),
            series("Gone", Role::Context, &[None, None]),
        ],
    });
    let fr = frame(1, 1, "Extremes", None, chart);
    let boxes = check(&render_frame(&deck(vec![fr.clone()]), &fr).unwrap());
    assert!(
        !texts(&boxes).contains(&"Gone"),
        "a series with no values has no label"
    );
}

#[test]
fn long_and_many_categories_and_negative_bars() {
    let cats = [
        ("Community health outreach programme", 14.0),
        ("Rural broadband vouchers", -6.5),
        (
            "Apprenticeships in green construction and retrofit trades",
            22.0,
        ),
        ("School meals", -12.0),
        ("Flood defences", 3.0),
        ("Libraries and reading rooms open late", 8.0),
        ("Bus routes", -2.0),
        ("Small business grants for high streets", 17.5),
    ];
    for orientation in [Orientation::Vertical, Orientation::Horizontal] {
        let bars: Vec<Bar> = cats
            .iter()
            .enumerate()
            .map(|(i, (l, v))| Bar {
                label: l.to_string(),
                value: Some(*v),
                value_label: format!("{v:+}"),
                role: if i % 3 == 0 {
                    Role::Focus
                } else {
                    Role::Context
                },
            })
            .collect();
        let chart = Chart::Bars(BarChart {
            orientation,
            category_title: Some("Programme".to_string()),
            value: axis(
                Some("Change in spending (£m)"),
                ScaleKind::Linear,
                [-15.0, 25.0],
                &[(-10.0, "−10"), (0.0, "0"), (10.0, "10"), (20.0, "20")],
            ),
            bars,
        });
        let f = frame(
            1,
            1,
            "Three programmes lost money",
            Some("Cuts fell on school meals, broadband and buses."),
            chart,
        );
        let svg = render_frame(&deck(vec![f.clone()]), &f).unwrap();
        let boxes = check(&svg);
        assert!(
            texts(&boxes).contains(&"-12"),
            "{orientation:?}: negative focus value shown"
        );
    }
}

#[test]
fn crowded_horizontal_categories_never_collide() {
    let bars: Vec<Bar> = (0..40)
        .map(|i| {
            bar(
                &format!("Site {i}"),
                f64::from(i),
                if i == 39 { Role::Focus } else { Role::Context },
            )
        })
        .collect();
    let chart = Chart::Bars(BarChart {
        orientation: Orientation::Horizontal,
        category_title: None,
        value: axis(
            None,
            ScaleKind::Linear,
            [0.0, 40.0],
            &[(0.0, "0"), (20.0, "20"), (40.0, "40")],
        ),
        bars,
    });
    let f = frame(1, 1, "Forty sites", None, chart);
    let boxes = check(&render_frame(&deck(vec![f.clone()]), &f).unwrap());
    assert!(texts(&boxes).contains(&"Site 0"));
}

#[test]
fn positive_domain_still_starts_at_zero() {
    let mut chart = bar_chart(Orientation::Vertical);
    if let Chart::Bars(b) = &mut chart {
        b.value.domain = [10.0, 60.0]; // a plan bug; bars must still start at 0
    }
    let f = frame(1, 1, "Zero", None, chart);
    let svg = render_frame(&deck(vec![f.clone()]), &f).unwrap();
    check(&svg);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let rects = elements(&doc, "rect");
    let h = |i: usize| {
        rects[i]
            .attribute("height")
            .unwrap()
            .parse::<f64>()
            .unwrap()
    };
    // 52 vs 12: heights proportional to the values, from zero.
    assert!(
        (h(0) / h(3) - 52.0 / 12.0).abs() < 0.15,
        "{} {}",
        h(0),
        h(3)
    );
}

#[test]
fn bare_frames_render() {
    let empty_line = Chart::Line(LineChart {
        annotations: Vec::new(),
        end_labels: false,
        x: axis(None, ScaleKind::Linear, [0.0, 1.0], &[]),
        y: axis(None, ScaleKind::Linear, [0.0, 0.0], &[]),
        series: vec![],
    });
    let empty_bars = Chart::Bars(BarChart {
        orientation: Orientation::Horizontal,
        category_title: None,
        value: axis(None, ScaleKind::Linear, [0.0, 0.0], &[]),
        bars: vec![],
    });
    for chart in [empty_line, empty_bars] {
        let mut f = frame(1, 1, "", None, chart);
        f.source = None;
        check(&render_frame(&deck(vec![f.clone()]), &f).unwrap());
    }
}

/// Numbers of the elements that must not move between frames of a sequence.
fn skeleton(svg: &str) -> Vec<String> {
    let doc = roxmltree::Document::parse(svg).unwrap();
    let mut out = Vec::new();
    for n in doc.descendants().filter(|n| n.is_element()) {
        let is_baseline = n.attribute("stroke") == Some("#C8C8C8");
        let is_tick = n.has_tag_name("text")
            && n.attribute("font-size") == Some("16")
            && n.attribute("fill") == Some("#5A5A5A");
        if is_baseline || is_tick {
            let attrs: Vec<String> = n
                .attributes()
                .map(|a| format!("{}={}", a.name(), a.value()))
                .collect();
            out.push(format!(
                "{} {} {}",
                n.tag_name().name(),
                attrs.join(" "),
                n.text().unwrap_or("").trim()
            ));
        }
    }
    out
}

#[test]
fn axes_do_not_move_within_a_sequence() {
    let mut first_chart = line_chart();
    if let Chart::Line(l) = &mut first_chart {
        for s in &mut l.series {
            s.role = if s.name == "Coastal" {
                Role::Context
            } else {
                Role::Hidden
            };
        }
    }
    let first = frame(1, 1, "Coastal homes led at first", None, first_chart);
    let second = frame(
        2,
        1,
        "Then the uplands overtook every other region by a wide margin, year after year, until nobody else came close at all",
        Some("Heat pumps in the uplands went from 2% to 34% of homes."),
        line_chart(),
    );
    let d = deck(vec![first.clone(), second.clone()]);
    let a = render_frame(&d, &first).unwrap();
    let b = render_frame(&d, &second).unwrap();
    check(&a);
    check(&b);
    assert_ne!(a, b);
    assert_eq!(skeleton(&a), skeleton(&b));
    assert!(!skeleton(&a).is_empty());
    // The visible label keeps its place too.
    let pos = |svg: &str| {
        text_boxes(svg)
            .unwrap()
            .into_iter()
            .find(|t| t.text == "Coastal")
            .map(|t| (t.x0, t.y0))
    };
    assert_eq!(pos(&a), pos(&b));
    // Rendered alone, the short frame would place its chart higher: the
    // deck's grid really is what holds it still.
    let theme = crate::theme::CLEAR;
    let region = |d: &DeckPlan| {
        crate::layout::draw_page(&crate::canvas::Canvas::new(), &theme, d, &first).unwrap()
    };
    assert!(region(&deck(vec![first.clone()])).top < region(&d).top);
}

#[test]
fn deck_html_is_self_contained_and_navigable() {
    let f1 = frame(1, 1, "First <one>", None, line_chart());
    let mut f2 = frame(
        2,
        2,
        "Second & last",
        None,
        bar_chart(Orientation::Vertical),
    );
    f2.notes = None;
    let mut d = deck(vec![f1.clone(), f2.clone()]);
    d.title = "Heat \"at\" home <2024>".to_string();
    let s1 = render_frame(&d, &f1).unwrap();
    let s2 = render_frame(&d, &f2).unwrap();
    let html = render_deck_html(&d, &[(&f1, &s1), (&f2, &s2)]);
    assert_eq!(html, render_deck_html(&d, &[(&f1, &s1), (&f2, &s2)]));
    assert!(html.starts_with("<!DOCTYPE html>"));
    assert!(html.contains("<title>Heat &quot;at&quot; home &lt;2024&gt;</title>"));
    assert_eq!(html.matches("<section ").count(), 2);
    assert!(html.contains("aria-label=\"First &lt;one&gt;\""));
    assert!(html.contains("aria-label=\"Second &amp; last\""));
    assert!(html.contains("class=\"frame current\" id=\"frame-1\""));
    assert!(html.contains("class=\"frame\" id=\"frame-2\""));
    assert!(html.contains("Pause here &amp; ask: &lt;who&gt; saw this coming?"));
    assert_eq!(html.matches("<aside class=\"talk\"").count(), 1);
    // the notes' switch, its state and the counter have names of our own
    for ours in ["class=\"talk-switch\"", "'talk-shown'", "class=\"where\""] {
        assert!(html.contains(ours), "{ours}");
    }
    assert!(html.contains(">1 / 2</div>"));
    for key in [
        "ArrowRight",
        "PageDown",
        "' '",
        "ArrowLeft",
        "PageUp",
        "Home",
        "End",
        "'n'",
        "location.hash",
        "replaceState",
        "innerWidth/2",
    ] {
        assert!(html.contains(key), "{key}");
    }
    // No network access: the only URL is the SVG namespace.
    let without_ns = html.replace("http://www.w3.org/2000/svg", "");
    for bad in ["http:", "https:", "src=", "<link", "@import", "url("] {
        assert!(!without_ns.contains(bad), "{bad}");
    }
    // Every inline SVG is intact.
    for part in html.split("<svg ").skip(1) {
        let end = part.find("</svg>").unwrap();
        let svg = format!("<svg {}</svg>", &part[..end]);
        check(&svg);
    }
}

/// The text between `<tag>` and `</tag>` (the first such element).
fn inline(html: &str, tag: &str) -> String {
    let open = format!("<{tag}>");
    let start = html.find(&open).unwrap() + open.len();
    let end = html[start..].find(&format!("</{tag}>")).unwrap();
    html[start..start + end].to_string()
}

/// `'sha256-…'` of a text, computed here independently with the `sha2`
/// and `base64` crates (CSP Level 2 hash sources, W3C).
fn sha256_source(text: &str) -> String {
    use base64::Engine as _;
    use sha2::Digest as _;
    let d = sha2::Sha256::digest(text.as_bytes());
    format!(
        "'sha256-{}'",
        base64::engine::general_purpose::STANDARD.encode(d)
    )
}

#[test]
fn deck_html_allows_only_its_own_script_and_style() {
    let f1 = frame(1, 1, "First", None, line_chart());
    let d = deck(vec![f1.clone()]);
    let s1 = render_frame(&d, &f1).unwrap();
    let html = render_deck_html(&d, &[(&f1, &s1)]);
    let meta = "<meta http-equiv=\"Content-Security-Policy\" content=\"";
    let start = html.find(meta).unwrap() + meta.len();
    let policy = &html[start..start + html[start..].find('"').unwrap()];
    assert_eq!(
        policy,
        format!(
            "default-src 'none'; script-src {}; style-src {}; img-src data:; font-src data:; base-uri 'none'; form-action 'none'",
            sha256_source(&inline(&html, "script")),
            sha256_source(&inline(&html, "style"))
        )
    );
    // the policy comes before anything it governs
    assert!(start < html.find("<style>").unwrap());
    // a served deck adds its reload script and may call its own server
    let served = crate::with_extra_script(&html, "reload()");
    assert!(served.contains(&format!(
        "script-src {} {}",
        sha256_source("reload()"),
        sha256_source(&inline(&html, "script"))
    )));
    assert!(served.contains("connect-src 'self'"));
    assert!(served.ends_with("<script>reload()</script>\n</body>\n</html>\n"));
}

#[test]
fn empty_deck_html() {
    let d = deck(vec![]);
    let html = render_deck_html(&d, &[]);
    assert!(html.contains(">0 / 0</div>"));
    assert!(!html.contains("<section"));
}

// One grid for the deck: frames of different sequences, one with a
// two-line headline and a takeaway, one with neither, get the same chart
// region and the same tick gutter, so the plot does not jump.
#[test]
fn one_grid_for_every_frame_of_the_deck() {
    let d = deck(vec![
        frame(
            1,
            1,
            "A much longer headline that has to wrap onto a second line at this size, surely",
            Some("A takeaway under it"),
            line_chart(),
        ),
        frame(2, 2, "Short", None, bar_chart(Orientation::Vertical)),
    ]);
    let theme = crate::theme::effective(&d).unwrap();
    let regions: Vec<crate::layout::Region> = d
        .frames
        .iter()
        .map(|f| crate::layout::draw_page(&crate::canvas::Canvas::new(), &theme, &d, f).unwrap())
        .collect();
    assert_eq!(regions[0], regions[1]);
    // the widest vertical tick label of the deck ("40" of the bars or the
    // line's labels) sets the gutter of both
    assert!(regions[0].gutter > 0.0);
    assert_eq!(regions[0].tick_column(1.0), regions[0].gutter.max(1.0));
    assert_eq!(regions[0].tick_column(0.0), 0.0);
}

// One plot rectangle: a line chart, vertical bars with two titles and
// long names, and horizontal bars keep different rooms above and below
// their plots, yet all three plots share all four edges.
#[test]
fn every_chart_form_of_a_deck_draws_on_one_plot_rectangle() {
    use crescendo_look::display::Part;
    let d = deck(vec![
        frame(1, 1, "Lines", Some("A takeaway"), line_chart()),
        frame(2, 2, "Upright", None, bar_chart(Orientation::Vertical)),
        frame(3, 3, "Lying", None, bar_chart(Orientation::Horizontal)),
    ]);
    let plots: Vec<crescendo_look::display::Rect> = (d.frames.iter())
        .map(|f| {
            let list = crate::display_list(&d, f, None).unwrap();
            match list.groups(|p| matches!(p, Part::Plot(_))).as_slice() {
                [(Part::Plot(r), _)] => *r,
                other => panic!("frame {}: {} plots", f.number, other.len()),
            }
        })
        .collect();
    for r in &plots[1..] {
        assert_eq!(*r, plots[0]);
    }
    // the upright bars' names and category title (the most room below)
    // lift the line chart's plot bottom above where its own ticks need
    let line_alone = deck(vec![frame(1, 1, "Lines", Some("A takeaway"), line_chart())]);
    let list = crate::display_list(&line_alone, &line_alone.frames[0], None).unwrap();
    let [(Part::Plot(alone), _)] = list.groups(|p| matches!(p, Part::Plot(_))).as_slice() else {
        panic!("one plot");
    };
    assert!(alone.y1 > plots[0].y1 + 10.0, "{alone:?} {:?}", plots[0]);
}

// Names of bands, reference lines, moments and series and callouts on a
// line chart that must be cut to their room are noted (`Part::Cut`) for the text-cut lint; names
// that fit are not.
#[test]
fn cut_annotation_names_on_a_line_chart_are_noted() {
    use crescendo_frame::Annotation;
    use crescendo_look::display::Part;
    let long = "A name far too long for any room on this chart, going on and on \
                about what happened in these years and why it matters to the reader";
    let Chart::Line(mut chart) = line_chart() else {
        unreachable!()
    };
    chart.annotations = vec![
        Annotation::Band {
            from: 2016.0,
            to: 2017.0,
            text: Some(format!("Band: {long}")),
        },
        Annotation::Reference {
            value: 30.0,
            text: format!("Line: {long}"),
        },
        Annotation::Moment {
            from: 2020.0,
            to: None,
            text: format!("Moment: {long}"),
        },
        Annotation::Reference {
            value: 5.0,
            text: "Short".to_string(),
        },
        Annotation::Callout {
            x: 2018.0,
            y: 8.0,
            text: format!("Callout: {long} {long}"),
        },
    ];
    chart.series[0].label = format!("Series: {long}");
    let d = deck(vec![frame(1, 1, "Notes", None, Chart::Line(chart))]);
    let list = crate::display_list(&d, &d.frames[0], None).unwrap();
    let mut cut: Vec<String> = list
        .groups(|p| matches!(p, Part::Cut { .. }))
        .into_iter()
        .filter_map(|(p, _)| match p {
            Part::Cut { full } => Some(full.split(':').next().unwrap_or("").to_string()),
            _ => None,
        })
        .collect();
    cut.sort();
    assert_eq!(cut, ["Band", "Callout", "Line", "Moment", "Series"]);
}

// A callout on a line's peak with another line peaking right above it:
// the leader runs where it crosses no other line (not up through the
// other peak's vertex), and the text is drawn.
#[test]
fn a_line_callout_leader_crosses_no_other_line() {
    use crescendo_frame::Annotation;
    use crescendo_look::display::Item;
    let peak = |top: f64, base: f64| -> Vec<Option<f64>> {
        (0..10)
            .map(|i| Some(if i == 5 { top } else { base }))
            .collect()
    };
    let chart = Chart::Line(LineChart {
        annotations: vec![Annotation::Callout {
            x: 2020.0,
            y: 25.0,
            text: "A summer campaign began".to_string(),
        }],
        end_labels: false,
        x: year_axis(),
        y: pct_axis(),
        series: vec![
            series("Focus", Role::Focus, &peak(25.0, 20.0)),
            series("Other", Role::Context, &peak(31.0, 25.0)),
        ],
    });
    let d = deck(vec![frame(1, 1, "Peaks", None, chart)]);
    let list = crate::display_list(&d, &d.frames[0], None).unwrap();
    let items = list.flat();
    let data: Vec<&Vec<(f64, f64)>> = (items.iter())
        .filter_map(|i| match i {
            Item::Polyline { points, width, .. } if *width >= 2 && points.len() > 2 => Some(points),
            _ => None,
        })
        .collect();
    assert_eq!(data.len(), 2);
    // the callout's point: the focus line's vertex at 2020
    let p = data
        .iter()
        .map(|d| d[5])
        .fold((0.0, f64::MIN), |a, b| if b.1 > a.1 { b } else { a });
    let leaders: Vec<((f64, f64), (f64, f64))> = (items.iter())
        .filter_map(|i| match i {
            Item::Polyline {
                points, width: 1, ..
            } if points.len() == 2 => Some((points[0], points[1])),
            _ => None,
        })
        .filter(|(a, _)| (a.0 - p.0).hypot(a.1 - p.1) < 6.0)
        .collect();
    assert_eq!(leaders.len(), 1, "{leaders:?}");
    let (a, b) = leaders[0];
    let side = |s: (f64, f64), t: (f64, f64), q: (f64, f64)| {
        (t.0 - s.0) * (q.1 - s.1) - (t.1 - s.1) * (q.0 - s.0)
    };
    for w in data.iter().flat_map(|d| d.windows(2)) {
        let (s, t) = (w[0], w[1]);
        let apart = side(s, t, a) * side(s, t, b) >= 0.0 || side(a, b, s) * side(a, b, t) > 0.0;
        assert!(apart, "leader {a:?}-{b:?} crosses {s:?}-{t:?}");
    }
    let texts: Vec<&str> = (items.iter())
        .filter_map(|i| match i {
            Item::Text(t) => Some(t.text.as_str()),
            _ => None,
        })
        .collect();
    assert!(texts.contains(&"A summer campaign began"), "{texts:?}");
}

// A draft notice or a claim in the footnote cut to its room is noted for
// the lint; a claim that fits and the line counting the claims left out
// are not.
#[test]
fn a_cut_notice_or_footnote_claim_is_noted() {
    use crescendo_look::display::Part;
    let long = format!("Holds: {}", "the claim goes on and on ".repeat(12));
    let mut f = frame(1, 1, "Claims", None, line_chart());
    f.claim_notes = vec![
        long.clone(),
        "Holds: short".to_string(),
        "Holds: a".to_string(),
        "Fails: b".to_string(),
    ];
    let notice = format!("Draft: {}", "a claim no longer holds ".repeat(6));
    f.notices = vec![notice.clone()];
    let d = deck(vec![f]);
    let list = crate::display_list(&d, &d.frames[0], None).unwrap();
    let cut: Vec<&str> = (list.groups(|p| matches!(p, Part::Cut { .. })).iter())
        .filter_map(|(p, _)| match p {
            Part::Cut { full } => Some(full.as_str()),
            _ => None,
        })
        .collect();
    assert_eq!(cut, [notice.trim_end(), long.trim_end()]);
}

// The opening frame shows the title, byline and source; the closing frame
// the conclusion; both are counted with the chart frames, escaped, and
// left out when asked.
#[test]
fn deck_html_opens_and_closes_with_frames_of_its_own() {
    let f1 = frame(1, 1, "First", None, line_chart());
    let mut d = deck(vec![f1.clone()]);
    d.byline = Some("Housing team <east>".into());
    d.source = Some("Invented survey".into());
    d.conclusion = Some("Fund the uplands & coast".into());
    let s1 = render_frame(&d, &f1).unwrap();
    let html = crate::render_deck_html_with(&d, &[(&f1, &s1)], true);
    assert_eq!(html.matches("<section ").count(), 3);
    assert!(html.contains("class=\"frame bookend current\" id=\"frame-1\""));
    assert!(html.contains("<p class=\"byline\">Housing team &lt;east&gt;</p>"));
    assert!(html.contains("<p class=\"origin\">Invented survey</p>"));
    assert!(html.contains("id=\"frame-3\""));
    assert!(html.contains("<p class=\"closing-line\">Fund the uplands &amp; coast</p>"));
    assert!(html.contains(">1 / 3</div>"));
    // no conclusion, no closing frame; switched off, neither
    d.conclusion = None;
    let html = crate::render_deck_html_with(&d, &[(&f1, &s1)], true);
    assert_eq!(html.matches("<section ").count(), 2);
    let bare = crate::render_deck_html_with(&d, &[(&f1, &s1)], false);
    assert_eq!(bare, render_deck_html(&d, &[(&f1, &s1)]));
    assert_eq!(bare.matches("<section ").count(), 1);
}

/// The deck's interface without the frames' pictures, its stylesheet and
/// script: what a reader hears and reads around the frames.
fn interface(html: &str) -> String {
    let mut out = String::new();
    let mut rest = html;
    while let Some(start) = rest.find("<svg ") {
        out.push_str(&rest[..start]);
        let end = rest[start..].find("</svg>").unwrap() + start + "</svg>".len();
        out.push_str("<svg …/>");
        rest = &rest[end..];
    }
    out.push_str(rest);
    for tag in ["style", "script"] {
        let body = inline(&out, tag);
        out = out.replace(&body, "…");
    }
    out.lines()
        .filter(|l| !l.contains("Content-Security-Policy"))
        .collect::<Vec<_>>()
        .join("\n")
}

// The deck's own words follow the story's locale in the four languages
// descriptions are written in; the page stays one file under the same
// policy (its own script and style by hash); a language without words
// gets English ones marked as English.
#[test]
fn deck_interface_speaks_the_story_language() {
    let f1 = frame(1, 1, "First", None, line_chart());
    let mut d = deck(vec![f1.clone()]);
    d.conclusion = Some("Fund the coast".into());
    let s1 = render_frame(&d, &f1).unwrap();
    for (locale, button) in [
        (None, ">Notes</button>"),
        (Some("de-DE"), ">Notizen</button>"),
        (Some("fr-FR"), ">Notes</button>"),
        (Some("es-ES"), ">Notas</button>"),
    ] {
        d.locale = locale.map(str::to_string);
        let html = crate::render_deck_html_with(&d, &[(&f1, &s1)], true);
        assert!(html.contains(button), "{locale:?}");
        assert!(
            !html.contains("lang=\"en\"><"),
            "{locale:?}: words of its own"
        );
        let meta = "<meta http-equiv=\"Content-Security-Policy\" content=\"";
        let start = html.find(meta).unwrap() + meta.len();
        let policy = &html[start..start + html[start..].find('"').unwrap()];
        assert!(policy.contains(&sha256_source(&inline(&html, "script"))));
        assert!(policy.contains(&sha256_source(&inline(&html, "style"))));
        let name = format!("deck_interface_{}", locale.unwrap_or("en"));
        insta::assert_snapshot!(name, interface(&html));
    }
    d.locale = Some("ja-JP".into());
    let html = crate::render_deck_html_with(&d, &[(&f1, &s1)], true);
    assert!(html.contains("<html lang=\"ja-JP\">"));
    assert!(html.contains("<div class=\"controls\" lang=\"en\"><button"));
    assert!(html.contains(">Notes</button>"));
}
