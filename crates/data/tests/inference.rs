//! Column type inference and declared types in `load_csv`.

mod common;

use common::{load_ok, rows, spec_for, text};
use crescendo_data::{load_csv, time, ColType, Value};

#[test]
fn infers_month_date_number_and_text() {
    let t = load_ok(
        b"m,d,n,s,y,mixed\n\
          2024-01,2024-01-31,1.5,a,2019,2024-01\n\
          2024-02,2024-02-29,-2e3,b,2020,2024-02-01\n\
          NA,,7,,NA,NA\n",
    );
    let types: Vec<ColType> = t.columns.iter().map(|c| c.ty).collect();
    assert_eq!(
        types,
        [
            ColType::Month,
            ColType::Date,
            ColType::Number,
            ColType::Text,
            ColType::Number, // year is never inferred
            ColType::Text,   // month and date mixed
        ]
    );
    let r = rows(&t);
    assert_eq!(r[0][0], Value::Month(2024 * 12));
    assert_eq!(r[1][1], Value::Date(time::days_from_civil(2024, 2, 29)));
    assert_eq!(r[1][2], Value::Number(-2000.0));
    assert_eq!(r[0][4], Value::Number(2019.0));
    // Missing cells are Missing in every type, never zero.
    assert!(r[2][..2].iter().all(|v| *v == Value::Missing));
    assert_eq!(r[2][3], Value::Missing);
    assert_eq!(r[1][5], text("2024-02-01"));
}

#[test]
fn numbers_reject_inf_nan_hex_and_separators() {
    for bad in ["inf", "NaN", "0x10", "1,000", "1_000", "12%", "$3"] {
        let body = format!("v\n1\n\"{bad}\"\n");
        let t = load_ok(body.as_bytes());
        assert_eq!(t.columns[0].ty, ColType::Text, "{bad}");
        assert_eq!(rows(&t)[1][0], text(bad));
    }
}

#[test]
fn all_missing_column_is_text() {
    let t = load_ok(b"a,b\n1,NA\n2,\n");
    assert_eq!(t.columns[1].ty, ColType::Text);
    assert_eq!(t.columns[1].values, vec![Value::Missing, Value::Missing]);
}

#[test]
fn declared_types_override_inference() {
    let mut spec = spec_for("decl.csv", b"year,code,v\n2019,007,1\n2020,NA,2\n");
    spec.declared = vec![
        ("year".into(), ColType::Year),
        ("code".into(), ColType::Text),
    ];
    let t = load_csv(&spec).expect("loads");
    assert_eq!(t.columns[0].ty, ColType::Year);
    assert_eq!(
        t.columns[0].values,
        vec![Value::Year(2019), Value::Year(2020)]
    );
    // A declared text column keeps its exact text (leading zeros included).
    assert_eq!(t.columns[1].ty, ColType::Text);
    assert_eq!(t.columns[1].values, vec![text("007"), Value::Missing]);
    assert_eq!(t.columns[2].ty, ColType::Number);
}

#[test]
fn custom_missing_tokens() {
    let mut spec = spec_for("tok.csv", b"v\n1\n-\nNA\n");
    spec.missing = vec!["-".into()];
    let t = load_csv(&spec).expect("loads");
    // "NA" is not a missing token here, so the column is text.
    assert_eq!(t.columns[0].ty, ColType::Text);
    assert_eq!(
        t.columns[0].values,
        vec![text("1"), Value::Missing, text("NA")]
    );
}

#[test]
fn many_rows_stream_through_the_raw_buffer() {
    // Larger than the loader's raw-text window, so records cross buffer and
    // drain boundaries; the last row's values and a late error's line must be exact.
    let mut body = String::from("i,x\n");
    for i in 0..20_000 {
        body.push_str(&format!("{i},\"v,{i}\"\n"));
    }
    let t = load_ok(body.as_bytes());
    assert_eq!(t.columns[0].values.len(), 20_000);
    assert_eq!(t.columns[0].values.value(19_999), Value::Number(19_999.0));
    assert_eq!(t.columns[1].values.value(19_999), text("v,19999"));

    body.push_str("oops\n");
    let err = common::load_err("big.csv", body.as_bytes(), &[]);
    let crescendo_data::LoadError::Csv(d) = &err else {
        panic!("{}", common::describe(&err))
    };
    assert_eq!(d.location().map(|l| l.1), Some(20_002));
    let p = d.primary.as_ref().expect("located");
    assert_eq!(p.source.text, "oops");
}
