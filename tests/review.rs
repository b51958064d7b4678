//! `crescendo review`: a story compared with itself at a git revision of a
//! repository made in the test (new data that moves a quoted value and
//! breaks a claim, a reworded takeaway, a frame moved), as Markdown and
//! JSON (snapshots), as a page, with its exit statuses and its errors.
//! The page in a real browser is tested in `tests/browser.rs`.

mod common;

use std::fs;
use std::path::Path;

use common::repo::{git, two_versions, DATA_V1, STORY_V1, STORY_V2};
use common::{crescendo, scratch};
use serde_json::Value;

fn text(out: &std::process::Output) -> (String, String) {
    (
        String::from_utf8_lossy(&out.stdout).to_string(),
        String::from_utf8_lossy(&out.stderr).to_string(),
    )
}

/// The commit id in the output, which depends on git's object format,
/// replaced by a marker.
fn without_commit(s: &str, dir: &Path, rev: &str) -> String {
    let out = std::process::Command::new("git")
        .args(["rev-parse", "--short", rev])
        .current_dir(dir)
        .output()
        .unwrap();
    let id = String::from_utf8_lossy(&out.stdout).trim().to_string();
    assert!(!id.is_empty());
    // gix and git may abbreviate to different lengths: cut at 7
    let mut s = s.to_string();
    for n in (7..=id.len()).rev() {
        s = s.replace(&id[..n], "<commit>");
    }
    s
}

#[test]
fn a_review_names_moved_numbers_failed_claims_and_moved_frames() {
    let dir = scratch("review-md");
    two_versions(&dir);
    let before: Vec<_> = fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .collect();

    let md = crescendo(
        &dir,
        &[
            "review",
            "story.cresc",
            "--against",
            "first",
            "--format",
            "markdown",
        ],
    );
    let (out, err) = text(&md);
    assert_eq!(md.status.code(), Some(3), "a claim fails now: {err}");
    // the rooms, worked by hand: ratio 480/320 = 1.5 over 1.2 leaves
    // (1.5 − 1.2)/1.2 = 25%, 418/380 = 1.1 leaves (1.1 − 1.2)/1.2 = −8.3%;
    // total 1048 about 1000 within 5% (50) uses 48, leaving 2/50 = 4%
    insta::assert_snapshot!("review_markdown", without_commit(&out, &dir, "first"));
    // the quoted value moved with its change, the claim fails, the table moved
    assert!(out.contains("`ratio` 1.5 → 1.1 (−0.4)"), "{out}");
    assert!(
        out.contains("**fails now**: \"East lends more than West\""),
        "{out}"
    );
    assert!(
        out.contains("**near miss**: \"About a thousand loans\""),
        "{out}"
    );
    assert!(
        out.contains("| 3 → 1 | The numbers | moved; chart data: East Loans: 480 → 418;"),
        "{out}"
    );
    // a value quoted nowhere that moved is listed too, as `diff` lists it
    assert!(
        out.contains("- `total` 1,000 → 1,048 (+48), quoted nowhere"),
        "{out}"
    );

    let json = crescendo(
        &dir,
        &[
            "review",
            "story.cresc",
            "--against",
            "first",
            "--format",
            "json",
        ],
    );
    assert_eq!(json.status.code(), Some(3));
    let (out, _) = text(&json);
    let v: Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["counts"]["failing_claims"], 1);
    assert_eq!(v["counts"]["moved"], 1);
    insta::assert_snapshot!("review_json", without_commit(&out, &dir, "first"));

    // nothing was written: no deck, no cache, no page
    let after: Vec<_> = fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .collect();
    assert_eq!(before, after);
    let _ = fs::remove_dir_all(&dir);
}

#[test]
fn exit_statuses_follow_claims_and_changes() {
    let dir = scratch("review-exit");
    two_versions(&dir);
    // the working files are the last commit: nothing changed
    let same = crescendo(
        &dir,
        &[
            "review",
            "story.cresc",
            "--format",
            "json",
            "--fail-on-change",
        ],
    );
    let (out, err) = text(&same);
    // the new data breaks a claim, so the status is 3 even unchanged
    assert_eq!(same.status.code(), Some(3), "{err}");
    let v: Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["counts"]["changed"], 0);
    assert_eq!(v["counts"]["unchanged"], 3);

    // back to the first data in the working files (not committed): the
    // claims hold, frames changed against the last commit
    fs::write(dir.join("loans.csv"), DATA_V1).unwrap();
    let changed = crescendo(&dir, &["review", "story.cresc", "--format", "markdown"]);
    assert_eq!(changed.status.code(), Some(0), "{}", text(&changed).1);
    assert!(text(&changed).0.contains("**holds again**"));
    let strict = crescendo(
        &dir,
        &[
            "review",
            "story.cresc",
            "--format",
            "markdown",
            "--fail-on-change",
        ],
    );
    assert_eq!(strict.status.code(), Some(1));
    // a frame added at the end, and one taken away
    let more = format!("{STORY_V2}frame \"West catches up\" {{\n  table loans\n}}\n");
    fs::write(dir.join("story.cresc"), more).unwrap();
    let added = crescendo(&dir, &["review", "story.cresc", "--format", "markdown"]);
    let (out, _) = text(&added);
    assert!(out.contains("| 4 | West catches up | new frame |"), "{out}");
    let fewer = STORY_V2.replace("frame \"The numbers\" {\n  table loans\n}\n", "");
    fs::write(dir.join("story.cresc"), fewer).unwrap();
    let removed = crescendo(&dir, &["review", "story.cresc", "--format", "markdown"]);
    let (out, _) = text(&removed);
    assert!(out.contains("| 1 | The numbers | removed |"), "{out}");
    assert!(
        out.contains("0 moved"),
        "the others kept their order: {out}"
    );
    // a file named with --data is today's for both versions: only the
    // story's changes remain (the claim fails on the new data in both)
    let v2 = dir.join("v2.csv");
    fs::write(&v2, common::repo::DATA_V2).unwrap();
    let data = format!("loans={}", v2.display());
    let same_data = crescendo(
        &dir,
        &[
            "review",
            "story.cresc",
            "--against",
            "first",
            "--format",
            "json",
            "--data",
            &data,
        ],
    );
    let (out, err) = text(&same_data);
    assert_eq!(same_data.status.code(), Some(3), "{err}");
    let v: Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["claims"][0]["verdict"], "still fails", "{out}");
    fs::remove_file(&v2).unwrap();
    // the first story in the working files: the lint finding is resolved
    fs::write(dir.join("story.cresc"), STORY_V1).unwrap();
    let resolved = crescendo(&dir, &["review", "story.cresc", "--format", "json"]);
    let v: Value = serde_json::from_str(&text(&resolved).0).unwrap();
    assert_eq!(v["lint"]["added"], serde_json::json!([]));
    // deck-wide, naming its frame; and on the frame it was about
    let removed = v["lint"]["removed"][0].as_str().unwrap();
    assert!(
        removed.starts_with("frame ") && removed.contains(": colour-key-text"),
        "{removed}"
    );
    let on_frame: Vec<&Value> = v["frames"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|f| f["lint_removed"].as_array().is_some_and(|l| !l.is_empty()))
        .collect();
    assert_eq!(on_frame.len(), 1, "{v}");
    assert!(on_frame[0]["lint_removed"][0]
        .as_str()
        .unwrap()
        .starts_with("colour-key-text"));
    // against itself: nothing changed, nothing fails
    let quiet = crescendo(
        &dir,
        &[
            "review",
            "story.cresc",
            "--against",
            "first",
            "--format",
            "markdown",
            "--fail-on-change",
        ],
    );
    let (out, err) = text(&quiet);
    assert_eq!(quiet.status.code(), Some(0), "{err}");
    assert!(
        out.contains("0 changed, 0 added, 0 removed, 0 moved, 3 unchanged"),
        "{out}"
    );
    let _ = fs::remove_dir_all(&dir);
}

#[test]
fn the_page_holds_both_versions_and_its_policy() {
    let dir = scratch("review-page");
    two_versions(&dir);
    let page = dir.join("out/review.html");
    fs::create_dir_all(dir.join("out")).unwrap();
    let run = crescendo(
        &dir,
        &[
            "review",
            "story.cresc",
            "--against",
            "first",
            "--out",
            page.to_str().unwrap(),
        ],
    );
    assert_eq!(run.status.code(), Some(3), "{}", text(&run).1);
    let html = fs::read_to_string(&page).unwrap();
    assert!(html.contains("<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; script-src 'none'; style-src 'sha256-"));
    assert!(!html.contains("<script"));
    // three frames, each with both pictures
    assert_eq!(html.matches("<section class=\"frame").count(), 3);
    assert_eq!(html.matches("src=\"data:image/svg+xml;base64,").count(), 6);
    assert!(html.contains("<del>1.5</del> → <ins>1.1</ins>"));
    assert!(html.contains("<li>rests on the claim “East lends more than West”: fails now</li>"));
    assert!(!dir.join("deck").exists(), "no deck is written");
    // unchanged frames are folded away
    assert!(!html.contains("<details"));
    fs::write(dir.join("story.cresc"), STORY_V1).unwrap();
    fs::write(dir.join("loans.csv"), DATA_V1).unwrap();
    let run = crescendo(
        &dir,
        &[
            "review",
            "story.cresc",
            "--against",
            "first",
            "--out",
            page.to_str().unwrap(),
        ],
    );
    assert_eq!(run.status.code(), Some(0), "{}", text(&run).1);
    let html = fs::read_to_string(&page).unwrap();
    assert!(
        html.contains("<details class=\"same\"><summary>3 unchanged frames (1, 2, 3)</summary>"),
        "{html}"
    );
    assert!(!html.contains("class=\"frame changed"));
    let _ = fs::remove_dir_all(&dir);
}

#[test]
fn errors_are_clear_and_write_nothing() {
    let dir = scratch("review-errors");
    // not in a repository
    let alone = dir.join("alone");
    fs::create_dir_all(&alone).unwrap();
    fs::write(alone.join("story.cresc"), STORY_V1).unwrap();
    fs::write(alone.join("loans.csv"), DATA_V1).unwrap();
    let run = crescendo(&alone, &["review", "story.cresc"]);
    let (_, err) = text(&run);
    assert_eq!(run.status.code(), Some(1));
    assert!(err.contains("is not inside a git repository"), "{err}");
    assert!(!alone.join("review.html").exists());

    let repo = dir.join("repo");
    two_versions(&repo);
    // an unknown revision, with the names near it
    let run = crescendo(&repo, &["review", "story.cresc", "--against", "frist"]);
    let (_, err) = text(&run);
    assert_eq!(run.status.code(), Some(1));
    assert!(err.contains("there is no revision `frist`"), "{err}");
    assert!(err.contains("did you mean `first`?"), "{err}");
    let run = crescendo(&repo, &["review", "story.cresc", "--against", "mian"]);
    assert!(text(&run).1.contains("`main`"), "{}", text(&run).1);

    // a story new since the revision: every frame is new
    fs::copy(repo.join("story.cresc"), repo.join("fresh.cresc")).unwrap();
    let run = crescendo(&repo, &["review", "fresh.cresc", "--format", "markdown"]);
    let (out, err) = text(&run);
    assert_eq!(run.status.code(), Some(3), "{err}");
    assert!(out.contains("0 changed, 3 added, 0 removed"), "{out}");
    assert!(
        out.contains("**new**: \"East lends more than West\""),
        "{out}"
    );
    fs::remove_file(repo.join("fresh.cresc")).unwrap();

    // a large-file pointer kept in place of the data
    fs::write(
        repo.join("loans.csv"),
        "version https://git-lfs.github.com/spec/v1\noid sha256:4d7a\nsize 1048\n",
    )
    .unwrap();
    git(
        &repo,
        &["commit", "-q", "-am", "data moved to large-file storage"],
    );
    fs::write(repo.join("loans.csv"), DATA_V1).unwrap();
    let run = crescendo(&repo, &["review", "story.cresc"]);
    let (_, err) = text(&run);
    assert_eq!(run.status.code(), Some(1));
    assert!(
        err.contains("is a large-file pointer, not the data"),
        "{err}"
    );
    assert!(
        err.contains("story.cresc (at HEAD)"),
        "located in the old story: {err}"
    );

    // data outside the repository (allowed for the build)
    let outside = dir.join("shared");
    fs::create_dir_all(&outside).unwrap();
    fs::write(outside.join("loans.csv"), DATA_V1).unwrap();
    let story = STORY_V1.replace("\"loans.csv\"", "\"../shared/loans.csv\"");
    fs::write(repo.join("story.cresc"), &story).unwrap();
    git(&repo, &["commit", "-q", "-am", "shared data"]);
    let allow = format!("--allow-path={}", outside.display());
    let run = crescendo(&repo, &["review", "story.cresc", &allow]);
    let (_, err) = text(&run);
    assert_eq!(run.status.code(), Some(1));
    assert!(err.contains("lies outside the git repository"), "{err}");
    assert!(err.contains("cannot be compared"), "{err}");

    // a shallow clone that lacks the revision
    let shallow = dir.join("shallow");
    let url = format!("file://{}", repo.display());
    git(
        &dir,
        &[
            "clone",
            "-q",
            "--depth",
            "1",
            &url,
            shallow.to_str().unwrap(),
        ],
    );
    let run = crescendo(
        &shallow,
        &["review", "story.cresc", "--against", "HEAD~2", &allow],
    );
    let (_, err) = text(&run);
    assert_eq!(run.status.code(), Some(1));
    assert!(err.contains("is not in this clone"), "{err}");
    assert!(err.contains("--unshallow"), "{err}");
    assert!(!shallow.join("review.html").exists());
    assert!(!repo.join("review.html").exists());
    let _ = fs::remove_dir_all(&dir);
}
