//! The clarity lint end to end: for every rule a story where it fires (its
//! diagnostics snapshot-tested) and one where it stays quiet; the demo
//! stories pass under every built-in theme; every rule's documented
//! excerpts are quoted from those stories; allowances, `--strict` and
//! `crescendo explain`.

mod common;

use std::fs;
use std::path::Path;

use common::{crescendo, root, scratch, stories};
use crescendo_diag::{render, Diagnostic, Source};

fn lint_story(path: &Path, theme: Option<&str>) -> Vec<Diagnostic> {
    let text = fs::read_to_string(path).unwrap();
    // stories outside the repository (scratch folders) go by file name, so
    // snapshots do not depend on where the temporary folder is
    let rel = path
        .strip_prefix(root())
        .unwrap_or_else(|_| Path::new(path.file_name().unwrap()));
    let src = Source::file(rel.display().to_string(), text);
    // the rule stories share the data in tests/lint/data, beside their folders
    let mut options = common::plan_options();
    options.allow_paths.push(root().join("tests/lint/data"));
    let mut planned = match crescendo_plan::plan_story(&src, path.parent().unwrap(), &options) {
        Ok(p) => p,
        Err(d) => panic!("{}", render(&d, false)),
    };
    if let Some(t) = theme {
        planned.plan.theme = t.to_string();
    }
    let theme = crescendo_render::theme::effective(&planned.plan).unwrap();
    let skip = crescendo_render::plugin::SkipPlugins;
    let displays: Vec<_> = (planned.plan.frames.iter())
        .map(|f| crescendo_render::display_list(&planned.plan, f, Some(&skip)).unwrap())
        .collect();
    crescendo_lint::lint(
        &crescendo_lint::Input {
            src: &planned.source,
            plan: &planned.plan,
            anchors: &planned.anchors,
            theme: &theme,
            displays: &displays,
            small_counts: 5.0,
        },
        &Default::default(),
    )
}

#[test]
fn every_rule_fires_on_its_story_and_not_on_its_counterpart() {
    let dir = root().join("tests/lint");
    for rule in crescendo_lint::RULES {
        let case = dir.join(rule.name);
        assert!(case.is_dir(), "tests/lint/{} is missing", rule.name);
        let fired: Vec<Diagnostic> = lint_story(&case.join("fires.cresc"), None)
            .into_iter()
            .filter(|d| d.code == rule.name)
            .collect();
        assert!(
            !fired.is_empty(),
            "`{}` did not fire on fires.cresc",
            rule.name
        );
        for d in &fired {
            assert_eq!(d.severity, rule.severity, "{}", rule.name);
            assert!(d.location().is_some(), "{}: located", rule.name);
            assert!(d.help.is_some(), "{}: a suggested fix", rule.name);
        }
        insta::assert_snapshot!(format!("lint_{}", rule.name), render(&fired, false));
        let quiet: Vec<Diagnostic> = lint_story(&case.join("passes.cresc"), None)
            .into_iter()
            .filter(|d| d.code == rule.name)
            .collect();
        assert!(
            quiet.is_empty(),
            "`{}` fired on passes.cresc:\n{}",
            rule.name,
            render(&quiet, false)
        );
    }
    // and no stray case folders
    for e in fs::read_dir(&dir).unwrap() {
        let name = e.unwrap().file_name().to_string_lossy().into_owned();
        assert!(
            name == "data" || crescendo_lint::rule(&name).is_some(),
            "tests/lint/{name} names no rule"
        );
    }
}

/// The lines of a story or excerpt that carry code, comments removed and
/// blank space trimmed; `...` (lines left out) dropped.
fn code_lines(text: &str) -> Vec<String> {
    let comments = crescendo_lang::format::comments(text);
    let mut code = String::new();
    let mut at = 0;
    for c in comments {
        code.push_str(&text[at..c.start]);
        at = c.end;
    }
    code.push_str(&text[at..]);
    code.lines()
        .map(|l| l.trim().to_string())
        .filter(|l| !l.is_empty() && l != "...")
        .collect()
}

/// Every rule's documented "before" is an excerpt of the story it fires
/// on, and its "after" one of the story it stays quiet on: their lines
/// appear there, in order. So the documentation shows what the tests
/// prove.
#[test]
fn every_rule_document_quotes_its_own_cases() {
    let dir = root().join("tests/lint");
    for rule in crescendo_lint::RULES {
        for (excerpt, file) in [
            (rule.doc().before, "fires.cresc"),
            (rule.doc().after, "passes.cresc"),
        ] {
            let story = code_lines(&fs::read_to_string(dir.join(rule.name).join(file)).unwrap());
            let mut rest = story.iter();
            for line in code_lines(excerpt) {
                assert!(
                    rest.any(|l| *l == line),
                    "{}: `{line}` is not the next line of tests/lint/{}/{file}",
                    rule.name,
                    rule.name
                );
            }
        }
    }
}

#[test]
fn demo_stories_pass_the_lint_under_every_theme() {
    for theme in crescendo_plan::THEMES {
        for (name, path) in stories() {
            let found = lint_story(&path, Some(theme));
            assert!(
                found.is_empty(),
                "{name} under {theme}:\n{}",
                render(&found, false)
            );
        }
    }
}

const FIRES: &str = "story \"Lint\"\nsource \"Invented\"\nconclusion \"Act.\"\ndata t from \"teams.csv\"\n\
frame \"Tickets\" {\n  bars t: category team, value tickets\n  y title \"Open tickets\"\n  spotlight \"A\", \"B\"\n  takeaway \"Act.\"\n}\n";

fn scratch_story(name: &str, story: &str) -> std::path::PathBuf {
    let dir = scratch(name);
    fs::write(dir.join("teams.csv"), "team,tickets\nA,40\nB,30\nC,20\n").unwrap();
    fs::write(dir.join("s.cresc"), story).unwrap();
    dir
}

#[test]
fn allowances_need_a_known_rule_and_a_reason() {
    let spotlight = |d: &Vec<Diagnostic>| d.iter().filter(|d| d.code == "spotlight-crowd").count();
    let dir = scratch_story("allow", FIRES);
    assert_eq!(spotlight(&lint_story(&dir.join("s.cresc"), None)), 1);

    // allowed for the frame, with a reason
    let story = FIRES.replace(
        "  takeaway",
        "  allow spotlight-crowd \"A and B are the pair we compare\"\n  takeaway",
    );
    fs::write(dir.join("s.cresc"), &story).unwrap();
    assert!(lint_story(&dir.join("s.cresc"), None).is_empty());

    // allowed for the whole story
    let story = format!("allow spotlight-crowd \"pairs throughout\"\n{FIRES}");
    fs::write(dir.join("s.cresc"), &story).unwrap();
    assert!(lint_story(&dir.join("s.cresc"), None).is_empty());

    // an unknown rule, a rule's former name, an empty reason, and an
    // allowance that allows nothing
    let story = format!(
        "allow spotlight-crowed \"typo\"\nallow stack-middle \"old name\"\nallow bars-off-zero \"not needed\"\n{}",
        FIRES.replace("  takeaway", "  allow spotlight-crowd \" \"\n  takeaway")
    );
    fs::write(dir.join("s.cresc"), &story).unwrap();
    let found = lint_story(&dir.join("s.cresc"), None);
    let text = render(&found, false);
    assert!(
        text.contains("there is no lint rule named `spotlight-crowed`"),
        "{text}"
    );
    assert!(text.contains("did you mean `spotlight-crowd`?"), "{text}");
    assert!(
        text.contains("the rule is named `stack-spotlight-floats`"),
        "{text}"
    );
    assert!(
        text.contains("allowing `spotlight-crowd` needs a reason"),
        "{text}"
    );
    assert!(
        text.contains("`bars-off-zero` finds nothing to allow"),
        "{text}"
    );
    insta::assert_snapshot!("lint_allowances", text);
}

#[test]
fn strict_lets_warnings_stop_the_build() {
    let story = FIRES
        .replace("  spotlight \"A\", \"B\"\n", "")
        .replace("source \"Invented\"\n", "");
    let dir = scratch_story("strict", &story);
    let ok = crescendo(&dir, &["build", "s.cresc"]);
    let err = String::from_utf8_lossy(&ok.stderr);
    assert!(ok.status.success(), "{err}");
    assert!(err.contains("warning[source-missing]"), "{err}");
    let denied = crescendo(&dir, &["build", "s.cresc", "--out", "strict", "--strict"]);
    let err = String::from_utf8_lossy(&denied.stderr);
    assert_eq!(denied.status.code(), Some(1), "{err}");
    assert!(err.contains("error[source-missing]"), "{err}");
    assert!(!dir.join("strict").exists(), "nothing written");
    let check = crescendo(&dir, &["check", "s.cresc", "--strict", "--format", "json"]);
    assert_eq!(check.status.code(), Some(1));
    let report: serde_json::Value = serde_json::from_slice(&check.stdout).unwrap();
    assert_eq!(report["diagnostics"][0]["code"], "source-missing");
    // `--deny` is refused, naming the option to write
    let old = crescendo(&dir, &["check", "s.cresc", "--deny", "warnings"]);
    let err = String::from_utf8_lossy(&old.stderr);
    assert_eq!(old.status.code(), Some(2), "{err}");
    assert!(err.contains("write `--strict`"), "{err}");
}

#[test]
fn lint_errors_stop_the_build() {
    let story = FIRES.replace(
        "  y title \"Open tickets\"\n",
        "  y title \"Open tickets\"\n  y range 10 to 50\n",
    );
    let dir = scratch_story("lint-error", &story);
    let run = crescendo(&dir, &["build", "s.cresc"]);
    let err = String::from_utf8_lossy(&run.stderr);
    assert_eq!(run.status.code(), Some(1), "{err}");
    assert!(err.contains("error[bars-off-zero]"), "{err}");
    assert!(err.contains("s.cresc:8:3"), "{err}");
    assert!(err.contains("in frame 1 \"Tickets\""), "{err}");
    assert!(!dir.join("deck").exists());
}

#[test]
fn explain_prints_each_rule_and_lists_them_all() {
    let dir = root();
    for rule in crescendo_lint::RULES {
        let out = crescendo(&dir, &["explain", rule.name]);
        assert!(out.status.success());
        assert_eq!(
            String::from_utf8_lossy(&out.stdout),
            crescendo_lint::explain(rule.name).unwrap()
        );
    }
    let all = crescendo(&dir, &["explain"]);
    assert_eq!(
        String::from_utf8_lossy(&all.stdout).lines().count(),
        crescendo_lint::RULES.len()
    );
    let bad = crescendo(&dir, &["explain", "bars-of-zero"]);
    assert_eq!(bad.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("did you mean `bars-off-zero`?"));
    // a name a rule once had names the rule
    let old = crescendo(&dir, &["explain", "no-conclusion"]);
    assert_eq!(old.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&old.stderr).contains("the rule is named `conclusion-missing`"));
}

/// `x` and `y` name roles: on horizontal bars an `x title` titles the
/// categories, and the lint says so where the author wrote it.
#[test]
fn an_x_title_on_horizontal_bars_is_pointed_out() {
    let path = root().join("tests/lint/measure-unnamed/horizontal.cresc");
    let found: Vec<Diagnostic> = lint_story(&path, None)
        .into_iter()
        .filter(|d| d.code == "measure-unnamed")
        .collect();
    assert_eq!(found.len(), 1, "{}", render(&found, false));
    assert!(
        found[0]
            .message
            .contains("`x title` titles the category axis"),
        "{}",
        found[0].message
    );
    let (_, line, _) = found[0].location().expect("located");
    assert_eq!(line, 9, "points at the `x title` line");
}
