//! Every user mistake gets a located message, a non-zero exit status, no
//! panic, and leaves the previous deck exactly as it was.

mod common;

use std::fs;

use common::{crescendo, read_dir_files, scratch};

const GOOD_STORY: &str = r#"story "Loans by branch"
source "Invented demo data"

data loans from "loans.csv"

view by_branch = loans
  | by month, branch: loans = sum(loans)

frame "Loans per month" {
  line by_branch: x month, y loans, series branch
  spotlight "Quarry Street"
}
"#;

const GOOD_CSV: &str = "month,branch,loans\n2024-01,Quarry Street,120\n2024-01,Elm Row,80\n2024-02,Quarry Street,130\n2024-02,Elm Row,85\n";

/// Build a good deck in a fresh folder, then replace the story and/or CSV
/// with broken versions and build again. Returns the second run's stderr and
/// checks that it failed with status 1 and left the deck untouched.
fn run_broken(name: &str, story: impl AsRef<[u8]>, csv: Option<&str>) -> String {
    let dir = scratch(name);
    fs::write(dir.join("story.cresc"), GOOD_STORY).unwrap();
    fs::write(dir.join("loans.csv"), GOOD_CSV).unwrap();
    let first = crescendo(&dir, &["build", "story.cresc"]);
    assert!(
        first.status.success(),
        "{}",
        String::from_utf8_lossy(&first.stderr)
    );
    let before = read_dir_files(&dir.join("deck"));

    fs::write(dir.join("story.cresc"), story).unwrap();
    match csv {
        Some(c) => fs::write(dir.join("loans.csv"), c).unwrap(),
        None => fs::remove_file(dir.join("loans.csv")).unwrap(),
    }
    let out = crescendo(&dir, &["build", "story.cresc"]);
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    assert_eq!(
        out.status.code(),
        Some(1),
        "expected a story error:\n{stderr}"
    );
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert_eq!(
        read_dir_files(&dir.join("deck")),
        before,
        "the previous deck changed"
    );
    // nothing half-written next to it (the cache folder is not a deck)
    let leftovers: Vec<_> = fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with('.') && n != ".crescendo-cache")
        .collect();
    assert!(leftovers.is_empty(), "{leftovers:?}");
    stderr
}

/// Assert the message names `file:line:col` and draws a caret.
fn assert_located(stderr: &str, location: &str) {
    assert!(
        stderr.contains(location),
        "expected {location} in:\n{stderr}"
    );
    assert!(stderr.contains('^'), "expected a caret in:\n{stderr}");
}

#[test]
fn syntax_error() {
    let story = GOOD_STORY.replace("view by_branch = loans", "view by_branch loans");
    let err = run_broken("syntax", &story, Some(GOOD_CSV));
    assert_located(&err, "story.cresc:6:16");
    insta::assert_snapshot!(err);
}

#[test]
fn unknown_keyword_suggests_the_closest() {
    let story = GOOD_STORY.replace("  spotlight \"Quarry", "  spotlite \"Quarry");
    let err = run_broken("keyword", &story, Some(GOOD_CSV));
    assert_located(&err, "story.cresc:11:3");
    assert!(err.contains("did you mean `spotlight`?"), "{err}");
    insta::assert_snapshot!(err);
}

#[test]
fn unknown_view_name_suggests_the_closest() {
    let story = GOOD_STORY.replace("line by_branch:", "line by_brnach:");
    let err = run_broken("view-name", &story, Some(GOOD_CSV));
    assert_located(&err, "story.cresc:10:8");
    assert!(err.contains("did you mean `by_branch`?"), "{err}");
    insta::assert_snapshot!(err);
}

#[test]
fn a_missing_column_option_names_the_option_and_how_to_give_it() {
    let story = GOOD_STORY.replace(
        "line by_branch: x month, y loans, series branch",
        "scatter by_branch: y loans",
    );
    let err = run_broken("no-x", &story, Some(GOOD_CSV));
    assert_located(&err, "story.cresc:10:3");
    assert!(err.contains("which column runs along x?"), "{err}");
    assert!(err.contains("no `x` given"), "{err}");
    assert!(
        err.contains("write `scatter by_branch: x COLUMN, y COLUMN`"),
        "{err}"
    );
}

#[test]
fn unknown_data_name_suggests_the_closest() {
    let story = GOOD_STORY.replace("view by_branch = loans", "view by_branch = laons");
    let err = run_broken("data-name", &story, Some(GOOD_CSV));
    assert_located(&err, "story.cresc:6:18");
    assert!(err.contains("did you mean `loans`?"), "{err}");
}

#[test]
fn unknown_column_suggests_the_closest() {
    let story = GOOD_STORY.replace("by month, branch:", "by month, brnch:");
    let err = run_broken("column", &story, Some(GOOD_CSV));
    assert_located(&err, "story.cresc:7:15");
    assert!(err.contains("did you mean `branch`?"), "{err}");
    insta::assert_snapshot!(err);
}

#[test]
fn a_column_named_twice_in_a_step_is_located() {
    let story = GOOD_STORY.replace("by month, branch:", "by month, branch, month:");
    let err = run_broken("key-twice", &story, Some(GOOD_CSV));
    assert_located(&err, "story.cresc:7:23");
    assert!(err.contains("`month` is already a key"), "{err}");
    assert!(err.contains("repeated key"), "{err}");
    let columns = "  | columns month, branch, loans, month\n  | by month";
    let story = GOOD_STORY.replace("  | by month", columns);
    let err = run_broken("column-twice", &story, Some(GOOD_CSV));
    assert_located(&err, "story.cresc:7:35");
    assert!(err.contains("`month` is listed twice"), "{err}");
    assert!(err.contains("again here"), "{err}");
}

#[test]
fn text_used_as_a_number_names_the_first_offending_row() {
    let csv = GOOD_CSV.replace("2024-02,Quarry Street,130", "2024-02,Quarry Street,n/a");
    let err = run_broken("text-number", GOOD_STORY, Some(&csv));
    assert_located(&err, "story.cresc:7:35");
    assert!(err.contains("data row 3 of `loans` holds `n/a`"), "{err}");
    insta::assert_snapshot!(err);
}

#[test]
fn declared_number_holding_text_points_into_the_csv() {
    let story = GOOD_STORY.replace(
        "data loans from \"loans.csv\"",
        "data loans from \"loans.csv\" { loans: number }",
    );
    let csv = GOOD_CSV.replace("2024-02,Elm Row,85", "2024-02,Elm Row,eighty");
    let err = run_broken("declared-number", &story, Some(&csv));
    assert_located(&err, "loans.csv:5:17");
    assert!(err.contains("row 4"), "{err}");
    insta::assert_snapshot!(err);
}

/// A number written with a thousands separator is a real value: the help
/// names the data item's option that reads it and never suggests reading it as missing (that once
/// dropped a month's rows from a total without a word).
#[test]
fn a_grouped_number_is_never_suggested_as_missing() {
    let story = GOOD_STORY.replace(
        "data loans from \"loans.csv\"",
        "data loans from \"loans.csv\" { loans: number }",
    );
    let csv = GOOD_CSV.replace("2024-02,Elm Row,85", "2024-02,Elm Row,\"1,050\"");
    let err = run_broken("grouped-number", &story, Some(&csv));
    assert_located(&err, "loans.csv:5:17");
    assert!(
        err.contains("no group separators unless the data item says"),
        "{err}"
    );
    // the help names the option that reads the cell as the number it is
    assert!(
        err.contains("name how the file writes numbers on the data item: `thousands \",\"`"),
        "{err}"
    );
    assert!(!err.contains("missing-value"), "{err}");
}

#[test]
fn missing_csv_file() {
    let err = run_broken("missing-csv", GOOD_STORY, None);
    assert_located(&err, "story.cresc:4:17");
    assert!(err.contains("cannot read data file"), "{err}");
    insta::assert_snapshot!(err);
}

#[test]
fn empty_csv_file() {
    let err = run_broken("empty-csv", GOOD_STORY, Some(""));
    assert_located(&err, "story.cresc:4:17");
    insta::assert_snapshot!(err);
}

#[test]
fn ragged_csv_row() {
    let csv = GOOD_CSV.replace("2024-01,Elm Row,80", "2024-01,Elm Row,80,extra");
    let err = run_broken("ragged", GOOD_STORY, Some(&csv));
    assert_located(&err, "loans.csv:3:");
    insta::assert_snapshot!(err);
}

#[test]
fn frame_refers_to_a_series_that_does_not_exist() {
    let story = GOOD_STORY.replace("  spotlight \"Quarry Street\"", "  hide \"Elm Road\"");
    let err = run_broken("no-series", &story, Some(GOOD_CSV));
    assert_located(&err, "story.cresc:11:8");
    assert!(err.contains("did you mean \"Elm Row\"?"), "{err}");
    insta::assert_snapshot!(err);
}

#[test]
fn spotlight_on_a_missing_series() {
    let story = GOOD_STORY.replace("spotlight \"Quarry Street\"", "spotlight \"Harbour\"");
    let err = run_broken("no-spotlight", &story, Some(GOOD_CSV));
    assert_located(&err, "story.cresc:11:13");
    assert!(err.contains("no series named \"Harbour\""), "{err}");
    insta::assert_snapshot!(err);
}

#[test]
fn every_error_in_a_file_is_reported() {
    let story = GOOD_STORY
        .replace("view by_branch = loans", "view by_branch = loans\n  | keep")
        .replace("  spotlight \"Quarry", "  spotlite \"Quarry");
    let err = run_broken("many", &story, Some(GOOD_CSV));
    assert!(err.contains("story.cresc:7:9"), "{err}");
    assert!(err.contains("story.cresc:12:3"), "{err}");
    assert!(err.contains("2 errors"), "{err}");
}

#[test]
fn out_folder_that_is_not_a_deck_is_refused() {
    let dir = scratch("refuse-out");
    fs::write(dir.join("story.cresc"), GOOD_STORY).unwrap();
    fs::write(dir.join("loans.csv"), GOOD_CSV).unwrap();
    fs::create_dir(dir.join("mine")).unwrap();
    fs::write(dir.join("mine/notes.txt"), "precious").unwrap();
    let out = crescendo(&dir, &["build", "story.cresc", "--out", "mine"]);
    assert_eq!(out.status.code(), Some(4));
    assert_eq!(
        fs::read_to_string(dir.join("mine/notes.txt")).unwrap(),
        "precious"
    );
}

/// A folder whose deck.json is empty or not JSON is not a deck: the build
/// refuses it and touches nothing (it used to delete every other file).
#[test]
fn out_folder_with_an_unreadable_manifest_is_refused() {
    for (case, manifest) in [("empty", ""), ("text", "not json\n"), ("array", "[]")] {
        let dir = scratch(&format!("refuse-bad-manifest-{case}"));
        fs::write(dir.join("story.cresc"), GOOD_STORY).unwrap();
        fs::write(dir.join("loans.csv"), GOOD_CSV).unwrap();
        fs::create_dir_all(dir.join("v/sub")).unwrap();
        fs::write(dir.join("v/deck.json"), manifest).unwrap();
        fs::write(dir.join("v/important.txt"), "x").unwrap();
        fs::write(dir.join("v/sub/more.txt"), "y").unwrap();
        let out = crescendo(&dir, &["build", "story.cresc", "--out", "v"]);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(4), "{case}: {err}");
        assert!(err.contains("not a deck manifest"), "{case}: {err}");
        assert_eq!(
            fs::read_to_string(dir.join("v/deck.json")).unwrap(),
            manifest
        );
        assert_eq!(
            fs::read_to_string(dir.join("v/important.txt")).unwrap(),
            "x"
        );
        assert_eq!(fs::read_to_string(dir.join("v/sub/more.txt")).unwrap(), "y");
        assert_eq!(fs::read_dir(dir.join("v")).unwrap().count(), 3, "{case}");
    }
}

#[test]
fn missing_story_file() {
    let dir = scratch("no-story");
    let out = crescendo(&dir, &["build", "nothing.cresc"]);
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("cannot read story file `nothing.cresc`"));
}

/// A story that is not UTF-8 is located like a CSV with a bad byte: line,
/// column, byte offset and the line as an excerpt (it gave only "stream did
/// not contain valid UTF-8"). `fmt` says the same.
#[test]
fn invalid_utf8_in_the_story_is_located() {
    let story = GOOD_STORY.replace("Invented demo data", "Invented d\u{e9}mo data");
    let at = story.find('\u{e9}').unwrap();
    let mut bytes = story.into_bytes();
    // é in Latin-1: one byte that UTF-8 cannot read
    bytes.splice(at..at + 2, [0xe9]);
    let stderr = run_broken("bad-utf8", &bytes, Some(GOOD_CSV));
    let dir = scratch("bad-utf8-fmt");
    fs::write(dir.join("story.cresc"), &bytes).unwrap();
    assert_located(&stderr, "story.cresc:2:19");
    assert!(stderr.contains("error[bad-encoding]"), "{stderr}");
    assert!(
        stderr.contains(&format!("the byte at offset {at}")),
        "{stderr}"
    );
    assert!(
        stderr.contains("source \"Invented d\u{fffd}mo data\""),
        "{stderr}"
    );
    let fmt = crescendo(&dir, &["fmt", "--check", "story.cresc"]);
    let err = String::from_utf8_lossy(&fmt.stderr);
    assert_eq!(fmt.status.code(), Some(2), "{err}");
    assert!(err.contains("story.cresc:2:19"), "{err}");
}

/// A control character in a story string is refused at the character (it
/// went into the SVG unescaped: not XML, while the build exited 0).
#[test]
fn control_characters_in_the_story_are_located() {
    let story = GOOD_STORY.replace(
        "spotlight",
        "callout \"2024-02\" \"Bell\u{7}\"\n  spotlight",
    );
    let stderr = run_broken("control-character", &story, Some(GOOD_CSV));
    assert_located(&stderr, "story.cresc:11:26");
    assert!(stderr.contains("error[control-character]"), "{stderr}");
    assert!(stderr.contains("U+0007"), "{stderr}");
}

/// A data file with several bad cells: one build lists them all, and the
/// streamed read (a view starting with `by`) and the whole load (a chart on
/// the data itself) report exactly the same located errors.
#[test]
fn every_bad_cell_of_a_data_file_is_reported_at_once_on_both_read_paths() {
    let declared = GOOD_STORY.replace(
        "data loans from \"loans.csv\"",
        "data loans from \"loans.csv\" { month: month, loans: number }",
    );
    // the same lines up to the data item: only the reader differs
    let loaded = declared.replace(
        "line by_branch: x month, y loans, series branch",
        "line loans: x month, y loans, series branch",
    );
    assert_ne!(declared, loaded);
    let csv = "month,branch,loans\n\
               2024-01,Quarry Street,120\n\
               2024-01,Elm Row,eighty\n\
               2024-13,Quarry Street,130\n\
               2024-02,Elm Row,85,extra\n\
               2024-03,Elm Row,n/a\n";
    let streamed = run_broken("all-at-once-streamed", &declared, Some(csv));
    let whole = run_broken("all-at-once-loaded", &loaded, Some(csv));
    for (line_col, what) in [
        (
            "loans.csv:3:17",
            "column `loans` is declared number, but row 2 holds `eighty`",
        ),
        (
            "loans.csv:4:1",
            "column `month` is declared month, but row 3 holds `2024-13`",
        ),
        ("loans.csv:5:20", "row 4 has 4 fields, but the header has 3"),
        (
            "loans.csv:6:17",
            "column `loans` is declared number, but row 5 holds `n/a`",
        ),
    ] {
        assert!(streamed.contains(line_col), "{line_col}\n{streamed}");
        assert!(streamed.contains(what), "{what}\n{streamed}");
    }
    assert!(streamed.contains("4 errors"), "{streamed}");
    assert_eq!(streamed, whole);
}

#[test]
fn a_frame_saying_its_takeaway_or_notes_twice_is_told_each() {
    let story = GOOD_STORY.replace(
        "  spotlight \"Quarry Street\"\n",
        "  takeaway \"One\"\n  takeaway \"Two\"\n  notes \"A\"\n  notes \"B\"\n",
    );
    let err = run_broken("frame-texts", &story, Some(GOOD_CSV));
    assert_located(&err, "story.cresc:12:3");
    assert_located(&err, "story.cresc:14:3");
    for text in [
        "this frame has two takeaways",
        "second takeaway",
        "this frame has two notes",
        "second notes",
    ] {
        assert!(err.contains(text), "{text}: {err}");
    }
}

#[test]
fn unfold_over_a_name_the_chart_lacks_suggests_the_closest() {
    let story = GOOD_STORY.replace("  spotlight \"Quarry Street\"\n", "  unfold \"Elm Raw\"\n");
    let err = run_broken("unfold-name", &story, Some(GOOD_CSV));
    assert!(
        err.contains("nothing named \"Elm Raw\" to unfold in this chart"),
        "{err}"
    );
    assert!(err.contains("not in this chart"), "{err}");
    assert!(err.contains("did you mean \"Elm Row\"?"), "{err}");
}

#[test]
fn a_callout_on_a_part_the_chart_lacks_lists_its_parts() {
    let story = GOOD_STORY.replace(
        "  line by_branch: x month, y loans, series branch\n  spotlight \"Quarry Street\"\n",
        "  bars by_branch: category branch, value loans, stack month\n  callout \"Elm Row\" on \"2025-01\" \"text\"\n",
    );
    let err = run_broken("callout-part", &story, Some(GOOD_CSV));
    assert!(
        err.contains("no part named \"2025-01\" in this chart"),
        "{err}"
    );
    assert!(err.contains("not a part here"), "{err}");
    assert!(
        err.contains("this chart has \"Jan 2024\", \"Feb 2024\""),
        "{err}"
    );
}

#[test]
fn keep_without_a_condition_is_told() {
    let story = GOOD_STORY.replace(
        "  | by month, branch: loans = sum(loans)\n",
        "  | keep loans\n  | by month, branch: loans = sum(loans)\n",
    );
    let err = run_broken("step-types", &story, Some(GOOD_CSV));
    assert!(
        err.contains("`keep` needs a condition, but this is"),
        "{err}"
    );
    assert!(err.contains("not a condition"), "{err}");
    assert_located(&err, "story.cresc:7:10");
}

#[test]
fn add_without_a_number_is_told() {
    let story = GOOD_STORY.replace(
        "  | by month, branch: loans = sum(loans)\n",
        "  | add label = branch\n  | by month, branch: loans = sum(loans)\n",
    );
    let err = run_broken("add-type", &story, Some(GOOD_CSV));
    assert!(
        err.contains("`add` computes a number, but this is"),
        "{err}"
    );
    assert!(err.contains("not a number"), "{err}");
}
