//! The caches beside a deck (views and frames), streamed data items, and
//! `crescendo watch` with and without `--serve`, end to end.

mod common;

use std::fs;
use std::io::{Read, Write};
use std::net::TcpStream;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use common::{crescendo, read_dir_files, root, scratch, stories, Watch};

/// Two data items, each read only by views (so both are streamed), and a
/// third that a chart reads directly (so it is loaded).
const STORY: &str = r#"story "Streams and caches"
source "Invented test data"

data trips from "trips.csv" {
  month: month
}
data fares from "fares.csv"
data direct from "direct.csv"

view by_route = trips
  | by month, route: riders = sum(riders)
view busiest = trips
  | keep riders > 10
  | by route: riders = sum(riders), n = count(), best = max(riders), typical = median(riders)
  | sort riders descending
view fare_mean = fares
  | by route: fare = mean(fare)

frame "Riders by month" {
  line by_route: x month, y riders, series route
  y title "Riders"
  takeaway "Two routes."
}
frame "Busiest routes" {
  bars busiest: category route, value riders
  y title "Riders"
}
frame "Mean fare" {
  bars fare_mean: category route, value fare
  y title "Fare"
}
frame "Direct" {
  bars direct: category route, value riders
  y title "Riders"
}
"#;

fn write_story(dir: &Path, riders_bump: u32) {
    fs::write(dir.join("story.cresc"), STORY).unwrap();
    let mut trips = String::from("month,route,riders\n");
    for m in 1..=12 {
        for (route, base) in [("Harbour", 20u32), ("Bay", 9)] {
            // a quoted line break in a text nobody reads
            trips.push_str(&format!("2024-{m:02},{route},{}\n", base + m + riders_bump));
        }
    }
    fs::write(dir.join("trips.csv"), trips).unwrap();
    fs::write(
        dir.join("fares.csv"),
        "route,fare,note\nHarbour,2.5,\"a\nb\"\nBay,1.75,x\nHarbour,3,y\n",
    )
    .unwrap();
    fs::write(dir.join("direct.csv"), "route,riders\nHarbour,5\nBay,7\n").unwrap();
}

fn build(dir: &Path, out: &str, extra: &[&str]) -> String {
    let mut args = vec!["build", "story.cresc", "--out", out];
    args.extend_from_slice(extra);
    let run = crescendo(dir, &args);
    let stderr = String::from_utf8_lossy(&run.stderr).into_owned();
    assert!(run.status.success(), "{stderr}");
    stderr
}

fn report(dir: &Path, deck: &str) -> serde_json::Value {
    let p = dir
        .join(".crescendo-cache")
        .join(deck)
        .join("report/last.json");
    let v: serde_json::Value = serde_json::from_slice(&fs::read(&p).unwrap()).unwrap();
    v["value"].clone()
}

fn names(v: &serde_json::Value) -> Vec<String> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_str().unwrap().to_string())
        .collect()
}

fn rebuilt(dir: &Path, deck: &str) -> Vec<u64> {
    let p = dir
        .join(".crescendo-cache")
        .join(deck)
        .join("last-build.json");
    let v: serde_json::Value = serde_json::from_slice(&fs::read(&p).unwrap()).unwrap();
    v["frames"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|f| f["rebuilt"] == true)
        .map(|f| f["number"].as_u64().unwrap())
        .collect()
}

#[test]
fn cached_and_uncached_builds_are_byte_identical() {
    let dir = scratch("cache-identical");
    write_story(&dir, 0);
    build(&dir, "plain", &["--no-cache"]);
    assert!(
        !dir.join(".crescendo-cache").exists(),
        "--no-cache wrote a cache"
    );
    build(&dir, "cached", &[]);
    let r = report(&dir, "cached");
    assert_eq!(names(&r["streamed"]), ["trips", "fares"]);
    assert_eq!(names(&r["loaded"]), ["direct"]);
    let second = build(&dir, "cached", &[]);
    assert!(second.contains("all 4 reused"), "{second}");
    let r = report(&dir, "cached");
    assert_eq!(
        names(&r["cached_views"]),
        ["by_route", "busiest", "fare_mean"]
    );
    assert!(names(&r["computed_views"]).is_empty());
    assert_eq!(
        read_dir_files(&dir.join("plain")),
        read_dir_files(&dir.join("cached"))
    );
    // the demo stories too, including their `--data` variants
    for (name, path) in stories() {
        let out = scratch(&format!("cache-{name}"));
        let p = path.to_str().unwrap();
        for (deck, extra) in [("a", &["--no-cache"][..]), ("b", &[]), ("b", &[])] {
            let d = out.join(deck);
            let mut args = vec!["build", p, "--draft", "--out", d.to_str().unwrap()];
            args.extend_from_slice(extra);
            let run = common::crescendo_with_plugins(&root(), &args);
            assert!(
                run.status.success(),
                "{name}: {}",
                String::from_utf8_lossy(&run.stderr)
            );
        }
        assert_eq!(
            read_dir_files(&out.join("a")),
            read_dir_files(&out.join("b")),
            "{name}"
        );
    }
}

#[test]
fn a_data_change_recomputes_exactly_its_views() {
    let dir = scratch("cache-invalidate");
    write_story(&dir, 0);
    build(&dir, "deck", &[]);
    // change fares only: its one view is recomputed, trips' two come from
    // the cache, and the deck is what a build without cache gives
    fs::write(
        dir.join("fares.csv"),
        "route,fare,note\nHarbour,2.5,\"a\nb\"\nBay,1.5,x\nHarbour,3,y\n",
    )
    .unwrap();
    let out = build(&dir, "deck", &[]);
    let r = report(&dir, "deck");
    assert_eq!(names(&r["computed_views"]), ["fare_mean"], "{out}");
    assert_eq!(names(&r["cached_views"]), ["by_route", "busiest"]);
    // only the frame drawn from that view is drawn again
    assert_eq!(rebuilt(&dir, "deck"), [3]);
    build(&dir, "fresh", &["--no-cache"]);
    assert_eq!(
        read_dir_files(&dir.join("deck")),
        read_dir_files(&dir.join("fresh"))
    );
    // now trips: both of its views, not fares'
    write_story(&dir, 1);
    fs::write(
        dir.join("fares.csv"),
        "route,fare,note\nHarbour,2.5,\"a\nb\"\nBay,1.5,x\nHarbour,3,y\n",
    )
    .unwrap();
    build(&dir, "deck", &[]);
    let r = report(&dir, "deck");
    assert_eq!(names(&r["computed_views"]), ["by_route", "busiest"]);
    assert_eq!(names(&r["cached_views"]), ["fare_mean"]);
    // a corrupt cache entry is ignored and rewritten, never an error
    for e in fs::read_dir(dir.join(".crescendo-cache/deck/views")).unwrap() {
        fs::write(e.unwrap().path(), b"{ not json").unwrap();
    }
    for e in fs::read_dir(dir.join(".crescendo-cache/deck/frames")).unwrap() {
        fs::write(e.unwrap().path(), b"\x00").unwrap();
    }
    build(&dir, "deck", &[]);
    build(&dir, "fresh", &["--no-cache"]);
    assert_eq!(
        read_dir_files(&dir.join("deck")),
        read_dir_files(&dir.join("fresh"))
    );
}

fn entries(dir: &Path, kind: &str) -> usize {
    fs::read_dir(dir.join(".crescendo-cache/deck").join(kind))
        .map(|d| d.count())
        .unwrap_or(0)
}

#[test]
fn stale_view_entries_are_pruned_after_a_good_build() {
    let dir = scratch("cache-prune");
    write_story(&dir, 0);
    build(&dir, "deck", &[]);
    let (views, data) = (entries(&dir, "views"), entries(&dir, "data"));
    // three streamed views (two over trips, one over fares), two files
    assert_eq!((views, data), (3, 2));
    // five monthly refreshes of trips: the cache keeps only what the last
    // build used instead of growing by two views and a file each time
    for bump in 1..=5 {
        write_story(&dir, bump);
        build(&dir, "deck", &[]);
        assert_eq!(
            (entries(&dir, "views"), entries(&dir, "data")),
            (3, 2),
            "after refresh {bump}"
        );
    }
    // and what is left is what the next build reads
    build(&dir, "deck", &[]);
    let r = report(&dir, "deck");
    assert_eq!(names(&r["computed_views"]), Vec::<String>::new());
    assert_eq!(names(&r["cached_views"]).len(), 3);
    // a failed build prunes nothing
    fs::write(dir.join("story.cresc"), "story \"Broken\"\nframe {\n").unwrap();
    let run = crescendo(&dir, &["build", "story.cresc", "--out", "deck"]);
    assert!(!run.status.success());
    assert_eq!((entries(&dir, "views"), entries(&dir, "data")), (3, 2));
}

/// The streamed views `check --format json` reports: (cached, computed).
fn checked_views(dir: &Path, extra: &[&str]) -> (Vec<String>, Vec<String>) {
    let mut args = vec!["check", "story.cresc", "--format", "json"];
    args.extend_from_slice(extra);
    let run = crescendo(dir, &args);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&run.stdout).unwrap();
    (names(&v["views"]["cached"]), names(&v["views"]["computed"]))
}

#[test]
fn check_and_plan_share_the_view_cache_with_build() {
    let dir = scratch("cache-check-plan");
    write_story(&dir, 0);
    let all = ["by_route", "busiest", "fare_mean"];
    // without a cache: nothing is written
    let (cached, computed) = checked_views(&dir, &["--no-cache"]);
    assert!(cached.is_empty());
    assert_eq!(computed, all);
    assert!(!dir.join(".crescendo-cache").exists());
    // a first check computes the views and keeps them beside the deck...
    let (cached, computed) = checked_views(&dir, &[]);
    assert!(cached.is_empty());
    assert_eq!(computed, all);
    assert_eq!(entries(&dir, "views"), 3);
    // ...where the next check and the build find them
    let (cached, computed) = checked_views(&dir, &[]);
    assert_eq!(
        (cached, computed.len()),
        (all.map(String::from).to_vec(), 0)
    );
    build(&dir, "deck", &[]);
    let r = report(&dir, "deck");
    assert_eq!(names(&r["cached_views"]), all);
    assert!(names(&r["computed_views"]).is_empty());
    // `plan` refreshes the entries of a changed file (pruning the stale
    // ones), so the build after it computes nothing
    write_story(&dir, 1);
    let plan = crescendo(&dir, &["plan", "story.cresc"]);
    assert!(plan.status.success());
    assert_eq!(entries(&dir, "views"), 3);
    build(&dir, "deck", &[]);
    let r = report(&dir, "deck");
    assert!(names(&r["computed_views"]).is_empty(), "{r}");
    // another deck's cache is named with `--out`, as in `build`
    let (cached, _) = checked_views(&dir, &["--out", "other"]);
    assert!(cached.is_empty());
    build(&dir, "other", &[]);
    assert_eq!(names(&report(&dir, "other")["cached_views"]), all);
    // and the plan is the same with or without the cache
    let a = crescendo(&dir, &["plan", "story.cresc"]);
    let b = crescendo(&dir, &["plan", "story.cresc", "--no-cache"]);
    assert_eq!(a.stdout, b.stdout);
}

#[test]
fn editing_one_frame_redraws_only_it() {
    let dir = scratch("cache-frames");
    write_story(&dir, 0);
    build(&dir, "deck", &[]);
    assert_eq!(rebuilt(&dir, "deck"), [1, 2, 3, 4]);
    build(&dir, "deck", &[]);
    assert!(rebuilt(&dir, "deck").is_empty());
    let story = STORY.replace("y title \"Fare\"", "y title \"Mean fare\"");
    fs::write(dir.join("story.cresc"), story).unwrap();
    build(&dir, "deck", &[]);
    assert_eq!(rebuilt(&dir, "deck"), [3]);
    // speaker notes are not drawn: no frame is redrawn for them
    let story = STORY
        .replace("y title \"Fare\"", "y title \"Mean fare\"")
        .replace(
            "takeaway \"Two routes.\"",
            "takeaway \"Two routes.\"\n  notes \"Say it.\"",
        );
    fs::write(dir.join("story.cresc"), story).unwrap();
    build(&dir, "deck", &[]);
    assert!(rebuilt(&dir, "deck").is_empty());
}

fn manifest(deck: &Path) -> String {
    fs::read_to_string(deck.join("deck.json")).unwrap_or_default()
}

#[test]
fn watch_rebuilds_after_an_edit_and_keeps_the_last_good_deck() {
    let dir = scratch("watch");
    write_story(&dir, 0);
    let w = Watch::start(&dir, &["story.cresc"]);
    w.wait_for("watching");
    let deck = dir.join("deck");
    assert!(manifest(&deck).contains("Busiest routes"));
    // a broken edit: errors are printed, the deck stays, the watch goes on
    fs::write(
        dir.join("story.cresc"),
        STORY.replace("| by route: fare", "| by rout: fare"),
    )
    .unwrap();
    w.wait_for("no deck written");
    assert!(manifest(&deck).contains("Busiest routes"));
    // a good edit: rebuilt
    fs::write(
        dir.join("story.cresc"),
        STORY.replace("Busiest routes", "Routes by riders"),
    )
    .unwrap();
    w.wait_for("built 4 frames");
    assert!(manifest(&deck).contains("Routes by riders"));
    // a data change is seen too
    fs::write(dir.join("direct.csv"), "route,riders\nHarbour,5\nBay,70\n").unwrap();
    w.wait_for("built 4 frames");
    assert!(manifest(&deck).contains("Routes by riders"));
}

fn get(addr: &str, path: &str) -> (String, String) {
    let mut s = TcpStream::connect(addr).expect("connect");
    s.set_read_timeout(Some(Duration::from_secs(10))).unwrap();
    write!(s, "GET {path} HTTP/1.1\r\nHost: {addr}\r\n\r\n").unwrap();
    let mut text = String::new();
    s.read_to_string(&mut text).unwrap();
    let (head, body) = text.split_once("\r\n\r\n").unwrap_or((&text, ""));
    (
        head.lines().next().unwrap_or("").to_string(),
        body.to_string(),
    )
}

#[test]
fn serve_shows_the_deck_on_loopback_and_signals_rebuilds() {
    let dir = scratch("serve");
    write_story(&dir, 0);
    let w = Watch::start(&dir, &["story.cresc", "--serve", "--port", "0"]);
    let line = w.wait_for("serving");
    let addr = line
        .split("http://")
        .nth(1)
        .and_then(|r| r.split('/').next())
        .expect("address")
        .to_string();
    assert!(addr.starts_with("127.0.0.1:"), "{addr}");
    w.wait_for("watching");
    let (status, body) = get(&addr, "/");
    assert!(status.contains("200"), "{status}");
    assert!(body.contains("/__version"), "reload script served");
    // the file on disk has no reload script and stays as built
    let on_disk = fs::read_to_string(dir.join("deck/index.html")).unwrap();
    assert!(!on_disk.contains("__version"));
    let (status, version) = get(&addr, "/__version");
    assert!(status.contains("200"));
    assert_eq!(version, "1");
    assert!(get(&addr, "/deck.json").0.contains("200"));
    for bad in [
        "/../story.cresc",
        "/%2e%2e/story.cresc",
        "/..%2fstory.cresc",
        "/.x",
    ] {
        assert!(get(&addr, bad).0.contains("404"), "{bad}");
    }
    fs::write(dir.join("story.cresc"), STORY.replace("Mean fare", "Fares")).unwrap();
    w.wait_for("built 4 frames");
    // the counter moves just after the build prints its summary
    let deadline = Instant::now() + Duration::from_secs(30);
    while get(&addr, "/__version").1 != "2" {
        assert!(Instant::now() < deadline, "the version never moved to 2");
        std::thread::sleep(Duration::from_millis(50));
    }
    let _: PathBuf = dir;
}

/// `thousands` and `decimal` on a data item: the same totals on the
/// streamed path (a view starting with `by`) and the loaded one (a value on
/// the data itself), and part of the view cache's key, so changing them
/// recomputes the view instead of reusing numbers read the other way.
#[test]
fn number_options_read_the_same_on_both_paths_and_key_the_cache() {
    let dir = scratch("number-options");
    // "1.050" is 1050 with `thousands "." decimal ","` and 1.05 without
    fs::write(
        dir.join("tolls.csv"),
        "month,gate,takings\n2024-01,North,1.050\n2024-01,South,\"2.100,5\"\n2024-02,North,980\n",
    )
    .unwrap();
    let story = |options: &str, total: &str, direct: bool| {
        // a value on the data itself: the item is loaded, not streamed
        let read = if direct { "tolls" } else { "monthly" };
        format!(
            "story \"Tolls\"\nsource \"Invented test data\"\n\
             data tolls from \"tolls.csv\" {options} {{ month: month, gate: text, takings: number }}\n\
             view monthly = tolls\n  | by month: takings = sum(takings)\n\
             value total = sum({read}.takings)\n\
             claim total = {total} \"The gates took {total}\"\n\
             frame \"Tolls\" {{\n  bars monthly: category month, value takings\n  y title \"Takings\"\n}}\n"
        )
    };
    // worked out by hand: 1050 + 2100.5 + 980 = 4130.5
    for direct in [false, true] {
        fs::write(
            dir.join("story.cresc"),
            story("thousands \".\" decimal \",\"", "4130.5", direct),
        )
        .unwrap();
        let out = crescendo(&dir, &["build", "story.cresc"]);
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
    }
    // The same bytes read with other options: a new cache key, never the
    // numbers read the other way. By hand: "1.050" + 980 is 1050 + 980 =
    // 2030 with `thousands "." decimal ","`, 1.05 + 980 = 981.05 without.
    fs::write(
        dir.join("tolls.csv"),
        "month,gate,takings\n2024-01,North,1.050\n2024-02,North,980\n",
    )
    .unwrap();
    for (options, total) in [
        ("thousands \".\" decimal \",\"", "2030"),
        ("", "981.05"),
        ("thousands \".\" decimal \",\"", "2030"),
    ] {
        fs::write(dir.join("story.cresc"), story(options, total, false)).unwrap();
        let out = crescendo(&dir, &["build", "story.cresc"]);
        assert!(
            out.status.success(),
            "{options}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
    }
    let _ = fs::remove_dir_all(&dir);
}
