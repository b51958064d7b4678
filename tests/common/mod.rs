//! Helpers shared by the end-to-end tests.
#![allow(dead_code)]

pub mod repo;

use std::fs;
use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Output, Stdio};
use std::sync::mpsc;
use std::time::{Duration, Instant};

/// The repository root.
pub fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// A fresh, empty temporary folder for one test.
pub fn scratch(name: &str) -> PathBuf {
    sweep_dead_scratch();
    let d = std::env::temp_dir().join(format!("crescendo-e2e-{}-{name}", std::process::id()));
    let _ = fs::remove_dir_all(&d);
    fs::create_dir_all(&d).expect("create scratch folder");
    d
}

/// Scratch folders of test processes that have ended are removed (once
/// per process), so test runs do not fill the temporary folder: a folder
/// is named `crescendo-e2e-PID-…`, and a PID with no `/proc/PID` is gone.
fn sweep_dead_scratch() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        let Ok(entries) = fs::read_dir(std::env::temp_dir()) else {
            return;
        };
        for e in entries.flatten() {
            let name = e.file_name().to_string_lossy().to_string();
            let Some(pid) = name
                .strip_prefix("crescendo-e2e-")
                .and_then(|rest| rest.split('-').next())
                .and_then(|p| p.parse::<u32>().ok())
            else {
                continue;
            };
            if pid != std::process::id() && !Path::new(&format!("/proc/{pid}")).exists() {
                let _ = fs::remove_dir_all(e.path());
            }
        }
    });
}

/// Run the `crescendo` binary in `dir`.
pub fn crescendo(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_crescendo"))
        .args(args)
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .output()
        .expect("run crescendo")
}

/// Run the `crescendo` binary in `dir`, allowing the story to load the
/// plugins built into `target/debug` (`--allow-path`), as the routes demo
/// story does.
pub fn crescendo_with_plugins(dir: &Path, args: &[&str]) -> Output {
    let plugins = ensure_plugins().to_str().expect("utf-8 path").to_string();
    let mut all: Vec<&str> = args.to_vec();
    all.extend(["--allow-path", &plugins]);
    crescendo(dir, &all)
}

/// Planner options for the demo stories: the routes story loads the
/// plugins built into `target/debug`, outside its folder (`--allow-path`).
pub fn plan_options() -> crescendo_plan::Options {
    crescendo_plan::Options {
        allow_paths: vec![ensure_plugins().to_path_buf()],
        ..Default::default()
    }
}

/// Every story in `stories/`, as (name, path), sorted. The plugins some of
/// them load are built first.
pub fn stories() -> Vec<(String, PathBuf)> {
    ensure_plugins();
    let mut out = Vec::new();
    for e in fs::read_dir(root().join("stories")).expect("stories folder") {
        let dir = e.expect("entry").path();
        if !dir.is_dir() {
            continue;
        }
        for f in fs::read_dir(&dir).expect("story folder") {
            let p = f.expect("entry").path();
            if p.extension().is_some_and(|x| x == "cresc") {
                let name = p.file_stem().unwrap().to_string_lossy().into_owned();
                out.push((name, p));
            }
        }
    }
    out.sort();
    out
}

/// All files of a folder as (name, bytes), sorted by name.
pub fn read_dir_files(dir: &Path) -> Vec<(String, Vec<u8>)> {
    let mut v: Vec<(String, Vec<u8>)> = fs::read_dir(dir)
        .expect("read deck")
        .map(|e| {
            let p = e.expect("entry").path();
            (
                p.file_name().unwrap().to_string_lossy().into_owned(),
                fs::read(&p).expect("read file"),
            )
        })
        .collect();
    v.sort();
    v
}

/// Build the plugin crates (once per test binary) into the workspace's own
/// `target/debug`, where the demo stories and the plugin tests load them.
pub fn ensure_plugins() -> &'static Path {
    use std::sync::OnceLock;
    static BUILT: OnceLock<PathBuf> = OnceLock::new();
    BUILT.get_or_init(|| {
        let target = root().join("target");
        let status = Command::new(env!("CARGO"))
            .current_dir(root())
            .args([
                "build",
                "--quiet",
                "--target-dir",
                target.to_str().expect("utf-8 path"),
                "-p",
                "crescendo-slope",
                "-p",
                "crescendo-waterfall",
                "-p",
                "crescendo-fault-plugin",
                "-p",
                "crescendo-fault-oldabi",
                "-p",
                "crescendo-fault-noentry",
                "-p",
                "crescendo-fault-marker",
            ])
            .status()
            .expect("run cargo build for the plugins");
        assert!(status.success(), "building the plugin crates failed");
        target.join("debug")
    })
}

/// Every file under `dir` (recursively), as (path, bytes).
fn all_files(dir: &Path) -> Vec<(PathBuf, Vec<u8>)> {
    let mut out = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        let Ok(entries) = fs::read_dir(&d) else {
            continue;
        };
        for e in entries.flatten() {
            let p = e.path();
            match e.file_type() {
                Ok(t) if t.is_dir() => stack.push(p),
                Ok(t) if t.is_file() => {
                    if let Ok(b) = fs::read(&p) {
                        out.push((p, b));
                    }
                }
                _ => {}
            }
        }
    }
    out.sort();
    out
}

/// Run `crescendo ARGS` in `dir` with the extra environment `env`, expect
/// it to fail, and assert that `secret` appears nowhere in what it printed
/// (stdout, stderr) or in any file it wrote or changed under `dir` (deck,
/// manifest, caches, logs). Returns the run's output for further checks.
pub fn assert_secret_never_leaks(
    dir: &Path,
    args: &[&str],
    env: &[(&str, &str)],
    secret: &str,
) -> Output {
    assert!(!secret.is_empty());
    let before = all_files(dir);
    let out = Command::new(env!("CARGO_BIN_EXE_crescendo"))
        .args(args)
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .envs(env.iter().copied())
        .output()
        .expect("run crescendo");
    assert!(!out.status.success(), "the run was expected to fail");
    let needle = secret.as_bytes();
    let contains = |hay: &[u8]| hay.windows(needle.len()).any(|w| w == needle);
    assert!(!contains(&out.stdout), "the secret is in stdout");
    assert!(!contains(&out.stderr), "the secret is in stderr");
    for (path, bytes) in all_files(dir) {
        let unchanged = before.iter().any(|(p, b)| *p == path && *b == bytes);
        assert!(
            unchanged || !contains(&bytes),
            "the secret is in {}",
            path.display()
        );
    }
    out
}

/// A running `crescendo watch` whose standard error is read line by line.
pub struct Watch {
    child: Child,
    lines: mpsc::Receiver<String>,
}

impl Watch {
    pub fn start(dir: &Path, args: &[&str]) -> Watch {
        let mut child = Command::new(env!("CARGO_BIN_EXE_crescendo"))
            .arg("watch")
            .args(args)
            .current_dir(dir)
            .env("NO_COLOR", "1")
            .stdin(Stdio::null())
            .stdout(Stdio::null())
            .stderr(Stdio::piped())
            .spawn()
            .expect("start watch");
        let stderr = child.stderr.take().expect("stderr");
        let (tx, lines) = mpsc::channel();
        std::thread::spawn(move || {
            for line in BufReader::new(stderr).lines().map_while(Result::ok) {
                if tx.send(line).is_err() {
                    break;
                }
            }
        });
        Watch { child, lines }
    }

    /// Wait (at most 60 s) for a line containing `text`; returns it.
    pub fn wait_for(&self, text: &str) -> String {
        let deadline = Instant::now() + Duration::from_secs(60);
        let mut seen = Vec::new();
        while Instant::now() < deadline {
            if let Ok(line) = self.lines.recv_timeout(Duration::from_millis(200)) {
                if line.contains(text) {
                    return line;
                }
                seen.push(line);
            }
        }
        panic!(
            "no line with {text:?} within 60 s; saw:\n{}",
            seen.join("\n")
        );
    }
}

impl Watch {
    /// The lines printed during the next `time` (after those already read).
    pub fn lines_during(&self, time: Duration) -> Vec<String> {
        let deadline = Instant::now() + time;
        let mut seen = Vec::new();
        while let Some(left) = deadline.checked_duration_since(Instant::now()) {
            if let Ok(line) = self.lines.recv_timeout(left) {
                seen.push(line);
            }
        }
        seen
    }
}

impl Drop for Watch {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}
