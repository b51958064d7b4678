//! The canonical layout (`crescendo fmt`): idempotent on every demo story,
//! same tree after formatting, comments kept, a messy story snapshot.

use crescendo_diag::Source;
use crescendo_lang::format::{comments, same_shape};
use crescendo_lang::{format_story, parse};

fn demo_stories() -> Vec<(String, String)> {
    let root = concat!(env!("CARGO_MANIFEST_DIR"), "/../../stories");
    let mut out = Vec::new();
    let mut dirs: Vec<_> = std::fs::read_dir(root)
        .expect("stories folder")
        .map(|e| e.expect("entry").path())
        .collect();
    dirs.sort();
    for d in dirs {
        let Ok(entries) = std::fs::read_dir(&d) else {
            continue;
        };
        let mut files: Vec<_> = entries.map(|e| e.expect("entry").path()).collect();
        files.sort();
        for f in files {
            if f.extension().is_some_and(|e| e == "cresc") {
                let text = std::fs::read_to_string(&f).expect("story");
                out.push((f.display().to_string(), text));
            }
        }
    }
    assert!(
        out.len() >= 5,
        "expected the demo stories, found {}",
        out.len()
    );
    out
}

fn tree(text: &str) -> crescendo_lang::ast::StoryAst {
    let (ast, diags) = parse(&Source::file("s", text));
    assert!(diags.is_empty(), "{diags:?}");
    ast
}

#[test]
fn every_demo_story_is_a_fixed_point_after_one_pass() {
    for (name, text) in demo_stories() {
        let once = format_story(&text).unwrap_or_else(|d| panic!("{name}: {d:?}"));
        let twice = format_story(&once).unwrap_or_else(|d| panic!("{name}: {d:?}"));
        assert_eq!(once, twice, "{name}: the second pass changed the story");
        assert!(same_shape(&tree(&text), &tree(&once)), "{name}");
        let kept: Vec<&str> = comments(&once).into_iter().map(|r| &once[r]).collect();
        let had: Vec<&str> = comments(&text).into_iter().map(|r| &text[r]).collect();
        assert_eq!(kept, had, "{name}: comments");
    }
}

#[test]
fn messy_layout_becomes_canonical() {
    let messy = include_str!("fixtures/messy.cresc");
    let once = format_story(messy).expect("formats");
    insta::assert_snapshot!(once);
    assert_eq!(format_story(&once).expect("formats again"), once);
    assert!(same_shape(&tree(messy), &tree(&once)));
}

#[test]
fn syntax_errors_are_reported_with_a_location_and_nothing_is_formatted() {
    let err = format_story("story \"A\"\nframe \"B\" {\n  line v: x\n  show \"A\",\n}\n")
        .expect_err("does not parse");
    assert!(!err.is_empty());
    let (file, line, _col) = err[0].location().expect("located");
    assert_eq!(file, "<story>");
    assert_eq!(line, 5, "{err:?}");
}

#[test]
fn trailing_and_leading_comments_stay_where_they_were() {
    let text = "# head\n\nstory \"A\"   # after the title\n\n\n# before the frame\nframe \"F\" {\n  # inside\n  show all # shown\n}\n";
    let out = format_story(text).expect("formats");
    assert_eq!(
        out,
        "# head\n\nstory \"A\"  # after the title\n\n# before the frame\nframe \"F\" {\n  # inside\n  show all  # shown\n}\n"
    );
}

#[test]
fn redundant_parentheses_go_and_needed_ones_stay() {
    let out =
        format_story("value a = ((1 + 2)) * 3\nvalue b = 1 - (2 - 3)\nvalue c = (1 - 2) - 3\n")
            .expect("formats");
    assert_eq!(
        out,
        "value a = (1 + 2) * 3\nvalue b = 1 - (2 - 3)\nvalue c = 1 - 2 - 3\n"
    );
}

#[test]
fn an_empty_story_stays_empty_and_a_comment_only_story_keeps_its_comment() {
    assert_eq!(format_story("").expect("formats"), "");
    assert_eq!(
        format_story("  # just a note  \n\n").expect("formats"),
        "# just a note\n"
    );
}

#[test]
fn locale_and_fiscal_statements_parse_and_format() {
    let text = "story \"S\"\nlocale   \"de-DE\"\nfiscal  year   starts July  # budget year\nframe \"F {m as quarter} {m as year}\" {}\n";
    let (ast, diags) = parse(&Source::file("s", text));
    assert!(diags.is_empty(), "{diags:?}");
    use crescendo_lang::ast::Item;
    assert!(matches!(&ast.items[1], Item::Locale(t) if t.text.value == "de-DE"));
    assert!(matches!(&ast.items[2], Item::Fiscal { month, .. } if month.name == "July"));
    assert_eq!(
        format_story(text).expect("formats"),
        "story \"S\"\nlocale \"de-DE\"\nfiscal year starts July  # budget year\nframe \"F {m as quarter} {m as year}\" {}\n"
    );
    // the statement needs all three words and a month
    let (_, diags) = parse(&Source::file("s", "fiscal starts July\n"));
    assert_eq!(diags.len(), 1);
    let (_, diags) = parse(&Source::file("s", "fiscal year starts\n"));
    assert_eq!(diags.len(), 1);
    // quoted periods: the `quarter` and `year` formats
    let (ast, diags) = parse(&Source::file(
        "s",
        "story \"{m as quarter} {m as year} {x as percent to 1 decimal}\"",
    ));
    assert!(diags.is_empty(), "{diags:?}");
    let Item::Title(t) = &ast.items[0] else {
        panic!()
    };
    let styles: Vec<_> = t
        .text
        .template
        .parts
        .iter()
        .filter_map(|p| match p {
            crescendo_lang::ast::TextPart::Quote { format, .. } => Some(format.style),
            _ => None,
        })
        .collect();
    use crescendo_lang::ast::NumberStyle;
    assert_eq!(
        styles,
        [
            NumberStyle::Quarter,
            NumberStyle::Year,
            NumberStyle::Percent
        ]
    );
}

#[test]
fn database_sources_keep_their_parts_and_take_the_canonical_spacing() {
    let text = "data a from table  \"sales\".\"orders\"   via SALES_DB  in order of day ,  shop { day: date }\ndata b from query \"SELECT 1 AS x\" via DB\n";
    let once = format_story(text).expect("formats");
    assert_eq!(
        once,
        "data a from table \"sales\".\"orders\" via SALES_DB in order of day, shop { day: date }\ndata b from query \"SELECT 1 AS x\" via DB\n"
    );
    assert!(same_shape(&tree(text), &tree(&once)));
    assert_eq!(format_story(&once).expect("formats"), once);
}

/// Every `.cresc` file under `path` (recursively), skipping build output.
fn story_files(path: &std::path::Path, out: &mut Vec<std::path::PathBuf>) {
    let Ok(entries) = std::fs::read_dir(path) else {
        return;
    };
    for e in entries.flatten() {
        let p = e.path();
        let name = p.file_name().map(|n| n.to_string_lossy().into_owned());
        if p.is_dir() && !matches!(name.as_deref(), Some("target" | ".git" | "deck")) {
            story_files(&p, out);
        } else if p.extension().is_some_and(|x| x == "cresc") {
            out.push(p);
        }
    }
}

/// On a thread with the stack of a program's main thread (8 MB), where the
/// command formats: the fuzz seeds include expressions nested as deep as
/// the parser allows, which a debug build's frames make deeper than a test
/// thread's 2 MB.
#[test]
fn every_story_in_the_repository_that_parses_formats_to_a_fixed_point() {
    std::thread::Builder::new()
        .stack_size(8 << 20)
        .spawn(format_every_story)
        .expect("a thread")
        .join()
        .expect("no failure");
}

fn format_every_story() {
    let root = std::path::Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/../.."));
    let mut files = Vec::new();
    for dir in ["stories", "tests", "crates", "plugins"] {
        story_files(&root.join(dir), &mut files);
    }
    files.sort();
    let mut formatted = 0;
    for f in &files {
        let text = std::fs::read_to_string(f).expect("read");
        let (_, diags) = parse(&Source::file("s", text.as_str()));
        if !diags.is_empty() {
            // a fixture with syntax errors: fmt reports them and stops
            assert!(format_story(&text).is_err(), "{}", f.display());
            continue;
        }
        let once = format_story(&text).unwrap_or_else(|d| panic!("{}: {d:?}", f.display()));
        let twice = format_story(&once).unwrap_or_else(|d| panic!("{}: {d:?}", f.display()));
        assert_eq!(once, twice, "{}", f.display());
        assert!(same_shape(&tree(&text), &tree(&once)), "{}", f.display());
        formatted += 1;
    }
    assert!(formatted >= 40, "only {formatted} stories parsed");
}

#[test]
fn the_demo_stories_are_kept_in_the_canonical_layout() {
    for (name, text) in demo_stories() {
        let formatted = format_story(&text).unwrap_or_else(|d| panic!("{name}: {d:?}"));
        assert!(
            formatted == text,
            "{name} is not in the canonical layout: run `crescendo fmt stories`"
        );
    }
}

/// The formatter prints `own scales` and keeps quoted values and their
/// formats as written; a symbol format is refused with the parser's
/// located error (nothing is formatted).
#[test]
fn own_scales_and_formats_in_words_are_printed_as_written() {
    let text = "frame \"Up {lead  to 1 decimal}, \\{sic\\}\" {\n  line v: x m, y n, series s\n  split   s    own   scales\n}\n";
    assert_eq!(
        format_story(text).expect("formats"),
        "frame \"Up {lead  to 1 decimal}, \\{sic\\}\" {\n  line v: x m, y n, series s\n  split s own scales\n}\n"
    );
    let err = format_story("frame \"{lead:.1}\" {}\n").unwrap_err();
    assert_eq!(err.len(), 1);
    assert_eq!(err[0].help.as_deref(), Some("write `{lead to 1 decimal}`"));
}
