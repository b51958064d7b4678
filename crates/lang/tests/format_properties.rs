//! Properties of the canonical layout (`crescendo fmt`) over random stories:
//! parse(fmt(s)) is parse(s) (positions aside), fmt is idempotent, and every
//! comment survives in order.
//!
//! The generator writes every kind of item and frame statement with random
//! spacing, tabs, `;` separators, line breaks after commas, redundant
//! parentheses and comments at the ends of lines and between items.

use crescendo_diag::Source;
use crescendo_lang::format::{comments, same_shape};
use crescendo_lang::{format_story, parse};
use proptest::prelude::*;

const NAMES: &[&str] = &["a", "b", "sales", "month", "pool", "visits", "_x1"];

fn name() -> impl Strategy<Value = String> {
    prop::sample::select(NAMES).prop_map(String::from)
}

fn text() -> impl Strategy<Value = String> {
    prop::sample::select(
        &[
            "\"Plain\"",
            "\"Up {lead to 1 decimal}×\"",
            "\"{share as signed percent to 0 decimals} of {total as compact}\"",
            "\"Quote \\\" and \\\\ inside\"",
            "\"Period {m as quarter}, \\{literal\\}\"",
            "\"\"",
            "\"# not a comment\"",
        ][..],
    )
    .prop_map(String::from)
}

fn number() -> impl Strategy<Value = String> {
    prop::sample::select(&["0", "12", "0.50", "1.2e3", "7"][..]).prop_map(String::from)
}

/// A row expression, with random redundant parentheses. The number is the
/// level the text parses at (0: arithmetic, 1: comparison, 2: logic), so
/// that an operand is wrapped in parentheses only where the grammar needs it.
fn leveled_expr() -> impl Strategy<Value = (String, u8)> {
    let leaf = prop_oneof![name(), number(), text()].prop_map(|t| (t, 0u8));
    leaf.prop_recursive(4, 24, 2, |inner| {
        let wrap = |(t, level): (String, u8), max: u8| {
            if level > max {
                format!("({t})")
            } else {
                t
            }
        };
        let arith = prop::sample::select(&["+", "-", "*", "/"][..]);
        let cmp = prop::sample::select(&["=", "!=", "<", "<=", ">", ">="][..]);
        let logic = prop::sample::select(&["and", "or"][..]);
        prop_oneof![
            (inner.clone(), arith, inner.clone())
                .prop_map(move |(a, o, b)| (format!("{} {o} {}", wrap(a, 0), wrap(b, 0)), 0)),
            (inner.clone(), cmp, inner.clone())
                .prop_map(move |(a, o, b)| (format!("{} {o} {}", wrap(a, 0), wrap(b, 0)), 1)),
            (inner.clone(), logic, inner.clone())
                .prop_map(|((a, _), o, (b, _))| (format!("{a} {o} {b}"), 2)),
            inner.clone().prop_map(|(a, _)| (format!("({a})"), 0)),
            inner
                .clone()
                .prop_map(move |a| (format!("not {}", wrap(a, 1)), 2)),
            inner.clone().prop_map(|(a, _)| (format!("-({a})"), 0)),
            (name(), any::<bool>()).prop_map(|(n, neg)| (
                format!("{n} {}in (\"x\", 2)", if neg { "not " } else { "" }),
                1
            )),
        ]
    })
}

fn expr() -> impl Strategy<Value = String> {
    leveled_expr().prop_map(|(t, _)| t)
}

/// A value expression (over values and function calls of selections).
fn vexpr() -> impl Strategy<Value = String> {
    let leaf = prop_oneof![
        name(),
        number(),
        (name(), name(), expr()).prop_map(|(v, c, e)| format!("sum({v}.{c} where {e})")),
        (name(), name(), name()).prop_map(|(v, c, b)| format!("growth({v}.{c} by {b})")),
        (name(), expr()).prop_map(|(v, e)| format!("count({v} where {e})")),
    ];
    leaf.prop_recursive(3, 12, 2, |inner| {
        let op = prop::sample::select(&["+", "-", "*", "/"][..]);
        prop_oneof![
            (inner.clone(), op, inner.clone()).prop_map(|(a, o, b)| format!("{a} {o} {b}")),
            inner.clone().prop_map(|a| format!("({a})")),
            (inner.clone(), inner.clone()).prop_map(|(a, b)| format!("ratio({a}, {b})")),
        ]
    })
}

fn view_step() -> impl Strategy<Value = String> {
    prop_oneof![
        expr().prop_map(|e| format!("keep {e}")),
        (name(), name(), name())
            .prop_map(|(k, a, c)| format!("by {k}, month: {a} = sum({c}), n = count()")),
        (name(), expr()).prop_map(|(n, e)| format!("add {n} = {e}")),
        (
            name(),
            prop::sample::select(&["", " ascending", " descending"][..])
        )
            .prop_map(|(n, d)| format!("sort {n}{d}, b")),
        (name(), name()).prop_map(|(k, m)| format!("top 3 {k} by {m} rest \"Other\"")),
        Just("columns a, b".to_string()),
    ]
}

fn frame_stmt() -> impl Strategy<Value = String> {
    prop_oneof![
        (name(), name(), name())
            .prop_map(|(v, x, y)| format!("line {v}: x {x}, y {y}, series pool")),
        (name(), name()).prop_map(|(v, c)| format!(
            "bars {v}: category {c}, value visits, horizontal, stack b"
        )),
        name().prop_map(|v| format!("scatter {v}: x a, y b, label pool, fit")),
        name().prop_map(|v| format!("table {v}")),
        (text(), text()).prop_map(|(a, b)| format!("figure {a} {b}")),
        name().prop_map(|v| format!("draw slope.form {v}: period a, value b")),
        text().prop_map(|t| format!("y title {t}")),
        Just("x range -1 to 10.5".to_string()),
        Just("show \"A\", \"B\"".to_string()),
        Just("hide all".to_string()),
        Just("spotlight focus".to_string()),
        Just("spotlight \"Row\" in visits".to_string()),
        Just("split pool descending by visits order \"A\", \"B\" trim".to_string()),
        Just("split pool own scales".to_string()),
        Just("unfold \"A\", \"B\"".to_string()),
        Just("unfold".to_string()),
        text().prop_map(|t| format!("callout \"2024-01\" on \"A\" {t}")),
        Just("band 2 to 3 \"Closed\"".to_string()),
        Just("reference -4 \"Target\"".to_string()),
        Just("label ends".to_string()),
        Just("gridlines off".to_string()),
        text().prop_map(|t| format!("takeaway {t}")),
        text().prop_map(|t| format!("notes {t}")),
        Just("allow bars-off-zero \"we compare tops\"".to_string()),
    ]
}

fn item() -> impl Strategy<Value = String> {
    prop_oneof![
        text().prop_map(|t| format!("story {t}")),
        text().prop_map(|t| format!("byline {t}")),
        text().prop_map(|t| format!("source {t}")),
        Just("theme evening".to_string()),
        Just("accent \"#1D5FA8\"".to_string()),
        Just("style \"house.toml\"".to_string()),
        Just("locale \"de-DE\"".to_string()),
        Just("fiscal year starts July".to_string()),
        Just("use plugin \"p/libslope.so\" as slope sha256 \"ab12\"".to_string()),
        (name(), any::<bool>()).prop_map(|(n, multiline)| if multiline {
            format!("data {n} from \"d.csv\" missing \"NA\", \"\" {{\n  a: number\n  b: text,\n}}")
        } else {
            format!("data {n} from \"d.csv\" {{ a: number, b: month }}")
        }),
        name()
            .prop_map(|n| format!("data {n} from table \"s\".\"t\" via SALES_DB in order of a, b")),
        name().prop_map(|n| format!("data {n} from query \"SELECT 1\" via DB")),
        (
            name(),
            name(),
            prop::collection::vec(view_step(), 0..4),
            any::<bool>()
        )
            .prop_map(|(n, input, steps, same_line)| {
                let sep = if same_line { " | " } else { "\n  | " };
                let mut s = format!("view {n} = {input}");
                for st in steps {
                    s.push_str(sep);
                    s.push_str(&st);
                }
                s
            }),
        (name(), vexpr()).prop_map(|(n, e)| format!("value {n} = {e}")),
        (vexpr(), vexpr(), text())
            .prop_map(|(a, b, t)| format!("claim {a} > {b} and not ({a} about {b} within 5%) {t}")),
        (name(), name()).prop_map(|(k, m)| format!("compare {k} by {m}")),
        Just("focus \"A\",\n  \"B\"".to_string()),
        text().prop_map(|t| format!("conclusion {t}")),
        Just("allow source-missing \"draft\"".to_string()),
        (
            text(),
            prop::collection::vec(frame_stmt(), 0..5),
            any::<bool>()
        )
            .prop_map(|(h, stmts, semicolons)| {
                if stmts.is_empty() {
                    return format!("frame {h} {{}}");
                }
                let sep = if semicolons { "; " } else { "\n  " };
                format!("frame {h} {{\n  {}\n}}", stmts.join(sep))
            }),
    ]
}

/// Random spacing between tokens (outside strings) and comments.
fn messy(items: &[String], noise: &[u8]) -> String {
    let mut out = String::new();
    let mut n = noise.iter().cycle();
    let mut next = || *n.next().unwrap_or(&0);
    for it in items {
        match next() % 5 {
            0 => out.push_str("# between items\n"),
            1 => out.push('\n'),
            _ => {}
        }
        let mut in_string = false;
        let mut escaped = false;
        for c in it.chars() {
            if in_string {
                out.push(c);
                match c {
                    _ if escaped => escaped = false,
                    '\\' => escaped = true,
                    '"' => in_string = false,
                    _ => {}
                }
                continue;
            }
            match c {
                '"' => {
                    in_string = true;
                    out.push(c);
                }
                ' ' => out.push_str(match next() % 4 {
                    0 => "  ",
                    1 => " \t",
                    _ => " ",
                }),
                '\n' => {
                    if next() % 6 == 0 {
                        out.push_str("   # end of line");
                    }
                    out.push('\n');
                    if next() % 3 == 0 {
                        out.push_str("    ");
                    }
                }
                _ => out.push(c),
            }
        }
        if next() % 4 == 0 {
            out.push_str(" # trailing");
        }
        out.push('\n');
    }
    out
}

fn tree(text: &str) -> crescendo_lang::ast::StoryAst {
    let (ast, diags) = parse(&Source::file("s", text));
    assert!(
        diags.is_empty(),
        "the generator wrote a broken story:\n{text}\n{diags:#?}"
    );
    ast
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn fmt_keeps_the_tree_and_comments_and_is_idempotent(
        items in prop::collection::vec(item(), 0..10),
        noise in prop::collection::vec(any::<u8>(), 1..64),
    ) {
        let story = messy(&items, &noise);
        let before = tree(&story);
        let once = format_story(&story).map_err(|d| {
            TestCaseError::fail(format!("fmt failed on\n{story}\n{d:#?}"))
        })?;
        // parse(fmt(s)) = parse(s)
        prop_assert!(same_shape(&before, &tree(&once)), "tree changed:\n{story}\n---\n{once}");
        // fmt(fmt(s)) = fmt(s)
        let twice = format_story(&once).expect("formats again");
        prop_assert_eq!(&twice, &once);
        // comments kept, in order
        let had: Vec<&str> = comments(&story).into_iter().map(|r| story[r].trim_end()).collect();
        let kept: Vec<&str> = comments(&once).into_iter().map(|r| once[r].trim_end()).collect();
        prop_assert_eq!(kept, had);
    }
}
