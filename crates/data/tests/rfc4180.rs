//! RFC 4180 conformance of `load_csv` on the tricky records of
//! shared/refs/reference-values.md §7.
//!
//! Every expected parse below comes from: RFC 4180 §2 (Shafranovich 2005), as
//! checked with Python 3.11 csv module in shared/refs §7. A header row is
//! prepended where the loader needs one (it always reads the first record as
//! the header).

mod common;

use common::{describe, load_err, load_ok, rows, text};
use crescendo_data::{load_csv, ColType, LoadError, Value};

#[test]
fn doubled_quote_inside_quoted_field() {
    // RFC 4180 §2 (Shafranovich 2005), as checked with Python 3.11 csv module in shared/refs §7, record 1.
    let t = load_ok(b"x,y,z\r\naaa,\"b\"\"bb\",ccc\r\n");
    assert_eq!(
        rows(&t),
        vec![vec![text("aaa"), text("b\"bb"), text("ccc")]]
    );
}

#[test]
fn quoted_crlf_and_comma_span_two_lines() {
    // RFC 4180 §2 (Shafranovich 2005), as checked with Python 3.11 csv module in shared/refs §7, record 2.
    let body = b"x,y,z\r\n\"aaa\",\"b\r\nb,b\",\"ccc\"\r\nzzz,yyy,xxx\r\n";
    let t = load_ok(body);
    assert_eq!(
        rows(&t),
        vec![
            vec![text("aaa"), text("b\r\nb,b"), text("ccc")],
            vec![text("zzz"), text("yyy"), text("xxx")],
        ]
    );
}

#[test]
fn line_numbers_count_the_physical_lines_of_a_multiline_record() {
    // Record 2 of shared/refs §7 (RFC 4180 §2, Shafranovich 2005, as checked
    // with Python 3.11 csv module) occupies lines 2-3; the next record is line 4,
    // so a ragged record after it is on line 5 and is data row 3.
    let body = b"x,y,z\r\n\"aaa\",\"b\r\nb,b\",\"ccc\"\r\nzzz,yyy,xxx\r\n1,2\r\n";
    let err = load_err("multi.csv", body, &[]);
    let LoadError::Csv(d) = &err else {
        panic!("expected a located error, got {}", describe(&err))
    };
    assert_eq!(d.code, "ragged-row");
    assert!(
        d.message
            .contains("row 3 has 2 fields, but the header has 3"),
        "{}",
        d.message
    );
    assert_eq!(d.location().map(|l| l.1), Some(5), "{}", describe(&err));
}

#[test]
fn multiline_record_is_the_excerpt_of_its_error() {
    // A declared-number error inside a record spanning lines 2-3 shows the
    // whole record, starting at line 2, with the caret on the offending field.
    let body = b"name,n\r\n\"two\r\nlines\",x1\r\n";
    let err = load_err("span.csv", body, &[("n", ColType::Number)]);
    let LoadError::Csv(d) = &err else {
        panic!("expected a located error, got {}", describe(&err))
    };
    let p = d.primary.as_ref().expect("primary location");
    assert_eq!(p.source.text, "\"two\r\nlines\",x1");
    assert_eq!(p.source.first_line, 2);
    assert_eq!(&p.source.text[p.span.clone()], "x1");
    assert_eq!(d.location(), Some(("span.csv".to_owned(), 3, 8)));
}

#[test]
fn spaces_are_data() {
    // RFC 4180 §2 (Shafranovich 2005), as checked with Python 3.11 csv module in shared/refs §7, record 3.
    let t = load_ok(b"x,y,z\r\naaa, bbb ,ccc\r\n");
    assert_eq!(
        rows(&t),
        vec![vec![text("aaa"), text(" bbb "), text("ccc")]]
    );
    // Consequence (our choice, documented in load.rs): " 12" is not a number,
    // so a column holding it is inferred as text.
    let t = load_ok(b"n\n 12\n3\n");
    assert_eq!(t.columns[0].ty, ColType::Text);
}

#[test]
fn empty_unquoted_and_empty_quoted_fields_are_both_empty() {
    // RFC 4180 §2 (Shafranovich 2005), as checked with Python 3.11 csv module in shared/refs §7, record 4.
    let body = b"p,q,r,s\r\na,,\"\",c\r\n";
    // With no missing tokens both are the empty text...
    let mut spec = common::spec_for("empty_fields.csv", body);
    spec.missing.clear();
    let t = load_csv(&spec).expect("loads");
    assert_eq!(
        rows(&t),
        vec![vec![text("a"), text(""), text(""), text("c")]]
    );
    // ...and with the default tokens ("" and NA) both are missing.
    let t = load_ok(body);
    assert_eq!(
        rows(&t),
        vec![vec![text("a"), Value::Missing, Value::Missing, text("c")]]
    );
}

#[test]
fn final_line_break_is_optional() {
    // RFC 4180 §2 (Shafranovich 2005), as checked with Python 3.11 csv module in shared/refs §7, record 5.
    let t = load_ok(b"h1,h2\r\n1,2");
    assert_eq!(t.columns[0].name, "h1");
    assert_eq!(t.columns[1].name, "h2");
    assert_eq!(rows(&t), vec![vec![Value::Number(1.0), Value::Number(2.0)]]);
}

#[test]
fn trailing_comma_is_an_extra_empty_field_so_the_row_is_ragged() {
    // RFC 4180 §2 (Shafranovich 2005), as checked with Python 3.11 csv module in shared/refs §7, record 6:
    // `a,b,c,` has 4 fields, the last empty; against a 3-field header it is ragged.
    let err = load_err("trailing.csv", b"x,y,z\r\na,b,c,\r\n", &[]);
    let out = describe(&err);
    assert_eq!(err.code(), "ragged-row", "{out}");
    assert!(
        out.contains("row 1 has 4 fields, but the header has 3"),
        "{out}"
    );
    assert!(out.contains("trailing.csv:2:"), "{out}");
    assert!(out.contains("comma at the end of a line"), "{out}");
    // Without a header to disagree with, the 4th field is simply empty.
    let t = load_ok(b"w,x,y,z\r\na,b,c,\r\n");
    assert_eq!(rows(&t)[0][3], Value::Missing);
}

#[test]
fn text_after_a_closing_quote_is_rejected() {
    // RFC 4180 §2 (Shafranovich 2005), as checked with Python 3.11 csv module in shared/refs §7, record 7:
    // invalid; Python strict mode raises "',' expected after '\"'". We reject too.
    let err = load_err("after_quote.csv", b"x,y\r\n\"abc\"d,e\r\n", &[]);
    let out = describe(&err);
    assert_eq!(err.code(), "bad-quote", "{out}");
    assert!(out.contains("row 1, field 1"), "{out}");
    assert!(out.contains("after_quote.csv:2:6"), "{out}");
    assert!(out.contains('^'), "{out}");
}

#[test]
fn bare_quote_in_unquoted_field_is_kept_as_data() {
    // RFC 4180 §2 (Shafranovich 2005), as checked with Python 3.11 csv module in shared/refs §7, record 8:
    // invalid under the grammar, but Python accepts it even in strict mode and
    // gives `aa"a`. Our deliberate choice (load.rs module docs): accept it the same way.
    let t = load_ok(b"x,y\r\naa\"a,b\r\n");
    assert_eq!(rows(&t), vec![vec![text("aa\"a"), text("b")]]);
}

#[test]
fn unterminated_quote_is_rejected_at_the_opening_quote() {
    // Our choice (not in shared/refs §7): a quote that never closes would
    // swallow the rest of the file, so it is an error pointing at the quote.
    let err = load_err("open.csv", b"x,y\n1,2\n3,\"4\n5,6\n", &[]);
    let out = describe(&err);
    assert_eq!(err.code(), "bad-quote", "{out}");
    assert!(
        out.contains("row 2, field 2: this quoted field is never closed"),
        "{out}"
    );
    assert!(out.contains("open.csv:3:3"), "{out}");
}

#[test]
fn lf_only_bom_and_blank_lines() {
    // Common relaxations outside the RFC (shared/refs §7): LF-only line ends
    // and UTF-8 text. A UTF-8 BOM is skipped (common practice of spreadsheet
    // exports); blank lines are skipped like the csv crate and Python do.
    let t = load_ok("\u{feff}city,n\nZürich,1\n\n\nOslo,2\n".as_bytes());
    assert_eq!(t.columns[0].name, "city");
    assert_eq!(
        rows(&t),
        vec![
            vec![text("Zürich"), Value::Number(1.0)],
            vec![text("Oslo"), Value::Number(2.0)],
        ]
    );
    // Line numbers still count the blank lines.
    let err = load_err("blank.csv", b"a,b\n1,2\n\n\n3\n", &[]);
    let LoadError::Csv(d) = &err else {
        panic!("{}", describe(&err))
    };
    assert_eq!(d.location().map(|l| l.1), Some(5), "{}", describe(&err));
    assert!(d.message.contains("row 2 has 1 field,"), "{}", d.message);
}

#[test]
fn crlf_inside_quotes_and_lone_lf_line_ends_mix() {
    // RFC 4180 §2 allows CR and LF inside quoted fields; a file using LF line
    // ends may still hold CRLF inside quotes (shared/refs §7, record 2 variant).
    let t = load_ok(b"a,b\n\"x\r\ny\",2\n");
    assert_eq!(rows(&t), vec![vec![text("x\r\ny"), Value::Number(2.0)]]);
}
