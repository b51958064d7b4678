//! `crescendo watch` and its preview server, end to end: one edit makes one
//! rebuild (the build's own reads are no change), the served page shows
//! the last build's errors, and the server answers only to its own names,
//! serves clients side by side and cuts off slow ones (issue 15, items 8
//! and 11).

mod common;

use std::io::{Read, Write};
use std::net::TcpStream;
use std::path::Path;
use std::time::{Duration, Instant};

use common::{scratch, Watch};

const STORY: &str = "story \"Loans\"\nsource \"Invented\"\nconclusion \"Elm leads.\"\n\
data loans from \"loans.csv\"\n\
frame \"Loans per branch\" {\n  bars loans: category branch, value loans\n}\n";
const CSV: &str = "branch,loans\nElm,120\nQuarry,80\n";

/// Start `crescendo watch ARGS` in `dir` and wait for its first build;
/// with `--serve`, also return its port (from "serving … at
/// http://127.0.0.1:PORT/").
fn start(dir: &Path, args: &[&str]) -> (Watch, u16) {
    let w = Watch::start(dir, args);
    let port = if args.contains(&"--serve") {
        let line = w.wait_for("serving ");
        let at = line.find("http://127.0.0.1:").unwrap() + "http://127.0.0.1:".len();
        line[at..].split('/').next().unwrap().parse().unwrap()
    } else {
        0
    };
    w.wait_for("watching");
    (w, port)
}

fn story_dir(name: &str) -> std::path::PathBuf {
    let dir = scratch(name);
    std::fs::write(dir.join("s.cresc"), STORY).unwrap();
    std::fs::write(dir.join("loans.csv"), CSV).unwrap();
    dir
}

/// One request; the status, the body and how long the answer took.
fn get(port: u16, host: Option<&str>, path: &str) -> (u16, String, Duration) {
    let start = Instant::now();
    let mut s = TcpStream::connect(("127.0.0.1", port)).unwrap();
    s.set_read_timeout(Some(Duration::from_secs(30))).unwrap();
    let host = host.map_or(String::new(), |h| format!("Host: {h}\r\n"));
    // one write: a server that turns the connection away (503) may close it
    // before the request arrives, and then the answer is what counts
    let request = format!("GET {path} HTTP/1.1\r\n{host}Connection: close\r\n\r\n");
    let _ = s.write_all(request.as_bytes());
    let mut answer = String::new();
    let _ = s.read_to_string(&mut answer);
    let status = answer
        .split_whitespace()
        .nth(1)
        .and_then(|c| c.parse().ok())
        .unwrap_or(0);
    let body = answer
        .split_once("\r\n\r\n")
        .map_or(String::new(), |(_, b)| b.to_string());
    (status, body, start.elapsed())
}

fn local(port: u16) -> String {
    format!("127.0.0.1:{port}")
}

/// Wait until `/__version` differs from `from`, and return it.
fn next_version(port: u16, from: &str) -> String {
    let start = Instant::now();
    loop {
        let (_, v, _) = get(port, Some(&local(port)), "/__version");
        if v != from {
            return v;
        }
        assert!(start.elapsed() < Duration::from_secs(60), "no new build");
        std::thread::sleep(Duration::from_millis(100));
    }
}

/// Issue 15, item 8: one write made 29 rebuilds in 6 s, because the
/// build's own reads of the story counted as changes.
#[test]
fn one_edit_makes_one_rebuild() {
    let dir = story_dir("watch-once");
    let (w, _) = start(&dir, &["s.cresc"]);
    // an edit of the story, then one of the data: one rebuild each
    for (file, text) in [
        ("s.cresc", format!("{STORY}# an edit\n")),
        ("loans.csv", format!("{CSV}Mill,60\n")),
    ] {
        std::fs::write(dir.join(file), text).unwrap();
        w.wait_for("rebuilding");
        w.wait_for("built 1 frame");
        let after = w.lines_during(Duration::from_secs(3));
        let again = after.iter().filter(|l| l.contains("rebuilding")).count();
        assert_eq!(
            again,
            0,
            "{file}: more rebuilds after one edit:\n{}",
            after.join("\n")
        );
    }
}

/// Issue 15, item 8: after a failed build the served page kept showing
/// the old deck as if nothing had happened. It now shows the errors over
/// the deck it kept, and drops them after the next good build.
#[test]
fn the_served_page_shows_the_last_build_error() {
    let dir = story_dir("watch-error-page");
    let (_w, port) = start(&dir, &["s.cresc", "--serve", "--port", "0"]);
    let (status, page, _) = get(port, Some(&local(port)), "/");
    assert_eq!(status, 200);
    assert!(page.contains("var v=\"1\",e=null"), "{page}");
    let v1 = "1".to_string();
    std::fs::write(
        dir.join("s.cresc"),
        STORY.replace("value loans", "value lons"),
    )
    .unwrap();
    let v2 = next_version(port, &v1);
    let (_, page, _) = get(port, Some(&local(port)), "/");
    assert!(
        page.contains("The last build failed; this is the deck it kept."),
        "{page}"
    );
    assert!(page.contains("error[unknown-column]"), "{page}");
    assert!(page.contains("did you mean `loans`?"), "{page}");
    // the deck it kept is still there, and the page is still the deck
    assert!(page.contains("Loans per branch"), "{page}");
    std::fs::write(dir.join("s.cresc"), STORY).unwrap();
    next_version(port, &v2);
    let (_, page, _) = get(port, Some(&local(port)), "/");
    assert!(page.contains(",e=null"), "{page}");
}

/// With no deck yet, the errors get a page of their own.
#[test]
fn without_a_deck_the_errors_have_a_page_of_their_own() {
    let dir = story_dir("watch-no-deck");
    std::fs::write(
        dir.join("s.cresc"),
        STORY.replace("value loans", "value lons"),
    )
    .unwrap();
    let (_w, port) = start(&dir, &["s.cresc", "--serve", "--port", "0"]);
    let (status, page, _) = get(port, Some(&local(port)), "/");
    assert_eq!(status, 200, "{page}");
    assert!(
        page.contains("The build failed; there is no deck yet."),
        "{page}"
    );
    assert!(page.contains("error[unknown-column]"), "{page}");
    assert!(page.contains("Content-Security-Policy"), "{page}");
}

/// Issue 15, item 11: any `Host` was served, so a page on another site
/// could read the deck through DNS rebinding.
#[test]
fn the_preview_server_answers_only_to_its_own_names() {
    let dir = story_dir("watch-hosts");
    let (_w, port) = start(&dir, &["s.cresc", "--serve", "--port", "0"]);
    for (host, expected) in [
        (Some(local(port)), 200),
        (Some(format!("localhost:{port}")), 200),
        (Some(format!("evil.example:{port}")), 403),
        (Some(format!("127.0.0.1:{}", port.wrapping_add(1))), 403),
        (None, 400),
    ] {
        let (status, body, _) = get(port, host.as_deref(), "/");
        assert_eq!(status, expected, "{host:?}: {body}");
        if expected != 200 {
            assert!(!body.contains("Loans per branch"), "{host:?}: {body}");
        }
    }
    let (status, _, _) = get(
        port,
        Some(&format!("evil.example:{port}")),
        "/01-loans-per-branch.svg",
    );
    assert_eq!(status, 403);
}

/// Issue 15, item 11: one connection was served at a time, so an idle
/// client stalled every other request for 5 s and a slow one for longer.
#[test]
fn idle_and_slow_clients_hold_up_nobody() {
    let dir = story_dir("watch-slow");
    let (_w, port) = start(&dir, &["s.cresc", "--serve", "--port", "0"]);
    // idle clients: connected, sending nothing
    let idle: Vec<TcpStream> = (0..3)
        .map(|_| TcpStream::connect(("127.0.0.1", port)).unwrap())
        .collect();
    std::thread::sleep(Duration::from_millis(200));
    let (status, _, took) = get(port, Some(&local(port)), "/");
    assert_eq!(status, 200);
    assert!(
        took < Duration::from_secs(2),
        "an idle client held a request up for {took:?}"
    );
    // a slow client, one byte every 300 ms, is cut off after the deadline
    let mut slow = TcpStream::connect(("127.0.0.1", port)).unwrap();
    let start = Instant::now();
    let request = format!(
        "GET / HTTP/1.1\r\nHost: {}\r\nX-Slow: {}\r\n\r\n",
        local(port),
        "x".repeat(100)
    );
    let mut cut = None;
    for b in request.bytes() {
        if slow.write_all(&[b]).is_err() {
            cut = Some(start.elapsed());
            break;
        }
        // a normal request meanwhile is answered at once
        if start.elapsed() > Duration::from_secs(1) && start.elapsed() < Duration::from_millis(1400)
        {
            let (status, _, took) = get(port, Some(&local(port)), "/__version");
            assert_eq!(status, 200);
            assert!(
                took < Duration::from_secs(2),
                "a slow client held a request up for {took:?}"
            );
        }
        std::thread::sleep(Duration::from_millis(300));
        if start.elapsed() > Duration::from_secs(20) {
            break;
        }
    }
    let cut = cut.expect("the slow client was never cut off");
    assert!(cut < Duration::from_secs(10), "cut off after {cut:?}");
    // more clients than the server serves at once: nobody waits
    let crowd: Vec<TcpStream> = (0..24)
        .map(|_| TcpStream::connect(("127.0.0.1", port)).unwrap())
        .collect();
    std::thread::sleep(Duration::from_millis(200));
    let (status, _, took) = get(port, Some(&local(port)), "/");
    assert!(status == 200 || status == 503, "{status}");
    assert!(
        took < Duration::from_secs(2),
        "a crowd held a request up for {took:?}"
    );
    drop((idle, crowd));
}
