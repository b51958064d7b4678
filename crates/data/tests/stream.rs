//! The streaming reader against the table engine: the same views computed
//! by `scan` (one pass, any chunking, one or two threads) and by
//! `load_csv` + `run_view` must be identical, bit for bit. Files with quoted
//! line breaks are built so that chunk guesses land inside quoted fields.

mod common;

use std::path::PathBuf;

use crescendo_data::load::ReadLimits;
use crescendo_data::stream::{scan, Chunks, ScanFailure, ScanInput, ScanOutput, StreamView};
use crescendo_data::{
    load_csv, probe, run_view, AggFn, Aggregate, CmpOp, ColType, Columns, CsvSpec, Expr, Step,
    Table, Value,
};

fn penguins_spec() -> CsvSpec {
    CsvSpec {
        path: PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/penguins.csv"),
        display_name: "penguins.csv".into(),
        declared: vec![],
        missing: vec![String::new(), "NA".into()],
        numbers: Default::default(),
    }
}

fn every_aggregate(columns: &[usize]) -> Vec<Aggregate> {
    let mut out = vec![Aggregate {
        name: "rows".into(),
        func: AggFn::Count,
        column: None,
    }];
    for &c in columns {
        for (i, f) in [
            AggFn::Count,
            AggFn::Sum,
            AggFn::Mean,
            AggFn::Median,
            AggFn::Min,
            AggFn::Max,
            AggFn::First,
            AggFn::Last,
        ]
        .into_iter()
        .enumerate()
        {
            out.push(Aggregate {
                name: format!("a{c}_{i}"),
                func: f,
                column: Some(c),
            });
        }
    }
    out
}

/// The views' steps as the table engine runs them.
fn steps(v: &StreamView) -> Vec<Step> {
    let mut s: Vec<Step> = v.keeps.iter().cloned().map(Step::Keep).collect();
    if let Some((keys, aggregates)) = &v.group {
        s.push(Step::Group {
            keys: keys.clone(),
            aggregates: aggregates.clone(),
        });
    }
    s
}

/// Scan with the sample's types, every column parsed and kept.
fn scan_all(
    spec: &CsvSpec,
    views: &[StreamView],
    chunks: &Chunks,
) -> Result<ScanOutput, ScanFailure> {
    scan_limited(spec, views, chunks, &ReadLimits::none())
}

/// Debug text compares `-0` and `0` (and every float) exactly.
fn same(a: &Table, b: &Table) -> bool {
    format!("{a:?}") == format!("{b:?}")
}

#[test]
fn penguins_stream_equals_load_then_group() {
    let spec = penguins_spec();
    let table = load_csv(&spec).expect("loads");
    // species 0, island 1, bill_length 2, flipper 4, body_mass 5, sex 6, year 7
    let views = vec![
        StreamView {
            keeps: vec![],
            group: Some((vec![0, 6], every_aggregate(&[2, 4, 5, 7]))),
        },
        StreamView {
            keeps: vec![Expr::Cmp(
                CmpOp::Gt,
                Box::new(Expr::Col(5)),
                Box::new(Expr::Lit(Value::Number(4000.0))),
            )],
            group: Some((vec![1], every_aggregate(&[0, 5]))),
        },
        StreamView {
            keeps: vec![],
            group: Some((vec![], every_aggregate(&[5]))),
        },
        StreamView {
            keeps: vec![Expr::In(
                Box::new(Expr::Col(1)),
                vec![Value::Text("Dream".into())],
            )],
            group: None,
        },
    ];
    let len = std::fs::metadata(&spec.path).unwrap().len();
    let mut splits: Vec<Chunks> = vec![Chunks::At(vec![], 1), Chunks::Auto];
    for n in [2u64, 3, 5, 8, 17] {
        splits.push(Chunks::At((1..n).map(|k| len * k / n).collect(), 2));
    }
    for chunks in &splits {
        let out = scan_all(&spec, &views, chunks).unwrap_or_else(|e| panic!("{chunks:?}: {e:?}"));
        assert_eq!(out.rows, 344);
        for (v, got) in views.iter().zip(&out.tables) {
            let want = run_view(&table, &steps(v));
            assert!(same(got, &want), "{chunks:?}\n{got:?}\n{want:?}");
        }
    }
}

/// A small deterministic generator (a 64-bit LCG, Knuth's MMIX constants).
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        self.0 >> 33
    }
    fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }
}

/// A CSV with quoted fields holding line breaks (LF and CRLF), commas and
/// doubled quotes, blank lines, missing cells, CRLF records and -0.
fn random_csv(seed: u64, rows: usize) -> Vec<u8> {
    let mut r = Lcg(seed);
    let mut out = b"key,note,x,when\n".to_vec();
    for _ in 0..rows {
        let key = ["a", "b", "c\nd", "e,f", "\"g\"", "h\r\ni"][r.below(6) as usize];
        let needs_quotes = key.contains(['\n', ',', '"', '\r']);
        if needs_quotes {
            out.push(b'"');
            out.extend_from_slice(key.replace('"', "\"\"").as_bytes());
            out.push(b'"');
        } else {
            out.extend_from_slice(key.as_bytes());
        }
        out.push(b',');
        match r.below(4) {
            0 => out.extend_from_slice(b"\"line one\nline two\n\nline four\""),
            1 => out.extend_from_slice(b"\"\n\""),
            2 => out.extend_from_slice(b"plain"),
            _ => {}
        }
        out.push(b',');
        match r.below(8) {
            0 => out.extend_from_slice(b"NA"),
            1 => out.extend_from_slice(b"-0"),
            2 => {}
            _ => out.extend_from_slice(
                format!("{}.{}", r.below(2000) as i64 - 1000, r.below(1000)).as_bytes(),
            ),
        }
        out.push(b',');
        out.extend_from_slice(format!("2024-{:02}", 1 + r.below(12)).as_bytes());
        match r.below(5) {
            0 => out.extend_from_slice(b"\r\n"),
            1 => out.extend_from_slice(b"\n\n"),
            _ => out.push(b'\n'),
        }
    }
    out
}

fn random_views() -> Vec<StreamView> {
    vec![
        StreamView {
            keeps: vec![],
            group: Some((vec![0, 3], every_aggregate(&[1, 2, 3]))),
        },
        StreamView {
            keeps: vec![Expr::Cmp(
                CmpOp::Lt,
                Box::new(Expr::Col(2)),
                Box::new(Expr::Lit(Value::Number(0.0))),
            )],
            group: Some((vec![2], every_aggregate(&[0]))),
        },
        StreamView {
            keeps: vec![Expr::Cmp(
                CmpOp::Ne,
                Box::new(Expr::Col(1)),
                Box::new(Expr::Lit(Value::Text("plain".into()))),
            )],
            group: None,
        },
    ]
}

#[test]
fn parallel_equals_sequential_at_every_cut_through_quoted_line_breaks() {
    let bytes = random_csv(7, 60);
    let spec = common::spec_for("quoted.csv", &bytes);
    let table = load_csv(&spec).expect("loads");
    let views = random_views();
    let want: Vec<Table> = views.iter().map(|v| run_view(&table, &steps(v))).collect();
    let one = scan_all(&spec, &views, &Chunks::At(vec![], 1)).expect("sequential scan");
    for (got, want) in one.tables.iter().zip(&want) {
        assert!(same(got, want), "sequential\n{got:?}\n{want:?}");
    }
    // One cut at every byte of the file, then pairs and triples of cuts.
    let len = bytes.len() as u64;
    let mut absorbed = 0;
    let mut cases: Vec<Vec<u64>> = (0..=len).map(|o| vec![o]).collect();
    for a in (0..len).step_by(13) {
        cases.push(vec![a, a + 7, a + 40]);
        cases.push(vec![a, (a * 7) % len]);
    }
    for cuts in cases {
        // a run at every piece; or one or two runs at first, the other
        // cores taking over pieces no run has reached (crate::pieces)
        for chunks in [
            Chunks::At(cuts.clone(), 2),
            Chunks::Shared(cuts.clone(), 1, 2),
            Chunks::Shared(cuts.clone(), 2, 3),
        ] {
            let out =
                scan_all(&spec, &views, &chunks).unwrap_or_else(|e| panic!("{chunks:?}: {e:?}"));
            absorbed += out.absorbed;
            assert_eq!(out.rows, one.rows, "{chunks:?}");
            for (got, want) in out.tables.iter().zip(&one.tables) {
                assert!(same(got, want), "{chunks:?}\n{got:?}\n{want:?}");
            }
        }
    }
    // The file was built so that some guesses land inside quoted fields.
    assert!(absorbed > 0, "no cut landed inside a quoted field");
}

#[test]
fn random_files_many_chunk_counts() {
    for seed in 1..6u64 {
        let bytes = random_csv(seed, 400);
        let spec = common::spec_for("random.csv", &bytes);
        let table = load_csv(&spec).expect("loads");
        let views = random_views();
        let len = bytes.len() as u64;
        for n in 1..24u64 {
            let cuts: Vec<u64> = (1..n).map(|k| len * k / n + seed).collect();
            for chunks in [
                Chunks::At(cuts.clone(), 2),
                Chunks::Shared(cuts.clone(), 1, 2),
                Chunks::Shared(cuts, 2, 2),
            ] {
                let out = scan_all(&spec, &views, &chunks).expect("scan");
                for (v, got) in views.iter().zip(&out.tables) {
                    let want = run_view(&table, &steps(v));
                    assert!(same(got, &want), "seed {seed}, {chunks:?}");
                }
            }
        }
    }
}

#[test]
fn problems_fall_back_to_the_loader() {
    let views = random_views();
    // A ragged row, a bad quote, invalid UTF-8 after the probed records: the
    // scan gives up whatever the chunking, and the loader reports the
    // located error.
    let mut good = b"key,note,x,when\n".to_vec();
    for i in 0..1200 {
        good.extend_from_slice(format!("a,b,{i},2024-01\n").as_bytes());
    }
    for bad in [
        &b"c,d,2\n"[..],
        &b"a,\"b\"x,1,2024-01\n"[..],
        &b"a,\xff,1,2024-01\n"[..],
    ] {
        let mut bytes = good.clone();
        bytes.extend_from_slice(bad);
        bytes.extend_from_slice(b"a,b,1,2024-02\n");
        let spec = common::spec_for("bad.csv", &bytes);
        let len = bytes.len() as u64;
        for cuts in [
            vec![],
            vec![len / 2],
            vec![len - 30],
            vec![len / 3, len - 10],
        ] {
            for chunks in [Chunks::At(cuts.clone(), 2), Chunks::Shared(cuts, 1, 2)] {
                assert!(matches!(
                    scan_all(&spec, &views, &chunks),
                    Err(ScanFailure::Fallback)
                ));
            }
        }
        assert!(load_csv(&spec).is_err());
    }
    // A type guessed from the first records that a later cell contradicts.
    let mut text = b"key,note,x,when\n".to_vec();
    for i in 0..1500 {
        text.extend_from_slice(format!("a,b,{i},2024-01\n").as_bytes());
    }
    text.extend_from_slice(b"a,b,many,2024-01\n");
    let spec = common::spec_for("late.csv", &text);
    assert!(matches!(
        scan_all(&spec, &views, &Chunks::At(vec![9000], 2)),
        Err(ScanFailure::Fallback)
    ));
}

/// [`scan_all`] within `limits`.
fn scan_limited(
    spec: &CsvSpec,
    views: &[StreamView],
    chunks: &Chunks,
    limits: &ReadLimits,
) -> Result<ScanOutput, ScanFailure> {
    let p = probe(spec, &Columns::All, 1000).expect("probe");
    let schema: Vec<(String, ColType)> = p
        .names
        .iter()
        .zip(&p.types)
        .map(|(n, t)| (n.clone(), t.unwrap_or(ColType::Text)))
        .collect();
    let all = vec![true; schema.len()];
    let file = std::fs::File::open(&spec.path).expect("open");
    scan(
        &ScanInput {
            spec,
            file: &file,
            limits,
            schema: &schema,
            parse: &all,
            keep_values: &all,
            data_start: p.data_start,
            views,
        },
        chunks,
    )
}

#[test]
fn cells_the_loader_refuses_fall_back_to_it_whatever_the_chunks() {
    // a control character, and a text over the limit, after the probed
    // records: the scan gives up, so the loader reports the located error
    let views = random_views();
    let mut good = b"key,note,x,when\n".to_vec();
    for i in 0..1200 {
        good.extend_from_slice(format!("a,b,{i},2024-01\n").as_bytes());
    }
    let limits = ReadLimits {
        text: 50,
        ..ReadLimits::none()
    };
    let long = format!("a,{},1,2024-01\n", "z".repeat(51));
    for bad in [&b"a,b\x01c,1,2024-01\n"[..], long.as_bytes()] {
        let mut bytes = good.clone();
        bytes.extend_from_slice(bad);
        bytes.extend_from_slice(b"a,b,1,2024-02\n");
        let spec = common::spec_for("cells.csv", &bytes);
        let len = bytes.len() as u64;
        for cuts in [
            vec![],
            vec![len / 2],
            vec![len - 40],
            vec![len / 3, len - 10],
        ] {
            assert!(matches!(
                scan_limited(&spec, &views, &Chunks::At(cuts, 2), &limits),
                Err(ScanFailure::Fallback)
            ));
        }
    }
    // 51 characters pass a limit of 51
    let mut bytes = good.clone();
    bytes.extend_from_slice(long.as_bytes());
    let spec = common::spec_for("fits.csv", &bytes);
    let fits = ReadLimits {
        text: 51,
        ..ReadLimits::none()
    };
    assert!(scan_limited(&spec, &views, &Chunks::At(vec![], 2), &fits).is_ok());
}

#[test]
fn kept_rows_over_the_row_limit_fall_back() {
    // a `keep`-only view holds its rows: more than the limit, over all
    // chunks together, gives up (the loader then names --max-rows)
    let keep_only = vec![StreamView {
        keeps: vec![],
        group: None,
    }];
    let mut bytes = b"key,x\n".to_vec();
    for i in 0..3000 {
        bytes.extend_from_slice(format!("k{i},{i}\n").as_bytes());
    }
    let spec = common::spec_for("kept.csv", &bytes);
    let len = bytes.len() as u64;
    let limit = |rows| ReadLimits {
        rows: Some(rows),
        ..ReadLimits::none()
    };
    for cuts in [vec![], vec![len / 2]] {
        assert!(matches!(
            scan_limited(
                &spec,
                &keep_only,
                &Chunks::At(cuts.clone(), 2),
                &limit(2999)
            ),
            Err(ScanFailure::Fallback)
        ));
        let out =
            scan_limited(&spec, &keep_only, &Chunks::At(cuts, 2), &limit(3000)).expect("fits");
        assert_eq!(out.tables[0].columns[0].values.len(), 3000);
    }
}

#[test]
fn every_thread_reads_the_opened_file_not_the_path() {
    // open a file, then put another file at its path: the scan (two
    // threads, several chunks) still reads the file that was opened
    let mut first = b"key,x\n".to_vec();
    let mut second = b"key,x\n".to_vec();
    for i in 0..2000 {
        first.extend_from_slice(format!("opened,{i}\n").as_bytes());
        second.extend_from_slice(format!("swapped,{i}\n").as_bytes());
    }
    let spec = common::spec_for("opened.csv", &first);
    let p = probe(&spec, &Columns::All, 1000).expect("probe");
    let file = std::fs::File::open(&spec.path).expect("open");
    let other = spec.path.with_extension("other");
    std::fs::write(&other, &second).expect("write");
    std::fs::rename(&other, &spec.path).expect("swap");
    let schema = vec![
        ("key".to_string(), ColType::Text),
        ("x".to_string(), ColType::Number),
    ];
    let views = vec![StreamView {
        keeps: vec![],
        group: Some((vec![0], every_aggregate(&[1]))),
    }];
    let len = first.len() as u64;
    let out = scan(
        &ScanInput {
            spec: &spec,
            file: &file,
            limits: &ReadLimits::none(),
            schema: &schema,
            parse: &[true, true],
            keep_values: &[true, true],
            data_start: p.data_start,
            views: &views,
        },
        &Chunks::At(vec![len / 4, len / 2, len * 3 / 4], 2),
    )
    .expect("scan");
    assert_eq!(out.rows, 2000);
    assert_eq!(
        out.tables[0].columns[0].values.to_vec(),
        vec![Value::Text("opened".into())]
    );
    // and the whole load too
    let t = crescendo_data::load::load_file(&spec, &file, &Columns::All, &ReadLimits::none())
        .expect("loads");
    assert_eq!(
        t.columns[0].values.value(1999),
        Value::Text("opened".into())
    );
}

#[test]
fn an_overflowing_sum_streams_as_it_loads() {
    // the same infinite sum (too large for a number) and the same finite
    // mean from the scan, whatever the chunks, and from the table engine
    let mut bytes = b"key,x\n".to_vec();
    for i in 0..1500 {
        let x = if i % 500 == 7 { "1.7e308" } else { "1.5" };
        bytes.extend_from_slice(format!("k{},{x}\n", i % 2).as_bytes());
    }
    let spec = common::spec_for("huge.csv", &bytes);
    let table = load_csv(&spec).expect("loads");
    let views = vec![StreamView {
        keeps: vec![],
        group: Some((vec![0], every_aggregate(&[1]))),
    }];
    let want = run_view(&table, &steps(&views[0]));
    assert!(crescendo_data::view::overflow(&want).is_some());
    let len = bytes.len() as u64;
    for cuts in [vec![], vec![len / 2], vec![len / 5, len / 3, len * 4 / 5]] {
        let out = scan_all(&spec, &views, &Chunks::At(cuts.clone(), 2)).expect("scan");
        assert!(
            same(&out.tables[0], &want),
            "{cuts:?}\n{:?}\n{want:?}",
            out.tables[0]
        );
    }
}

/// What the text literals of `keep`s met (`crescendo_data::probe`) is the
/// same whatever the chunks: found anywhere in the file, or not at all with
/// the distinct texts in order of first appearance.
#[test]
fn probes_are_the_same_whatever_the_chunks() {
    let text = |t: &str| Box::new(Expr::Lit(Value::Text(t.into())));
    let eq = |c: usize, t: &str| Expr::Cmp(CmpOp::Eq, Box::new(Expr::Col(c)), text(t));
    let views = vec![
        // "late" only in the last rows; "nowhere" never
        StreamView {
            keeps: vec![Expr::Or(vec![eq(0, "late"), eq(0, "nowhere")])],
            group: None,
        },
        // the second keep sees only the rows where key = "a"
        StreamView {
            keeps: vec![eq(0, "a"), eq(1, "y")],
            group: None,
        },
    ];
    let mut bytes = b"key,note\n".to_vec();
    for i in 0..3000 {
        let (k, n) = [("a", "x"), ("b", "y"), ("c", "z")][i % 3];
        bytes.extend_from_slice(format!("{k},{n}\n").as_bytes());
    }
    bytes.extend_from_slice(b"late,w\n");
    let spec = common::spec_for("probes.csv", &bytes);
    let len = bytes.len() as u64;
    let one = scan_all(&spec, &views, &Chunks::At(vec![], 1)).expect("scan");
    let met = |v: usize, i: usize| one.probes[v][i].clone();
    assert!(met(0, 0).1.found && met(0, 0).0.text == "late");
    assert!(!met(0, 1).1.found);
    assert_eq!(met(0, 1).1.values, vec!["a", "b", "c", "late"]);
    assert!(met(1, 0).1.found && met(1, 0).0.text == "a");
    assert_eq!(met(1, 1).0.text, "y");
    assert!(!met(1, 1).1.found);
    assert_eq!(met(1, 1).1.values, vec!["x"]);
    for cuts in [vec![len / 2], vec![len / 3, 2 * len / 3], vec![len - 4]] {
        for chunks in [
            Chunks::At(cuts.clone(), 3),
            Chunks::Shared(cuts.clone(), 1, 3),
        ] {
            let out = scan_all(&spec, &views, &chunks).expect("scan");
            assert_eq!(out.probes, one.probes, "{chunks:?}");
        }
    }
}
