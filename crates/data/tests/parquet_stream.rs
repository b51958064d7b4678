//! Parquet row groups streamed through the CSV stream's engine
//! (`parquet::each_group` + `fold::Fold`) against the whole load
//! (`load_parquet` + `run_view`): the same tables, bit for bit. Fixtures:
//! the ledgers of `tests/formats` (pyarrow, row groups of 50 and 64 rows;
//! `tests/formats/make_fixtures.py`).

use std::fs::File;
use std::path::PathBuf;

use crescendo_data::fold::Fold;
use crescendo_data::load::ReadLimits;
use crescendo_data::parquet::{
    each_group, each_group_from, first_group, fold_groups_from, load_parquet, Parts,
};
use crescendo_data::stream::StreamView;
use crescendo_data::{
    run_view, AggFn, Aggregate, CmpOp, ColType, Columns, CsvSpec, Expr, Step, Table, Value,
};

fn spec(file: &str, declared: Vec<(String, ColType)>) -> CsvSpec {
    CsvSpec {
        path: PathBuf::from(env!("CARGO_MANIFEST_DIR"))
            .join("../../tests/formats")
            .join(file),
        display_name: file.into(),
        declared,
        missing: vec![String::new()],
        numbers: Default::default(),
    }
}

/// Every aggregate over `amount` (2) and `day` (0), by `keys`.
fn group(keys: Vec<usize>) -> (Vec<usize>, Vec<Aggregate>) {
    let mut aggs = vec![Aggregate {
        name: "rows".into(),
        func: AggFn::Count,
        column: None,
    }];
    for c in [0, 2] {
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
            if c == 0 && matches!(f, AggFn::Sum | AggFn::Mean | AggFn::Median) {
                continue;
            }
            aggs.push(Aggregate {
                name: format!("a{c}_{i}"),
                func: f,
                column: Some(c),
            });
        }
    }
    (keys, aggs)
}

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

fn views() -> Vec<StreamView> {
    let late = Expr::Cmp(
        CmpOp::Ge,
        Box::new(Expr::Col(0)),
        Box::new(Expr::Lit(Value::Date(19_773))), // 2024-02-20
    );
    let big = Expr::Cmp(
        CmpOp::Gt,
        Box::new(Expr::Col(2)),
        Box::new(Expr::Lit(Value::Number(100.0))),
    );
    vec![
        StreamView {
            keeps: vec![],
            group: Some(group(vec![1])),
        },
        StreamView {
            keeps: vec![],
            group: Some(group(vec![])),
        },
        StreamView {
            keeps: vec![late.clone(), big.clone()],
            group: Some(group(vec![1, 0])),
        },
        StreamView {
            keeps: vec![late],
            group: None,
        },
    ]
}

/// Debug text compares `-0` and `0` (and every float) exactly.
fn same(a: &Table, b: &Table) -> bool {
    format!("{a:?}") == format!("{b:?}")
}

#[test]
fn streamed_row_groups_give_the_loaded_tables() {
    for name in ["ledger.parquet", "ledger-decimal.parquet"] {
        let s = spec(name, vec![]);
        let file = File::open(&s.path).expect("fixture");
        let limits = ReadLimits::none();
        let whole = load_parquet(&s, &file, &Columns::All, &limits).expect("load");
        let schema: Vec<(String, ColType)> = whole
            .columns
            .iter()
            .map(|c| (c.name.clone(), c.ty))
            .collect();
        let keep_values = vec![true; schema.len()];
        let views = views();
        let mut fold = Fold::new(&views, &keep_values, &limits, schema);
        let mut add = |t: Table| fold.add(&t);
        let done = each_group(&s, &file, &Columns::All, &limits, &[], &mut add).expect("groups");
        assert!(!done.stopped, "{name}");
        assert!(done.read >= 4, "{name}: {} row groups", done.read);
        assert_eq!(fold.rows(), 240, "{name}");
        let streamed = fold.finish().expect("fits");
        for (v, got) in views.iter().zip(&streamed) {
            let want = run_view(&whole, &steps(v));
            assert!(same(got, &want), "{name}: {v:?}\n{got:?}\n{want:?}");
        }
    }
}

/// The planner reads the first group for the column types, then the rest
/// from the next one: together they are the groups of one pass, in order,
/// each decoded once, with or without groups skipped by their statistics.
#[test]
fn the_first_group_and_the_rest_are_the_groups_of_one_pass() {
    let s = spec("ledger.parquet", vec![]);
    let file = File::open(&s.path).expect("fixture");
    let limits = ReadLimits::none();
    // 2024-02-20 and later: the fixture's first row groups end before it
    let late = Expr::Cmp(
        CmpOp::Ge,
        Box::new(Expr::Col(0)),
        Box::new(Expr::Lit(Value::Date(19_773))),
    );
    for keeps in [vec![], vec![late]] {
        let mut all = Vec::new();
        let mut push = |t: Table| {
            all.push(format!("{t:?}"));
            true
        };
        let one = each_group(&s, &file, &Columns::All, &limits, &keeps, &mut push).expect("pass");
        let (g0, first, skipped) = first_group(&s, &file, (&Columns::All, &limits, &keeps))
            .expect("first")
            .expect("a group with rows");
        let mut rest = vec![format!("{first:?}")];
        let mut push = |t: Table| {
            rest.push(format!("{t:?}"));
            true
        };
        let after = each_group_from(
            &s,
            &file,
            (&Columns::All, &limits, &keeps),
            g0 + 1,
            &mut push,
        )
        .expect("rest");
        assert_eq!(rest, all, "keeps: {keeps:?}");
        // the rest split among the cores: the parts in order are the rest
        let new = Vec::new;
        let parts = Parts {
            first: vec![format!("{first:?}")],
            new: &new,
            each: &|part: &mut Vec<String>, t: Table| {
                part.push(format!("{t:?}"));
                true
            },
        };
        let read = (&Columns::All, &limits, &keeps[..]);
        let (parts, split) = fold_groups_from(&s, &file, read, g0 + 1, parts).expect("split");
        assert_eq!(parts.concat(), all, "keeps: {keeps:?}");
        assert_eq!(split, after);
        assert_eq!(skipped + after.skipped, one.skipped);
        assert_eq!(1 + after.read, one.read);
        assert_eq!(
            g0, skipped,
            "the groups before the first are the skipped ones"
        );
        assert_eq!(keeps.is_empty(), one.skipped == 0, "{}", one.skipped);
    }
}

#[test]
fn groups_whose_types_differ_stop_the_fold() {
    let s = spec("ledger.parquet", vec![]);
    let file = File::open(&s.path).expect("fixture");
    let limits = ReadLimits::none();
    // a schema that says `amount` is text: the first group disagrees
    let schema = vec![
        ("day".to_string(), ColType::Date),
        ("branch".to_string(), ColType::Text),
        ("amount".to_string(), ColType::Text),
    ];
    let keep_values = vec![true; 3];
    let views = views();
    let mut fold = Fold::new(&views, &keep_values, &limits, schema);
    let mut add = |t: Table| fold.add(&t);
    let done = each_group(&s, &file, &Columns::All, &limits, &[], &mut add).expect("groups");
    assert!(done.stopped);
    assert_eq!(done.read, 1);
}

/// Writers name the root of a Parquet schema as they like ("schema" from
/// pyarrow, "root" from others): a file whose root has another name is
/// read with a projection too (only the columns the story reads).
#[test]
fn a_root_of_any_name_is_projected() {
    use parquet::data_type::DoubleType;
    use parquet::file::writer::SerializedFileWriter;
    use parquet::schema::parser::parse_message_type;
    let dir = std::env::temp_dir().join(format!("crescendo-parquet-root-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("scratch folder");
    let path = dir.join("root.parquet");
    let schema = parse_message_type("message root { required double x; required double y; }")
        .expect("schema");
    let out = File::create(&path).expect("create");
    let mut w = SerializedFileWriter::new(out, std::sync::Arc::new(schema), Default::default())
        .expect("writer");
    let mut rg = w.next_row_group().expect("row group");
    let mut k = 0.0;
    while let Some(mut col) = rg.next_column().expect("column") {
        k += 1.0;
        let values = [k, k * 10.0, k * 100.0];
        col.typed::<DoubleType>()
            .write_batch(&values, None, None)
            .expect("write");
        col.close().expect("close column");
    }
    rg.close().expect("close row group");
    w.close().expect("close file");
    let s = CsvSpec {
        path: path.clone(),
        display_name: "root.parquet".into(),
        declared: vec![],
        missing: vec![String::new()],
        numbers: Default::default(),
    };
    let file = File::open(&path).expect("open");
    let only = Columns::Only(["y".to_string()].into_iter().collect());
    let t = load_parquet(&s, &file, &only, &ReadLimits::default()).expect("projected load");
    let y: Vec<Value> = t.columns[1].values.to_vec();
    assert_eq!(
        y,
        vec![
            Value::Number(2.0),
            Value::Number(20.0),
            Value::Number(200.0)
        ]
    );
    std::fs::remove_dir_all(&dir).ok();
}

/// A file in zstd (polars' default codec) reads as the same table as the
/// Snappy ledger it was written from; a sound file in a codec this build
/// does not read (brotli) says which, instead of calling the file damaged
/// (fixtures: `tests/formats/make_zstd_fixture.py`, polars).
#[test]
fn zstd_reads_and_an_unread_codec_is_named() {
    let load = |name: &str| {
        let s = spec(name, vec![]);
        let file = File::open(&s.path).expect("open");
        load_parquet(&s, &file, &Columns::All, &ReadLimits::default()).map_err(|e| format!("{e:?}"))
    };
    let snappy = load("ledger.parquet").expect("snappy");
    let zstd = load("ledger-zstd.parquet").expect("zstd");
    assert_eq!(snappy.columns[0].values.len(), 240);
    assert!(same(&snappy, &zstd), "{snappy:?}\n{zstd:?}");
    let text = load("brotli.parquet").expect_err("refused");
    assert!(
        text.contains("compressed with brotli") && text.contains("zstd"),
        "{text}"
    );
}
