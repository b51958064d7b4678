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

/// The words of the `PREFIX*` rules in `grammar/story.pest` (`kw_`:
/// keywords, `fw_`: the format words of quoted values).
fn pest_words(prefix: &str) -> BTreeSet<String> {
    let pest = std::fs::read_to_string(root().join("grammar/story.pest")).expect("pest grammar");
    let rule = Regex::new(&format!(r#"(?m)^{prefix}(\w+)\s*=\s*@\{{\s*"([^"]+)""#)).unwrap();
    rule.captures_iter(&pest)
        .map(|c| {
            assert_eq!(&c[1], &c[2], "{prefix} rules are named after their word");
            c[2].to_string()
        })
        .collect()
}

fn pest_keywords() -> BTreeSet<String> {
    let words = pest_words("kw_");
    assert!(words.len() > 50, "{words:?}");
    words
}

/// The words of a `\b(?:a|b|...)\b` pattern of the editor grammar.
fn editor_words(g: &Value, name: &str) -> BTreeSet<String> {
    let m = pattern(g, name);
    let inner = m
        .strip_prefix(r"\b(?:")
        .and_then(|s| s.strip_suffix(r")\b"))
        .unwrap_or_else(|| panic!("{name} pattern is \\b(?:a|b|...)\\b"));
    inner.split('|').map(str::to_string).collect()
}

fn editor_keywords(g: &Value) -> BTreeSet<String> {
    editor_words(g, "keyword")
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

/// The format words of quoted values (`{share as signed percent to 1
/// decimal}`) are the grammar's `fw_*` words; the editor colours them inside
/// a string's braces only, and every format word the demo stories write
/// is one of them.
#[test]
fn format_words_are_the_grammars_and_coloured_inside_braces() {
    let g = grammar();
    let pest = pest_words("fw_");
    assert!(pest.len() >= 10, "{pest:?}");
    assert_eq!(pest, editor_words(&g, "format-word"));
    let quote = &g["repository"]["string"]["patterns"][1];
    assert_eq!(quote["begin"], "\\{");
    assert!(quote["patterns"]
        .as_array()
        .expect("quote patterns")
        .iter()
        .any(|p| p["include"] == "#format-word"));
    let top: Vec<&str> = g["patterns"]
        .as_array()
        .expect("patterns")
        .iter()
        .filter_map(|p| p["include"].as_str())
        .collect();
    assert!(
        !top.contains(&"#format-word"),
        "format words are no keywords"
    );
    // in the demo stories: each quoted value's words from its first `as`
    // or `to` on are format words, the expression's words before are not
    let word = Regex::new(&format!("^(?:{})$", pattern(&g, "format-word"))).unwrap();
    let string = Regex::new(r#""(?:[^"\\\n]|\\.)*""#).unwrap();
    let braces = Regex::new(r#"\{([^{}"\\]*)\}"#).unwrap();
    let mut seen = BTreeSet::new();
    for e in std::fs::read_dir(root().join("stories")).expect("stories") {
        for f in std::fs::read_dir(e.expect("entry").path())
            .into_iter()
            .flatten()
        {
            let p = f.expect("entry").path();
            if p.extension().is_none_or(|x| x != "cresc") {
                continue;
            }
            let text = std::fs::read_to_string(&p).expect("story");
            let strings: Vec<&str> = string.find_iter(&text).map(|m| m.as_str()).collect();
            for c in strings.iter().flat_map(|s| braces.captures_iter(s)) {
                let words: Vec<&str> = c[1].split_whitespace().collect();
                let at = words
                    .iter()
                    .position(|w| *w == "as" || *w == "to")
                    .unwrap_or(words.len());
                for (i, w) in words.iter().enumerate() {
                    let format = w.parse::<u32>().is_err() && word.is_match(w);
                    if i >= at && w.parse::<u32>().is_err() {
                        assert!(format, "{}: `{w}` in {{{}}}", p.display(), &c[1]);
                        seen.insert(w.to_string());
                    } else if i < at {
                        assert!(!format, "{}: `{w}` in {{{}}}", p.display(), &c[1]);
                    }
                }
            }
        }
    }
    assert!(
        seen.len() >= 6,
        "the demo stories use the format words: {seen:?}"
    );
}
