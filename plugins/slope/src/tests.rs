use super::*;
use crescendo_plugin::{Area, Cell, Column, Texts, ABI_VERSION};

fn text_col(name: &str, kind: &str, cells: &[&str]) -> Column {
    Column {
        name: name.into(),
        kind: kind.into(),
        cells: cells.iter().map(|c| Cell::Text(c.to_string())).collect(),
    }
}

fn request(periods: &[&str], names: &[&str], values: &[f64]) -> Request {
    let options = [
        ("category", "route"),
        ("value", "riders"),
        ("period", "year"),
    ]
    .iter()
    .map(|(k, v)| (k.to_string(), v.to_string()))
    .collect();
    Request {
        abi_version: ABI_VERSION,
        form: "slope".into(),
        options,
        columns: vec![
            text_col("route", "text", names),
            Column {
                name: "riders".into(),
                kind: "number".into(),
                cells: values.iter().map(|v| Cell::Number(*v)).collect(),
            },
            text_col("year", "year", periods),
        ],
        roles: BTreeMap::new(),
        hidden: vec![],
        texts: Texts::default(),
        area: Area {
            width: 600.0,
            height: 400.0,
        },
        label_size: 16.0,
        writing: Default::default(),
    }
}

fn sample() -> Request {
    request(
        &["2024", "2019", "2019", "2024", "2019", "2024"],
        &[
            "Harbour Loop",
            "Harbour Loop",
            "Hill Line",
            "Hill Line",
            "Canal",
            "Canal",
        ],
        &[9350.0, 4100.0, 2000.0, 1800.0, 3000.0, 3050.5],
    )
}

fn texts(d: &Drawing) -> Vec<(String, Role)> {
    d.primitives
        .iter()
        .filter_map(|p| match p {
            Primitive::Text { text, role, .. } => Some((text.clone(), *role)),
            _ => None,
        })
        .collect()
}

#[test]
fn draws_lines_labels_and_periods() {
    let mut r = sample();
    r.roles.insert("Harbour Loop".into(), Role::Focus);
    let d = slope(&r).unwrap();
    let t = texts(&d);
    assert!(
        t.contains(&("2019".into(), Role::Axis)) && t.contains(&("2024".into(), Role::Axis)),
        "{t:?}"
    );
    assert!(
        t.contains(&("Harbour Loop 4,100".into(), Role::Focus)),
        "{t:?}"
    );
    assert!(t.contains(&("9,350".into(), Role::Focus)), "{t:?}");
    assert!(t.contains(&("Canal 3,000".into(), Role::Context)), "{t:?}");
    assert!(t.contains(&("3,050.5".into(), Role::Context)), "{t:?}");
    let lines: Vec<Role> = d
        .primitives
        .iter()
        .filter_map(|p| match p {
            Primitive::Line { role, .. } if *role != Role::Axis => Some(*role),
            _ => None,
        })
        .collect();
    assert_eq!(lines, vec![Role::Context, Role::Context, Role::Focus]);
    assert_eq!(
        d.description.as_deref(),
        Some("Slope chart of route from 2019 to 2024, 3 items: Harbour Loop rose from 4,100 to 9,350. 2 rose, 1 fell.")
    );
}

#[test]
fn the_higher_value_is_drawn_higher_and_inside_the_area() {
    let d = slope(&sample()).unwrap();
    for p in &d.primitives {
        if let Primitive::Line {
            from,
            to,
            role: Role::Context,
        } = p
        {
            for q in [from, to] {
                assert!(
                    (0.0..=600.0).contains(&q.x) && (0.0..=400.0).contains(&q.y),
                    "{q:?}"
                );
            }
        }
    }
    // Harbour Loop rose most: its right end (9,350) is the top one.
    let ends: Vec<f64> = d
        .primitives
        .iter()
        .filter_map(|p| match p {
            Primitive::Line {
                to,
                role: Role::Context,
                ..
            } => Some(to.y),
            _ => None,
        })
        .collect();
    assert!(ends[0] < ends[1] && ends[0] < ends[2], "{ends:?}");
}

#[test]
fn hidden_items_keep_the_layout() {
    let all = slope(&sample()).unwrap();
    let mut r = sample();
    r.hidden.push("Hill Line".into());
    let some = slope(&r).unwrap();
    assert!(!texts(&some).iter().any(|(t, _)| t.starts_with("Hill Line")));
    // Every primitive of the smaller drawing is in the full one, unmoved.
    for p in &some.primitives {
        assert!(all.primitives.contains(p), "{p:?} moved");
    }
    assert!(some.description.unwrap().contains("2 items"));
}

#[test]
fn labels_do_not_overlap() {
    let d = slope(&request(
        &["2019", "2024", "2019", "2024", "2019", "2024"],
        &["A", "A", "B", "B", "C", "C"],
        &[100.0, 200.0, 100.5, 200.5, 101.0, 201.0],
    ))
    .unwrap();
    let mut left: Vec<f64> = d
        .primitives
        .iter()
        .filter_map(|p| match p {
            Primitive::Text {
                at,
                anchor: Anchor::End,
                ..
            } => Some(at.y),
            _ => None,
        })
        .collect();
    left.sort_by(f64::total_cmp);
    assert_eq!(left.len(), 3);
    assert!(
        left.windows(2)
            .all(|w| w[1] - w[0] >= (16.0f64 * 1.25).ceil() - 1e-9),
        "{left:?}"
    );
}

#[test]
fn refuses_other_than_two_periods() {
    let r = request(
        &["2019", "2020", "2024"],
        &["A", "A", "A"],
        &[1.0, 2.0, 3.0],
    );
    assert_eq!(
        slope(&r).unwrap_err(),
        "a slope chart needs exactly two periods in column `year`, but it holds 3: 2019, 2020, 2024"
    );
    let r = request(&["2019", "2019"], &["A", "B"], &[1.0, 2.0]);
    assert!(slope(&r).unwrap_err().contains("holds 1: 2019"));
    let mut r = sample();
    r.options.remove("period");
    assert!(slope(&r).unwrap_err().contains("needs the option `period`"));
}

#[test]
fn incomplete_items_are_left_out_and_named() {
    let r = request(
        &["2019", "2024", "2019"],
        &["A", "A", "B"],
        &[1.0, 2.0, 3.0],
    );
    let d = slope(&r).unwrap();
    assert!(d
        .description
        .unwrap()
        .ends_with("Left out: B (no value for 2024)."));
    let r = request(
        &["2019", "2019", "2024"],
        &["A", "A", "A"],
        &[1.0, 2.0, 3.0],
    );
    assert_eq!(
        slope(&r).unwrap_err(),
        "`A` has more than one value for 2019"
    );
}

#[test]
fn output_is_deterministic() {
    assert_eq!(slope(&sample()).unwrap(), slope(&sample()).unwrap());
}
