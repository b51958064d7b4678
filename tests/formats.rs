//! One deck whatever the data file's format: the same daily ledger as CSV,
//! as workbooks (`.xlsx` in the 1900 and the 1904 date systems, `.ods`) and
//! as Parquet (dates, strings and doubles in row groups of 50; decimals
//! and UTC timestamps) builds byte-identical decks through `--data
//! NAME=FILE`; broken files are located errors that leave the previous
//! deck as it was. Fixtures: `tests/formats/make_fixtures.py` (openpyxl,
//! odfpy, msoffcrypto-tool, pyarrow) and `tests/formats/make_cells.py`
//! (formulas with cached values and bad cells, written part by part).

mod common;

use std::fs;
use std::path::Path;

use common::{crescendo, read_dir_files, root, scratch};

const STORY: &str = r#"story "Takings at three branches"

source "Invented ledger of three branches"

data ledger from "ledger.csv" { day: date, branch: text, amount: number }

view monthly = ledger
  | add month = month(day)
  | by month, branch: amount = sum(amount), days = count(amount)

view weekly = ledger
  | add week = week_start(day)
  | by week: amount = sum(amount)

view rows = ledger
  | keep day >= "2024-02-27" and day <= "2024-03-01"

frame "Takings by month" {
  line monthly: x month, y amount, series branch
  y title "Takings per month"
}
frame "Takings by week" {
  bars weekly: category week, value amount
  y title "Takings per week"
}
frame "Around the leap day" {
  table rows
}
"#;

fn setup(name: &str) -> std::path::PathBuf {
    let dir = scratch(name);
    for entry in fs::read_dir(root().join("tests/formats")).expect("fixtures") {
        let p = entry.expect("entry").path();
        if p.extension().is_some_and(|e| e != "py") {
            fs::copy(&p, dir.join(p.file_name().expect("name"))).expect("copy");
        }
    }
    fs::write(dir.join("story.cresc"), STORY).expect("story");
    dir
}

fn text(o: &std::process::Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    )
}

fn build(dir: &Path, data: &str, out: &str) -> std::process::Output {
    crescendo(
        dir,
        &[
            "build",
            "story.cresc",
            "--no-cache",
            "--data",
            &format!("ledger={data}"),
            "--out",
            out,
        ],
    )
}

#[test]
fn the_same_rows_in_every_format_build_the_same_deck() {
    let dir = setup("formats-same");
    let a = build(&dir, "ledger.csv", "deck-csv");
    assert!(a.status.success(), "{}", text(&a));
    let csv = read_dir_files(&dir.join("deck-csv"));
    assert!(csv.len() > 3);
    // the leap day and the rows around it came through as dates
    let plan = crescendo(
        &dir,
        &["plan", "story.cresc", "--data", "ledger=ledger.xlsx"],
    );
    assert!(plan.status.success(), "{}", text(&plan));
    let p = String::from_utf8_lossy(&plan.stdout);
    assert!(p.contains("2024-02-29") && p.contains("2024-03-01"), "{p}");
    for file in [
        "ledger.xlsx",
        "ledger-1904.xlsx",
        "ledger.ods",
        "ledger.parquet",
        "ledger-zstd.parquet",
        "ledger-decimal.parquet",
    ] {
        let out = format!("deck-{file}");
        let o = build(&dir, file, &out);
        assert!(o.status.success(), "{file}: {}", text(&o));
        let other = read_dir_files(&dir.join(&out));
        let names_a: Vec<&String> = csv.iter().map(|(n, _)| n).collect();
        let names_b: Vec<&String> = other.iter().map(|(n, _)| n).collect();
        assert_eq!(names_a, names_b, "{file}");
        for ((n, x), (_, y)) in csv.iter().zip(&other) {
            assert!(x == y, "{file}: `{n}` differs from the CSV deck");
        }
    }
    let _ = fs::remove_dir_all(&dir);
}

#[test]
fn broken_workbooks_are_located_and_keep_the_previous_deck() {
    let dir = setup("formats-broken");
    let good = build(&dir, "ledger.xlsx", "deck");
    assert!(good.status.success(), "{}", text(&good));
    let before = read_dir_files(&dir.join("deck"));
    let cases: [(&str, &str, &[&str]); 6] = [
        (
            "nested.parquet",
            "",
            &["column `branch`", "nested group", "Parquet"],
        ),
        ("truncated.parquet", "", &["damaged, cut short"]),
        ("encrypted.xlsx", "", &["encrypted", "password"]),
        ("truncated.xlsx", "", &["damaged, cut short"]),
        (
            "text-in-date.xlsx",
            "",
            &["sheet `Ledger`", "cell A9", "`soon`", "declared date"],
        ),
        (
            "merged-header.xlsx",
            "",
            &[
                "sheet `Ledger`",
                "cell C1",
                "header cell is blank",
                "merged",
            ],
        ),
    ];
    for (file, _, wants) in cases {
        let o = build(&dir, file, "deck");
        assert!(!o.status.success(), "{file} built");
        let t = text(&o);
        assert!(!t.contains("panicked"), "{t}");
        for w in wants {
            assert!(t.contains(w), "{file}: `{w}` in {t}");
        }
        assert_eq!(read_dir_files(&dir.join("deck")), before, "{file}");
    }
    // a missing sheet, with the nearest name; a bad block; a sheet of a CSV
    let story = |from: &str| STORY.replace("\"ledger.csv\"", from);
    let bad = [
        (
            "\"ledger.xlsx\" sheet \"Ledgr\"",
            vec![
                "no sheet named `Ledgr`",
                "did you mean `Ledger`?",
                "^^^^^^^",
            ],
        ),
        (
            "\"ledger.xlsx\" cells \"C9:A1\"",
            vec!["`C9:A1` is not a block of cells"],
        ),
        ("\"ledger.csv\" sheet \"Ledger\"", vec!["is not a workbook"]),
    ];
    for (from, wants) in bad {
        fs::write(dir.join("bad.cresc"), story(from)).expect("story");
        let o = crescendo(&dir, &["build", "bad.cresc", "--out", "deck"]);
        assert!(!o.status.success(), "{from}");
        let t = text(&o);
        for w in wants {
            assert!(t.contains(w), "{from}: `{w}` in {t}");
        }
        assert_eq!(read_dir_files(&dir.join("deck")), before, "{from}");
    }
    // a block of a named sheet: the header and 72 days of 3 rows, up to
    // the leap day
    fs::write(
        dir.join("block.cresc"),
        story("\"ledger.xlsx\" sheet \"Ledger\" cells \"A1:C217\""),
    )
    .expect("story");
    let o = crescendo(&dir, &["plan", "block.cresc"]);
    assert!(o.status.success(), "{}", text(&o));
    let p = String::from_utf8_lossy(&o.stdout);
    assert!(p.contains("2024-02-29") && !p.contains("2024-03-01"), "{p}");
    let _ = fs::remove_dir_all(&dir);
}

/// Views that all start with `keep`: the Parquet row groups (50 rows each,
/// in date order) that no view can keep are not decoded, and the deck is
/// still the CSV one.
#[test]
fn parquet_row_groups_are_skipped_by_their_statistics() {
    let dir = setup("formats-skip");
    let story = r#"story "Late winter takings"
source "Invented ledger of three branches"
conclusion "Late winter takings"
data ledger from "ledger.csv" { day: date, branch: text, amount: number }
view late = ledger
  | keep day >= "2024-02-20" and amount > 100
  | add week = week_start(day)
  | by week: amount = sum(amount)
view north = ledger
  | keep branch = "North" and day >= "2024-02-25"
  | by branch: amount = sum(amount)
frame "Late winter" {
  bars late: category week, value amount
  y title "Takings per week"
}
frame "North" {
  bars north: category branch, value amount
  y title "Takings"
}
"#;
    fs::write(dir.join("story.cresc"), story).expect("story");
    let a = build(&dir, "ledger.csv", "deck-csv");
    assert!(a.status.success(), "{}", text(&a));
    let b = crescendo(
        &dir,
        &[
            "build",
            "story.cresc",
            "--data",
            "ledger=ledger.parquet",
            "--out",
            "deck-pq",
        ],
    );
    assert!(b.status.success(), "{}", text(&b));
    // 240 rows from 2023-12-20, 3 a day: the first 3 groups end before
    // 2024-02-09
    assert!(
        text(&b).contains("row groups skipped by their statistics: ledger: 3"),
        "{}",
        text(&b)
    );
    // both views' `keep` and `by` ran on the row groups as they were
    // decoded (the streamed path), and gave the CSV deck
    assert!(
        text(&b).contains("streamed views: 2 computed"),
        "{}",
        text(&b)
    );
    assert_eq!(
        read_dir_files(&dir.join("deck-csv")),
        read_dir_files(&dir.join("deck-pq"))
    );
    // a view that does not start with `keep` reads every group
    fs::write(
        dir.join("story.cresc"),
        story
            .replace(
                "view north = ledger\n  | keep branch = \"North\" and",
                "view north = ledger\n  | by branch: amount = sum(amount)\n  | keep amount > 0 and",
            )
            .replace(
                "and day >= \"2024-02-25\"\n  | by branch: amount = sum(amount)",
                "",
            ),
    )
    .expect("story");
    let c = crescendo(
        &dir,
        &[
            "build",
            "story.cresc",
            "--data",
            "ledger=ledger.parquet",
            "--out",
            "deck-all",
        ],
    );
    assert!(c.status.success(), "{}", text(&c));
    assert!(!text(&c).contains("row groups skipped"), "{}", text(&c));
    let _ = fs::remove_dir_all(&dir);
}

/// Every bad cell of a workbook at once, each naming its sheet and A1
/// cell, up to the cap a CSV file has (20; the last says the read stopped).
/// Fixture: `tests/formats/make_cells.py` (hand-written OOXML parts).
#[test]
fn a_workbook_reports_every_bad_cell_up_to_the_cap() {
    let dir = setup("formats-bad-cells");
    let story = |sheet: &str| {
        format!(
            "story \"Bad cells\"\ndata d from \"bad-cells.xlsx\" sheet \"{sheet}\" {{ day: date, amount: number }}\n\
             view v = d | by branch: amount = sum(amount)\nframe \"f\" {{\n  bars v: category branch, value amount\n}}\n"
        )
    };
    fs::write(dir.join("few.cresc"), story("Few")).unwrap();
    let o = crescendo(&dir, &["check", "few.cresc"]);
    assert!(!o.status.success());
    let t = text(&o);
    for w in [
        "sheet `Few` of `bad-cells.xlsx`, cell C3 holds the spreadsheet error #DIV/0!",
        "sheet `Few` of `bad-cells.xlsx`, cell A4 holds the text `soon`",
        "sheet `Few` of `bad-cells.xlsx`, cell C5 holds the text `12 units`",
        "3 errors",
    ] {
        assert!(t.contains(w), "`{w}` in {t}");
    }
    assert_eq!(t.matches("error[bad-value]").count(), 3, "{t}");
    assert!(t.contains("few.cresc:2:"), "located at the data item: {t}");
    fs::write(dir.join("many.cresc"), story("Many")).unwrap();
    let o = crescendo(&dir, &["check", "many.cresc"]);
    let t = text(&o);
    assert!(!o.status.success());
    assert_eq!(t.matches("error[bad-value]").count(), 20, "{t}");
    assert!(
        t.contains("cell C21 holds the spreadsheet error #N/A"),
        "{t}"
    );
    assert!(!t.contains("cell C22"), "{t}");
    assert!(t.contains("stopped at 20 errors"), "{t}");
    let _ = fs::remove_dir_all(&dir);
}

/// A formula cell is read as the value the workbook cached when it was
/// last saved (numbers and texts), never recalculated. Fixture:
/// `tests/formats/make_cells.py`.
#[test]
fn formula_cells_are_read_from_their_cached_values() {
    let dir = setup("formats-formulas");
    let story = "story \"Formulas\"\ndata d from \"formulas.xlsx\"\n\
        value doubled = sum(d.double where branch != \"Total\")\nvalue total = last(d.double)\n\
        value harbour = sum(d.double where branch = \"Harbour\")\n\
        value total_amount = last(d.amount)\nvalue tag = first(d.tag)\n\
        frame \"f\" {\n  bars d: category branch, value double\n  notes \"{doubled}|{total}|{total_amount}|{tag}|{harbour}\"\n}\n";
    fs::write(dir.join("f.cresc"), story).unwrap();
    let o = crescendo(&dir, &["plan", "f.cresc"]);
    let t = text(&o);
    assert!(o.status.success(), "{t}");
    // cached: 24 + 15 + 60 = 99 over the three rows, the SUM row's 99 and
    // 49.5, the text formula's "North!", Harbour's 7.5 * 2
    assert!(t.contains("99|99|49.5|North!|15"), "{t}");
    let _ = fs::remove_dir_all(&dir);
}
