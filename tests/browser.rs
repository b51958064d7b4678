//! The HTML deck in a real browser: builds the pools deck, opens it in
//! headless Chromium and drives it over the DevTools protocol (a WebSocket
//! on 127.0.0.1): keys move between frames with exactly one frame visible,
//! the notes button works without the keyboard, every frame keeps its text
//! alternative, nothing is logged as an error, and a screenshot shows ink.
//!
//! Without /usr/bin/chromium each test prints `skipped: …` and passes, so
//! the README's test command works on a machine with only the Rust
//! toolchain. CI installs Debian's `chromium` and sets
//! `CRESCENDO_REQUIRE_BROWSER=1` (`.ci/run`), where a missing browser fails.

mod common;

use std::io::{Read, Write};
use std::net::{TcpListener, TcpStream};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use common::{crescendo, root, scratch};
use serde_json::{json, Value};
use tungstenite::{Message, WebSocket};

const CHROMIUM: &str = "/usr/bin/chromium";
/// Longest wait for any one step (start, page load, a reply).
const STEP: Duration = Duration::from_secs(30);

/// Kills the browser however the test ends.
struct Browser {
    child: Child,
}

impl Drop for Browser {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

fn free_port() -> u16 {
    TcpListener::bind("127.0.0.1:0")
        .and_then(|l| l.local_addr())
        .expect("a free local port")
        .port()
}

fn launch(profile: &Path, port: u16) -> Browser {
    let child = Command::new(CHROMIUM)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--window-size=1280,720",
            "--remote-debugging-address=127.0.0.1",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .arg(format!("--remote-debugging-port={port}"))
        .arg("about:blank")
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("start chromium");
    Browser { child }
}

/// GET a path from the DevTools HTTP endpoint (reads exactly the
/// announced Content-Length; the connection may stay open).
fn http_get(port: u16, path: &str) -> Option<String> {
    let mut s = TcpStream::connect(("127.0.0.1", port)).ok()?;
    s.set_read_timeout(Some(Duration::from_secs(5))).ok()?;
    write!(
        s,
        "GET {path} HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\nConnection: close\r\n\r\n"
    )
    .ok()?;
    let mut buf = Vec::new();
    let mut chunk = [0u8; 4096];
    loop {
        let got = s.read(&mut chunk).ok()?;
        if got == 0 {
            break;
        }
        buf.extend_from_slice(&chunk[..got]);
        let text = String::from_utf8_lossy(&buf);
        if let Some((head, body)) = text.split_once("\r\n\r\n") {
            let length = head.lines().find_map(|l| {
                let (k, v) = l.split_once(':')?;
                k.eq_ignore_ascii_case("content-length")
                    .then(|| v.trim().parse::<usize>().ok())?
            });
            if length.is_some_and(|n| body.len() >= n) {
                return Some(body.to_string());
            }
        }
    }
    let text = String::from_utf8_lossy(&buf);
    text.split_once("\r\n\r\n").map(|(_, b)| b.to_string())
}

/// The WebSocket address of the first page target.
fn page_socket(port: u16, browser: &mut Browser) -> String {
    let start = Instant::now();
    loop {
        if let Ok(Some(status)) = browser.child.try_wait() {
            panic!("chromium exited early: {status}");
        }
        if let Some(list) = http_get(port, "/json/list") {
            if let Ok(Value::Array(targets)) = serde_json::from_str::<Value>(&list) {
                if let Some(url) = targets
                    .iter()
                    .find(|t| t["type"] == "page")
                    .and_then(|t| t["webSocketDebuggerUrl"].as_str())
                {
                    return url.to_string();
                }
            }
        }
        assert!(
            start.elapsed() < STEP,
            "chromium's DevTools did not come up"
        );
        std::thread::sleep(Duration::from_millis(100));
    }
}

/// A DevTools session: commands with ids, and the events seen meanwhile.
struct Session {
    ws: WebSocket<TcpStream>,
    next: u64,
    events: Vec<Value>,
}

impl Session {
    fn connect(url: &str) -> Self {
        let rest = url.strip_prefix("ws://").expect("a ws:// address");
        let host = rest.split('/').next().unwrap();
        assert!(host.starts_with("127.0.0.1:"), "only local: {url}");
        let stream = TcpStream::connect(host).expect("connect to DevTools");
        stream.set_read_timeout(Some(STEP)).unwrap();
        stream.set_write_timeout(Some(STEP)).unwrap();
        let (ws, _) = tungstenite::client(url, stream).expect("WebSocket handshake");
        Session {
            ws,
            next: 1,
            events: Vec::new(),
        }
    }

    fn read(&mut self) -> Value {
        loop {
            match self.ws.read().expect("a DevTools message in time") {
                Message::Text(t) => return serde_json::from_str(t.as_str()).expect("JSON"),
                Message::Close(_) => panic!("DevTools closed the connection"),
                _ => {}
            }
        }
    }

    fn call(&mut self, method: &str, params: Value) -> Value {
        let id = self.next;
        self.next += 1;
        let msg = json!({"id": id, "method": method, "params": params});
        self.ws
            .send(Message::text(msg.to_string()))
            .expect("send a DevTools command");
        let start = Instant::now();
        loop {
            let v = self.read();
            if v["id"] == id {
                assert!(v.get("error").is_none(), "{method} failed: {}", v["error"]);
                return v["result"].clone();
            }
            self.events.push(v);
            assert!(start.elapsed() < STEP, "no reply to {method}");
        }
    }

    fn wait_for(&mut self, event: &str) {
        if self.events.iter().any(|e| e["method"] == event) {
            return;
        }
        let start = Instant::now();
        loop {
            let v = self.read();
            let done = v["method"] == event;
            self.events.push(v);
            if done {
                return;
            }
            assert!(start.elapsed() < STEP, "no {event}");
        }
    }

    fn eval(&mut self, expression: &str) -> Value {
        let r = self.call(
            "Runtime.evaluate",
            json!({"expression": expression, "returnByValue": true}),
        );
        assert!(
            r.get("exceptionDetails").is_none(),
            "{expression}: {}",
            r["exceptionDetails"]
        );
        r["result"]["value"].clone()
    }

    fn press(&mut self, key: &str, code: u32) {
        for kind in ["keyDown", "keyUp"] {
            self.call(
                "Input.dispatchKeyEvent",
                json!({"type": kind, "key": key, "code": key,
                       "windowsVirtualKeyCode": code, "nativeVirtualKeyCode": code}),
            );
        }
    }

    /// Errors logged by the page: console errors, uncaught exceptions and
    /// browser log entries of level error.
    fn errors(&self) -> Vec<String> {
        self.events
            .iter()
            .filter(|e| {
                (e["method"] == "Runtime.consoleAPICalled" && e["params"]["type"] == "error")
                    || e["method"] == "Runtime.exceptionThrown"
                    || (e["method"] == "Log.entryAdded" && e["params"]["entry"]["level"] == "error")
            })
            .map(|e| e.to_string())
            .collect()
    }
}

const VISIBLE: &str = "JSON.stringify(Array.from(document.querySelectorAll('section.frame'))\
    .filter(function(s){return getComputedStyle(s).display!=='none'})\
    .map(function(s){return s.id}))";

/// A function of two selectors: true when both elements are laid out and
/// their rectangles do not overlap (a hidden element counts as apart).
const APART: &str = "(function(a,b){var x=document.querySelector(a),y=document.querySelector(b);\
if(!x||!y)return true;var r=x.getBoundingClientRect(),q=y.getBoundingClientRect();\
if(r.width===0||r.height===0||q.width===0||q.height===0)return true;\
return r.right<=q.left||q.right<=r.left||r.bottom<=q.top||q.bottom<=r.top;})";

fn visible(s: &mut Session) -> Vec<String> {
    let v = s.eval(VISIBLE);
    serde_json::from_str(v.as_str().unwrap()).unwrap()
}

fn base64(text: &str) -> Vec<u8> {
    // RFC 4648 base64, as DevTools returns screenshots.
    let value = |c: u8| match c {
        b'A'..=b'Z' => Some(c - b'A'),
        b'a'..=b'z' => Some(c - b'a' + 26),
        b'0'..=b'9' => Some(c - b'0' + 52),
        b'+' => Some(62),
        b'/' => Some(63),
        _ => None,
    };
    let mut out = Vec::new();
    let (mut acc, mut bits) = (0u32, 0);
    for v in text.bytes().filter_map(value) {
        acc = (acc << 6) | u32::from(v);
        bits += 6;
        if bits >= 8 {
            bits -= 8;
            out.push((acc >> bits) as u8);
        }
    }
    out
}

#[test]
fn the_deck_works_in_a_real_browser() {
    if chromium_missing() {
        return;
    }
    let dir = scratch("browser");
    let deck = dir.join("deck");
    let story = root().join("stories/pools/pools.cresc");
    let o = crescendo(
        &root(),
        &[
            "build",
            story.to_str().unwrap(),
            "--out",
            deck.to_str().unwrap(),
        ],
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let manifest: Value =
        serde_json::from_slice(&std::fs::read(deck.join("deck.json")).unwrap()).unwrap();
    let charts = manifest["frames"].as_array().unwrap().len();
    assert!(charts >= 3);
    // the opening frame (title, byline, source) and the closing frame (the
    // conclusion) are frames of the HTML deck too
    let n = charts + 2;
    let index: PathBuf = deck.join("index.html").canonicalize().unwrap();

    let profile = dir.join("profile");
    std::fs::create_dir_all(&profile).unwrap();
    let port = free_port();
    let mut browser = launch(&profile, port);
    let url = page_socket(port, &mut browser);
    let mut s = Session::connect(&url);
    s.call("Runtime.enable", json!({}));
    s.call("Log.enable", json!({}));
    s.call("Page.enable", json!({}));
    s.call(
        "Emulation.setDeviceMetricsOverride",
        json!({"width": 1280, "height": 720, "deviceScaleFactor": 1, "mobile": false}),
    );
    s.call(
        "Page.navigate",
        json!({"url": format!("file://{}", index.display())}),
    );
    s.wait_for("Page.loadEventFired");
    assert_eq!(s.eval("document.readyState"), "complete");

    assert_eq!(
        s.eval("document.querySelectorAll('section.frame').length"),
        json!(n)
    );
    assert_eq!(
        s.eval("document.querySelector('#frame-1 .opening-title').textContent"),
        manifest["title"]
    );
    assert_eq!(
        s.eval(&format!(
            "document.querySelector('#frame-{n} .closing-line').textContent"
        )),
        manifest["conclusion"]
    );
    // Keys move between frames; exactly one frame shows, the expected one.
    assert_eq!(visible(&mut s), ["frame-1"]);
    let steps: [(&str, u32, usize); 6] = [
        ("ArrowRight", 39, 2),
        ("ArrowRight", 39, 3),
        ("ArrowLeft", 37, 2),
        ("End", 35, n),
        ("ArrowRight", 39, n), // stays on the last frame
        ("Home", 36, 1),
    ];
    for (key, code, expected) in steps {
        s.press(key, code);
        assert_eq!(
            visible(&mut s),
            [format!("frame-{expected}")],
            "after {key}"
        );
        assert_eq!(
            s.eval("location.hash"),
            format!("#{expected}"),
            "after {key}"
        );
        assert_eq!(
            s.eval("document.getElementById('where').textContent"),
            format!("{expected} / {n}")
        );
    }

    // The notes button works without the keyboard and does not move on
    // (on the first chart frame, which has notes).
    s.press("ArrowRight", 39);
    s.eval("document.getElementById('talk-switch').click()");
    assert_eq!(
        s.eval("document.body.classList.contains('talk-shown')"),
        true
    );
    assert_eq!(
        s.eval("document.getElementById('talk-switch').getAttribute('aria-pressed')"),
        "true"
    );
    assert_eq!(
        s.eval("getComputedStyle(document.querySelector('#frame-2 .talk')).display"),
        "block"
    );
    assert_eq!(visible(&mut s), ["frame-2"]);
    s.eval("document.getElementById('talk-switch').click()");
    assert_eq!(
        s.eval("document.body.classList.contains('talk-shown')"),
        false
    );
    s.press("Home", 36);

    // Notes and the speaker's desk never cover the frame, at a laptop's
    // and a projector's window size; the controls grow with the window.
    for (w, h) in [(1280, 800), (1920, 1080)] {
        s.call(
            "Emulation.setDeviceMetricsOverride",
            json!({"width": w, "height": h, "deviceScaleFactor": 1, "mobile": false}),
        );
        s.press("ArrowRight", 39);
        let shown = s.eval("document.querySelector('.frame.current').id");
        assert_eq!(shown, "frame-2", "the first chart frame has notes");
        assert_eq!(s.eval("!!document.querySelector('#frame-2 .talk')"), true);
        assert_eq!(
            s.eval(&format!(
                "{APART}('#{} svg','#{} .talk')",
                shown.as_str().unwrap(),
                shown.as_str().unwrap()
            )),
            json!(true),
            "{w}x{h}: hidden notes take no room"
        );
        s.press("n", 78);
        let current = format!("#{} svg", shown.as_str().unwrap());
        let talk = format!("#{} .talk", shown.as_str().unwrap());
        assert_eq!(
            s.eval(&format!(
                "getComputedStyle(document.querySelector('{talk}')).display"
            )),
            "block"
        );
        assert_eq!(
            s.eval(&format!("{APART}('{current}','{talk}')")),
            json!(true),
            "{w}x{h}: notes over the frame"
        );
        s.press("n", 78);
        s.press("d", 68);
        assert_eq!(
            s.eval("document.body.classList.contains('desk-shown')"),
            true
        );
        assert_eq!(
            s.eval(&format!("{APART}('{current}','{talk}')")),
            json!(true),
            "{w}x{h}: desk notes over the frame"
        );
        assert_eq!(
            s.eval(&format!("{APART}('{current}','.frame.coming svg')")),
            json!(true),
            "{w}x{h}: next frame over this one"
        );
        assert_eq!(
            s.eval(&format!("{APART}('.frame.coming svg','{talk}')")),
            json!(true),
            "{w}x{h}: notes over the next frame"
        );
        let clock = s.eval("document.getElementById('clock').textContent");
        assert!(
            clock.as_str().is_some_and(|c| c.starts_with("0:0")),
            "{clock}"
        );
        // the keys still move on with the desk open
        s.press("ArrowRight", 39);
        assert_ne!(s.eval("document.querySelector('.frame.current').id"), shown);
        s.press("ArrowLeft", 37);
        s.press("d", 68);
        let size =
            s.eval("parseFloat(getComputedStyle(document.getElementById('where')).fontSize)");
        let size = size.as_f64().unwrap();
        assert!(
            size >= 13.0 && size >= f64::from(h.min(w)) * 0.02,
            "{w}x{h}: counter at {size} px"
        );
        s.press("Home", 36);
    }
    s.call(
        "Emulation.setDeviceMetricsOverride",
        json!({"width": 1280, "height": 720, "deviceScaleFactor": 1, "mobile": false}),
    );

    // Every frame keeps its text alternative for screen readers.
    let named = s.eval(
        "Array.from(document.querySelectorAll('section.frame svg')).filter(function(v){\
           var t=document.getElementById(v.getAttribute('aria-labelledby'));\
           var d=document.getElementById(v.getAttribute('aria-describedby'));\
           return v.getAttribute('role')==='img'&&t&&t.textContent.length>0&&d&&d.textContent.length>0;\
         }).length",
    );
    assert_eq!(named, json!(charts));

    // A screenshot shows the frame: a PNG with ink on it.
    let shot = s.call("Page.captureScreenshot", json!({"format": "png"}));
    let png = base64(shot["data"].as_str().expect("screenshot data"));
    let file = dir.join("screenshot.png");
    std::fs::write(&file, &png).unwrap();
    let img = resvg::tiny_skia::Pixmap::decode_png(&png).expect("the screenshot is a PNG");
    assert!(img.width() >= 640 && img.height() >= 360);
    let ink = img
        .pixels()
        .iter()
        .filter(|p| p.red() < 200 || p.green() < 200 || p.blue() < 200)
        .count();
    assert!(ink > 1000, "the screenshot is blank ({ink} dark pixels)");

    let errors = s.errors();
    assert!(errors.is_empty(), "the page logged errors: {errors:#?}");
    drop(s);
    drop(browser);
}

/// True (after printing `skipped: …`) when chromium is missing and not
/// required; a panic when `CRESCENDO_REQUIRE_BROWSER=1` (CI) and it is missing.
fn chromium_missing() -> bool {
    if Path::new(CHROMIUM).exists() {
        return false;
    }
    if std::env::var("CRESCENDO_REQUIRE_BROWSER").as_deref() == Ok("1") {
        panic!(
            "CRESCENDO_REQUIRE_BROWSER=1 but {CHROMIUM} is missing: install Debian's chromium \
             (`apt-get install chromium`, as .ci/run does)"
        );
    }
    println!("skipped: {CHROMIUM} is missing (CI requires it: install Debian's chromium)");
    true
}

#[test]
fn script_in_story_or_data_never_runs_in_the_deck() {
    if chromium_missing() {
        return;
    }
    // categories, titles, texts and notes full of script payloads that
    // would set window.__pwned or document.title if any of them ran
    let case = root().join("tests/hostile/markup-in-text");
    let dir = scratch("browser-hostile");
    let deck = dir.join("deck");
    let o = crescendo(
        &case,
        &["build", "story.cresc", "--out", deck.to_str().unwrap()],
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let index: PathBuf = deck.join("index.html").canonicalize().unwrap();

    let profile = dir.join("profile");
    std::fs::create_dir_all(&profile).unwrap();
    let port = free_port();
    let mut browser = launch(&profile, port);
    let url = page_socket(port, &mut browser);
    let mut s = Session::connect(&url);
    s.call("Runtime.enable", json!({}));
    s.call("Page.enable", json!({}));
    s.call(
        "Page.navigate",
        json!({"url": format!("file://{}", index.display())}),
    );
    s.wait_for("Page.loadEventFired");
    // the deck's own script ran (it set the counter; the one frame between
    // the opening and the closing frame) ...
    assert_eq!(
        s.eval("document.getElementById('where').textContent"),
        "1 / 3"
    );
    // ... and nothing from the data or the story did
    assert_eq!(s.eval("typeof window.__pwned"), "undefined");
    assert_eq!(
        s.eval("document.title"),
        "<script>document.title='pwned'</script> loans"
    );
    assert_eq!(
        s.eval("document.querySelectorAll('script').length"),
        json!(1)
    );
    assert_eq!(
        s.eval("document.querySelectorAll('img, iframe, foreignObject').length"),
        json!(0)
    );
    // the payloads are on the page as text
    let text = s.eval("document.body.textContent");
    assert!(
        text.as_str()
            .unwrap()
            .contains("<script>window.__pwned='csv'</script>"),
        "{text}"
    );
    // the policy is in force: even markup injected after escaping (as a
    // bug would) cannot run an inline handler or a new inline script
    let policy =
        s.eval("document.querySelector('meta[http-equiv=\"Content-Security-Policy\"]').content");
    let policy = policy.as_str().unwrap();
    assert!(
        policy.starts_with("default-src 'none'; script-src 'sha256-"),
        "{policy}"
    );
    s.eval(
        "document.body.insertAdjacentHTML('beforeend', '<img src=\"data:,x\" onerror=\"window.__late=1\" onload=\"window.__late=1\">');\
         var el=document.createElement('script');el.textContent='window.__late=2';document.body.appendChild(el);",
    );
    std::thread::sleep(Duration::from_millis(500));
    assert_eq!(s.eval("typeof window.__late"), "undefined");
    drop(s);
    drop(browser);
}

#[test]
fn the_review_page_shows_both_versions_and_loads_nothing() {
    if chromium_missing() {
        return;
    }
    let dir = scratch("browser-review");
    let repo = dir.join("repo");
    common::repo::two_versions(&repo);
    let page = dir.join("review.html");
    let o = crescendo(
        &repo,
        &[
            "review",
            "story.cresc",
            "--against",
            "first",
            "--out",
            page.to_str().unwrap(),
        ],
    );
    assert_eq!(
        o.status.code(),
        Some(3),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let page = page.canonicalize().unwrap();

    let profile = dir.join("profile");
    std::fs::create_dir_all(&profile).unwrap();
    let port = free_port();
    let mut browser = launch(&profile, port);
    let url = page_socket(port, &mut browser);
    let mut s = Session::connect(&url);
    s.call("Runtime.enable", json!({}));
    s.call("Log.enable", json!({}));
    s.call("Network.enable", json!({}));
    s.call("Page.enable", json!({}));
    s.call(
        "Emulation.setDeviceMetricsOverride",
        json!({"width": 1400, "height": 1000, "deviceScaleFactor": 1, "mobile": false}),
    );
    s.call(
        "Page.navigate",
        json!({"url": format!("file://{}", page.display())}),
    );
    s.wait_for("Page.loadEventFired");
    assert_eq!(s.eval("document.readyState"), "complete");

    // both versions of every frame are drawn: each picture decoded, with
    // the size of a frame
    let drawn = s.eval(
        "Array.from(document.images).filter(function(i){\
           return i.complete && i.naturalWidth >= 640 && i.naturalHeight >= 360;\
         }).length",
    );
    assert_eq!(drawn, json!(6));
    // the figure that moved, old and new
    assert_eq!(
        s.eval("document.querySelector('.frame.changed del').textContent"),
        "1.5"
    );
    let text = s.eval("document.body.textContent");
    let text = text.as_str().unwrap();
    assert!(
        text.contains("fails now") && text.contains("near miss"),
        "{text}"
    );
    assert!(text.contains("East lent 1.1× as much as West"), "{text}");

    // the policy holds: no script runs, nothing may be fetched
    let policy =
        s.eval("document.querySelector('meta[http-equiv=\"Content-Security-Policy\"]').content");
    let policy = policy.as_str().unwrap();
    assert!(
        policy.starts_with("default-src 'none'; script-src 'none'; style-src 'sha256-"),
        "{policy}"
    );
    // the stylesheet applied (by its hash): the page is laid out in columns
    assert_eq!(
        s.eval("getComputedStyle(document.querySelector('.pair')).display"),
        "grid"
    );
    s.eval(
        "document.body.insertAdjacentHTML('beforeend', '<img src=\"data:,x\" onerror=\"window.__late=1\">');\
         var el=document.createElement('script');el.textContent='window.__late=2';document.body.appendChild(el);",
    );
    std::thread::sleep(Duration::from_millis(500));
    assert_eq!(s.eval("typeof window.__late"), "undefined");

    // no request left the page but the file itself and its data: images
    let requests: Vec<String> = s
        .events
        .iter()
        .filter(|e| e["method"] == "Network.requestWillBeSent")
        .filter_map(|e| e["params"]["request"]["url"].as_str().map(str::to_string))
        .filter(|u| !u.starts_with("data:") && !u.starts_with("file://"))
        .collect();
    assert!(
        requests.is_empty(),
        "the page asked the network: {requests:?}"
    );

    let shot = s.call("Page.captureScreenshot", json!({"format": "png"}));
    let png = base64(shot["data"].as_str().expect("screenshot data"));
    std::fs::write(dir.join("review.png"), &png).unwrap();
    let img = resvg::tiny_skia::Pixmap::decode_png(&png).expect("the screenshot is a PNG");
    let ink = img
        .pixels()
        .iter()
        .filter(|p| p.red() < 200 || p.green() < 200 || p.blue() < 200)
        .count();
    assert!(ink > 1000, "the screenshot is blank ({ink} dark pixels)");
    // CSP reports of the injected script and handler are expected; no
    // other error may be logged
    let errors: Vec<String> = s
        .errors()
        .into_iter()
        .filter(|e| !e.contains("Content Security Policy"))
        .collect();
    assert!(errors.is_empty(), "the page logged errors: {errors:#?}");
    drop(s);
    drop(browser);
}
