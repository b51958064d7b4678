//! The editor grammar `grammar/crescendo.tmLanguage.json` (TextMate format)
//! against the pest grammar: the same keywords, and every keyword the
//! parser matches in a demo story is highlighted as one.
//!
//! The grammar's top-level patterns are applied the way TextMate-format
//! highlighters scan a line: from the current position, the pattern whose
//! match starts first wins (ties go to the earlier pattern), then scanning
//! goes on after it. The string rule (`begin`/`end`) is applied as one
//! expression from its opening quote to its closing quote or the end of the
//! line. The grammar uses no lookbehind, so the `regex` crate reads its
//! expressions as an Oniguruma-based editor does.

use std::collections::BTreeSet;
use std::ops::Range;

use regex::Regex;
use serde_json::Value;

fn root() -> std::path::PathBuf {
    std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn grammar() -> Value {
    let text = std::fs::read_to_string(root().join("grammar/crescendo.tmLanguage.json"))
        .expect("grammar file");
    serde_json::from_str(&text).expect("valid JSON")
}

fn pattern(g: &Value, name: &str) -> String {
    g["repository"][name]["match"]
        .as_str()
        .unwrap_or_else(|| panic!("no match pattern `{name}`"))
        .to_string()
}

/// The words of the `kw_*` rules in `grammar/story.pest`.
fn pest_keywords() -> BTreeSet<String> {
    let pest = std::fs::read_to_string(root().join("grammar/story.pest")).expect("pest grammar");
    let rule = Regex::new(r#"(?m)^kw_(\w+)\s*=\s*@\{\s*"([^"]+)""#).unwrap();
    let words: BTreeSet<String> = rule
        .captures_iter(&pest)
        .map(|c| {
            assert_eq!(&c[1], &c[2], "kw_ rules are named after their word");
            c[2].to_string()
        })
        .collect();
    assert!(words.len() > 50, "{words:?}");
    words
}

fn editor_keywords(g: &Value) -> BTreeSet<String> {
    let m = pattern(g, "keyword");
    let inner = m
        .strip_prefix(r"\b(?:")
        .and_then(|s| s.strip_suffix(r")\b"))
        .expect("keyword pattern is \\b(?:a|b|...)\\b");
    inner.split('|').map(str::to_string).collect()
}

#[test]
fn keyword_lists_are_equal() {
    let g = grammar();
    let pest = pest_keywords();
    let editor = editor_keywords(&g);
    let missing: Vec<&String> = pest.difference(&editor).collect();
    let extra: Vec<&String> = editor.difference(&pest).collect();
    assert!(
        missing.is_empty() && extra.is_empty(),
        "missing from the editor grammar: {missing:?}; not keywords in pest: {extra:?}"
    );
    // every pattern compiles without Oniguruma-only syntax
    for name in [
        "comment",
        "rule-name",
        "keyword",
        "number",
        "operator",
        "name",
    ] {
        Regex::new(&pattern(&g, name)).unwrap_or_else(|e| panic!("{name}: {e}"));
    }
}

/// Ranges the grammar highlights as keywords in `text`.
fn highlighted_keywords(g: &Value, text: &str) -> Vec<Range<usize>> {
    let string = format!(
        "{}(?:[^\"\\\\\\n]|\\\\.)*(?:\"|$)",
        regex::escape(
            g["repository"]["string"]["begin"]
                .as_str()
                .expect("string begin")
        )
    );
    // in the grammar's order
    let pats: Vec<(&str, Regex)> = [
        ("comment", format!("(?m){}", pattern(g, "comment"))),
        ("string", format!("(?m){string}")),
        ("rule-name", pattern(g, "rule-name")),
        ("keyword", pattern(g, "keyword")),
        ("number", pattern(g, "number")),
        ("operator", pattern(g, "operator")),
        ("name", pattern(g, "name")),
    ]
    .into_iter()
    .map(|(n, p)| (n, Regex::new(&p).expect("compiles")))
    .collect();
    let order: Vec<&str> = g["patterns"]
        .as_array()
        .expect("patterns")
        .iter()
        .map(|p| {
            p["include"]
                .as_str()
                .expect("include")
                .trim_start_matches('#')
        })
        .collect();
    assert_eq!(order, pats.iter().map(|(n, _)| *n).collect::<Vec<_>>());
    let mut out = Vec::new();
    let mut line_start = 0;
    for line in text.split_inclusive('\n') {
        let mut i = 0;
        while i < line.len() {
            let best = pats
                .iter()
                .filter_map(|(n, re)| re.captures_at(line, i).map(|c| (n, c)))
                .filter(|(_, c)| c.get(0).is_some_and(|m| !m.is_empty()))
                .min_by_key(|(_, c)| c.get(0).map_or(usize::MAX, |m| m.start()));
            let Some((name, caps)) = best else { break };
            let whole = caps.get(0).expect("match");
            match *name {
                "keyword" => out.push(line_start + whole.start()..line_start + whole.end()),
                "rule-name" => {
                    let k = caps.get(1).expect("keyword capture");
                    out.push(line_start + k.start()..line_start + k.end());
                }
                _ => {}
            }
            i = whole.end();
        }
        line_start += line.len();
    }
    out
}

#[test]
fn every_keyword_in_the_demo_stories_is_highlighted() {
    let g = grammar();
    let mut stories = Vec::new();
    for e in std::fs::read_dir(root().join("stories")).expect("stories") {
        let dir = e.expect("entry").path();
        for f in std::fs::read_dir(&dir).into_iter().flatten() {
            let p = f.expect("entry").path();
            if p.extension().is_some_and(|x| x == "cresc") {
                stories.push(p);
            }
        }
    }
    stories.push(root().join("crates/lang/tests/fixtures/messy.cresc"));
    stories.sort();
    assert!(stories.len() >= 6);
    let mut seen = BTreeSet::new();
    for path in stories {
        let text = std::fs::read_to_string(&path).expect("story");
        let parsed = crescendo_lang::parser::keyword_spans(&text);
        assert!(!parsed.is_empty(), "{} does not parse", path.display());
        let lit: BTreeSet<(usize, usize)> = highlighted_keywords(&g, &text)
            .into_iter()
            .map(|r| (r.start, r.end))
            .collect();
        for r in parsed {
            seen.insert(text[r.clone()].to_string());
            assert!(
                lit.contains(&(r.start, r.end)),
                "{}: keyword `{}` at byte {} is not highlighted",
                path.display(),
                &text[r.clone()],
                r.start
            );
        }
    }
    assert!(seen.len() > 40, "the stories use many keywords: {seen:?}");
}

#[test]
fn strings_and_comments_hide_keywords() {
    let g = grammar();
    let text = "story \"frame of mind\" # a frame\nallow bars-off-zero \"why\"\n";
    let lit = highlighted_keywords(&g, text);
    let words: Vec<&str> = lit.iter().map(|r| &text[r.clone()]).collect();
    assert_eq!(words, ["story", "allow"]);
}
