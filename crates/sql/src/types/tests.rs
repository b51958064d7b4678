use super::*;

#[test]
fn natural_and_declared_types() {
    assert_eq!(map("text", None), Ok((ColType::Text, Read::Text)));
    assert_eq!(map("numeric", None), Ok((ColType::Number, Read::Exact)));
    assert_eq!(map("float8", None), Ok((ColType::Number, Read::Float)));
    assert_eq!(map("int4", None), Ok((ColType::Number, Read::Exact)));
    assert_eq!(map("date", None), Ok((ColType::Date, Read::DateOfDate)));
    assert_eq!(
        map("date", Some(ColType::Month)),
        Ok((ColType::Month, Read::MonthOfDate))
    );
    assert_eq!(
        map("varchar", Some(ColType::Month)),
        Ok((ColType::Month, Read::Text))
    );
    assert_eq!(
        map("int8", Some(ColType::Year)),
        Ok((ColType::Year, Read::Year))
    );
    assert_eq!(
        map("int8", Some(ColType::Text)),
        Ok((ColType::Text, Read::Text))
    );
    let e = map("jsonb", None).unwrap_err();
    assert!(e.contains("`jsonb`"), "{e}");
    let e = map("numeric", Some(ColType::Year)).unwrap_err();
    assert!(
        e.contains("declared year") && e.contains("`numeric`"),
        "{e}"
    );
    let e = map("text", Some(ColType::Number)).unwrap_err();
    assert!(e.contains("declared number"), "{e}");
    assert!(map("timestamptz", None)
        .unwrap_err()
        .contains("timestamp with time zone"));
}

#[test]
fn expressions_quote_names() {
    let c = SrcColumn {
        name: "we\"ird".into(),
        ty: ColType::Month,
        read: Read::MonthOfDate,
    };
    assert_eq!(c.expr(), "to_char(\"we\"\"ird\", 'YYYY-MM')");
}
