//! Tests of the display list: boxes, overlaps, groups and marks.

use super::*;

#[test]
fn overlap_is_strict() {
    let a = Rect {
        x0: 0.0,
        y0: 0.0,
        x1: 10.0,
        y1: 10.0,
    };
    let b = Rect { x0: 10.0, ..a };
    let c = Rect {
        x0: 5.0,
        y0: 5.0,
        x1: 20.0,
        y1: 20.0,
    };
    assert!(!a.overlaps(&b, 0.0));
    assert_eq!(a.overlap(&b), 0.0);
    assert!(a.overlaps(&c, 0.0));
    assert_eq!(a.overlap(&c), 25.0);
    assert!(!a.overlaps(&c, 6.0));
}

#[test]
fn segments_hit_rectangles() {
    let r = Rect {
        x0: 0.0,
        y0: 0.0,
        x1: 10.0,
        y1: 10.0,
    };
    assert!(r.hit_by((-5.0, 5.0), (15.0, 5.0)));
    assert!(!r.hit_by((-5.0, 15.0), (15.0, 15.0)));
    assert!(r.hit_by((5.0, 5.0), (6.0, 6.0)));
    assert!(!r.hit_by((11.0, -1.0), (20.0, 5.0)));
}

#[test]
fn text_boxes_follow_the_alignment() {
    let w = text_width("Pools", 16.0, false);
    let s = text_box("Pools", 100.0, 10.0, 16.0, false, Align::Start);
    let m = text_box("Pools", 100.0, 10.0, 16.0, false, Align::Middle);
    let e = text_box("Pools", 100.0, 10.0, 16.0, false, Align::End);
    assert_eq!((s.x0, s.x1), (100.0, 100.0 + w));
    assert_eq!((m.x0, m.x1), (100.0 - w / 2.0, 100.0 + w / 2.0));
    assert_eq!((e.x0, e.x1), (100.0 - w, 100.0));
    assert_eq!(s.y1 - s.y0, line_height(16.0));
}

#[test]
fn groups_are_found_and_flattened() {
    let text = |t: &str| {
        Item::Text(Text {
            text: t.into(),
            x: 0.0,
            top: 0.0,
            size: 16.0,
            bold: false,
            color: Rgb(0, 0, 0),
            align: Align::Start,
        })
    };
    let list = DisplayList {
        items: vec![
            Item::Group {
                part: Part::Headline { needed: 3 },
                items: vec![text("a"), text("b")],
            },
            Item::Group {
                part: Part::Chart,
                items: vec![Item::Group {
                    part: Part::XTicks { wanted: vec![1.0] },
                    items: vec![text("c")],
                }],
            },
        ],
        description: None,
    };
    let texts: Vec<&str> = list.texts().iter().map(|t| t.text.as_str()).collect();
    assert_eq!(texts, ["a", "b", "c"]);
    assert_eq!(list.groups(|p| matches!(p, Part::XTicks { .. })).len(), 1);
    assert_eq!(list.groups(|p| *p == Part::Headline { needed: 3 }).len(), 1);
    assert_eq!(list.groups(|p| matches!(p, Part::Source { .. })).len(), 0);
}

#[test]
fn marks_are_chart_fills_and_thick_lines_outside_tints() {
    let rect = |c: u8| Item::Rect {
        a: (0.0, 0.0),
        b: (1.0, 1.0),
        color: Rgb(c, c, c),
    };
    let line = |c: u8, width: u32| Item::Polyline {
        points: vec![(0.0, 0.0), (1.0, 1.0)],
        color: Rgb(c, c, c),
        width,
    };
    let list = DisplayList {
        items: vec![
            Item::Group {
                part: Part::Page,
                items: vec![rect(1)],
            },
            Item::Group {
                part: Part::Chart,
                items: vec![
                    Item::Group {
                        part: Part::Tint,
                        items: vec![rect(2)],
                    },
                    rect(3),
                    rect(3),
                    line(4, 1),
                    line(5, 2),
                ],
            },
        ],
        description: None,
    };
    let marks: Vec<(u8, bool)> = list.marks().iter().map(|m| (m.color.0, m.fill)).collect();
    assert_eq!(marks, [(3, true), (5, false)]);
}
