//! `load_csv` on bad input: every failure is a clear, located error, never a
//! panic and never a silently wrong table.

mod common;

use common::{describe, load_err, spec_for};
use crescendo_data::load::{load_file, ReadLimits};
use crescendo_data::{load_csv, ColType, Columns, CsvSpec, LoadError, Table};

#[test]
fn missing_file_is_a_story_error_naming_the_file() {
    let spec = CsvSpec {
        path: common::temp_dir("missing").join("nope.csv"),
        display_name: "data/nope.csv".into(),
        declared: vec![],
        missing: vec![],
        numbers: Default::default(),
    };
    match load_csv(&spec) {
        Err(LoadError::Story {
            code,
            message,
            declared,
            ..
        }) => {
            assert_eq!(code, "data-file");
            assert_eq!(
                message,
                "cannot read data file `data/nope.csv`: no such file"
            );
            assert_eq!(declared, None);
        }
        other => panic!("expected a data-file error, got {other:?}"),
    }
}

#[test]
fn a_directory_is_not_readable_data() {
    let spec = CsvSpec {
        path: common::temp_dir("dir"),
        display_name: "folder".into(),
        declared: vec![],
        missing: vec![],
        numbers: Default::default(),
    };
    let err = load_csv(&spec).expect_err("a directory is not a CSV file");
    assert_eq!(err.code(), "data-file");
    assert!(
        err.to_string()
            .starts_with("cannot read data file `folder`: "),
        "{err}"
    );
    assert!(!err.to_string().contains("os error"), "{err}");
}

#[test]
fn empty_file_and_header_only_file() {
    for (body, what) in [
        (&b""[..], "is empty"),
        (&b"\r\n\n"[..], "is empty"),
        (&b"\xEF\xBB\xBF"[..], "is empty"),
        (&b"a,b\n"[..], "has a header but no data rows"),
        (&b"a,b"[..], "has a header but no data rows"),
    ] {
        let err = load_csv(&spec_for("e.csv", body)).expect_err("no data");
        match &err {
            LoadError::Story { code, message, .. } => {
                assert_eq!(*code, "empty-data");
                assert_eq!(message, &format!("data file `e.csv` {what}"), "{body:?}");
            }
            other => panic!("expected empty-data for {body:?}, got {other:?}"),
        }
    }
}

#[test]
fn ragged_row_shows_file_line_and_caret() {
    let body = b"city,month,riders\nOslo,2024-01,10\nBergen,2024-01\nOslo,2024-02,12\n";
    let err = load_err("riders.csv", body, &[]);
    let out = describe(&err);
    assert_eq!(err.code(), "ragged-row", "{out}");
    assert!(
        out.contains("row 2 has 2 fields, but the header has 3"),
        "{out}"
    );
    assert!(out.contains("riders.csv:3:15"), "{out}");
    assert!(out.contains("Bergen,2024-01"), "{out}");
    assert!(out.contains('^'), "{out}");
    assert!(out.contains("expected 3 fields, found 2"), "{out}");

    // Too many fields: the caret covers the extra ones.
    let err = load_err("wide.csv", b"a,b\n1,2\n3,4,5,6\n", &[]);
    let LoadError::Csv(d) = &err else {
        panic!("{}", describe(&err))
    };
    let p = d.primary.as_ref().expect("located");
    assert_eq!(&p.source.text[p.span.clone()], "5,6");
    assert_eq!(d.location(), Some(("wide.csv".into(), 3, 5)));
}

#[test]
fn declared_number_holding_text_names_the_first_offending_row() {
    let mut body = String::from("station,riders\n");
    for i in 1..=20 {
        let cell = match i {
            14 => "n/a".to_owned(),
            17 => "unknown".to_owned(),
            7 => "NA".to_owned(), // a missing token, fine
            _ => format!("{}", i * 10),
        };
        body.push_str(&format!("s{i},{cell}\n"));
    }
    let err = load_err(
        "counts.csv",
        body.as_bytes(),
        &[("riders", ColType::Number)],
    );
    let out = describe(&err);
    assert_eq!(err.code(), "bad-value", "{out}");
    assert!(
        out.contains("column `riders` is declared number, but row 14 holds `n/a`"),
        "{out}"
    );
    // Row 14 is on line 15 (line 1 is the header); the field starts at column 5.
    assert!(out.contains("counts.csv:15:5"), "{out}");
    assert!(out.contains("s14,n/a"), "{out}");
    assert!(out.contains("^^^"), "{out}");
    assert!(
        out.contains("declare `riders` as text, or add `n/a`"),
        "{out}"
    );
}

#[test]
fn declared_time_and_year_columns_reject_bad_cells() {
    for (ty, cell, label) in [
        (ColType::Date, "2024-02-30", "not a date (YYYY-MM-DD)"),
        (
            ColType::Month,
            "2024-7",
            "not a month (YYYY-MM, or a date YYYY-MM-DD)",
        ),
        (ColType::Year, "24", "not a year (YYYY)"),
        (ColType::Number, "1,5", "not a number"),
    ] {
        let body = format!("k,v\na,\"{cell}\"\n");
        let err = load_err("t.csv", body.as_bytes(), &[("v", ty)]);
        let out = describe(&err);
        assert_eq!(err.code(), "bad-value", "{out}");
        assert!(
            out.contains(&format!(
                "is declared {}, but row 1 holds `{cell}`",
                ty.name()
            )),
            "{out}"
        );
        assert!(out.contains(label), "{out}");
    }
}

#[test]
fn number_with_spaces_gets_a_specific_hint() {
    let err = load_err("sp.csv", b"k,v\na, 12\n", &[("v", ColType::Number)]);
    let out = describe(&err);
    assert!(out.contains("row 1 holds ` 12`"), "{out}");
    assert!(out.contains("remove the spaces around `12`"), "{out}");
}

#[test]
fn declared_column_not_in_header_suggests_the_closest() {
    let err = load_err(
        "r.csv",
        b"station,month,riders\nA,2024-01,1\n",
        &[("month", ColType::Month), ("rider", ColType::Number)],
    );
    match err {
        LoadError::Story {
            code,
            message,
            help,
            declared,
        } => {
            assert_eq!(code, "unknown-column");
            assert_eq!(declared, Some(1));
            assert!(
                message.contains("column `rider` is not in the header of `r.csv`"),
                "{message}"
            );
            assert!(
                message.contains("`station`, `month`, `riders`"),
                "{message}"
            );
            assert_eq!(help.as_deref(), Some("did you mean `riders`?"));
        }
        other => panic!("expected unknown-column, got {other:?}"),
    }
    // Nothing close: no suggestion.
    let err = load_err("r.csv", b"a,b\n1,2\n", &[("population", ColType::Number)]);
    assert!(
        matches!(
            err,
            LoadError::Story {
                help: None,
                declared: Some(0),
                ..
            }
        ),
        "{err:?}"
    );
}

#[test]
fn duplicate_and_empty_header_names_are_located_on_the_header() {
    let err = load_err("dup.csv", b"a,b,a\n1,2,3\n", &[]);
    let out = describe(&err);
    assert_eq!(err.code(), "bad-header", "{out}");
    assert!(
        out.contains("column `a` appears twice in the header"),
        "{out}"
    );
    assert!(out.contains("dup.csv:1:5"), "{out}");

    let err = load_err("noname.csv", b"a,,c\n1,2,3\n", &[]);
    let out = describe(&err);
    assert_eq!(err.code(), "bad-header", "{out}");
    assert!(out.contains("header field 2 has no name"), "{out}");
    assert!(out.contains("noname.csv:1:3"), "{out}");
}

#[test]
fn invalid_utf8_is_located() {
    let err = load_err("latin1.csv", b"city,n\nZ\xFCrich,1\n", &[]);
    let out = describe(&err);
    assert_eq!(err.code(), "bad-encoding", "{out}");
    assert!(
        out.contains("row 1, column `city` is not valid UTF-8"),
        "{out}"
    );
    assert!(out.contains("latin1.csv:2:1"), "{out}");
}

#[test]
fn hostile_inputs_fail_cleanly_or_load() {
    // Each input either loads or fails with a specific, located error.
    let cases: [(&[u8], Result<usize, &str>); 8] = [
        (b"\"", Err("bad-quote")),
        (b"\"\"\"", Err("bad-quote")),
        (b",\n,\n", Err("bad-header")),
        (b"a\n\"", Err("bad-quote")),
        (b"\xFF\xFEa\x00", Err("bad-encoding")),
        (b"a\r\r\r\"\r", Err("bad-quote")),
        (b"\"a\"\"\nb\",c\n1,2", Ok(2)),
        (b"a,b\n\"\",\"\"\"\"\n", Ok(2)),
    ];
    for (body, want) in cases {
        let got = load_csv(&spec_for("g.csv", body))
            .map(|t| t.columns.len())
            .map_err(|e| e.code());
        assert_eq!(got, want, "{body:?}");
    }
    // The quoted header name keeps its quote and line break.
    let t = load_csv(&spec_for("h.csv", b"\"a\"\"\nb\",c\n1,2")).expect("loads");
    assert_eq!(t.columns[0].name, "a\"\nb");
}

/// Load with limits through an opened file, as the planner does.
#[allow(clippy::result_large_err)] // LoadError holds a Diagnostic, as the crate specifies
fn load_limited(name: &str, bytes: &[u8], limits: &ReadLimits) -> Result<Table, LoadError> {
    let spec = spec_for(name, bytes);
    let file = std::fs::File::open(&spec.path).expect("open");
    load_file(&spec, &file, &Columns::All, limits)
}

#[test]
fn control_characters_in_cells_are_located_and_shown_as_pictures() {
    // XML 1.0 (W3C, fifth edition, section 2.2 "Characters"): Char is #x9,
    // #xA, #xD, #x20-#xD7FF, #xE000-#xFFFD, #x10000-#x10FFFF; an SVG holding
    // anything else is not XML.
    for (bytes, code_point, line) in [
        (&b"name,n\nA\x01B,1\n"[..], "U+0001", 2),
        (&b"name,n\nok,1\n\"x\x0b\",2\n"[..], "U+000B", 3),
        (&b"name,n\nok,1\nnull\x00,2\n"[..], "U+0000", 3),
        (&b"name,n\n\x1b[2J,1\n"[..], "U+001B", 2),
        ("name,n\nA\u{FFFE},1\n".as_bytes(), "U+FFFE", 2),
        ("name,n\nA\u{FFFF},1\n".as_bytes(), "U+FFFF", 2),
        (&b"na\x07me,n\nA,1\n"[..], "U+0007", 1),
    ] {
        let err = load_limited("ctl.csv", bytes, &ReadLimits::none()).expect_err("refused");
        assert_eq!(err.code(), "bad-character", "{err}");
        let text = describe(&err);
        assert!(text.contains(code_point), "{text}");
        assert!(text.contains(&format!("ctl.csv:{line}:")), "{text}");
        // the excerpt shows a picture of the character, never the raw byte
        assert!(
            !text.chars().any(|c| c.is_control() && c != '\n'),
            "{text:?}"
        );
    }
    // tab, line breaks in quotes, and DEL (allowed in XML) are data
    let t = load_limited(
        "ok.csv",
        b"name,n\n\"a\tb\nc\",1\nd\x7f,2\n",
        &ReadLimits::none(),
    )
    .expect("loads");
    assert_eq!(t.columns[0].values.value(0), common::text("a\tb\nc"));
}

#[test]
fn text_over_the_limit_is_located_on_its_cell() {
    let limits = ReadLimits {
        text: 5,
        ..ReadLimits::none()
    };
    let mut bytes = b"name,n\nshort,1\n".to_vec();
    bytes.extend(std::iter::repeat_n(b'y', 20_000));
    bytes.extend(b",2\n");
    let err = load_limited("long.csv", &bytes, &limits).expect_err("too long");
    assert_eq!(err.code(), "limit");
    let text = describe(&err);
    assert!(
        text.contains(
            "row 2, column `name` has 20000 characters, more than the limit of 5 (--max-text)"
        ),
        "{text}"
    );
    assert!(text.contains("long.csv:3:1"), "{text}");
    // the excerpt of a 20,000-character line is cut
    assert!(text.len() < 2_000, "{} bytes", text.len());
    // characters, not bytes
    assert!(load_limited("e.csv", "name\néééée\n".as_bytes(), &limits).is_ok());
}

#[test]
fn rows_beyond_the_limit_or_the_memory_allowed_stop_the_load() {
    let mut bytes = b"name,n\n".to_vec();
    for i in 0..20_000 {
        bytes.extend(format!("r{i},{i}\n").as_bytes());
    }
    let rows = ReadLimits {
        rows: Some(19_999),
        ..ReadLimits::none()
    };
    let err = load_limited("rows.csv", &bytes, &rows).expect_err("too many rows");
    assert_eq!(err.code(), "limit");
    assert!(
        err.to_string()
            .contains("has more rows than the limit of 19999 (--max-rows)"),
        "{err}"
    );
    let exact = ReadLimits {
        rows: Some(20_000),
        ..ReadLimits::none()
    };
    assert!(load_limited("rows.csv", &bytes, &exact).is_ok());
    // without a row limit, the rows may take the memory allowed: 20,000
    // rows of a text and a number column take about 300 kB
    let memory = ReadLimits {
        memory: 100_000,
        ..ReadLimits::none()
    };
    let err = load_limited("mem.csv", &bytes, &memory).expect_err("too large");
    let message = err.to_string();
    assert!(
        message.contains("more rows than fit in memory"),
        "{message}"
    );
    assert!(message.contains("--max-rows"), "{message}");
    let LoadError::Story {
        help: Some(help), ..
    } = &err
    else {
        panic!("{err:?}")
    };
    assert!(help.contains("--max-rows N"), "{help}");
    let roomy = ReadLimits {
        memory: 10_000_000,
        ..ReadLimits::none()
    };
    assert!(load_limited("mem.csv", &bytes, &roomy).is_ok());
}

/// A hostile file with several bad rows and cells: one read reports them
/// all, in file order, each located on its own line and field (a user once
/// needed four runs to find four problems).
#[test]
fn every_bad_row_and_cell_is_reported_at_once() {
    let body = "station,day,riders,note\n\
                s1,2024-01-01,10,ok\n\
                s2,2024-13-01,eighty,ok\n\
                s3,2024-01-03,30,ok,extra\n\
                s4,2024-01-04,4\u{1}0,ok\n\
                s5,2024-01-05,\"1,050\",ok\n\
                s6,2024-01-06,60,ok\n";
    let err = load_err(
        "hostile.csv",
        body.as_bytes(),
        &[("day", ColType::Date), ("riders", ColType::Number)],
    );
    let LoadError::Many(ds) = &err else {
        panic!("expected several errors, got {err:?}");
    };
    // Worked out by hand: line 1 is the header, so data row N is line N+1;
    // columns count characters from 1 ("s2," is 3 wide, "s2,2024-13-01," 14).
    type At = Option<(String, usize, usize)>;
    let got: Vec<(&str, At)> = ds.iter().map(|d| (d.code, d.location())).collect();
    let at = |line, col| Some(("hostile.csv".to_owned(), line, col));
    assert_eq!(
        got,
        vec![
            ("bad-value", at(3, 4)),
            ("bad-value", at(3, 15)),
            ("ragged-row", at(4, 21)),
            ("bad-character", at(5, 16)),
            ("bad-value", at(6, 15)),
        ],
        "{}",
        describe(&err)
    );
    assert_eq!(err.code(), "bad-value");
    let out = describe(&err);
    assert!(
        out.contains("column `day` is declared date, but row 2 holds `2024-13-01`"),
        "{out}"
    );
    assert!(
        out.contains("column `riders` is declared number, but row 2 holds `eighty`"),
        "{out}"
    );
    assert!(
        out.contains("row 3 has 5 fields, but the header has 4"),
        "{out}"
    );
    assert!(!out.contains("stopped at"), "{out}");
}

/// More bad cells than one read reports: the read stops at the cap and the
/// last error says so.
#[test]
fn bad_cells_beyond_the_cap_stop_the_read_and_say_so() {
    let mut body = String::from("station,riders\n");
    for i in 1..=30 {
        body.push_str(&format!("s{i},many{i}\n"));
    }
    let err = load_err(
        "capped.csv",
        body.as_bytes(),
        &[("riders", ColType::Number)],
    );
    let LoadError::Many(ds) = &err else {
        panic!("expected several errors, got {err:?}");
    };
    assert_eq!(ds.len(), crescendo_data::load::MAX_ERRORS);
    assert_eq!(ds.len(), 20);
    // the 20th bad cell is data row 20, line 21
    assert_eq!(ds[19].location(), Some(("capped.csv".into(), 21, 5)));
    let last = crescendo_diag::render(&ds[19..], false);
    assert!(
        last.contains("reading `capped.csv` stopped at 20 errors (the most one read reports)"),
        "{last}"
    );
    let first = crescendo_diag::render(&ds[..19], false);
    assert!(!first.contains("stopped at"), "{first}");
}
