//! Outside check on an open dataset: the Palmer penguins CSV (CC0; see
//! fixtures/README.md) loaded with `load_csv` and aggregated with `run_view`,
//! compared with numbers computed independently by
//! fixtures/make_penguins_expected.py (Python standard library only) and with
//! the values recorded in shared/refs/reference-values.md §8.

use std::path::PathBuf;

use crescendo_data::{
    load_csv, run_view, AggFn, Aggregate, CmpOp, ColType, CsvSpec, Expr, Step, Table, Value,
};
use serde_json::Value as Json;

fn fixture(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures")
        .join(name)
}

fn penguins() -> Table {
    let spec = CsvSpec {
        path: fixture("penguins.csv"),
        display_name: "penguins.csv".into(),
        declared: vec![],
        missing: vec![String::new(), "NA".into()],
        numbers: Default::default(),
    };
    load_csv(&spec).unwrap_or_else(|e| panic!("penguins.csv loads: {e}"))
}

fn expected() -> Json {
    let text = std::fs::read_to_string(fixture("penguins_expected.json")).expect("json fixture");
    serde_json::from_str(&text).expect("valid json")
}

fn col(t: &Table, name: &str) -> usize {
    t.columns
        .iter()
        .position(|c| c.name == name)
        .unwrap_or_else(|| panic!("no column {name}"))
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * a.abs().max(b.abs()).max(1.0)
}

const STATS: [(&str, AggFn); 8] = [
    ("count", AggFn::Count),
    ("sum", AggFn::Sum),
    ("mean", AggFn::Mean),
    ("median", AggFn::Median),
    ("min", AggFn::Min),
    ("max", AggFn::Max),
    ("first", AggFn::First),
    ("last", AggFn::Last),
];
const MEASURES: [&str; 2] = ["body_mass_g", "flipper_length_mm"];

/// Group by `keys` with: rows, then for each measure every statistic.
fn grouped(t: &Table, keys: &[&str]) -> Table {
    let mut aggregates = vec![Aggregate {
        name: "rows".into(),
        func: AggFn::Count,
        column: None,
    }];
    for m in MEASURES {
        for (s, func) in STATS {
            aggregates.push(Aggregate {
                name: format!("{m}.{s}"),
                func,
                column: Some(col(t, m)),
            });
        }
    }
    let keys = keys.iter().map(|k| col(t, k)).collect();
    run_view(t, &[Step::Group { keys, aggregates }])
}

fn check_against_json(out: &Table, groups: &Json, nkeys: usize) {
    let groups = groups.as_array().expect("array");
    let nrows = out.columns[0].values.len();
    assert_eq!(nrows, groups.len(), "number of groups");
    let mut checked = 0;
    for (r, g) in groups.iter().enumerate() {
        // Same groups in the same order (first appearance).
        let key: Vec<Value> = (0..nkeys).map(|k| out.columns[k].values.value(r)).collect();
        let want: Vec<Value> = g["key"]
            .as_array()
            .expect("key")
            .iter()
            .map(|k| Value::Text(k.as_str().expect("text key").to_owned()))
            .collect();
        assert_eq!(key, want);
        let rows = &out.columns[col(out, "rows")].values.value(r);
        assert_eq!(*rows, Value::Number(g["rows"].as_f64().expect("rows")));
        for m in MEASURES {
            for (s, _) in STATS {
                let got = &out.columns[col(out, &format!("{m}.{s}"))].values.value(r);
                let want = g[m][s].as_f64().expect("number in json");
                match got {
                    Value::Number(x) => {
                        assert!(close(*x, want), "{want:?} {m}.{s}: got {x}, want {want}")
                    }
                    other => panic!("{m}.{s} of group {r}: got {other:?}, want {want}"),
                }
                checked += 1;
            }
        }
    }
    assert_eq!(checked, groups.len() * 16);
}

#[test]
fn loads_with_expected_shape_and_types() {
    let t = penguins();
    let names: Vec<&str> = t.columns.iter().map(|c| c.name.as_str()).collect();
    // shared/refs §8: header columns in order.
    assert_eq!(
        names,
        [
            "species",
            "island",
            "bill_length_mm",
            "bill_depth_mm",
            "flipper_length_mm",
            "body_mass_g",
            "sex",
            "year"
        ]
    );
    let types: Vec<ColType> = t.columns.iter().map(|c| c.ty).collect();
    use ColType::{Number as N, Text as T};
    assert_eq!(types, [T, T, N, N, N, N, T, N]);
    // shared/refs §8: computed with Python csv, cross-checked with pandas.
    // 344 data rows; NA counts per column 2, 2, 2, 2 and 11 for sex.
    assert_eq!(t.columns[0].values.len(), 344);
    let missing = |name: &str| {
        t.columns[col(&t, name)]
            .values
            .iter()
            .filter(|v| *v == Value::Missing)
            .count()
    };
    assert_eq!(missing("sex"), 11);
    for m in [
        "bill_length_mm",
        "bill_depth_mm",
        "flipper_length_mm",
        "body_mass_g",
    ] {
        assert_eq!(missing(m), 2, "{m}");
    }
    assert_eq!(expected()["missing_sex"].as_u64(), Some(11));
    // shared/refs §8: data row 4 is missing every measurement.
    assert_eq!(
        t.columns[col(&t, "body_mass_g")].values.value(3),
        Value::Missing
    );
    assert_eq!(
        t.columns[col(&t, "year")].values.value(3),
        Value::Number(2007.0)
    );
}

#[test]
fn group_by_species_matches_python_statistics() {
    let t = penguins();
    let out = grouped(&t, &["species"]);
    check_against_json(&out, &expected()["by_species"], 1);

    // shared/refs §8: computed with Python csv, cross-checked with pandas.
    let at = |species: &str, column: &str| {
        let r = out.columns[0]
            .values
            .iter()
            .position(|v| v == Value::Text(species.into()))
            .expect("species present");
        match out.columns[col(&out, column)].values.value(r) {
            Value::Number(x) => x,
            ref other => panic!("{other:?}"),
        }
    };
    assert!((at("Adelie", "body_mass_g.mean") - 3700.6622516556).abs() < 1e-9);
    assert!((at("Gentoo", "body_mass_g.mean") - 5076.0162601626).abs() < 1e-9);
    assert!((at("Chinstrap", "body_mass_g.mean") - 3733.0882352941).abs() < 1e-9);
    assert!((at("Adelie", "flipper_length_mm.mean") - 189.9536423841).abs() < 1e-9);
    assert_eq!(at("Adelie", "rows"), 152.0);
    assert_eq!(at("Chinstrap", "rows"), 68.0);
    assert_eq!(at("Gentoo", "rows"), 124.0);
    assert_eq!(at("Adelie", "body_mass_g.count"), 151.0);
    assert_eq!(at("Gentoo", "body_mass_g.sum"), 624_350.0);
    assert_eq!(at("Gentoo", "body_mass_g.min"), 3950.0);
    assert_eq!(at("Gentoo", "body_mass_g.max"), 6300.0);
    assert_eq!(at("Chinstrap", "flipper_length_mm.sum"), 13_316.0);
}

#[test]
fn group_by_species_and_island_matches_python_statistics() {
    let t = penguins();
    let out = grouped(&t, &["species", "island"]);
    check_against_json(&out, &expected()["by_species_island"], 2);
    // shared/refs §8: species × island counts (computed with Python csv,
    // cross-checked with pandas): Adelie–Biscoe 44, Adelie–Dream 56,
    // Adelie–Torgersen 52, Chinstrap–Dream 68, Gentoo–Biscoe 124.
    let mut counts: Vec<(String, String, f64)> = (0..out.columns[0].values.len())
        .map(|r| {
            let s = |c: usize| match &out.columns[c].values.value(r) {
                Value::Text(s) => s.clone(),
                other => panic!("{other:?}"),
            };
            let Value::Number(n) = out.columns[2].values.value(r) else {
                panic!("rows is a number")
            };
            (s(0), s(1), n)
        })
        .collect();
    counts.sort_by(|a, b| (&a.0, &a.1).cmp(&(&b.0, &b.1)));
    let want = [
        ("Adelie", "Biscoe", 44.0),
        ("Adelie", "Dream", 56.0),
        ("Adelie", "Torgersen", 52.0),
        ("Chinstrap", "Dream", 68.0),
        ("Gentoo", "Biscoe", 124.0),
    ];
    assert_eq!(counts.len(), want.len());
    for (got, want) in counts.iter().zip(want) {
        assert_eq!((got.0.as_str(), got.1.as_str(), got.2), want);
    }
}

#[test]
fn missing_is_handled_per_column_not_per_row() {
    // shared/refs §8 (computed with Python csv, cross-checked with pandas):
    // complete-case mean body mass of Adelie is 3706.164384 (146 rows), while
    // the per-column mean is 3700.6622516556. Dropping rows with any missing
    // cell first (a Keep on every column) must give the complete-case value.
    let t = penguins();
    let present = |name: &str| {
        Box::new(Expr::Cmp(
            CmpOp::Eq,
            Box::new(Expr::Col(col(&t, name))),
            Box::new(Expr::Col(col(&t, name))),
        ))
    };
    // x = x is false exactly when x is missing.
    let complete = Expr::And(vec![
        *present("sex"),
        Expr::And(vec![*present("bill_length_mm"), *present("body_mass_g")]),
    ]);
    let out = run_view(
        &t,
        &[
            Step::Keep(complete),
            Step::Keep(Expr::Cmp(
                CmpOp::Eq,
                Box::new(Expr::Col(0)),
                Box::new(Expr::Lit(Value::Text("Adelie".into()))),
            )),
            Step::Group {
                keys: vec![],
                aggregates: vec![
                    Aggregate {
                        name: "n".into(),
                        func: AggFn::Count,
                        column: None,
                    },
                    Aggregate {
                        name: "mean".into(),
                        func: AggFn::Mean,
                        column: Some(5),
                    },
                ],
            },
        ],
    );
    assert_eq!(out.columns[0].values, vec![Value::Number(146.0)]);
    let Value::Number(mean) = out.columns[1].values.value(0) else {
        panic!("mean is a number")
    };
    assert!((mean - 3706.164384).abs() < 1e-6, "{mean}");
}

#[test]
fn keep_top_sort_on_penguins() {
    // Keep the 2008 and 2009 rows, group by island × species, keep the top
    // island by total body mass, fold the others per species, sort by total
    // mass descending. Expected rows: `keep_top_sort` in penguins_expected.json,
    // written out step by step in Python by make_penguins_expected.py.
    let t = penguins();
    let out = run_view(
        &t,
        &[
            Step::Keep(Expr::Cmp(
                CmpOp::Ge,
                Box::new(Expr::Col(col(&t, "year"))),
                Box::new(Expr::Lit(Value::Number(2008.0))),
            )),
            Step::Group {
                keys: vec![col(&t, "island"), col(&t, "species")],
                aggregates: vec![
                    Aggregate {
                        name: "mass".into(),
                        func: AggFn::Sum,
                        column: Some(col(&t, "body_mass_g")),
                    },
                    Aggregate {
                        name: "n".into(),
                        func: AggFn::Count,
                        column: None,
                    },
                ],
            },
            Step::Top {
                key: 0,
                by: 2,
                n: 1,
                rest: "Other islands".into(),
            },
            Step::Sort {
                keys: vec![(2, true)],
            },
        ],
    );
    let names: Vec<&str> = out.columns.iter().map(|c| c.name.as_str()).collect();
    assert_eq!(names, ["island", "species", "mass", "n"]);
    let want = expected()["keep_top_sort"].clone();
    let want = want.as_array().expect("array");
    assert_eq!(out.columns[0].values.len(), want.len());
    for (r, w) in want.iter().enumerate() {
        let text = |i: usize| Value::Text(w[i].as_str().expect("text").to_owned());
        let num = |i: usize| Value::Number(w[i].as_f64().expect("number"));
        let got: Vec<Value> = out.columns.iter().map(|c| c.values.value(r)).collect();
        assert_eq!(got, vec![text(0), text(1), num(2), num(3)], "row {r}");
    }
    // The JSON is not trivially shaped: two islands folded, one NA skipped.
    assert_eq!(want.len(), 4);
    assert_eq!(want[1][0].as_str(), Some("Other islands"));
}
