use super::*;
use crate::typed::{finish, TypedColumn};

fn spec(declared: Vec<(String, ColType)>) -> CsvSpec {
    CsvSpec {
        path: "t.parquet".into(),
        display_name: "t.parquet".into(),
        declared,
        missing: vec![String::new(), "NA".into()],
        numbers: Default::default(),
    }
}

fn texts(cells: &[Option<&str>]) -> Flat {
    let mut dict = Dict::default();
    let ids = cells
        .iter()
        .map(|c| c.and_then(|s| dict.intern(s)).unwrap_or(NO_TEXT))
        .collect();
    Flat::Texts(ids, dict)
}

/// The flat column, or `None` when typed cell by cell; checked
/// against the cell-by-cell typing of the same cells.
fn both(declared: Option<ColType>, keep: bool, flat: Flat) -> Option<String> {
    let declared: Vec<(String, ColType)> =
        declared.map(|t| ("c".to_string(), t)).into_iter().collect();
    let s = spec(declared);
    let cells = flat.typed();
    let slow = finish(
        &s,
        vec![TypedColumn {
            name: "c".into(),
            keep,
            cells,
        }],
        flat.len(),
        &|_, r| format!("row {r}"),
    );
    match flat_column(&s, ("c", keep), flat) {
        Ok(col) => {
            let slow = slow.expect("the cells convert");
            assert_eq!(format!("{col:?}"), format!("{:?}", slow.columns[0]));
            Some(format!("{:?} {:?}", col.ty, col.values))
        }
        Err(_) => None,
    }
}

#[test]
fn flat_columns_are_typed_as_cells_are() {
    let months = || {
        texts(&[
            Some("2024-01"),
            None,
            Some("NA"),
            Some("2024-01"),
            Some("2023-12"),
        ])
    };
    assert!(both(None, true, months()).unwrap().starts_with("Month"));
    assert!(both(Some(ColType::Month), false, months()).is_some());
    assert!(both(Some(ColType::Text), true, months()).is_some());
    // a missing-value token among texts is a missing cell
    let words = texts(&[Some("b"), Some("NA"), Some("a"), Some("b"), Some("")]);
    assert_eq!(
        both(None, true, words).unwrap(),
        r#"Text [Text("b"), Missing, Text("a"), Text("b"), Missing]"#
    );
    let numbers = texts(&[Some("1.5"), Some("-0"), None, Some("1.5")]);
    assert!(both(None, true, numbers).unwrap().starts_with("Number"));
    assert!(both(None, true, texts(&[None, Some("NA")])).is_some());
    // a text that is not of the declared type: typed cell by cell
    let bad = texts(&[Some("2024-01"), Some("soon")]);
    assert_eq!(both(Some(ColType::Date), true, bad), None);
    let n = |v: &[f64]| Flat::Numbers(v.to_vec());
    assert!(both(None, true, n(&[1.0, f64::NAN, -0.0])).is_some());
    assert!(both(None, true, n(&[f64::NAN]))
        .unwrap()
        .starts_with("Text"));
    assert_eq!(both(Some(ColType::Year), true, n(&[2024.0])), None);
    let d = |v: &[i32]| Flat::Dates(v.to_vec());
    assert!(both(Some(ColType::Month), true, d(&[0, NO_TIME, 45])).is_some());
    assert!(both(None, true, d(&[3, NO_TIME]))
        .unwrap()
        .starts_with("Date"));
    assert_eq!(both(Some(ColType::Number), true, d(&[3])), None);
}
