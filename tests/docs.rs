//! The user documentation is tested: every story example in it is run
//! through the real `crescendo` binary.
//!
//! Fenced blocks, by their info string:
//! - ```` ```cresc preamble ````: the header (story, data, views) that the
//!   page's fragments are appended to; checked on its own too.
//! - ```` ```cresc ````: a fragment (or, when it starts with `story`, a whole
//!   story); `crescendo check` must succeed on preamble + fragment.
//! - ```` ```cresc error ````: must fail (non-zero, no panic); the next
//!   ```` ```text ```` block is exactly what `crescendo check` prints on
//!   stderr.
//! - ```` ```cresc step ````: the tutorial's story, one step at a time; after
//!   every step the story so far must check (before the first frame, the
//!   only error allowed is that there are no frames yet), and all steps
//!   joined must be the demo story itself.
//! - ```` ```csv data/NAME.csv ```` or ```` ```file NAME ````: a file the
//!   next examples read.
//!
//! `UPDATE_DOCS=1 cargo test --test docs` rewrites the expected error texts
//! and `crates/lint/RULES.md` from the current binary; read the diff.

mod common;

use std::fs;
use std::path::{Path, PathBuf};

use common::{crescendo, root, scratch};

/// One fenced block of a Markdown file.
#[derive(Debug)]
struct Block {
    info: String,
    body: String,
    /// 1-based line of the opening fence.
    line: usize,
    /// Line indexes (0-based) of the body, for rewriting.
    body_lines: std::ops::Range<usize>,
}

fn blocks(text: &str) -> Vec<Block> {
    let lines: Vec<&str> = text.lines().collect();
    let mut out = Vec::new();
    let mut i = 0;
    while i < lines.len() {
        if let Some(info) = lines[i].strip_prefix("```") {
            let start = i + 1;
            let mut j = start;
            while j < lines.len() && lines[j] != "```" {
                j += 1;
            }
            assert!(j < lines.len(), "unclosed fence at line {}", i + 1);
            out.push(Block {
                info: info.trim().to_string(),
                body: lines[start..j].iter().map(|l| format!("{l}\n")).collect(),
                line: i + 1,
                body_lines: start..j,
            });
            i = j + 1;
        } else {
            i += 1;
        }
    }
    out
}

fn updating() -> bool {
    std::env::var_os("UPDATE_DOCS").is_some()
}

/// A scratch folder with every demo story's data under `data/`.
fn workspace(name: &str) -> PathBuf {
    let dir = scratch(name);
    fs::create_dir_all(dir.join("data")).unwrap();
    for story in fs::read_dir(root().join("stories")).unwrap() {
        let data = story.unwrap().path().join("data");
        if let Ok(files) = fs::read_dir(&data) {
            for f in files {
                let p = f.unwrap().path();
                fs::copy(&p, dir.join("data").join(p.file_name().unwrap())).unwrap();
            }
        }
    }
    // the plugins the reference's examples load, beside the story
    let built = common::ensure_plugins();
    fs::create_dir_all(dir.join("plugins")).unwrap();
    for name in ["libcrescendo_slope.so", "libcrescendo_waterfall.so"] {
        fs::copy(built.join(name), dir.join("plugins").join(name)).unwrap();
    }
    dir
}

fn check(dir: &Path, story: &str) -> (Option<i32>, String) {
    fs::write(dir.join("story.cresc"), story).unwrap();
    let out = crescendo(dir, &["check", "story.cresc"]);
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Run every example of one page; returns the page rewritten with the
/// current error texts (equal to the input when nothing changed).
fn run_page(rel: &str) -> (String, String) {
    let path = root().join(rel);
    let text = fs::read_to_string(&path).unwrap_or_else(|e| panic!("{rel}: {e}"));
    let dir = workspace(&rel.replace(['/', '.'], "-"));
    let all = blocks(&text);
    let mut lines: Vec<String> = text.lines().map(String::from).collect();
    let mut preamble = String::new();
    let mut steps = String::new();
    let mut failures = Vec::new();
    let mut k = 0;
    while k < all.len() {
        let b = &all[k];
        let kind: Vec<&str> = b.info.split_whitespace().collect();
        let at = format!("{rel}:{}", b.line);
        match kind.as_slice() {
            ["csv", file] | ["file", file] => {
                let target = dir.join(file);
                fs::create_dir_all(target.parent().unwrap()).unwrap();
                fs::write(target, &b.body).unwrap();
            }
            ["cresc", "preamble"] => {
                preamble = b.body.clone();
                let (code, err) = check(&dir, &preamble);
                if code != Some(0) {
                    failures.push(format!("{at}: the preamble does not check:\n{err}"));
                }
            }
            ["cresc"] | ["cresc", "error"] => {
                let story = if b.body.starts_with("story ") {
                    b.body.clone()
                } else {
                    format!("{preamble}\n{}", b.body)
                };
                let (code, err) = check(&dir, &story);
                if err.contains("panicked") {
                    failures.push(format!("{at}: crescendo panicked:\n{err}"));
                }
                if kind.len() == 1 {
                    if code != Some(0) {
                        failures.push(format!("{at}: the example does not check:\n{err}"));
                    }
                } else {
                    if code == Some(0) {
                        failures.push(format!("{at}: the error example checks without error"));
                    }
                    match all.get(k + 1) {
                        Some(t) if t.info == "text" => {
                            if t.body != err {
                                if updating() {
                                    let new: Vec<String> = err.lines().map(String::from).collect();
                                    lines.splice(t.body_lines.clone(), new);
                                    // later blocks' line numbers moved: rerun
                                    let rewritten = lines.join("\n") + "\n";
                                    fs::write(&path, &rewritten).unwrap();
                                    return run_page(rel);
                                }
                                failures.push(format!(
                                    "{at}: the printed error changed (UPDATE_DOCS=1 rewrites it)\n--- page\n{}--- now\n{err}",
                                    t.body
                                ));
                            }
                            k += 1;
                        }
                        _ => failures.push(format!(
                            "{at}: an error example must be followed by a ```text block"
                        )),
                    }
                }
            }
            ["cresc", "step"] => {
                steps.push_str(&b.body);
                let (code, err) = check(&dir, &steps);
                let framed = steps.lines().any(|l| l.starts_with("frame "));
                if !framed {
                    // before the first frame the only complaint may be that
                    // there is none yet
                    if !(err.contains("error[no-frames]") && err.contains("\n1 error in")) {
                        failures.push(format!("{at}: the story so far has errors:\n{err}"));
                    }
                } else if code != Some(0) {
                    failures.push(format!("{at}: the story so far does not check:\n{err}"));
                }
            }
            ["cresc", ..] => failures.push(format!("{at}: unknown block kind `{}`", b.info)),
            _ => {}
        }
        k += 1;
    }
    assert!(failures.is_empty(), "{}", failures.join("\n\n"));
    (text, steps)
}

/// The words inside the page's code: inline `code` spans and fenced blocks.
fn code_words(text: &str) -> std::collections::BTreeSet<String> {
    let mut code = String::new();
    let mut prose = String::new();
    let mut fenced = false;
    for line in text.lines() {
        if line.starts_with("```") {
            fenced = !fenced;
        } else if fenced {
            code.push_str(line);
            code.push('\n');
        } else {
            prose.push_str(line);
            prose.push('\n');
        }
    }
    // inline spans may wrap across lines
    for (i, part) in prose.split('`').enumerate() {
        if i % 2 == 1 {
            code.push_str(part);
            code.push('\n');
        }
    }
    code.split(|c: char| !(c.is_ascii_alphanumeric() || c == '_'))
        .filter(|w| !w.is_empty())
        .map(String::from)
        .collect()
}

#[test]
fn language_reference_examples_check() {
    let (text, _) = run_page("grammar/REFERENCE.md");
    // The reference covers every statement the grammar has: each keyword of
    // the pest grammar appears in it as code.
    let grammar = fs::read_to_string(root().join("grammar/story.pest")).unwrap();
    let words = code_words(&text);
    let missing: Vec<String> = grammar
        .lines()
        .filter_map(|l| l.strip_prefix("kw_"))
        .filter_map(|l| l.split_whitespace().next())
        .filter(|kw| !words.contains(*kw))
        .map(String::from)
        .collect();
    assert!(
        missing.is_empty(),
        "keywords the reference never mentions: {missing:?}"
    );
}

#[test]
fn troubleshooting_errors_are_the_ones_printed() {
    let (text, _) = run_page("crates/diag/TROUBLESHOOTING.md");
    assert!(text.matches("```cresc error").count() >= 8);
}

#[test]
fn tutorial_builds_the_pools_story_step_by_step() {
    let (text, steps) = run_page("stories/TUTORIAL.md");
    let story = fs::read_to_string(root().join("stories/pools/pools.cresc")).unwrap();
    assert_eq!(
        steps, story,
        "the tutorial's steps, joined, must be stories/pools/pools.cresc"
    );
    // One picture per frame, each the frame the demo story draws today.
    let dir = scratch("tutorial-deck");
    let out = crescendo(
        &root(),
        &[
            "build",
            "stories/pools/pools.cresc",
            "--no-cache",
            "--out",
            dir.to_str().unwrap(),
        ],
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let mut frames: Vec<PathBuf> = fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "svg"))
        .collect();
    frames.sort();
    assert_eq!(frames.len(), 5);
    for f in &frames {
        let name = f.file_name().unwrap().to_string_lossy().into_owned();
        let link = format!("(pools/tutorial/{name})");
        assert!(text.contains(&link), "the tutorial does not show {name}");
        let pictured = root().join("stories/pools/tutorial").join(&name);
        let now = fs::read(f).unwrap();
        if updating() {
            fs::create_dir_all(pictured.parent().unwrap()).unwrap();
            fs::write(&pictured, &now).unwrap();
        }
        assert!(
            fs::read(&pictured).ok() == Some(now),
            "stories/pools/tutorial/{name} is stale (UPDATE_DOCS=1 rewrites it)"
        );
    }
}

#[test]
fn rule_reference_is_generated_from_the_rules() {
    let path = root().join("crates/lint/RULES.md");
    let now = crescendo_lint::reference_markdown();
    if updating() {
        fs::write(&path, &now).unwrap();
    }
    let page = fs::read_to_string(&path).unwrap_or_default();
    assert!(
        page == now,
        "crates/lint/RULES.md is stale: run UPDATE_DOCS=1 cargo test --test docs"
    );
    for r in crescendo_lint::RULES.iter() {
        assert!(page.contains(&format!("\n## {}\n", r.name)));
    }
}

#[test]
fn readme_links_every_page() {
    let readme = fs::read_to_string(root().join("README.md")).unwrap();
    for page in [
        "grammar/REFERENCE.md",
        "stories/TUTORIAL.md",
        "crates/lint/RULES.md",
        "crates/diag/TROUBLESHOOTING.md",
    ] {
        assert!(
            readme.contains(&format!("({page})")),
            "README does not link {page}"
        );
        assert!(root().join(page).exists());
    }
}

/// The reference's table of quoted-value formats prints what crescendo
/// prints: each row's format is quoted over the three values of the
/// table's head, and the figures compared.
#[test]
fn the_format_table_shows_the_figures_printed() {
    let text = fs::read_to_string(root().join("grammar/REFERENCE.md")).unwrap();
    let head = "| Written | 0.1234 | 12345.6 | -0.05 | |";
    let at = text.find(head).expect("the format table");
    let mut notes = Vec::new();
    let mut want = Vec::new();
    for line in text[at..]
        .lines()
        .skip(2)
        .take_while(|l| l.starts_with('|'))
    {
        let cells: Vec<&str> = line.split('|').map(str::trim).collect();
        let figures: Vec<&str> = cells[2..5]
            .iter()
            .filter_map(|c| c.strip_prefix('`')?.strip_suffix('`'))
            .collect();
        if figures.is_empty() {
            continue;
        }
        assert_eq!(figures.len(), 3, "{line}");
        let written = cells[1]
            .strip_prefix("`{x")
            .and_then(|c| c.strip_suffix("}`"))
            .unwrap_or_else(|| panic!("{line}"));
        for (name, figure) in ["a", "b", "c"].iter().zip(figures) {
            notes.push(format!("{{{name}{written}}}"));
            want.push(figure.to_string());
        }
    }
    assert!(want.len() >= 27, "{want:?}");
    let dir = scratch("format-table");
    fs::write(dir.join("t.csv"), "k,v\nA,1\n").unwrap();
    let story = format!(
        "story \"Formats\"\nsource \"s\"\ndata t from \"t.csv\"\n\
         value a = 0.1234\nvalue b = 12345.6\nvalue c = -0.05\n\
         frame \"F\" {{\n  bars t: category k, value v\n  notes \"{}\"\n}}\n",
        notes.join("|")
    );
    let src = crescendo_diag::Source::file("formats.cresc", story);
    let planned = crescendo_plan::plan_story(&src, &dir, &Default::default())
        .unwrap_or_else(|d| panic!("{}", crescendo_diag::render(&d, false)));
    let printed = planned.plan.frames[0].notes.clone().unwrap_or_default();
    let got: Vec<&str> = printed.split('|').collect();
    for ((n, w), g) in notes.iter().zip(&want).zip(&got) {
        assert_eq!(g, w, "{n}");
    }
    assert_eq!(got.len(), want.len());
}
