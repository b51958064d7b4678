//! `crescendo watch`: rebuild the deck whenever the story, its data files,
//! its house-style file or a plugin changes; and, with `--serve`, show the
//! deck on 127.0.0.1 and reload it in the browser after each rebuild.
//!
//! Changes are noticed with the `notify` crate (inotify on Linux) on the
//! folders that hold the watched files, so editors that save by writing a
//! new file and renaming it are seen too; events within [`QUIET`] of each
//! other make one rebuild. A failed build prints its diagnostics and leaves
//! the last good deck in place (the deck writer only replaces a deck after
//! a whole successful build).
//!
//! The server is a few lines of `std::net`: it binds 127.0.0.1 only,
//! answers GET and HEAD for files inside the deck folder (no `..`, no
//! hidden files, and the resolved path must stay inside the folder),
//! `/__version` with a counter of successful builds, and adds a small
//! polling script to `index.html` *as it serves it*. The `index.html` on
//! disk is never changed: it stays self-contained and byte-identical to a
//! plain build.

use std::collections::BTreeSet;
use std::io::{BufRead, BufReader, Read, Write};
use std::net::{TcpListener, TcpStream};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{mpsc, Arc};
use std::time::Duration;

use crescendo_lang::ast::Item;
use notify::{RecursiveMode, Watcher};

use crate::build::build;
use crate::cli::{DataArgs, LintArgs};
use crate::deck;
use crate::planning::default_out;

/// Events closer together than this make one rebuild.
const QUIET: Duration = Duration::from_millis(200);

/// What to watch: exact files, and folders whose whole content counts.
#[derive(Debug, Default, PartialEq)]
struct Targets {
    files: BTreeSet<PathBuf>,
    trees: BTreeSet<PathBuf>,
}

fn absolute(p: &Path) -> PathBuf {
    let p = if p.is_absolute() {
        p.to_path_buf()
    } else {
        std::env::current_dir().unwrap_or_default().join(p)
    };
    // `.` and `..` taken out, without requiring the file to exist
    crescendo_plan::paths::normalise(&p)
}

/// The story, its data files (or their `--data` replacements), its style
/// file, the plugin libraries it names and the plugins folder beside it.
fn targets(story: &Path, replacements: &[(String, PathBuf)]) -> Targets {
    let mut t = Targets::default();
    t.files.insert(absolute(story));
    let dir = story.parent().unwrap_or(Path::new("."));
    let plugins = dir.join("plugins");
    if plugins.is_dir() {
        t.trees.insert(absolute(&plugins));
    }
    let Ok(text) = std::fs::read_to_string(story) else {
        return t;
    };
    let src = crescendo_diag::Source::file(story.display().to_string(), text);
    let (ast, _) = crescendo_lang::parse(&src);
    for item in &ast.items {
        match item {
            Item::Data(d) => {
                let replaced = replacements.iter().find(|(n, _)| *n == d.name.name);
                // A database source has no file to watch (rebuild by
                // touching the story).
                if d.database.is_some() && replaced.is_none() {
                    continue;
                }
                let file = replaced.map_or_else(|| dir.join(&d.file.value), |(_, p)| p.clone());
                t.files.insert(absolute(&file));
            }
            Item::Style(s) => {
                t.files.insert(absolute(&dir.join(&s.text.value)));
            }
            // the plugin libraries the story names, wherever they are
            Item::Plugin(p) => {
                t.files.insert(absolute(&dir.join(&p.path.value)));
            }
            _ => {}
        }
    }
    t
}

impl Targets {
    fn matches(&self, path: &Path) -> bool {
        let p = absolute(path);
        self.files.contains(&p) || self.trees.iter().any(|t| p.starts_with(t))
    }

    /// (folder, recursive) pairs to hand to the watcher.
    fn folders(&self) -> BTreeSet<(PathBuf, bool)> {
        let mut out: BTreeSet<(PathBuf, bool)> = self
            .files
            .iter()
            .filter_map(|f| f.parent().map(|p| (p.to_path_buf(), false)))
            .filter(|(p, _)| p.is_dir())
            .collect();
        out.extend(self.trees.iter().map(|t| (t.clone(), true)));
        out
    }
}

/// `crescendo watch`: build, then rebuild on every change until interrupted.
#[allow(clippy::too_many_arguments)]
pub fn run(
    story: &Path,
    out: Option<PathBuf>,
    draft: bool,
    serve: bool,
    port: u16,
    data: &DataArgs,
    lint: &LintArgs,
    color: bool,
) -> ExitCode {
    let deck_dir = out.clone().unwrap_or_else(|| default_out(story));
    let exports = deck::Exports::default();
    rebuild_loop(story, &deck_dir, &data.data, serve.then_some(port), || {
        build(story, out.clone(), draft, &exports, data, lint, color) == ExitCode::SUCCESS
    })
}

/// Run the watch loop until interrupted. `build` builds once and says
/// whether it succeeded.
fn rebuild_loop(
    story: &Path,
    deck: &Path,
    replacements: &[(String, PathBuf)],
    serve: Option<u16>,
    build: impl Fn() -> bool,
) -> ExitCode {
    let version = Arc::new(AtomicU64::new(0));
    if build() {
        version.fetch_add(1, Ordering::SeqCst);
    }
    if let Some(port) = serve {
        match TcpListener::bind(("127.0.0.1", port)) {
            Ok(listener) => {
                let addr = listener
                    .local_addr()
                    .map_or_else(|_| format!("127.0.0.1:{port}"), |a| a.to_string());
                tell!("serving {} at http://{addr}/", deck.display());
                let deck = deck.to_path_buf();
                let version = Arc::clone(&version);
                std::thread::spawn(move || serve_loop(listener, &deck, &version));
            }
            Err(e) => {
                tell!("error: cannot listen on 127.0.0.1:{port}: {e}");
                return ExitCode::from(2);
            }
        }
    }
    let (tx, rx) = mpsc::channel();
    let mut watcher = match notify::recommended_watcher(move |ev: notify::Result<notify::Event>| {
        if let Ok(ev) = ev {
            let _ = tx.send(ev.paths);
        }
    }) {
        Ok(w) => w,
        Err(e) => {
            tell!("error: cannot watch files: {e}");
            return ExitCode::from(1);
        }
    };
    let mut watched: BTreeSet<(PathBuf, bool)> = BTreeSet::new();
    let mut t = targets(story, replacements);
    loop {
        let want = t.folders();
        for (dir, recursive) in watched.difference(&want) {
            let _ = watcher.unwatch(dir);
            let _ = recursive;
        }
        for (dir, recursive) in want.difference(&watched) {
            let mode = if *recursive {
                RecursiveMode::Recursive
            } else {
                RecursiveMode::NonRecursive
            };
            if let Err(e) = watcher.watch(dir, mode) {
                tell!("warning: cannot watch {}: {e}", dir.display());
            }
        }
        watched = want;
        tell!(
            "watching {} file{} for changes (Ctrl-C stops)",
            t.files.len(),
            if t.files.len() == 1 { "" } else { "s" }
        );
        // Wait for a relevant change, then for quiet.
        let mut changed: Option<PathBuf> = None;
        while changed.is_none() {
            let Ok(paths) = rx.recv() else {
                return ExitCode::SUCCESS;
            };
            changed = paths.into_iter().find(|p| t.matches(p));
        }
        while let Ok(more) = rx.recv_timeout(QUIET) {
            let _ = more;
        }
        if let Some(p) = changed {
            tell!("changed: {}; rebuilding", p.display());
        }
        if build() {
            version.fetch_add(1, Ordering::SeqCst);
        }
        t = targets(story, replacements);
    }
}

fn serve_loop(listener: TcpListener, deck: &Path, version: &AtomicU64) {
    for stream in listener.incoming().flatten() {
        let _ = stream.set_read_timeout(Some(Duration::from_secs(5)));
        let _ = stream.set_write_timeout(Some(Duration::from_secs(5)));
        let _ = handle(stream, deck, version);
    }
}

/// The script added to `index.html` when it is served: poll the build
/// counter and reload when it moves (the address keeps the frame number).
fn reload_script(version: u64) -> String {
    format!(
        "/* added by crescendo watch --serve */\n(function(){{var v=\"{version}\";\
setInterval(function(){{fetch(\"/__version\",{{cache:\"no-store\"}}).then(function(r){{return r.text()}})\
.then(function(t){{if(t!==v){{location.reload()}}}}).catch(function(){{}})}},700)}})();"
    )
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

fn handle(mut stream: TcpStream, deck: &Path, version: &AtomicU64) -> std::io::Result<()> {
    let mut reader = BufReader::new(stream.try_clone()?).take(16 * 1024);
    let mut line = String::new();
    reader.read_line(&mut line)?;
    // Drain the headers.
    loop {
        let mut h = String::new();
        if reader.read_line(&mut h)? == 0 || h == "\r\n" || h == "\n" {
            break;
        }
    }
    let mut parts = line.split_whitespace();
    let (method, target) = (parts.next().unwrap_or(""), parts.next().unwrap_or(""));
    let head = method == "HEAD";
    if method != "GET" && !head {
        return respond(
            &mut stream,
            "405 Method Not Allowed",
            "text/plain",
            b"GET only\n",
            false,
        );
    }
    if target.split('?').next() == Some("/__version") {
        let v = version.load(Ordering::SeqCst).to_string();
        return respond(&mut stream, "200 OK", "text/plain", v.as_bytes(), head);
    }
    let Some(file) = resolve(deck, target) else {
        return respond(
            &mut stream,
            "404 Not Found",
            "text/plain",
            b"not found\n",
            head,
        );
    };
    let Ok(mut body) = std::fs::read(&file) else {
        return respond(
            &mut stream,
            "404 Not Found",
            "text/plain",
            b"not found\n",
            head,
        );
    };
    if file.file_name().is_some_and(|n| n == "index.html") {
        let script = reload_script(version.load(Ordering::SeqCst));
        let text = String::from_utf8_lossy(&body);
        // the deck's content security policy is extended by this script's
        // hash (and a request to its own server)
        body = crescendo_render::with_extra_script(&text, &script).into_bytes();
    }
    respond(&mut stream, "200 OK", content_type(&file), &body, head)
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
}
