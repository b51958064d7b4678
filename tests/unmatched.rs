//! A text literal that matches no value of its column is a located error
//! with a suggestion, on every read path: a file streamed (the `keep`s the
//! reader computes), a file loaded whole, a `keep` run after the read, and
//! a value's selection. (Databases: `tests/database.rs`.)

mod common;

use std::fs;
use std::path::Path;

use common::scratch;
use crescendo_diag::Source;

const DATA: &str = "region,city,sales\nNorth,Oslo,3\nSouth,Rome,4\nNorth,Bergen,5\nWest,Lima,1\n";

/// Plan `story` over `d.csv` = [`DATA`] in a fresh folder.
fn plan(name: &str, story: &str) -> (crescendo_plan::PlanResult, std::path::PathBuf) {
    let dir = scratch(name);
    fs::write(dir.join("d.csv"), DATA).unwrap();
    let src = Source::file("s.cresc", story.to_string());
    (
        crescendo_plan::plan_story(&src, &dir, &Default::default()),
        dir,
    )
}

/// The build fails with one error at (line, col) saying `message`.
fn fails(name: &str, story: &str, at: (usize, usize), message: &str) -> String {
    let (res, dir) = plan(name, story);
    let errs = match res {
        Ok(_) => panic!("{name}: expected an error"),
        Err(e) => e,
    };
    let text = crescendo_diag::render(&errs, false);
    assert!(text.contains(message), "{name}:\n{text}");
    assert_eq!(
        errs[0].location().map(|(_, l, c)| (l, c)),
        Some(at),
        "{name}:\n{text}"
    );
    let _ = fs::remove_dir_all(dir);
    text
}

fn story(view: &str, frame_reads: &str) -> String {
    format!(
        "story \"U\"\ndata d from \"d.csv\"\n{view}\nframe \"f\" {{\n  bars {frame_reads}: category region, value sales\n}}\n"
    )
}

#[test]
fn streamed_keep_with_a_misspelt_text_is_located() {
    // only the view reads `d`: its `keep` and `by` run while the file is read
    let s = story(
        "view v = d | keep region = \"Nrth\" | by region: sales = sum(sales)",
        "v",
    );
    let t = fails(
        "unmatched-stream",
        &s,
        (3, 28),
        "no row has `region` = \"Nrth\"",
    );
    assert!(t.contains("did you mean \"North\"?"), "{t}");
    // the same story spelt right streams (so the case above took that path)
    let (res, dir) = plan("unmatched-stream-ok", &s.replace("Nrth", "North"));
    let planned = res.unwrap_or_else(|e| panic!("{}", crescendo_diag::render(&e, false)));
    assert_eq!(planned.report.streamed, vec!["d".to_string()]);
    let _ = fs::remove_dir_all(dir);
}

#[test]
fn loaded_keep_with_a_misspelt_text_is_located() {
    // a value reads `d` itself, so the file is loaded whole
    let s = format!(
        "{}value n = count(d.sales)\n",
        story(
            "view v = d | keep city in (\"Oslo\", \"Bergn\") | by region: sales = sum(sales)",
            "v"
        )
    );
    let t = fails(
        "unmatched-load",
        &s,
        (3, 36),
        "no row has `city` = \"Bergn\"",
    );
    assert!(t.contains("did you mean \"Bergen\"?"), "{t}");
    let (res, dir) = plan("unmatched-load-ok", &s.replace("Bergn", "Bergen"));
    let planned = res.unwrap_or_else(|e| panic!("{}", crescendo_diag::render(&e, false)));
    assert_eq!(planned.report.loaded, vec!["d".to_string()]);
    let _ = fs::remove_dir_all(dir);
}

#[test]
fn a_keep_after_the_read_and_a_second_keep_are_checked_on_the_rows_reaching_them() {
    // after `by`: computed on the small table
    let s = story(
        "view v = d | by region: sales = sum(sales) | keep region != \"Est\"",
        "v",
    );
    let t = fails(
        "unmatched-after",
        &s,
        (3, 61),
        "no row has `region` = \"Est\"",
    );
    assert!(t.contains("did you mean \"West\"?"), "{t}");
    // Rome is a city, but not of a northern row: the second keep selects
    // nothing (streamed: the reader watches the rows that pass the first)
    let s = story(
        "view v = d | keep region = \"North\" | keep city = \"Rome\" | by region: sales = sum(sales)",
        "v",
    );
    let t = fails(
        "unmatched-second",
        &s,
        (3, 50),
        "no row has `city` = \"Rome\"",
    );
    assert!(t.contains("\"Oslo\", \"Bergen\""), "{t}");
    assert!(!t.contains("did you mean"), "{t}");
}

#[test]
fn a_misspelt_text_in_a_value_selection_is_located() {
    let s = format!(
        "{}value n = count(d where region = \"Suoth\")\n",
        story("view v = d | by region: sales = sum(sales)", "v")
    );
    let t = fails(
        "unmatched-value",
        &s,
        (7, 34),
        "no row has `region` = \"Suoth\"",
    );
    assert!(t.contains("did you mean \"South\"?"), "{t}");
}

/// The stream's result does not hide the error on the next build: a
/// prefix with a text no row holds is never cached.
#[test]
fn the_cache_never_hides_the_error() {
    let dir = scratch("unmatched-cache");
    fs::write(dir.join("d.csv"), DATA).unwrap();
    let s = story(
        "view v = d | keep region = \"Nrth\" | by region: sales = sum(sales)",
        "v",
    );
    fs::write(dir.join("s.cresc"), &s).unwrap();
    for _ in 0..2 {
        let out = common::crescendo(&dir, &["build", "s.cresc"]);
        let t = String::from_utf8_lossy(&out.stderr).to_string();
        assert!(!out.status.success());
        assert!(t.contains("did you mean \"North\"?"), "{t}");
        assert!(t.contains("s.cresc:3:28"), "{t}");
    }
    let _ = fs::remove_dir_all(&dir);
    let _: &Path = &dir;
}

/// Parquet row groups stream through the same engine; workbooks are
/// loaded whole: both say the same.
#[test]
fn parquet_and_workbook_sources_say_the_same() {
    for (file, decl) in [
        ("ledger.parquet", ""),
        ("ledger.xlsx", ""),
        // declared, read through the typed path
        ("ledger.parquet", " { branch: text }"),
    ] {
        let dir = scratch("unmatched-formats");
        let from = common::root().join("tests").join("formats").join(file);
        fs::copy(&from, dir.join(file)).unwrap();
        let s = format!(
            "story \"U\"\ndata d from \"{file}\"{decl}\nview v = d | keep branch = \"Harbor\" | by branch: total = sum(amount)\nframe \"f\" {{\n  bars v: category branch, value total\n}}\n"
        );
        let src = Source::file("s.cresc", s.clone());
        let errs = match crescendo_plan::plan_story(&src, &dir, &Default::default()) {
            Ok(_) => panic!("{file}: expected an error"),
            Err(e) => e,
        };
        let t = crescendo_diag::render(&errs, false);
        assert!(
            t.contains("no row has `branch` = \"Harbor\""),
            "{file}: {t}"
        );
        assert!(t.contains("did you mean \"Harbour\"?"), "{file}: {t}");
        assert_eq!(errs[0].location().map(|(_, l, c)| (l, c)), Some((3, 28)));
        let src = Source::file("s.cresc", s.replace("Harbor", "Harbour"));
        let planned = crescendo_plan::plan_story(&src, &dir, &Default::default())
            .unwrap_or_else(|e| panic!("{}", crescendo_diag::render(&e, false)));
        if file.ends_with(".parquet") {
            assert_eq!(planned.report.streamed, vec!["d".to_string()]);
        }
        let _ = fs::remove_dir_all(&dir);
    }
}
