//! Parser tests: every kind of item, precedence, error recovery, values,
//! claims, texts and the nesting cap.

use super::*;

fn parse_str(text: &str) -> (StoryAst, Vec<Diagnostic>) {
    parse(&Source::file("t.cresc", text))
}

const GOOD: &str = r#"
# A comment
story "Ferries: the \"Loop\" grows"
byline "Planning"
source "Ticket scans (demo)"
theme clear

data trips from "data/trips.csv" missing "NA", "" {
  month: month, route: text
  riders: number
}

view monthly = trips
  | keep route != "Shuttle" and not (riders < 0 or month in ("2019-01", "2019-02"))
  | by month, route: riders = sum(riders), n = count()
  | add per = riders / n * -2 + 1
  | sort riders descending, route
  | top 3 route by riders rest "Other routes"

compare route by riders
focus "Harbour Loop"
conclusion "Add a boat."

frame "Riders since 2019" {
  line monthly: x month, y riders, series route
  y title "Riders per month"
  hide all
  notes "Intro"
}
frame "Then" {
  show "Harbour Loop", "Bay"
  spotlight focus
  takeaway "It pulled away."
}
frame "Bars" { bars monthly: category route, value riders, ordered }
"#;

#[test]
fn parses_every_kind_of_item() {
    let (ast, diags) = parse_str(GOOD);
    assert!(diags.is_empty(), "{diags:?}");
    assert_eq!(ast.items.len(), 12);
    let Item::Title(t) = &ast.items[0] else {
        panic!()
    };
    assert_eq!(t.text.value, "Ferries: the \"Loop\" grows");
    let Item::Data(d) = &ast.items[4] else {
        panic!()
    };
    assert_eq!(d.columns.len(), 3);
    assert_eq!(d.missing.as_ref().map(Vec::len), Some(2));
    assert_eq!(&GOOD[d.columns[2].name.span.clone()], "riders");
    let Item::View(v) = &ast.items[5] else {
        panic!()
    };
    assert_eq!(v.steps.len(), 5);
    let StepAst::Top {
        n, key, by, rest, ..
    } = &v.steps[4]
    else {
        panic!()
    };
    assert_eq!(
        (*n, key.name.as_str(), by.name.as_str()),
        (3, "route", "riders")
    );
    assert_eq!(
        rest.as_ref().map(|r| r.value.as_str()),
        Some("Other routes")
    );
    let Item::Frame(f) = &ast.items[9] else {
        panic!()
    };
    assert_eq!(f.stmts.len(), 4);
    let FrameStmt::Chart(c) = &f.stmts[0] else {
        panic!()
    };
    assert_eq!(c.opts.len(), 3);
    let Item::Frame(f3) = &ast.items[11] else {
        panic!()
    };
    let FrameStmt::Chart(c3) = &f3.stmts[0] else {
        panic!()
    };
    assert_eq!(c3.form, ChartForm::Bars);
    assert_eq!(c3.opts[2].name, OptName::Ordered);
}

#[test]
fn database_sources() {
    let text = "data a from table \"sales\".\"by \\\"day\\\"\" via SALES_DB in order of day, line { day: date }\n\
                data b from query \"select 1 as n\" via OTHER_DB\n\
                data c from \"c.csv\"\n";
    let (ast, diags) = parse_str(text);
    assert!(diags.is_empty(), "{diags:?}");
    let Item::Data(a) = &ast.items[0] else {
        panic!()
    };
    let db = a.database.as_ref().expect("a database source");
    assert_eq!(
        db.from,
        DbFrom::Table {
            schema: Some(Str {
                value: "sales".into(),
                span: 18..25
            }),
            name: a.file.clone()
        }
    );
    assert_eq!(a.file.value, "by \"day\"");
    assert_eq!(db.env.name, "SALES_DB");
    let order: Vec<&str> = db.order.iter().map(|o| o.name.as_str()).collect();
    assert_eq!(order, ["day", "line"]);
    assert_eq!(a.columns.len(), 1);
    let Item::Data(b) = &ast.items[1] else {
        panic!()
    };
    let db = b.database.as_ref().expect("a database source");
    assert!(matches!(&db.from, DbFrom::Query(q) if q.value == "select 1 as n"));
    assert!(db.order.is_empty());
    let Item::Data(c) = &ast.items[2] else {
        panic!()
    };
    assert!(c.database.is_none());
    // The variable is required.
    let (_, diags) = parse_str("data d from table \"t\"\n");
    assert!(!diags.is_empty());
}

#[test]
fn expression_precedence_and_spans() {
    let (ast, diags) = parse_str("view v = d | add z = 1 + 2 * 3 - -x");
    assert!(diags.is_empty(), "{diags:?}");
    let Item::View(v) = &ast.items[0] else {
        panic!()
    };
    let StepAst::Add { expr, .. } = &v.steps[0] else {
        panic!()
    };
    // 1 + (2 * 3) - (-x): one chain of `+` and `-`, folded left
    let Expr::Chain { first, rest, span } = expr else {
        panic!("{expr:?}")
    };
    assert_eq!(*span, 21..35);
    assert!(matches!(**first, Expr::Number { value, .. } if value == 1.0));
    let ops: Vec<BinOp> = rest.iter().map(|l| l.op).collect();
    assert_eq!(ops, [BinOp::Add, BinOp::Sub]);
    assert!(matches!(rest[1].operand, Expr::Neg { .. }));
    let Expr::Chain { rest: product, .. } = &rest[0].operand else {
        panic!()
    };
    assert_eq!(product[0].op, BinOp::Mul);
    // the span of the part an operator applies to: `1 + 2 * 3`
    assert_eq!(span_from(first, &rest[0].operand), 21..30);
}

#[test]
fn and_binds_tighter_than_or() {
    let (ast, _) = parse_str("view v = d | keep a = 1 or b = 2 and c = 3");
    let Item::View(v) = &ast.items[0] else {
        panic!()
    };
    let StepAst::Keep { expr, .. } = &v.steps[0] else {
        panic!()
    };
    let Expr::Chain { rest, .. } = expr else {
        panic!()
    };
    assert_eq!(rest[0].op, BinOp::Or);
    let Expr::Chain { rest: and, .. } = &rest[0].operand else {
        panic!()
    };
    assert_eq!(and[0].op, BinOp::And);
}

#[test]
fn collects_an_error_per_broken_item() {
    let text = "story \"ok\"\ndata d from \nview v = d | keep\nframe \"x\" { spotlite \"A\" }\nbyline \"fine\"\n";
    let (ast, diags) = parse_str(text);
    assert_eq!(diags.len(), 3, "{diags:#?}");
    // the good items around the broken ones still parse
    assert_eq!(ast.items.len(), 2);
    let rendered = crescendo_diag::render(&diags, false);
    assert!(rendered.contains("t.cresc:2:"), "{rendered}");
    assert!(rendered.contains("t.cresc:3:"), "{rendered}");
    assert!(
        rendered.contains("unknown keyword `spotlite`"),
        "{rendered}"
    );
    assert!(rendered.contains("did you mean `spotlight`?"), "{rendered}");
}

#[test]
fn gridlines_turn_on_and_off() {
    let text = "frame \"a\" {\n  gridlines\n}\nframe \"b\" { gridlines off; gridlines }\n";
    let (ast, diags) = parse_str(text);
    assert!(diags.is_empty(), "{diags:?}");
    let Item::Frame(a) = &ast.items[0] else {
        panic!()
    };
    let FrameStmt::Gridlines { on, span } = &a.stmts[0] else {
        panic!("{:?}", a.stmts)
    };
    assert!(*on);
    assert_eq!(&text[span.clone()], "gridlines");
    let Item::Frame(b) = &ast.items[1] else {
        panic!()
    };
    let ons: Vec<bool> = b
        .stmts
        .iter()
        .map(|s| match s {
            FrameStmt::Gridlines { on, .. } => *on,
            other => panic!("{other:?}"),
        })
        .collect();
    assert_eq!(ons, [false, true]);
    let FrameStmt::Gridlines { span, .. } = &b.stmts[0] else {
        panic!()
    };
    assert_eq!(&text[span.clone()], "gridlines off");
}

#[test]
fn gridlines_take_only_off() {
    // anything after `gridlines` but `off` is located on its line
    let (_, diags) = parse_str("frame \"a\" {\n  gridlines on\n}\n");
    assert_eq!(diags.len(), 1, "{diags:#?}");
    assert_eq!(diags[0].location().map(|l| l.1), Some(2));
    // `gridlinesoff` is no keyword, and a misspelling gets a suggestion
    let (_, diags) = parse_str("frame \"a\" { gridline }\n");
    assert_eq!(diags.len(), 1, "{diags:#?}");
    assert_eq!(diags[0].code, "unknown-keyword");
    assert_eq!(
        diags[0].help.as_deref(),
        Some("did you mean `gridlines`?"),
        "{diags:#?}"
    );
    // `off` is still a name elsewhere
    let (_, diags) = parse_str("view off = d\n");
    assert!(diags.is_empty(), "{diags:?}");
}

#[test]
fn misspelt_top_level_keyword_gets_a_suggestion() {
    let (_, diags) = parse_str("stroy \"x\"\n");
    assert_eq!(diags.len(), 1);
    assert_eq!(diags[0].code, "unknown-keyword");
    assert_eq!(diags[0].help.as_deref(), Some("did you mean `story`?"));
    assert_eq!(diags[0].location(), Some(("t.cresc".into(), 1, 1)));
}

#[test]
fn unterminated_string_is_located() {
    let (_, diags) = parse_str("story \"no end\nbyline \"b\"\n");
    assert_eq!(diags.len(), 1, "{diags:#?}");
    let (_, line, _) = diags[0].location().unwrap();
    assert_eq!(line, 1);
}

#[test]
fn reserved_words_are_not_names() {
    let (_, diags) = parse_str("view and = d\n");
    assert_eq!(diags.len(), 1);
}

#[test]
fn empty_and_comment_only_files_parse() {
    assert_eq!(parse_str("").0.items.len(), 0);
    let (ast, d) = parse_str("# only a comment\n\n   # another\n");
    assert!(ast.items.is_empty() && d.is_empty());
}

#[test]
fn never_panics_on_arbitrary_prefixes() {
    for cut in 0..GOOD.len() {
        if GOOD.is_char_boundary(cut) {
            let _ = parse_str(&GOOD[..cut]);
        }
    }
}

#[test]
fn values_and_claims_parse() {
    let text = r#"value loop_now = last(monthly.riders where route = "Harbour Loop")
value multiple = loop_now / bay_now
value trend = slope(monthly.riders by month where route = "Loop" and month >= "2023-01")
value n = count(monthly where riders > 0)
value r = ratio(a + 1, b)
claim multiple > 2 and not (n < 3 or trend <= 0) "over twice as many"
claim share about 0.5 within 5% "about half"
claim gap about 10 within 0.5 "about ten"
"#;
    let (ast, diags) = parse_str(text);
    assert!(
        diags.is_empty(),
        "{}",
        crescendo_diag::render(&diags, false)
    );
    assert_eq!(ast.items.len(), 8);
    let Item::Value(v) = &ast.items[0] else {
        panic!()
    };
    let Expr::Call { func, args, .. } = &v.expr else {
        panic!()
    };
    assert_eq!(func.name, "last");
    let CallArg::Selection(sel) = &args[0] else {
        panic!()
    };
    assert_eq!(sel.view.name, "monthly");
    assert_eq!(sel.column.as_ref().unwrap().name, "riders");
    assert!(sel.filter.is_some());
    let Item::Value(t) = &ast.items[2] else {
        panic!()
    };
    let Expr::Call { args, .. } = &t.expr else {
        panic!()
    };
    let CallArg::Selection(sel) = &args[0] else {
        panic!()
    };
    assert_eq!(sel.by.as_ref().unwrap().name, "month");
    let Item::Value(c) = &ast.items[3] else {
        panic!()
    };
    let Expr::Call { args, .. } = &c.expr else {
        panic!()
    };
    let CallArg::Selection(sel) = &args[0] else {
        panic!()
    };
    assert!(sel.column.is_none() && sel.filter.is_some());
    let Item::Value(r) = &ast.items[4] else {
        panic!()
    };
    let Expr::Call { args, .. } = &r.expr else {
        panic!()
    };
    assert!(matches!(args[0], CallArg::Value(Expr::Chain { .. })));
    let Item::Claim(cl) = &ast.items[5] else {
        panic!()
    };
    assert!(matches!(&cl.condition, Expr::Chain { rest, .. } if rest[0].op == BinOp::And));
    assert_eq!(cl.sentence.value, "over twice as many");
    let Item::Claim(about) = &ast.items[6] else {
        panic!()
    };
    let Expr::About { tolerance, .. } = &about.condition else {
        panic!()
    };
    assert!(tolerance.relative && (tolerance.amount - 0.05).abs() < 1e-12);
    let Item::Claim(abs) = &ast.items[7] else {
        panic!()
    };
    let Expr::About { tolerance, .. } = &abs.condition else {
        panic!()
    };
    assert!(!tolerance.relative && (tolerance.amount - 0.5).abs() < 1e-12);
}

#[test]
fn a_claim_needs_a_sentence() {
    // a claim without a comparison is the planner's to refuse (the grammar
    // of expressions is the same everywhere)
    let (ast, d) = parse_str("claim multiple \"x\"\n");
    assert!(d.is_empty(), "{d:?}");
    assert!(matches!(&ast.items[0], Item::Claim(c) if matches!(c.condition, Expr::Name(_))));
    let (_, d) = parse_str("claim multiple > 2\n");
    assert_eq!(d.len(), 1);
    assert_eq!(
        d[0].message,
        "expected `and`, `or`, a quoted string or an operator, found the end of the file"
    );
    let (_, d) = parse_str("claim\n");
    assert_eq!(
        d[0].message,
        "expected a condition over values, found the end of the file"
    );
}

#[test]
fn expected_expressions_are_named_for_their_place() {
    let message = |text: &str| parse_str(text).1[0].message.clone();
    assert_eq!(
        message("value v = 1 +\n"),
        "expected a value expression, found the end of the file"
    );
    assert_eq!(
        message("value v = a b\n"),
        "expected `(`, an operator or the end of the statement, found `b`"
    );
    assert_eq!(
        message("view v = d | keep a b\n"),
        "unknown keyword `b`: expected `and`, `or`, a comparison, an operator or the end of the statement"
    );
    // inside a selection's `where`, a row condition; in a function's
    // arguments, a value
    assert_eq!(
        message("value v = sum(w.a where b = )\n"),
        "expected an expression, found `)`"
    );
    assert_eq!(
        message("value v = ratio(1, )\n"),
        "expected a name or a value expression, found `)`"
    );
    assert_eq!(
        message("claim (1 > 2 \"s\"\n"),
        "expected `)`, `and`, `or` or an operator, found `\"`"
    );
}

#[test]
fn a_string_left_open_is_named_as_such() {
    let (_, d) = parse_str("story \"ok\"\nframe \"Open {\n  takeaway \"x\"\n}\n");
    assert_eq!(d[0].code, "unclosed-string", "{d:#?}");
    let (_, d) = parse_str("byline \"a \\\" quote\n");
    assert_eq!(
        d[0].code, "unclosed-string",
        "an escaped quote does not close: {d:#?}"
    );
    // a closed string in the wrong place is an ordinary syntax error
    let (_, d) = parse_str("theme \"clear\"\n");
    assert_ne!(d[0].code, "unclosed-string", "{d:#?}");
}

fn template_of(text: &str) -> Result<Template, Vec<Diagnostic>> {
    let src = Source::file("t.cresc", text);
    let (ast, d) = parse(&src);
    if !d.is_empty() {
        return Err(d);
    }
    let Item::Title(t) = &ast.items[0] else {
        panic!()
    };
    Ok(t.text.template.clone())
}

#[test]
fn templates_split_text_and_quotes() {
    let text = r#"story "Now {multiple to 1 decimal}× the riders ({share as signed percent to 0 decimals}), \{braces\} \"q\" {n}""#;
    let t = template_of(text).unwrap();
    assert_eq!(t.parts.len(), 6, "{t:#?}");
    assert_eq!(t.parts[0], TextPart::Literal("Now ".into()));
    let TextPart::Quote {
        format,
        span,
        written,
        ..
    } = &t.parts[1]
    else {
        panic!()
    };
    assert_eq!(format.decimals, Some(1));
    assert_eq!(&text[span.clone()], "{multiple to 1 decimal}");
    assert_eq!(&text[written.clone()], "multiple");
    let TextPart::Quote { format, .. } = &t.parts[3] else {
        panic!()
    };
    assert_eq!(
        *format,
        FormatSpec {
            sign: true,
            decimals: Some(0),
            style: NumberStyle::Percent
        }
    );
    assert_eq!(t.parts[4], TextPart::Literal("), {braces} \"q\" ".into()));
    assert!(!t.is_plain());
    assert!(template_of(r#"story "plain""#).unwrap().is_plain());
    assert!(template_of(r#"story "a \{literal\} pair""#)
        .unwrap()
        .is_plain());
}

/// Every format in words, and what it reads as (the table of the language
/// reference).
#[test]
fn formats_in_words() {
    use NumberStyle::*;
    let spec = |sign, decimals, style| FormatSpec {
        sign,
        decimals,
        style,
    };
    for (written, want) in [
        ("{x}", spec(false, None, Plain)),
        ("{x to 1 decimal}", spec(false, Some(1), Plain)),
        ("{x to 2 decimals}", spec(false, Some(2), Plain)),
        ("{x to 0 decimals}", spec(false, Some(0), Plain)),
        ("{x to 1 decimals}", spec(false, Some(1), Plain)),
        ("{x as number}", spec(false, None, Plain)),
        ("{x as percent}", spec(false, None, Percent)),
        (
            "{x as percent to 0 decimals}",
            spec(false, Some(0), Percent),
        ),
        ("{x as signed percent}", spec(true, None, Percent)),
        ("{x as signed number}", spec(true, None, Plain)),
        ("{x as signed}", spec(true, None, Plain)),
        ("{x as signed to 2 decimals}", spec(true, Some(2), Plain)),
        ("{x as compact}", spec(false, None, Compact)),
        ("{x as compact to 1 decimal}", spec(false, Some(1), Compact)),
        ("{x as signed compact}", spec(true, None, Compact)),
        ("{x as quarter}", spec(false, None, Quarter)),
        ("{x as year}", spec(false, None, Year)),
        ("{ (a + b) / 2   as  percent }", spec(false, None, Percent)),
    ] {
        let text = format!("story \"{written}\"");
        let t = template_of(&text).unwrap_or_else(|e| panic!("{written}: {e:?}"));
        let [TextPart::Quote { format, .. }] = &t.parts[..] else {
            panic!("{written}: {t:#?}")
        };
        assert_eq!(*format, want, "{written}");
        // and the words the format prints back are read as the same format
        if !written.starts_with("{ ") {
            let again = format!("story \"{{x{}}}\"", format.words());
            let t = template_of(&again).unwrap();
            let [TextPart::Quote { format: f2, .. }] = &t.parts[..] else {
                panic!()
            };
            assert_eq!(f2, format, "{again}");
        }
    }
}

#[test]
fn template_errors_are_located() {
    let errs = template_of(r#"story "a {b + } c""#).unwrap_err();
    assert_eq!(errs.len(), 1);
    let (_, line, col) = errs[0].location().unwrap();
    assert_eq!((line, col), (1, 15));
    let errs = template_of(r#"story "x } y""#).unwrap_err();
    assert_eq!(errs[0].location().unwrap().2, 10);
    assert_eq!(
        errs[0].help.as_deref(),
        Some("write `\\}` for a literal brace")
    );
    let errs = template_of(r#"story "x { y""#).unwrap_err();
    assert!(errs[0].message.contains("without its `}`"));
    assert!(errs[0].help.as_deref().unwrap().contains("`\\{`"));
    let errs = template_of(r#"story "{x as percentage}""#).unwrap_err();
    assert_eq!(errs.len(), 1, "{errs:?}");
    assert!(
        errs[0]
            .message
            .starts_with("in a quoted value: unknown format word `percentage`"),
        "{}",
        errs[0].message
    );
    assert_eq!(errs[0].location().unwrap().2, 14);
    assert_eq!(errs[0].help.as_deref(), Some("did you mean `percent`?"));
}

/// Formats that read but mean nothing: a sign or decimals on a period.
#[test]
fn periods_take_neither_sign_nor_decimals() {
    for (text, at, message, help) in [
        (
            r#"story "{m as signed quarter}""#,
            "signed",
            "a quarter has no sign",
            "write `as quarter`",
        ),
        (
            r#"story "{m as signed year}""#,
            "signed",
            "a year has no sign",
            "write `as year`",
        ),
        (
            r#"story "{m as year to 1 decimal}""#,
            "to 1 decimal",
            "a quarter or a year has no decimals",
            "drop `to ... decimals`",
        ),
    ] {
        let errs = template_of(text).unwrap_err();
        assert_eq!(errs.len(), 1, "{errs:?}");
        assert_eq!(errs[0].message, message);
        assert_eq!(errs[0].help.as_deref(), Some(help));
        let start = text.find(at).unwrap();
        let Some(crescendo_diag::Located { span, .. }) = &errs[0].primary else {
            panic!("{:?}", errs[0])
        };
        assert_eq!(span.clone(), start..start + at.len(), "{text}");
    }
}

/// A format written with symbols after a colon, and doubled braces, are
/// errors at the characters, whose help spells the same thing in words.
#[test]
fn symbol_formats_and_doubled_braces_say_what_to_write() {
    for (text, at, help) in [
        (r#"story "{lead:.1}""#, ":.1", "write `{lead to 1 decimal}`"),
        (r#"story "{share:%}""#, ":%", "write `{share as percent}`"),
        (
            r#"story "{change:+.1%}""#,
            ":+.1%",
            "write `{change as signed percent to 1 decimal}`",
        ),
        (
            r#"story "{change:+.0%}""#,
            ":+.0%",
            "write `{change as signed percent to 0 decimals}`",
        ),
        (r#"story "{visits:k}""#, ":k", "write `{visits as compact}`"),
        (
            r#"story "{m:quarter}""#,
            ":quarter",
            "write `{m as quarter}`",
        ),
        (r#"story "{m:year}""#, ":year", "write `{m as year}`"),
        (
            r#"story "{a / b:+}""#,
            ":+",
            "write `{a / b as signed number}`",
        ),
        (r#"story "{x : .2 }""#, ": .2", "write `{x to 2 decimals}`"),
        (r#"story "a {{ b""#, "{{", "write `\\{` for a literal `{`"),
        (r#"story "a }} b""#, "}}", "write `\\}` for a literal `}`"),
    ] {
        let errs = template_of(text).unwrap_err();
        assert_eq!(errs.len(), 1, "{text}: {errs:?}");
        assert_eq!(errs[0].help.as_deref(), Some(help), "{text}");
        let start = text.find(at).unwrap();
        let Some(crescendo_diag::Located { span, .. }) = &errs[0].primary else {
            panic!("{:?}", errs[0])
        };
        assert_eq!(span.clone(), start..start + at.len(), "{text}");
    }
    // characters that mean no format still get the words to write
    let errs = template_of(r#"story "{x:q}""#).unwrap_err();
    assert_eq!(
        errs[0].message,
        "a quoted value's format is written in words"
    );
    assert!(
        errs[0]
            .help
            .as_deref()
            .unwrap()
            .contains("`{x as percent}`"),
        "{:?}",
        errs[0].help
    );
}

#[test]
fn deep_nesting_is_a_located_error_not_a_stack_overflow() {
    // 1,000 parentheses overflowed the stack of an 8 MB main thread
    // (release build) before the nesting cap; 100,000 failed otherwise
    let n = 100_000;
    for (deep, column) in [
        (
            format!(
                "view v = t\n  | keep {}a{}\n",
                "(".repeat(1000),
                ")".repeat(1000)
            ),
            10 + MAX_NESTING,
        ),
        (
            format!("view v = t\n  | keep {}a{}\n", "(".repeat(n), ")".repeat(n)),
            10 + MAX_NESTING,
        ),
        (
            format!("view v = t\n  | add b = {}1\n", "- ".repeat(n)),
            13 + 2 * MAX_NESTING,
        ),
        (
            format!("view v = t\n  | keep {}a = 1\n", "not ".repeat(n)),
            10 + 4 * MAX_NESTING,
        ),
    ] {
        let src = Source::file("deep.cresc", deep);
        let (ast, diags) = parse(&src);
        assert!(ast.items.is_empty());
        assert_eq!(diags.len(), 1);
        assert_eq!(diags[0].code, "too-deep");
        let (_, line, col) = diags[0].location().unwrap();
        assert_eq!((line, col), (2, column), "{}", diags[0].message);
    }
    // strings and comments do not count, and ordinary nesting is fine
    let ok = format!(
        "# {}\nstory \"{}\"\nview v = t\n  | keep ((((a > -(-1)))))\n",
        "(".repeat(500),
        "(".repeat(500)
    );
    let (_, diags) = parse(&Source::file("ok.cresc", ok));
    assert!(diags.iter().all(|d| d.code != "too-deep"), "{diags:?}");
}

/// Flat chains of operators are read, walked and printed in loops: 13,000
/// terms parse and format on a test thread's 2 MB stack (12,700 overflowed
/// the 8 MB main thread's stack when every operator was a level of the
/// tree).
#[test]
fn long_chains_take_no_stack_in_proportion_to_their_length() {
    let n = 13_000;
    let sum = vec!["1"; n].join(" + ");
    let and = vec!["riders > 0"; n].join(" and ");
    let or = vec!["x > 1"; n].join(" or ");
    let text = format!(
        "value v = {sum}\nview w = d\n  | keep {and}\nclaim {or} \"s\"\nframe \"{{{sum}}}\" {{}}\n"
    );
    let (ast, diags) = parse_str(&text);
    assert!(diags.is_empty(), "{diags:?}");
    let Item::Value(v) = &ast.items[0] else {
        panic!()
    };
    let Expr::Chain { rest, span, .. } = &v.expr else {
        panic!()
    };
    assert_eq!(rest.len(), n - 1);
    assert_eq!(&text[span.clone()], sum);
    let Item::Frame(f) = &ast.items[3] else {
        panic!()
    };
    assert!(
        matches!(&f.headline.template.parts[..], [TextPart::Quote { expr: Expr::Chain { rest, .. }, .. }] if rest.len() == n - 1)
    );
    let formatted = crate::format_story(&text).expect("formats");
    assert_eq!(formatted, text);
}

/// Run `f` on a thread with the stack of a program's main thread (8 MB),
/// where the command parses stories: the parser recurses once per level
/// of nesting (up to [`MAX_NESTING`]), which a debug build's frames make
/// deeper than a test thread's 2 MB.
fn with_main_stack(f: impl FnOnce() + Send + 'static) {
    std::thread::Builder::new()
        .stack_size(8 << 20)
        .spawn(f)
        .expect("a thread")
        .join()
        .expect("no panic");
}

/// The nesting cap applies inside quoted values too: 1,000 parentheses in
/// `{...}` were accepted (and about 1,840 overflowed the stack).
#[test]
fn quoted_values_nest_no_deeper_than_the_rest() {
    with_main_stack(quoted_values_nest);
}

fn quoted_values_nest() {
    for depth in [MAX_NESTING + 1, 1000, 100_000] {
        let text = format!(
            "story \"{{{}x{}}}\"\n",
            "(".repeat(depth),
            ")".repeat(depth)
        );
        let (_, diags) = parse_str(&text);
        assert_eq!(diags.len(), 1, "{diags:?}");
        assert_eq!(diags[0].code, "too-deep");
        // at the parenthesis that goes one level too deep
        let (_, line, col) = diags[0].location().unwrap();
        assert_eq!((line, col), (1, 9 + MAX_NESTING));
    }
    let ok = format!(
        "story \"{{{}x{}}}\"\n",
        "(".repeat(MAX_NESTING),
        ")".repeat(MAX_NESTING)
    );
    let (_, diags) = parse_str(&ok);
    assert!(diags.is_empty(), "{diags:?}");
}

/// `to N decimals` with N above 12, or too large to read, is an error at
/// the digits (N above 12 was once silently capped).
#[test]
fn quoted_values_ask_for_at_most_twelve_decimals() {
    let t = template_of(
        r#"story "{x to 12 decimals} {x as signed percent to 0 decimals} {x as compact to 3 decimals}""#,
    )
    .unwrap();
    let decimals: Vec<Option<usize>> = t
        .parts
        .iter()
        .filter_map(|p| match p {
            TextPart::Quote { format, .. } => Some(format.decimals),
            _ => None,
        })
        .collect();
    assert_eq!(decimals, [Some(12), Some(0), Some(3)]);
    for (text, digits) in [
        (r#"story "a {x to 13 decimals}""#, "13"),
        (
            r#"story "a {x as signed percent to 99999999999999999999999 decimals}""#,
            "99999999999999999999999",
        ),
    ] {
        let errs = template_of(text).unwrap_err();
        assert_eq!(errs.len(), 1, "{errs:?}");
        assert_eq!(errs[0].code, "format");
        assert_eq!(
            errs[0].message,
            format!("a quoted value shows at most 12 decimals, not {digits}")
        );
        let at = text.find(digits).unwrap();
        assert_eq!(errs[0].location().unwrap().2, at + 1);
        let shown = crescendo_diag::render(&errs, false);
        assert!(shown.contains(&"^".repeat(digits.len())), "{shown}");
    }
}

/// XML 1.0 cannot carry the C0 controls (but tab, line feed, carriage
/// return), U+FFFE and U+FFFF: a story string holding one made an SVG that
/// is not XML while the build exited 0. Each line holding one is an error
/// at the character; comments may hold anything.
#[test]
fn control_characters_are_refused_at_the_character() {
    let text = "story \"A\u{7}B\"\n# a comment may hold \u{1} anything\nbyline \"tab\tand \\\u{b} \u{ffff}\"\nsource \"x\" \u{0}\r\n";
    let (ast, diags) = parse_str(text);
    assert!(ast.items.is_empty());
    let found: Vec<(String, usize, usize)> = diags
        .iter()
        .map(|d| {
            let (_, line, col) = d.location().unwrap();
            (d.message.clone(), line, col)
        })
        .collect();
    let message = |code: &str| {
        format!("the story holds the control character U+{code}, which no text of a deck can carry")
    };
    assert_eq!(
        found,
        [
            (message("0007"), 1, 9),
            (message("000B"), 3, 18),
            (message("0000"), 4, 12),
        ]
    );
    assert!(diags.iter().all(|d| d.code == "control-character"));
    // tabs, carriage returns and line breaks are fine
    let (_, diags) = parse_str("story \"a\tb\"\r\nbyline \"c\"\r\n");
    assert!(diags.is_empty(), "{diags:?}");
    for c in ['\u{1}', '\u{8}', '\u{c}', '\u{e}', '\u{1f}', '\u{fffe}'] {
        assert!(controls::is_forbidden(c), "{c:?}");
    }
    for c in ['\t', '\n', '\r', ' ', '\u{7f}', '\u{fffd}'] {
        assert!(!controls::is_forbidden(c), "{c:?}");
    }
}

#[test]
fn a_comma_in_an_add_step_says_one_column_per_step() {
    let (_, d) = parse_str("view v = d | add c = b * 2, e = b * 3\n");
    assert_eq!(d.len(), 1, "{d:?}");
    assert_eq!(d[0].message, "`add` makes one column per step, found `,`");
    assert!(
        d[0].help.as_deref().unwrap_or("").contains("| add b = ..."),
        "{:?}",
        d[0].help
    );
    // a comma elsewhere keeps the general message
    let (_, d) = parse_str("view v = d | keep a > 1, b\n");
    assert!(!d[0].message.contains("`add`"), "{}", d[0].message);
}

#[test]
fn cite_names_one_value() {
    let text = "frame \"a\" {\n  cite quarry_ratio\n}\n";
    let (ast, diags) = parse_str(text);
    assert!(diags.is_empty(), "{diags:?}");
    let Item::Frame(a) = &ast.items[0] else {
        panic!()
    };
    let FrameStmt::Cite { value, span } = &a.stmts[0] else {
        panic!("{:?}", a.stmts)
    };
    assert_eq!(value.name, "quarry_ratio");
    assert_eq!(&text[span.clone()], "cite quarry_ratio");
    // a quoted name, two names, or none: located on its line
    for bad in ["cite \"x\"", "cite a b", "cite"] {
        let (_, diags) = parse_str(&format!("frame \"a\" {{\n  {bad}\n}}\n"));
        assert_eq!(diags.len(), 1, "{bad}: {diags:#?}");
        assert_eq!(diags[0].location().map(|l| l.1), Some(2), "{bad}");
    }
    // a misspelling gets a suggestion; `cite` is still a name elsewhere
    let (_, diags) = parse_str("frame \"a\" { cit x }\n");
    assert_eq!(diags[0].help.as_deref(), Some("did you mean `cite`?"));
    let (_, diags) = parse_str("view cite = d\n");
    assert!(diags.is_empty(), "{diags:?}");
}

#[test]
fn positions_may_be_values_and_moments_and_footnotes_parse() {
    let text = "frame \"a\" {\n  reference avg * 1.1 \"Target\"\n  reference -5 \"Floor\"\n  \
                band opened to \"2024-06\"\n  moment \"2023-04\" \"Begins\"\n  \
                moment start to 2024 \"Works\"\n  callout \"Harbour\" on \"E-book\" \"Note\"\n  \
                footnote claims\n  footnote off\n}\n";
    let (ast, diags) = parse_str(text);
    assert!(diags.is_empty(), "{diags:?}");
    let Item::Frame(f) = &ast.items[0] else {
        panic!()
    };
    let FrameStmt::Reference { value, .. } = &f.stmts[0] else {
        panic!("{:?}", f.stmts[0])
    };
    let Position::Value(e) = value else {
        panic!("{value:?}")
    };
    assert_eq!(&text[e.span()], "avg * 1.1");
    let FrameStmt::Reference { value, .. } = &f.stmts[1] else {
        panic!()
    };
    // a written number keeps its own span (not the blank after it)
    assert!(
        matches!(value, Position::Number { value, span } if *value == -5.0 && &text[span.clone()] == "-5")
    );
    let FrameStmt::Band { from, to, .. } = &f.stmts[2] else {
        panic!()
    };
    assert!(matches!(from, Position::Value(_)) && matches!(to, Position::Text(_)));
    let FrameStmt::Moment {
        at, until, text: t, ..
    } = &f.stmts[3]
    else {
        panic!("{:?}", f.stmts[3])
    };
    assert!(matches!(at, Position::Text(s) if s.value == "2023-04") && until.is_none());
    assert_eq!(t.value, "Begins");
    let FrameStmt::Moment { at, until, .. } = &f.stmts[4] else {
        panic!()
    };
    assert!(matches!(at, Position::Value(_)));
    assert!(matches!(until, Some(Position::Number { value, .. }) if *value == 2024.0));
    assert!(matches!(&f.stmts[5], FrameStmt::Callout { on: Some(on), .. } if on.value == "E-book"));
    assert!(matches!(
        f.stmts[6],
        FrameStmt::Footnote { claims: true, .. }
    ));
    assert!(matches!(
        f.stmts[7],
        FrameStmt::Footnote { claims: false, .. }
    ));
}
