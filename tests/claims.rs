//! Values, quoted numbers and claims, end to end: a claim that the new data
//! breaks stops the build (exit 3) and keeps the previous deck byte for
//! byte; `--draft` builds anyway and marks the frames that rest on it;
//! `check` reports in human and JSON form; rebuilding and `diff` say which
//! quoted numbers moved.

mod common;

use std::fs;

use common::{crescendo, read_dir_files, root, scratch};
use serde_json::Value;

/// Copy the clinics story (both data versions) into a scratch folder.
fn clinics(name: &str) -> std::path::PathBuf {
    let dir = scratch(name);
    fs::create_dir_all(dir.join("data")).unwrap();
    let src = root().join("stories/clinics");
    fs::copy(src.join("clinics.cresc"), dir.join("clinics.cresc")).unwrap();
    for f in ["followups-2024-11.csv", "followups-2024-12.csv"] {
        fs::copy(src.join("data").join(f), dir.join("data").join(f)).unwrap();
    }
    dir
}

const NEW_DATA: &str = "followups=data/followups-2024-12.csv";

#[test]
fn a_broken_claim_stops_the_build_and_keeps_the_deck() {
    let dir = clinics("claim-stop");
    let first = crescendo(&dir, &["build", "clinics.cresc"]);
    assert!(
        first.status.success(),
        "{}",
        String::from_utf8_lossy(&first.stderr)
    );
    let before = read_dir_files(&dir.join("deck"));

    let second = crescendo(&dir, &["build", "clinics.cresc", "--data", NEW_DATA]);
    let err = String::from_utf8_lossy(&second.stderr);
    assert_eq!(second.status.code(), Some(3), "{err}");
    assert!(
        err.contains("the data no longer supports: \"Video is now over a third of follow-ups\""),
        "{err}"
    );
    assert!(err.contains("clinics.cresc:42:7"), "{err}");
    // the expression, each operand's value (three significant digits,
    // the number policy) and the sentence
    assert!(
        err.contains("video_share_now > 1 / 3: 0.249 > 0.333 is false"),
        "{err}"
    );
    assert!(err.contains("video_now = 664"), "{err}");
    assert!(err.contains("the sentence it protects"), "{err}");
    assert_eq!(
        read_dir_files(&dir.join("deck")),
        before,
        "the previous deck changed"
    );
}

#[test]
fn a_draft_marks_the_frames_that_rest_on_the_failed_claim() {
    let dir = clinics("claim-draft");
    let run = crescendo(
        &dir,
        &["build", "clinics.cresc", "--data", NEW_DATA, "--draft"],
    );
    let err = String::from_utf8_lossy(&run.stderr);
    assert!(run.status.success(), "{err}");
    assert!(err.contains("warning[claim-false]"), "{err}");
    let manifest: Value =
        serde_json::from_slice(&fs::read(dir.join("deck/deck.json")).unwrap()).unwrap();
    let notices: Vec<usize> = manifest["frames"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["notices"].as_array().map_or(0, Vec::len))
        .collect();
    // only the frame that quotes video_share_now rests on the claim
    assert_eq!(notices, vec![0, 0, 0, 1]);
    let claims = manifest["claims"].as_array().unwrap();
    assert_eq!(claims.iter().filter(|c| c["holds"] == false).count(), 1);
    let svg = fs::read_to_string(
        fs::read_dir(dir.join("deck"))
            .unwrap()
            .map(|e| e.unwrap().path())
            .find(|p| p.file_name().unwrap().to_string_lossy().starts_with("04-"))
            .unwrap(),
    )
    .unwrap();
    assert!(
        svg.contains("Draft: the data does not support"),
        "the notice is drawn"
    );
}

#[test]
fn check_reports_values_and_claims() {
    let dir = clinics("check");
    let ok = crescendo(&dir, &["check", "clinics.cresc"]);
    let out = String::from_utf8_lossy(&ok.stdout);
    assert!(
        ok.status.success(),
        "{}",
        String::from_utf8_lossy(&ok.stderr)
    );
    assert!(out.contains("4 frames, 10 values, 3 claims"), "{out}");
    assert!(out.contains("value busiest = Northgate"), "{out}");
    assert!(
        out.contains("claim holds: \"Northgate is the busiest clinic\""),
        "{out}"
    );
    assert!(!dir.join("deck").exists(), "check draws nothing");

    let bad = crescendo(
        &dir,
        &[
            "check",
            "clinics.cresc",
            "--format",
            "json",
            "--data",
            NEW_DATA,
        ],
    );
    assert_eq!(bad.status.code(), Some(3));
    let report: Value = serde_json::from_slice(&bad.stdout).unwrap();
    assert_eq!(report["ok"], false);
    assert_eq!(report["status"], 3);
    let d = report["diagnostics"]
        .as_array()
        .unwrap()
        .iter()
        .find(|d| d["code"] == "claim-false")
        .expect("the failed claim is reported");
    assert_eq!(
        (d["line"].as_u64(), d["column"].as_u64()),
        (Some(42), Some(7))
    );
    assert_eq!(report["values"]["video_share_now"], "0.249");
    // the exact number beside the figure (664 / 2,664)
    let exact = report["exact"]["video_share_now"]
        .as_f64()
        .expect("a number");
    assert_eq!(exact, 664.0 / 2664.0);
}

#[test]
fn unknown_data_override_is_an_error() {
    let dir = clinics("bad-override");
    let run = crescendo(
        &dir,
        &["check", "clinics.cresc", "--data", "folowups=data/x.csv"],
    );
    let err = String::from_utf8_lossy(&run.stderr);
    assert_eq!(run.status.code(), Some(1), "{err}");
    assert!(err.contains("did you mean `followups`?"), "{err}");
    let run = crescendo(&dir, &["check", "clinics.cresc", "--data", "followups"]);
    assert_eq!(
        run.status.code(),
        Some(2),
        "a malformed option is a usage error"
    );
}

#[test]
fn rebuilds_and_diff_name_the_numbers_that_moved() {
    let dir = clinics("diff");
    assert!(crescendo(&dir, &["build", "clinics.cresc", "--out", "nov"])
        .status
        .success());
    // The December export with the November claim relaxed, so it builds.
    let story = fs::read_to_string(dir.join("clinics.cresc"))
        .unwrap()
        .replace(
            "claim video_share_now > 1 / 3",
            "claim video_share_now > 1 / 5",
        );
    fs::write(dir.join("clinics.cresc"), story).unwrap();
    let run = crescendo(
        &dir,
        &["build", "clinics.cresc", "--out", "nov", "--data", NEW_DATA],
    );
    let err = String::from_utf8_lossy(&run.stderr);
    assert!(run.status.success(), "{err}");
    assert!(
        err.contains("frame 4 \"Video is now 24.9% of follow-ups: plan rooms for it\""),
        "{err}"
    );
    assert!(err.contains("video_share_now 36.1% → 24.9%"), "{err}");
    assert!(err.contains("last_month Nov 2024 → Dec 2024"), "{err}");

    assert!(crescendo(
        &dir,
        &["build", "clinics.cresc", "--out", "dec", "--data", NEW_DATA]
    )
    .status
    .success());
    let same = crescendo(&dir, &["diff", "nov", "dec"]);
    assert_eq!(
        String::from_utf8_lossy(&same.stdout),
        "frames 1, 2, 3, 4 unchanged\n"
    );
    assert_eq!(same.status.code(), Some(0), "nothing changed");
    // as diff tools do: 1 when something changed, 2 when a deck is missing
    assert!(crescendo(&dir, &["build", "clinics.cresc", "--out", "oct"])
        .status
        .success());
    let moved = crescendo(&dir, &["diff", "oct", "dec"]);
    assert_eq!(moved.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&moved.stdout).contains("video_share_now 36.1% → 24.9%"));
    let missing = crescendo(&dir, &["diff", "nov", "nowhere"]);
    assert_eq!(missing.status.code(), Some(2));
}

/// A frame whose takeaway and chart change together, a spotlight moved, a
/// callout added and a value quoted nowhere that moved: `diff` names each.
#[test]
fn diff_lists_every_kind_of_change_and_every_moved_value() {
    let dir = scratch("diff-kinds");
    let story = |takeaway: &str, focus: &str, note: &str| {
        format!(
            "story \"Loans\"\n\ndata loans from \"loans.csv\" {{\n  month: month\n  branch: text\n  loans: number\n}}\n\n\
             view monthly = loans | by month, branch: loans = sum(loans)\n\
             value total = sum(loans.loans)\n\n\
             frame \"Loans by branch\" {{\n  line monthly: x month, y loans, series branch\n  spotlight \"{focus}\"\n{note}  takeaway \"{takeaway}\"\n}}\n"
        )
    };
    let data = |march: u32| {
        format!("month,branch,loans\n2024-01,East,10\n2024-01,West,7\n2024-02,East,12\n2024-02,West,8\n2024-03,East,{march}\n2024-03,West,9\n")
    };
    fs::write(dir.join("loans.csv"), data(14)).unwrap();
    fs::write(dir.join("s.cresc"), story("East leads.", "East", "")).unwrap();
    let built = crescendo(&dir, &["build", "s.cresc", "--out", "old"]);
    assert!(
        built.status.success(),
        "{}",
        String::from_utf8_lossy(&built.stderr)
    );
    fs::write(dir.join("loans.csv"), data(20)).unwrap();
    let note = "  callout \"2024-03\" on \"East\" \"New branch hours\"\n";
    fs::write(dir.join("s.cresc"), story("East pulls away.", "West", note)).unwrap();
    let built = crescendo(&dir, &["build", "s.cresc", "--out", "new"]);
    assert!(
        built.status.success(),
        "{}",
        String::from_utf8_lossy(&built.stderr)
    );
    let run = crescendo(&dir, &["diff", "old", "new"]);
    assert_eq!(run.status.code(), Some(1));
    assert_eq!(
        String::from_utf8_lossy(&run.stdout),
        "frame 1 \"Loans by branch\": changed\n\
         \x20 takeaway: “East leads.” → “East pulls away.”\n\
         \x20 chart data: East 2024-03: 14 → 20\n\
         \x20 roles: East focus → context; West context → focus\n\
         \x20 annotations: added callout “New branch hours” at 2024-03, 20\n\
         value total 60 → 66 (quoted nowhere)\n"
    );
    // piped into a reader that is gone (`| head`): a quiet end, no panic
    for args in [["diff", "old", "new"], ["diff", "old", "nowhere"]] {
        let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_crescendo"))
            .current_dir(&dir)
            .args(args)
            .stdout(std::process::Stdio::piped())
            .stderr(std::process::Stdio::piped())
            .spawn()
            .unwrap();
        // close both ends before the command has written anything
        drop(child.stdout.take());
        drop(child.stderr.take());
        let status = child.wait().unwrap();
        assert_ne!(status.code(), Some(101), "{args:?} panicked");
        assert!(status.code().is_some(), "{args:?} was killed");
    }
}
