//! Crash safety: a build killed (SIGKILL) at random moments, over and over,
//! leaves the deck folder holding exactly the previous deck or exactly the
//! new one: the same file names with the same bytes, never a mix and never
//! a half-written file. Debug builds slow each file write down on request
//! (`CRESCENDO_TEST_SLOW_WRITE_MS`), so that kills land inside the write.

mod common;

use std::fs;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use common::{read_dir_files, root, scratch};

/// A small seeded generator (xorshift64*), so a failure can be replayed.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    fn below(&mut self, n: u64) -> u64 {
        self.next() % n.max(1)
    }
}

const SLOW_MS: &str = "15";

fn build(dir: &Path, out: &str) -> std::process::Child {
    Command::new(env!("CARGO_BIN_EXE_crescendo"))
        .args(["build", "story.cresc", "--out", out])
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .env("CRESCENDO_TEST_SLOW_WRITE_MS", SLOW_MS)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("start crescendo")
}

fn build_to_end(dir: &Path, out: &str) -> Duration {
    let start = Instant::now();
    let status = build(dir, out).wait().expect("wait");
    assert!(status.success(), "a build of the {out} deck failed");
    start.elapsed()
}

/// The pools story with its headline made distinct, so every version
/// writes different bytes.
fn story(version: usize) -> String {
    let text = fs::read_to_string(root().join("stories/pools/pools.cresc")).expect("pools story");
    text.replacen("frame \"", &format!("frame \"(v{version}) "), 1)
}

#[test]
fn a_killed_build_leaves_the_old_deck_or_the_new_one() {
    let dir = scratch("crash");
    fs::create_dir_all(dir.join("data")).unwrap();
    fs::copy(
        root().join("stories/pools/data/visits.csv"),
        dir.join("data/visits.csv"),
    )
    .unwrap();
    // the reference decks of the two versions, built without interruption
    let mut refs = Vec::new();
    let mut full = Duration::ZERO;
    for v in 0..2 {
        fs::write(dir.join("story.cresc"), story(v)).unwrap();
        let out = format!("ref{v}");
        full = full.max(build_to_end(&dir, &out));
        refs.push(read_dir_files(&dir.join(&out)));
    }
    assert_ne!(refs[0], refs[1]);
    fs::write(dir.join("story.cresc"), story(0)).unwrap();
    build_to_end(&dir, "deck");
    let mut current = 0;
    assert_eq!(read_dir_files(&dir.join("deck")), refs[current]);

    let mut rng = Rng(0x00c0_ffee_1234_5678);
    let window = full.as_millis() as u64 + 50;
    let (mut kept, mut replaced) = (0, 0);
    for round in 0..60 {
        let next = 1 - current;
        fs::write(dir.join("story.cresc"), story(next)).unwrap();
        let mut child = build(&dir, "deck");
        std::thread::sleep(Duration::from_millis(rng.below(window)));
        let _ = child.kill(); // SIGKILL
        let _ = child.wait();
        let now = read_dir_files(&dir.join("deck"));
        if now == refs[current] {
            kept += 1;
        } else if now == refs[next] {
            replaced += 1;
            current = next;
        } else {
            let names: Vec<_> = now.iter().map(|(n, _)| n.clone()).collect();
            panic!("round {round}: the deck is neither the old nor the new one: {names:?}");
        }
    }
    eprintln!("kept the old deck {kept} times, got the new one {replaced} times");
    // the kills landed both before and after the swap
    assert!(kept > 0 && replaced > 0, "kept {kept}, replaced {replaced}");
    // the next build cleans up after the killed ones
    fs::write(dir.join("story.cresc"), story(0)).unwrap();
    build_to_end(&dir, "deck");
    assert_eq!(read_dir_files(&dir.join("deck")), refs[0]);
    let stray: Vec<_> = fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.contains(".building-") || n.contains(".previous-"))
        .collect();
    assert!(stray.is_empty(), "left over: {stray:?}");
}
