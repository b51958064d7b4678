//! The preview server of `crescendo watch --serve`: a few lines of
//! `std::net` that show the deck on 127.0.0.1 and reload it in the browser
//! after each rebuild.
//!
//! - It binds 127.0.0.1 only, and answers only requests whose `Host` is
//!   `127.0.0.1:PORT` or `localhost:PORT` (the bound port), so a page on
//!   another site cannot read the deck through a name that it points at
//!   127.0.0.1 (DNS rebinding).
//! - Each connection is served on a thread of its own, at most
//!   [`MAX_CONNECTIONS`] at once (more get `503` at once); a client has
//!   [`REQUEST_DEADLINE`] in all to send its request and as long to take
//!   the answer, so a slow or idle client holds up nobody else.
//! - It answers GET and HEAD for files inside the deck folder (no `..`, no
//!   hidden files, and the resolved path must stay inside the folder), and
//!   `/__version` with a counter of finished builds.
//! - It adds a small script to `index.html` *as it serves it*: the script
//!   polls that counter and reloads the page when it moves, and, after a
//!   failed build, shows the build's errors over the deck (or on a page of
//!   their own when there is no deck yet). The `index.html` on disk is never
//!   changed: it stays self-contained and byte-identical to a plain build.

use std::io::{Read, Write};
use std::net::{SocketAddr, TcpListener, TcpStream};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, AtomicUsize, Ordering};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

/// Most connections served at once.
pub const MAX_CONNECTIONS: usize = 16;
/// How long a client has to send its request head, and to take the answer.
pub const REQUEST_DEADLINE: Duration = Duration::from_secs(5);
/// The longest request head read.
const MAX_HEAD_BYTES: usize = 16 * 1024;

/// What the watch loop tells the server: how many builds finished, and the
/// errors of the last one when it failed.
#[derive(Default)]
pub struct State {
    builds: AtomicU64,
    error: Mutex<Option<String>>,
}

impl State {
    /// A build finished: `error` holds what it printed when it failed.
    pub fn finished(&self, error: Option<String>) {
        if let Ok(mut slot) = self.error.lock() {
            *slot = error;
        }
        self.builds.fetch_add(1, Ordering::SeqCst);
    }

    fn error(&self) -> Option<String> {
        self.error.lock().ok().and_then(|e| e.clone())
    }
}

/// Listen on 127.0.0.1:`port` (0 picks a free port) and serve `deck` on a
/// thread of its own; returns the address it listens on.
pub fn start(deck: &Path, port: u16, state: Arc<State>) -> std::io::Result<SocketAddr> {
    let listener = TcpListener::bind(("127.0.0.1", port))?;
    let addr = listener.local_addr()?;
    let deck = deck.to_path_buf();
    std::thread::spawn(move || accept_loop(&listener, &deck, addr.port(), &state));
    Ok(addr)
}

/// Counts a connection as served until dropped.
struct Slot(Arc<AtomicUsize>);

impl Drop for Slot {
    fn drop(&mut self) {
        self.0.fetch_sub(1, Ordering::SeqCst);
    }
}

fn accept_loop(listener: &TcpListener, deck: &Path, port: u16, state: &Arc<State>) {
    let active = Arc::new(AtomicUsize::new(0));
    for mut stream in listener.incoming().flatten() {
        let _ = stream.set_write_timeout(Some(REQUEST_DEADLINE));
        if active.fetch_add(1, Ordering::SeqCst) >= MAX_CONNECTIONS {
            active.fetch_sub(1, Ordering::SeqCst);
            // a small answer fits the socket's buffer: this never waits
            let _ = respond(
                &mut stream,
                "503 Service Unavailable",
                "text/plain",
                b"busy\n",
                false,
            );
            continue;
        }
        let slot = Slot(Arc::clone(&active));
        let (deck, state) = (deck.to_path_buf(), Arc::clone(state));
        std::thread::spawn(move || {
            let _slot = slot;
            let _ = handle(stream, &deck, port, &state);
        });
    }
}

/// A request head: method, target and `Host`.
#[derive(Debug, PartialEq)]
struct Head {
    method: String,
    target: String,
    host: Option<String>,
}

/// Read a request head (up to the blank line) within `deadline`; `None`
/// when the client is too slow, sends too much or closes early.
fn read_head(stream: &mut TcpStream, deadline: Instant) -> Option<Head> {
    let mut bytes = Vec::new();
    let mut chunk = [0u8; 2048];
    while !bytes.windows(4).any(|w| w == b"\r\n\r\n") && !bytes.windows(2).any(|w| w == b"\n\n") {
        let left = deadline.checked_duration_since(Instant::now())?;
        if left.is_zero() || bytes.len() > MAX_HEAD_BYTES {
            return None;
        }
        stream.set_read_timeout(Some(left)).ok()?;
        match stream.read(&mut chunk) {
            Ok(0) | Err(_) => return None,
            Ok(n) => bytes.extend_from_slice(&chunk[..n]),
        }
    }
    parse_head(&String::from_utf8_lossy(&bytes))
}

fn parse_head(text: &str) -> Option<Head> {
    let mut lines = text.lines();
    let mut parts = lines.next()?.split_whitespace();
    let (method, target) = (parts.next()?.to_string(), parts.next()?.to_string());
    let host = lines
        .take_while(|l| !l.trim().is_empty())
        .filter_map(|l| l.split_once(':'))
        .find(|(name, _)| name.trim().eq_ignore_ascii_case("host"))
        .map(|(_, value)| value.trim().to_ascii_lowercase());
    Some(Head {
        method,
        target,
        host,
    })
}

/// Is `host` (a request's `Host`) this server on 127.0.0.1:`port`?
fn host_allowed(host: &str, port: u16) -> bool {
    let host = host.trim().to_ascii_lowercase();
    let (name, given) = match host.rsplit_once(':') {
        Some((name, p)) => (name, p.parse::<u16>().ok()),
        // without a port, HTTP means 80
        None => (host.as_str(), Some(80)),
    };
    given == Some(port) && (name == "127.0.0.1" || name == "localhost")
}

fn handle(mut stream: TcpStream, deck: &Path, port: u16, state: &State) -> std::io::Result<()> {
    let Some(head) = read_head(&mut stream, Instant::now() + REQUEST_DEADLINE) else {
        return Ok(());
    };
    let is_head = head.method == "HEAD";
    let Some(host) = head.host.as_deref() else {
        return respond(
            &mut stream,
            "400 Bad Request",
            "text/plain",
            b"no Host\n",
            is_head,
        );
    };
    if !host_allowed(host, port) {
        let body = format!("this server answers only to 127.0.0.1:{port} and localhost:{port}\n");
        return respond(
            &mut stream,
            "403 Forbidden",
            "text/plain",
            body.as_bytes(),
            is_head,
        );
    }
    if head.method != "GET" && !is_head {
        return respond(
            &mut stream,
            "405 Method Not Allowed",
            "text/plain",
            b"GET only\n",
            false,
        );
    }
    if head.target.split('?').next() == Some("/__version") {
        let v = state.builds.load(Ordering::SeqCst).to_string();
        return respond(&mut stream, "200 OK", "text/plain", v.as_bytes(), is_head);
    }
    let file = resolve(deck, &head.target);
    let index = match &file {
        Some(f) => f.file_name().is_some_and(|n| n == "index.html"),
        None => matches!(
            head.target.split(['?', '#']).next(),
            Some("/" | "/index.html")
        ),
    };
    let body = match &file {
        Some(f) => std::fs::read(f).ok(),
        None => None,
    };
    let builds = state.builds.load(Ordering::SeqCst);
    let error = state.error();
    let script = |lead: &str| page_script(builds, error.as_deref().map(|e| (lead, e)));
    let page = match (body, index) {
        // the deck, with the reload script (and the last build's errors):
        // the deck's content security policy is extended by this script's
        // hash (and a request to its own server)
        (Some(body), true) => crescendo_render::with_extra_script(
            &String::from_utf8_lossy(&body),
            &script("The last build failed; this is the deck it kept."),
        ),
        // no deck yet: a page of its own for the errors, reloading too
        (None, true) => crescendo_render::with_extra_script(
            NO_DECK,
            &script("The build failed; there is no deck yet."),
        ),
        (Some(body), false) => {
            let ctype = content_type(file.as_deref().unwrap_or(Path::new("")));
            return respond(&mut stream, "200 OK", ctype, &body, is_head);
        }
        (None, false) => {
            return respond(
                &mut stream,
                "404 Not Found",
                "text/plain",
                b"not found\n",
                is_head,
            )
        }
    };
    let html = "text/html; charset=utf-8";
    respond(&mut stream, "200 OK", html, page.as_bytes(), is_head)
}

/// The page served for `/` while there is no deck (the first build failed).
const NO_DECK: &str = "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\
<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; script-src ; base-uri 'none'\">\
<title>crescendo watch: no deck yet</title></head>\n<body><p>No deck has been built yet.</p>\n</body></html>\n";

/// The script added to the served `index.html`: poll the build counter and
/// reload when it moves (the address keeps the frame number); after a
/// failed build, show `(lead, errors)` in a panel over the page.
fn page_script(builds: u64, error: Option<(&str, &str)>) -> String {
    let error = error.map_or_else(
        || "null".to_string(),
        |(lead, e)| script_string(&format!("{lead}\n\n{e}")),
    );
    format!(
        "/* added by crescendo watch --serve */\n(function(){{var v=\"{builds}\",e={error};\
if(e!==null){{var p=document.createElement(\"pre\");p.id=\"crescendo-build-error\";p.setAttribute(\"role\",\"alert\");\
p.textContent=e;var s=p.style;\
s.position=\"fixed\";s.left=\"0\";s.right=\"0\";s.top=\"0\";s.margin=\"0\";s.padding=\"12px 16px\";\
s.maxHeight=\"60vh\";s.overflow=\"auto\";s.whiteSpace=\"pre-wrap\";s.zIndex=\"2147483647\";\
s.font=\"14px/1.4 monospace\";s.background=\"#FFF3F0\";s.color=\"#7A1D0E\";s.borderBottom=\"3px solid #7A1D0E\";\
document.body.appendChild(p)}}\
setInterval(function(){{fetch(\"/__version\",{{cache:\"no-store\"}}).then(function(r){{return r.text()}})\
.then(function(t){{if(t!==v){{location.reload()}}}}).catch(function(){{}})}},700)}})();"
    )
}

/// `text` as a JavaScript string literal that is safe inside `<script>`:
/// JSON, with `<`, `>`, `&` and the two line separators escaped.
fn script_string(text: &str) -> String {
    serde_json::to_string(text)
        .unwrap_or_else(|_| "\"\"".into())
        .replace('<', "\\u003c")
        .replace('>', "\\u003e")
        .replace('&', "\\u0026")
        .replace('\u{2028}', "\\u2028")
        .replace('\u{2029}', "\\u2029")
}

fn percent_decode(s: &str) -> Option<String> {
    let b = s.as_bytes();
    let mut out = Vec::with_capacity(b.len());
    let mut i = 0;
    while i < b.len() {
        if b[i] == b'%' {
            let hex = std::str::from_utf8(b.get(i + 1..i + 3)?).ok()?;
            out.push(u8::from_str_radix(hex, 16).ok()?);
            i += 3;
        } else {
            out.push(b[i]);
            i += 1;
        }
    }
    String::from_utf8(out).ok()
}

/// The file a request path names inside `deck`, or `None` when it names
/// anything else (a parent folder, a hidden file, an absolute path).
pub fn resolve(deck: &Path, target: &str) -> Option<PathBuf> {
    let path = target.split(['?', '#']).next().unwrap_or("");
    let path = percent_decode(path)?;
    if !path.starts_with('/') {
        return None;
    }
    let mut rel = PathBuf::new();
    for seg in path.split('/').filter(|s| !s.is_empty()) {
        if seg.starts_with('.') || seg.contains(['\\', '\0', ':']) {
            return None;
        }
        rel.push(seg);
    }
    if rel.as_os_str().is_empty() {
        rel.push("index.html");
    }
    let root = std::fs::canonicalize(deck).ok()?;
    let full = std::fs::canonicalize(root.join(&rel)).ok()?;
    (full.starts_with(&root) && full.is_file()).then_some(full)
}

fn content_type(p: &Path) -> &'static str {
    match p.extension().and_then(|e| e.to_str()) {
        Some("html") => "text/html; charset=utf-8",
        Some("svg") => "image/svg+xml",
        Some("json") => "application/json",
        Some("png") => "image/png",
        Some("pdf") => "application/pdf",
        _ => "application/octet-stream",
    }
}

fn respond(
    stream: &mut TcpStream,
    status: &str,
    ctype: &str,
    body: &[u8],
    head: bool,
) -> std::io::Result<()> {
    write!(
        stream,
        "HTTP/1.1 {status}\r\nContent-Type: {ctype}\r\nContent-Length: {}\r\nCache-Control: no-store\r\nConnection: close\r\n\r\n",
        body.len()
    )?;
    if !head {
        stream.write_all(body)?;
    }
    stream.flush()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn requests_stay_inside_the_deck() {
        let root = std::env::temp_dir().join(format!("crescendo-serve-{}", std::process::id()));
        let deck = root.join("deck");
        std::fs::create_dir_all(deck.join("sub")).unwrap();
        std::fs::write(deck.join("index.html"), "x").unwrap();
        std::fs::write(deck.join("sub/a.svg"), "x").unwrap();
        std::fs::write(root.join("secret.txt"), "x").unwrap();
        assert!(resolve(&deck, "/").is_some());
        assert!(resolve(&deck, "/index.html?x=1").is_some());
        assert!(resolve(&deck, "/sub/a.svg").is_some());
        for bad in [
            "/../secret.txt",
            "/%2e%2e/secret.txt",
            "/sub/../../secret.txt",
            "/..%2fsecret.txt",
            "//etc/passwd",
            "/.hidden",
            "x",
            "/sub",
            "/nope.svg",
        ] {
            assert_eq!(resolve(&deck, bad), None, "{bad}");
        }
        let _ = std::fs::remove_dir_all(&root);
    }

    /// Only this server's own names pass (DNS rebinding sends the
    /// attacker's name in `Host`).
    #[test]
    fn only_the_loopback_names_on_the_bound_port_are_served() {
        for ok in [
            "127.0.0.1:8765",
            "localhost:8765",
            "LOCALHOST:8765",
            " localhost:8765 ",
        ] {
            assert!(host_allowed(ok, 8765), "{ok}");
        }
        for bad in [
            "evil.example:8765",
            "127.0.0.1:8766",
            "localhost",
            "127.0.0.1",
            "localhost.evil.example:8765",
            "127.0.0.1.nip.io:8765",
            "[::1]:8765",
            "",
            "localhost:8765:8765",
        ] {
            assert!(!host_allowed(bad, 8765), "{bad}");
        }
        assert!(host_allowed("localhost", 80));
    }

    #[test]
    fn request_heads_are_parsed() {
        let h = parse_head("GET /a.svg?x HTTP/1.1\r\nUser-Agent: t\r\nhOsT:  LocalHost:1 \r\n\r\n");
        assert_eq!(
            h,
            Some(Head {
                method: "GET".into(),
                target: "/a.svg?x".into(),
                host: Some("localhost:1".into()),
            })
        );
        assert_eq!(parse_head("GET / HTTP/1.0\r\n\r\n").unwrap().host, None);
        assert_eq!(parse_head("\r\n\r\n"), None);
    }

    #[test]
    fn the_error_panel_cannot_end_the_script() {
        let e = "error: </script><script>alert(1)</script> & \u{2028}";
        let s = page_script(3, Some(("The build failed.", e)));
        assert!(!s.contains("</script"), "{s}");
        assert!(s.contains("var v=\"3\",e=\""), "{s}");
        assert!(page_script(3, None).contains("e=null"));
        // the literal decodes back to the text
        let lit = script_string(e);
        let back: String = serde_json::from_str(&lit).unwrap();
        assert_eq!(back, e);
    }
}
