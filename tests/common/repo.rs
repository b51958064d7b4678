//! A small git repository made for a test, with a history a review can
//! compare against. The `git` program is used here only, to make the
//! history; `crescendo review` itself reads the repository without it.

use std::fs;
use std::path::Path;
use std::process::Command;

/// Run git in `dir` with a fixed identity and clock (so commit ids are the
/// same on every run) and no user or system configuration.
pub fn git(dir: &Path, args: &[&str]) {
    let out = Command::new("git")
        .args(args)
        .current_dir(dir)
        .env("GIT_CONFIG_GLOBAL", "/dev/null")
        .env("GIT_CONFIG_NOSYSTEM", "1")
        .env("GIT_AUTHOR_NAME", "Test")
        .env("GIT_AUTHOR_EMAIL", "test@example.invalid")
        .env("GIT_COMMITTER_NAME", "Test")
        .env("GIT_COMMITTER_EMAIL", "test@example.invalid")
        .env("GIT_AUTHOR_DATE", "2026-01-01T00:00:00Z")
        .env("GIT_COMMITTER_DATE", "2026-01-01T00:00:00Z")
        .output()
        .expect("run git (tests only)");
    assert!(
        out.status.success(),
        "git {args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// The first version: three frames, a claim with room to spare, one that
/// is nearly spent and one that holds comfortably.
pub const STORY_V1: &str = r#"story "Branch loans"
source "Invented test data"
data loans from "loans.csv"
value east = sum(loans.loans where branch = "East")
value west = sum(loans.loans where branch = "West")
value total = sum(loans.loans)
value ratio = east / west
claim ratio > 1.2 "East lends more than West"
claim total about 1000 within 5% "About a thousand loans"
claim total > 500 "Hundreds of loans"
frame "East lent {ratio to 1 decimal}× as much as West" {
  bars loans: category branch, value loans
}
frame "Every branch lends" {
  bars loans: category branch, value loans
  takeaway "Loans per branch last year"
}
frame "The numbers" {
  table loans
}
"#;

pub const DATA_V1: &str = "branch,loans\nEast,480\nWest,320\nNorth,200\n";

/// The second version: the takeaway reworded (naming a colour, which the
/// lint flags), the table put first.
pub const STORY_V2: &str = r#"story "Branch loans"
source "Invented test data"
data loans from "loans.csv"
value east = sum(loans.loans where branch = "East")
value west = sum(loans.loans where branch = "West")
value total = sum(loans.loans)
value ratio = east / west
claim ratio > 1.2 "East lends more than West"
claim total about 1000 within 5% "About a thousand loans"
claim total > 500 "Hundreds of loans"
frame "The numbers" {
  table loans
}
frame "East lent {ratio to 1 decimal}× as much as West" {
  bars loans: category branch, value loans
}
frame "Every branch lends" {
  bars loans: category branch, value loans
  takeaway "The blue bars are loans in the last twelve months"
}
"#;

/// New data: East's lead shrinks below the claim (ratio 1.5 → 1.1) and the
/// total nearly leaves its tolerance (1000 → 1048, 4% of 5% used).
pub const DATA_V2: &str = "branch,loans\nEast,418\nWest,380\nNorth,250\n";

/// A repository in `dir` with the story `story.cresc` and `loans.csv`:
/// one commit of the first version (tagged `first`), then a second commit
/// of the second; the working files are the second version.
pub fn two_versions(dir: &Path) {
    fs::create_dir_all(dir).unwrap();
    git(dir, &["init", "-q", "-b", "main"]);
    fs::write(dir.join("story.cresc"), STORY_V1).unwrap();
    fs::write(dir.join("loans.csv"), DATA_V1).unwrap();
    git(dir, &["add", "."]);
    git(dir, &["commit", "-q", "-m", "first version"]);
    git(dir, &["tag", "first"]);
    fs::write(dir.join("story.cresc"), STORY_V2).unwrap();
    fs::write(dir.join("loans.csv"), DATA_V2).unwrap();
    git(dir, &["add", "."]);
    git(dir, &["commit", "-q", "-m", "new data, table first"]);
}
