//! Parser: pest grammar (`grammar/story.pest`) to [`StoryAst`], with error
//! recovery at top-level items so that every syntax error in a file is
//! reported, not only the first.

use std::sync::Arc;

use crescendo_diag::{closest, Diagnostic, Source};
use pest::error::{ErrorVariant, InputLocation};
use pest::iterators::Pair;
use pest::Parser;
use pest_derive::Parser;

use crate::ast::*;

#[derive(Parser)]
#[grammar = "../../grammar/story.pest"]
struct StoryParser;

/// Words that may start a top-level item.
pub const TOP_KEYWORDS: &[&str] = &[
    "story",
    "byline",
    "source",
    "theme",
    "data",
    "view",
    "compare",
    "focus",
    "conclusion",
    "value",
    "claim",
    "allow",
    "accent",
    "style",
    "use",
    "frame",
    "locale",
    "fiscal",
];

/// Parse a story file. Returns the items that parsed and one diagnostic per
/// syntax error (at most one per top-level item).
pub fn parse(source: &Arc<Source>) -> (StoryAst, Vec<Diagnostic>) {
    let text = source.text.as_str();
    if let Some(at) = too_deep(text) {
        // the grammar, the syntax tree and everything that walks it recurse
        // once per level: refuse before any of them can run out of stack
        let end = text[at..].chars().next().map_or(at, |c| at + c.len_utf8());
        let d = Diagnostic::error(
            "too-deep",
            format!("expressions nest more than {MAX_NESTING} levels deep here"),
        )
        .at(source, at..end, "too deep")
        .help("split the expression into named views or values");
        return (StoryAst { items: Vec::new() }, vec![d]);
    }
    let mut items = Vec::new();
    let mut diags = Vec::new();
    let mut pos = 0;
    while pos < text.len() {
        let rest = &text[pos..];
        if StoryParser::parse(Rule::only_trivia, rest).is_ok() {
            break;
        }
        match StoryParser::parse(Rule::next_item, rest) {
            Ok(mut pairs) => {
                let Some(pair) = pairs.next() else { break };
                let end = pair.as_span().end();
                match convert_item(pair, pos) {
                    Ok(item) => items.push(item),
                    Err(d) => diags.push(d.into_diag(source)),
                }
                pos += end.max(1);
            }
            Err(err) => {
                let at = match err.location {
                    InputLocation::Pos(p) => p,
                    InputLocation::Span((s, _)) => s,
                };
                let at = pull_back_to_previous_token(rest, at);
                let lead = leading_trivia(rest);
                let diag = match StoryParser::parse(Rule::lone_step, &rest[lead..]) {
                    // A view step that starts a line but does not parse:
                    // explain the step, not the missing item keyword.
                    Err(step_err) if at == lead && rest[lead..].starts_with('|') => {
                        let sat = match step_err.location {
                            InputLocation::Pos(p) => p,
                            InputLocation::Span((s, _)) => s,
                        };
                        let sat = pull_back_to_previous_token(&rest[lead..], sat);
                        syntax_error(source, pos + lead, sat, &step_err.variant)
                    }
                    _ => syntax_error(source, pos, at, &err.variant),
                };
                diags.push(diag);
                pos = next_item_start(text, pos, pos + at);
            }
        }
    }
    (StoryAst { items }, diags)
}

/// Deepest nesting of parentheses, brackets, braces and unary operators
/// (`-`, `not`) a story may use; no real story comes near it.
pub const MAX_NESTING: usize = 48;

/// The byte offset where the nesting of `text` first goes deeper than
/// [`MAX_NESTING`], counting open brackets plus the current run of unary
/// operators (`- - x`, `not not x`); strings and comments are skipped.
fn too_deep(text: &str) -> Option<usize> {
    let bytes = text.as_bytes();
    let word = |c: Option<&u8>| c.is_some_and(|c| c.is_ascii_alphanumeric() || *c == b'_');
    let mut depth = 0usize;
    let mut run = 0usize;
    let mut i = 0;
    while let Some(&b) = bytes.get(i) {
        match b {
            b'"' => {
                // to the closing quote (or the end of the line)
                i += 1;
                while let Some(&c) = bytes.get(i) {
                    match c {
                        b'\\' => i += 1,
                        b'"' | b'\n' => break,
                        _ => {}
                    }
                    i += 1;
                }
                run = 0;
            }
            b'#' => {
                while bytes.get(i).is_some_and(|&c| c != b'\n') {
                    i += 1;
                }
                continue;
            }
            b'(' | b'[' | b'{' => {
                depth += 1;
                run = 0;
            }
            b')' | b']' | b'}' => {
                depth = depth.saturating_sub(1);
                run = 0;
            }
            b'-' => run += 1,
            b' ' | b'\t' | b'\r' | b'\n' => {}
            b'n' if bytes.get(i..i + 3) == Some(b"not")
                && !word(bytes.get(i + 3))
                && !(i > 0 && word(bytes.get(i - 1))) =>
            {
                run += 1;
                if depth + run > MAX_NESTING {
                    return Some(i);
                }
                i += 3;
                continue;
            }
            _ => run = 0,
        }
        if depth + run > MAX_NESTING {
            return Some(i);
        }
        i += 1;
    }
    None
}

/// Where to resume after a syntax error at `error` in the item that starts
/// at `item_start`: the first line after the item's first line, at or after
/// the error's line, that starts (in column 1) with a top-level keyword; or
/// the end of the text.
fn next_item_start(text: &str, item_start: usize, error: usize) -> usize {
    let starts_item = |line: &str| {
        TOP_KEYWORDS.iter().any(|k| {
            line.starts_with(k)
                && !line[k.len()..]
                    .chars()
                    .next()
                    .is_some_and(|c| c.is_ascii_alphanumeric() || c == '_')
        })
    };
    let first_line_end = text[item_start..]
        .find(|c: char| !c.is_whitespace() && c != '#')
        .map(|o| item_start + o)
        .and_then(|s| text[s..].find('\n').map(|nl| s + nl + 1))
        .unwrap_or(text.len());
    let error = error.min(text.len());
    let mut i = text[..error]
        .rfind('\n')
        .map_or(0, |nl| nl + 1)
        .max(first_line_end);
    while i < text.len() {
        if starts_item(&text[i..]) {
            return i;
        }
        match text[i..].find('\n') {
            Some(nl) => i += nl + 1,
            None => break,
        }
    }
    text.len()
}

/// When an error is found at the first token of a later line, report it just
/// after the last token before it: "expected a string" belongs to the line
/// that is missing it.
fn pull_back_to_previous_token(text: &str, at: usize) -> usize {
    let before = &text[..at.min(text.len())];
    let trimmed = before.trim_end();
    let after = &text[at.min(text.len())..];
    let item_cut_short = after.is_empty() || TOP_KEYWORDS.iter().any(|k| after.starts_with(k));
    if item_cut_short && before[trimmed.len()..].contains('\n') && !trimmed.is_empty() {
        // skip back over a trailing comment on that line
        let line_start = trimmed.rfind('\n').map_or(0, |i| i + 1);
        let line = &trimmed[line_start..];
        match line.find('#') {
            Some(h) if !line[..h].contains('"') => line_start + line[..h].trim_end().len(),
            _ => trimmed.len(),
        }
    } else {
        at
    }
}

/// What a rule looks like to a reader of an error message.
fn describe(rule: Rule) -> Option<String> {
    let name = format!("{rule:?}");
    if let Some(kw) = name.strip_prefix("kw_") {
        return Some(format!("`{kw}`"));
    }
    Some(
        match rule {
            Rule::ident => "a name",
            Rule::string => "a quoted string",
            Rule::number | Rule::integer => "a number",
            Rule::expr
            | Rule::or_expr
            | Rule::and_expr
            | Rule::not_expr
            | Rule::negation
            | Rule::compare_expr
            | Rule::sum_expr
            | Rule::product
            | Rule::unary
            | Rule::neg_sign => "an expression",
            Rule::chart_form => "a chart (`line`, `bars`, `dots`, `scatter`, `pie`, `table`)",
            Rule::axis_name => "an axis statement (`y title \"...\"` or `y range 0 to 100`)",
            Rule::rule_name => "a lint rule name",
            Rule::direction => "`ascending` or `descending`",
            Rule::keep_step
            | Rule::by_step
            | Rule::add_step
            | Rule::sort_step
            | Rule::top_step
            | Rule::columns_step => {
                "a view step (`| keep`, `| by`, `| add`, `| sort`, `| top`, `| columns`)"
            }
            Rule::cmp_op => "a comparison",
            Rule::add_op | Rule::mul_op => "an operator",
            Rule::EOI => "the end of the file",
            Rule::dot => "`.`",
            Rule::vexpr | Rule::vterm | Rule::vunary | Rule::call => "a value expression",
            Rule::vcond
            | Rule::vor
            | Rule::vand
            | Rule::vnot
            | Rule::vnegation
            | Rule::vcompare => "a condition over values",
            Rule::vcmp_tail | Rule::about_tail => "a comparison (`>`, `<`, `=`, ... or `about`)",
            Rule::tolerance => "a tolerance such as `5%` or `0.1`",
            Rule::format_spec => "a format such as `.1`, `%`, `+.0%` or `k`",
            Rule::eq => "`=`",
            Rule::colon => "`:`",
            Rule::open_brace => "`{`",
            Rule::close_brace => "`}`",
            Rule::open_paren => "`(`",
            Rule::close_paren => "`)`",
            Rule::targets => "`all`, `none`, `focus` or quoted names",
            Rule::chart_opt | Rule::opt_name => {
                "a chart option (x, y, series, category, value, ordered)"
            }
            _ => return None,
        }
        .to_string(),
    )
}

/// The keywords a rule can start with (for "did you mean" suggestions).
fn keywords_of(rule: Rule) -> Vec<String> {
    let words: &[&str] = match rule {
        Rule::chart_form => &["line", "bars", "dots", "scatter", "pie", "table"],
        Rule::axis_name => &["x", "y"],
        Rule::direction => &["ascending", "descending"],
        Rule::opt_name | Rule::chart_opt => &[
            "x",
            "y",
            "series",
            "category",
            "value",
            "ordered",
            "horizontal",
            "vertical",
            "stack",
            "group",
            "label",
            "fit",
        ],
        Rule::targets => &["all", "none", "focus"],
        _ => {
            return format!("{rule:?}")
                .strip_prefix("kw_")
                .map(|k| vec![k.to_string()])
                .unwrap_or_default()
        }
    };
    words.iter().map(|w| w.to_string()).collect()
}

fn syntax_error(
    source: &Arc<Source>,
    base: usize,
    at: usize,
    variant: &ErrorVariant<Rule>,
) -> Diagnostic {
    let text = &source.text[base..];
    let word: String = text[at..]
        .chars()
        .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
        .collect();
    let rest_of_line = text[at.min(text.len())..].split('\n').next().unwrap_or("");
    let found = if text[at.min(text.len())..].trim().is_empty() {
        "the end of the file".to_string()
    } else if rest_of_line.trim().is_empty() || rest_of_line.trim_start().starts_with('#') {
        "the end of the line".to_string()
    } else if at >= text.len() {
        "the end of the file".to_string()
    } else if !word.is_empty() {
        format!("`{word}`")
    } else {
        let c = text[at..].chars().next().unwrap_or(' ');
        match c {
            '\n' | '\r' => "the end of the line".to_string(),
            _ => format!("`{c}`"),
        }
    };
    let (expected, keywords): (Vec<String>, Vec<String>) = match variant {
        ErrorVariant::ParsingError { positives, .. } => {
            let mut exp: Vec<String> = positives.iter().filter_map(|r| describe(*r)).collect();
            exp.sort();
            exp.dedup();
            let kws = positives.iter().flat_map(|r| keywords_of(*r)).collect();
            (exp, kws)
        }
        ErrorVariant::CustomError { message } => (vec![message.clone()], Vec::new()),
    };
    // At the start of an item, a word that is no keyword is most likely a
    // misspelt keyword.
    let keywords: Vec<String> = if keywords.is_empty() && at == leading_trivia(text) {
        TOP_KEYWORDS.iter().map(|s| s.to_string()).collect()
    } else {
        keywords
    };
    let expected_text = match expected.len() {
        0 => "something else".to_string(),
        1 => expected[0].clone(),
        n if n <= 8 => format!("{} or {}", expected[..n - 1].join(", "), expected[n - 1]),
        _ => format!("one of {}, ...", expected[..8].join(", ")),
    };
    let is_unknown_word = !word.is_empty() && !keywords.is_empty() && !keywords.contains(&word);
    let (code, message) =
        if is_unknown_word && word.chars().next().is_some_and(|c| c.is_ascii_alphabetic()) {
            (
                "unknown-keyword",
                format!("unknown keyword `{word}`: expected {expected_text}"),
            )
        } else {
            ("syntax", format!("expected {expected_text}, found {found}"))
        };
    let start = base + at;
    if rest_of_line.starts_with('"') && !closes_on_line(&rest_of_line[1..]) {
        return Diagnostic::error("unclosed-string", "this string is not closed on its line")
            .at(
                source,
                start..start + rest_of_line.trim_end().len(),
                "the string starts here",
            )
            .help("end it with `\"` on the same line; write `\\n` for a line break inside a text, and `\\\"` for a quote");
    }
    let at_line_end = found == "the end of the line" || found == "the end of the file";
    let end = if at_line_end {
        start
    } else {
        start
            + word
                .len()
                .max(text[at..].chars().next().map_or(0, char::len_utf8))
    };
    let mut d = Diagnostic::error(code, message).at(source, start..end, "not expected here");
    if is_unknown_word {
        if let Some(s) = closest(&word, keywords.iter().map(String::as_str)) {
            d = d.help(format!("did you mean `{s}`?"));
        }
    }
    d
}

/// True when `rest` (what follows an opening quote) holds the closing quote
/// of the string, skipping `\\` escapes.
fn closes_on_line(rest: &str) -> bool {
    let mut escaped = false;
    for c in rest.chars() {
        match c {
            _ if escaped => escaped = false,
            '\\' => escaped = true,
            '"' => return true,
            _ => {}
        }
    }
    false
}

/// Length of the blank space and comments at the start of `text`.
fn leading_trivia(text: &str) -> usize {
    let mut i = 0;
    let b = text.as_bytes();
    while i < b.len() {
        match b[i] {
            b' ' | b'\t' | b'\r' | b'\n' => i += 1,
            b'#' => {
                while i < b.len() && b[i] != b'\n' {
                    i += 1
                }
            }
            _ => break,
        }
    }
    i
}

/// A problem found while converting pairs (values out of range).
struct ConvertError {
    span: Span,
    message: String,
}

impl ConvertError {
    fn into_diag(self, source: &Arc<Source>) -> Diagnostic {
        Diagnostic::error("syntax", self.message).at(source, self.span, "here")
    }
}

type Res<T> = Result<T, ConvertError>;

/// Punctuation tokens: named rules only so errors can say what was expected.
fn is_punct(rule: Rule) -> bool {
    matches!(
        rule,
        Rule::eq
            | Rule::colon
            | Rule::open_brace
            | Rule::close_brace
            | Rule::open_paren
            | Rule::close_paren
    )
}

/// The meaningful children of a pair (punctuation left out).
fn children(pair: Pair<Rule>) -> impl Iterator<Item = Pair<Rule>> {
    pair.into_inner().filter(|p| !is_punct(p.as_rule()))
}

/// A `db_source`: the string that names the table or holds the query (for
/// messages), and the source itself.
fn db_source(pair: Pair<Rule>, base: usize) -> Option<(Str, Option<DatabaseSource>)> {
    let span = span_of(&pair, base);
    let mut it = children(pair);
    let what = it.next()?;
    let (file, from) = match what.as_rule() {
        Rule::db_table => {
            let strings: Vec<Str> = children(what)
                .filter(|p| p.as_rule() == Rule::string)
                .map(|p| string(p, base))
                .collect();
            match strings.as_slice() {
                [name] => (
                    name.clone(),
                    DbFrom::Table {
                        schema: None,
                        name: name.clone(),
                    },
                ),
                [schema, name] => (
                    name.clone(),
                    DbFrom::Table {
                        schema: Some(schema.clone()),
                        name: name.clone(),
                    },
                ),
                _ => return None,
            }
        }
        _ => {
            let q = string(children(what).find(|p| p.as_rule() == Rule::string)?, base);
            (q.clone(), DbFrom::Query(q))
        }
    };
    let mut env = None;
    let mut order = Vec::new();
    for p in it {
        match p.as_rule() {
            Rule::ident => env = Some(ident(p, base)),
            Rule::db_order => order.extend(
                children(p)
                    .filter(|q| q.as_rule() == Rule::ident)
                    .map(|q| ident(q, base)),
            ),
            _ => {}
        }
    }
    Some((
        file,
        Some(DatabaseSource {
            from,
            env: env?,
            order,
            span,
        }),
    ))
}

fn span_of(pair: &Pair<Rule>, base: usize) -> Span {
    let s = pair.as_span();
    base + s.start()..base + s.end()
}

fn ident(pair: Pair<Rule>, base: usize) -> Ident {
    Ident {
        name: pair.as_str().to_string(),
        span: span_of(&pair, base),
    }
}

fn string(pair: Pair<Rule>, base: usize) -> Str {
    let span = span_of(&pair, base);
    let raw = children(pair).next().map(|p| p.as_str()).unwrap_or("");
    let mut value = String::with_capacity(raw.len());
    let mut chars = raw.chars();
    while let Some(c) = chars.next() {
        if c == '\\' {
            match chars.next() {
                Some('n') => value.push('\n'),
                Some('t') => value.push('\t'),
                Some(other) => value.push(other),
                None => {}
            }
        } else {
            value.push(c);
        }
    }
    Str { value, span }
}

fn convert_item(pair: Pair<Rule>, base: usize) -> Res<Item> {
    let span = span_of(&pair, base);
    let rule = pair.as_rule();
    let mut inner: Vec<Pair<Rule>> = children(pair).collect();
    let text_item = |inner: &mut Vec<Pair<Rule>>, span: Span| -> TextItem {
        let s = inner.pop().map(|p| string(p, base)).unwrap_or(Str {
            value: String::new(),
            span: span.clone(),
        });
        TextItem { text: s, span }
    };
    Ok(match rule {
        Rule::title_item => Item::Title(text_item(&mut inner, span)),
        Rule::byline_item => Item::Byline(text_item(&mut inner, span)),
        Rule::source_item => Item::Source(text_item(&mut inner, span)),
        Rule::conclusion_item => Item::Conclusion(text_item(&mut inner, span)),
        Rule::accent_item => Item::Accent(text_item(&mut inner, span)),
        Rule::style_item => Item::Style(text_item(&mut inner, span)),
        Rule::locale_item => Item::Locale(text_item(&mut inner, span)),
        Rule::fiscal_item => {
            let month = inner.pop().ok_or_else(|| internal(&span))?;
            Item::Fiscal {
                month: ident(month, base),
                span,
            }
        }
        Rule::plugin_item => {
            let mut it = inner.into_iter().skip(2);
            let path = string(it.next().ok_or_else(|| internal(&span))?, base);
            let _as = it.next();
            let alias = ident(it.next().ok_or_else(|| internal(&span))?, base);
            let pin = it.nth(1).map(|p| string(p, base));
            Item::Plugin(PluginDecl {
                path,
                alias,
                pin,
                span,
            })
        }
        Rule::allow_item => Item::Allow(allow_decl(inner, span, base)?),
        Rule::theme_item => Item::Theme {
            name: ident(inner.remove(1), base),
            span,
        },
        Rule::data_item => {
            let mut it = inner.into_iter().skip(1);
            let name = ident(it.next().ok_or_else(|| internal(&span))?, base);
            let _from = it.next();
            let source = it.next().ok_or_else(|| internal(&span))?;
            let (file, database) = if source.as_rule() == Rule::db_source {
                db_source(source, base).ok_or_else(|| internal(&span))?
            } else {
                (string(source, base), None)
            };
            let mut missing = None;
            let mut columns = Vec::new();
            for p in it {
                match p.as_rule() {
                    Rule::missing_clause => {
                        missing = Some(
                            children(p)
                                .filter(|q| q.as_rule() == Rule::string)
                                .map(|q| string(q, base))
                                .collect(),
                        )
                    }
                    Rule::column_block => {
                        for c in children(p) {
                            let cspan = span_of(&c, base);
                            let mut ci = children(c);
                            let (Some(n), Some(t)) = (ci.next(), ci.next()) else {
                                return Err(internal(&cspan));
                            };
                            columns.push(ColumnDecl {
                                name: ident(n, base),
                                ty: ident(t, base),
                                span: cspan,
                            });
                        }
                    }
                    _ => {}
                }
            }
            Item::Data(DataDecl {
                name,
                file,
                missing,
                columns,
                span,
                database,
            })
        }
        Rule::view_item => {
            let mut it = inner.into_iter().skip(1);
            let name = ident(it.next().ok_or_else(|| internal(&span))?, base);
            let input = ident(it.next().ok_or_else(|| internal(&span))?, base);
            let steps = it.map(|p| convert_step(p, base)).collect::<Res<Vec<_>>>()?;
            Item::View(ViewDecl {
                name,
                input,
                steps,
                span,
            })
        }
        Rule::compare_item => {
            let key = ident(inner.remove(1), base);
            let measure = ident(inner.remove(2), base);
            Item::Compare(CompareDecl { key, measure, span })
        }
        Rule::focus_item => Item::Focus {
            names: inner
                .into_iter()
                .filter(|p| p.as_rule() == Rule::string)
                .map(|p| string(p, base))
                .collect(),
            span,
        },
        Rule::value_item => {
            let mut it = inner.into_iter().skip(1);
            let name = ident(it.next().ok_or_else(|| internal(&span))?, base);
            let expr = convert_vexpr(it.next().ok_or_else(|| internal(&span))?, base)?;
            Item::Value(ValueDecl { name, expr, span })
        }
        Rule::claim_item => {
            let mut it = inner.into_iter().skip(1);
            let condition = convert_vcond(it.next().ok_or_else(|| internal(&span))?, base)?;
            let sentence = string(it.next().ok_or_else(|| internal(&span))?, base);
            Item::Claim(ClaimDecl {
                condition,
                sentence,
                span,
            })
        }
        Rule::frame_item => {
            let mut it = inner.into_iter().skip(1);
            let headline = string(it.next().ok_or_else(|| internal(&span))?, base);
            let stmts = it
                .map(|p| convert_frame_stmt(p, base))
                .collect::<Res<Vec<_>>>()?;
            Item::Frame(FrameDecl {
                headline,
                stmts,
                span,
            })
        }
        _ => return Err(internal(&span)),
    })
}

fn internal(span: &Span) -> ConvertError {
    ConvertError {
        span: span.clone(),
        message:
            "the parser could not read this item (an internal inconsistency; please report it)"
                .into(),
    }
}

fn convert_step(pair: Pair<Rule>, base: usize) -> Res<StepAst> {
    let span = span_of(&pair, base);
    let rule = pair.as_rule();
    let inner: Vec<Pair<Rule>> = children(pair).collect();
    Ok(match rule {
        Rule::keep_step => StepAst::Keep {
            expr: convert_expr(inner[1].clone(), base)?,
            span,
        },
        Rule::by_step => {
            let mut keys = Vec::new();
            let mut aggregates = Vec::new();
            for p in inner.into_iter().skip(1) {
                match p.as_rule() {
                    Rule::ident => keys.push(ident(p, base)),
                    Rule::aggregate => {
                        let aspan = span_of(&p, base);
                        let mut a = children(p);
                        let (Some(n), Some(f)) = (a.next(), a.next()) else {
                            return Err(internal(&aspan));
                        };
                        aggregates.push(AggregateAst {
                            name: ident(n, base),
                            func: ident(f, base),
                            column: a.next().map(|c| ident(c, base)),
                            span: aspan,
                        });
                    }
                    _ => {}
                }
            }
            StepAst::By {
                keys,
                aggregates,
                span,
            }
        }
        Rule::add_step => StepAst::Add {
            name: ident(inner[1].clone(), base),
            expr: convert_expr(inner[2].clone(), base)?,
            span,
        },
        Rule::sort_step => StepAst::Sort {
            keys: inner
                .into_iter()
                .skip(1)
                .map(|k| {
                    let kspan = span_of(&k, base);
                    let mut ki = children(k);
                    let column = ki.next().map(|c| ident(c, base));
                    let descending = ki.next().is_some_and(|d| d.as_str() == "descending");
                    column
                        .map(|column| SortKey {
                            column,
                            descending,
                            span: kspan.clone(),
                        })
                        .ok_or_else(|| internal(&kspan))
                })
                .collect::<Res<Vec<_>>>()?,
            span,
        },
        Rule::columns_step => StepAst::Columns {
            names: inner.into_iter().skip(1).map(|p| ident(p, base)).collect(),
            span,
        },
        Rule::top_step => {
            let n_pair = &inner[1];
            let n_span = span_of(n_pair, base);
            let n = n_pair.as_str().parse::<u64>().map_err(|_| ConvertError {
                span: n_span.clone(),
                message: format!("`{}` is too large for a count", n_pair.as_str()),
            })?;
            StepAst::Top {
                n,
                n_span,
                key: ident(inner[2].clone(), base),
                by: ident(inner[4].clone(), base),
                rest: inner.get(6).cloned().map(|p| string(p, base)),
                span,
            }
        }
        _ => return Err(internal(&span)),
    })
}

fn convert_expr(pair: Pair<Rule>, base: usize) -> Res<Expr> {
    let span = span_of(&pair, base);
    match pair.as_rule() {
        Rule::expr => convert_expr(children(pair).next().ok_or_else(|| internal(&span))?, base),
        Rule::or_expr | Rule::and_expr => {
            let op = if pair.as_rule() == Rule::or_expr {
                BinOp::Or
            } else {
                BinOp::And
            };
            let mut it =
                children(pair).filter(|p| !matches!(p.as_rule(), Rule::kw_and | Rule::kw_or));
            let mut left = convert_expr(it.next().ok_or_else(|| internal(&span))?, base)?;
            for p in it {
                let right = convert_expr(p, base)?;
                let s = left.span().start..right.span().end;
                left = Expr::Binary {
                    op,
                    left: Box::new(left),
                    right: Box::new(right),
                    span: s,
                };
            }
            Ok(left)
        }
        Rule::not_expr => convert_expr(children(pair).next().ok_or_else(|| internal(&span))?, base),
        Rule::negation => {
            let operand = children(pair).nth(1).ok_or_else(|| internal(&span))?;
            Ok(Expr::Not {
                expr: Box::new(convert_expr(operand, base)?),
                span,
            })
        }
        Rule::compare_expr => {
            let mut it = children(pair);
            let left = convert_expr(it.next().ok_or_else(|| internal(&span))?, base)?;
            let Some(tail) = it.next() else {
                return Ok(left);
            };
            match tail.as_rule() {
                Rule::cmp_tail => {
                    let mut t = children(tail);
                    let op = match t.next().map(|p| p.as_str()) {
                        Some("=") | Some("==") => BinOp::Eq,
                        Some("!=") => BinOp::Ne,
                        Some("<") => BinOp::Lt,
                        Some("<=") => BinOp::Le,
                        Some(">") => BinOp::Gt,
                        Some(">=") => BinOp::Ge,
                        _ => return Err(internal(&span)),
                    };
                    let right = convert_expr(t.next().ok_or_else(|| internal(&span))?, base)?;
                    Ok(Expr::Binary {
                        op,
                        left: Box::new(left),
                        right: Box::new(right),
                        span,
                    })
                }
                Rule::in_tail => {
                    let mut negated = false;
                    let mut list = Vec::new();
                    for p in children(tail) {
                        match p.as_rule() {
                            Rule::kw_not => negated = true,
                            Rule::kw_in => {}
                            _ => list.push(convert_expr(p, base)?),
                        }
                    }
                    Ok(Expr::In {
                        expr: Box::new(left),
                        list,
                        negated,
                        span,
                    })
                }
                _ => Err(internal(&span)),
            }
        }
        Rule::sum_expr | Rule::product => {
            let mut it = children(pair);
            let mut left = convert_expr(it.next().ok_or_else(|| internal(&span))?, base)?;
            while let (Some(op), Some(r)) = (it.next(), it.next()) {
                let op = match op.as_str() {
                    "+" => BinOp::Add,
                    "-" => BinOp::Sub,
                    "*" => BinOp::Mul,
                    _ => BinOp::Div,
                };
                let right = convert_expr(r, base)?;
                let s = left.span().start..right.span().end;
                left = Expr::Binary {
                    op,
                    left: Box::new(left),
                    right: Box::new(right),
                    span: s,
                };
            }
            Ok(left)
        }
        Rule::unary => {
            let parts: Vec<Pair<Rule>> = children(pair).collect();
            let negs = parts
                .iter()
                .filter(|p| p.as_rule() == Rule::neg_sign)
                .count();
            let atom = parts.into_iter().last().ok_or_else(|| internal(&span))?;
            let mut e = convert_expr(atom, base)?;
            for _ in 0..negs {
                e = Expr::Neg {
                    expr: Box::new(e),
                    span: span.clone(),
                };
            }
            Ok(e)
        }
        Rule::number => {
            let value: f64 = pair.as_str().parse().map_err(|_| ConvertError {
                span: span.clone(),
                message: format!("`{}` is not a number", pair.as_str()),
            })?;
            if !value.is_finite() {
                return Err(ConvertError {
                    span,
                    message: "this number is too large".into(),
                });
            }
            Ok(Expr::Number { value, span })
        }
        Rule::string => Ok(Expr::Text(string(pair, base))),
        Rule::ident => Ok(Expr::Column(ident(pair, base))),
        _ => Err(internal(&span)),
    }
}

/// Convert a value expression (`vexpr` and below).
fn convert_vexpr(pair: Pair<Rule>, base: usize) -> Res<VExpr> {
    let span = span_of(&pair, base);
    match pair.as_rule() {
        Rule::vexpr | Rule::vterm => {
            let mut it = children(pair);
            let mut left = convert_vexpr(it.next().ok_or_else(|| internal(&span))?, base)?;
            while let (Some(op), Some(r)) = (it.next(), it.next()) {
                let op = match op.as_str() {
                    "+" => BinOp::Add,
                    "-" => BinOp::Sub,
                    "*" => BinOp::Mul,
                    _ => BinOp::Div,
                };
                let right = convert_vexpr(r, base)?;
                let s = left.span().start..right.span().end;
                left = VExpr::Binary {
                    op,
                    left: Box::new(left),
                    right: Box::new(right),
                    span: s,
                };
            }
            Ok(left)
        }
        Rule::vunary => {
            let parts: Vec<Pair<Rule>> = children(pair).collect();
            let negs = parts
                .iter()
                .filter(|p| p.as_rule() == Rule::neg_sign)
                .count();
            let atom = parts.into_iter().last().ok_or_else(|| internal(&span))?;
            let mut e = convert_vexpr(atom, base)?;
            for _ in 0..negs {
                e = VExpr::Neg {
                    expr: Box::new(e),
                    span: span.clone(),
                };
            }
            Ok(e)
        }
        Rule::number => match convert_expr(pair, base)? {
            Expr::Number { value, span } => Ok(VExpr::Number { value, span }),
            _ => Err(internal(&span)),
        },
        Rule::ident => Ok(VExpr::Name(ident(pair, base))),
        Rule::call => {
            let mut it = children(pair);
            let func = ident(it.next().ok_or_else(|| internal(&span))?, base);
            let mut args = Vec::new();
            for a in it {
                if a.as_rule() == Rule::selection {
                    let sspan = span_of(&a, base);
                    let mut si = children(a);
                    let view = ident(si.next().ok_or_else(|| internal(&sspan))?, base);
                    let mut sel = Selection {
                        view,
                        column: None,
                        by: None,
                        filter: None,
                        span: sspan.clone(),
                    };
                    for part in si {
                        match part.as_rule() {
                            Rule::ident => sel.column = Some(ident(part, base)),
                            Rule::by_part => {
                                sel.by = children(part).nth(1).map(|p| ident(p, base));
                            }
                            Rule::where_part => {
                                let e = children(part).nth(1).ok_or_else(|| internal(&sspan))?;
                                sel.filter = Some(convert_expr(e, base)?);
                            }
                            _ => {}
                        }
                    }
                    args.push(CallArg::Selection(sel));
                } else {
                    args.push(CallArg::Value(convert_vexpr(a, base)?));
                }
            }
            Ok(VExpr::Call { func, args, span })
        }
        _ => Err(internal(&span)),
    }
}

/// Convert a condition over values (`vcond` and below).
fn convert_vcond(pair: Pair<Rule>, base: usize) -> Res<VCond> {
    let span = span_of(&pair, base);
    match pair.as_rule() {
        Rule::vcond | Rule::vnot => {
            convert_vcond(children(pair).next().ok_or_else(|| internal(&span))?, base)
        }
        Rule::vor | Rule::vand => {
            let is_or = pair.as_rule() == Rule::vor;
            let mut it =
                children(pair).filter(|p| !matches!(p.as_rule(), Rule::kw_and | Rule::kw_or));
            let mut left = convert_vcond(it.next().ok_or_else(|| internal(&span))?, base)?;
            for p in it {
                let right = convert_vcond(p, base)?;
                let s = left.span().start..right.span().end;
                let (l, r) = (Box::new(left), Box::new(right));
                left = if is_or {
                    VCond::Or {
                        left: l,
                        right: r,
                        span: s,
                    }
                } else {
                    VCond::And {
                        left: l,
                        right: r,
                        span: s,
                    }
                };
            }
            Ok(left)
        }
        Rule::vnegation => {
            let operand = children(pair).nth(1).ok_or_else(|| internal(&span))?;
            Ok(VCond::Not {
                cond: Box::new(convert_vcond(operand, base)?),
                span,
            })
        }
        Rule::vcompare => {
            let mut it = children(pair);
            let left = convert_vexpr(it.next().ok_or_else(|| internal(&span))?, base)?;
            let tail = it.next().ok_or_else(|| internal(&span))?;
            let is_about = tail.as_rule() == Rule::about_tail;
            let parts: Vec<Pair<Rule>> = children(tail).collect();
            if is_about {
                // [about, vexpr, within, tolerance]
                let right =
                    convert_vexpr(parts.get(1).cloned().ok_or_else(|| internal(&span))?, base)?;
                let tol = parts.get(3).cloned().ok_or_else(|| internal(&span))?;
                let tspan = span_of(&tol, base);
                let mut ti = children(tol);
                let amount = match ti.next().map(|n| convert_expr(n, base)).transpose()? {
                    Some(Expr::Number { value, .. }) => value,
                    _ => return Err(internal(&tspan)),
                };
                let relative = ti.next().is_some();
                Ok(VCond::About {
                    left,
                    right,
                    tolerance: Tolerance {
                        amount: if relative { amount / 100.0 } else { amount },
                        relative,
                        span: tspan,
                    },
                    span,
                })
            } else {
                let op = match parts.first().map(|p| p.as_str()) {
                    Some("=") | Some("==") => BinOp::Eq,
                    Some("!=") => BinOp::Ne,
                    Some("<") => BinOp::Lt,
                    Some("<=") => BinOp::Le,
                    Some(">") => BinOp::Gt,
                    Some(">=") => BinOp::Ge,
                    _ => return Err(internal(&span)),
                };
                let right =
                    convert_vexpr(parts.get(1).cloned().ok_or_else(|| internal(&span))?, base)?;
                Ok(VCond::Compare {
                    op,
                    left,
                    right,
                    span,
                })
            }
        }
        _ => Err(internal(&span)),
    }
}

/// A position along x: a quoted time or a number.
fn position(pair: Pair<Rule>, base: usize) -> Res<Position> {
    let span = span_of(&pair, base);
    let p = children(pair).next().ok_or_else(|| internal(&span))?;
    match p.as_rule() {
        Rule::string => Ok(Position::Text(string(p, base))),
        _ => {
            let value = p
                .as_str()
                .parse::<f64>()
                .ok()
                .filter(|x| x.is_finite())
                .ok_or_else(|| ConvertError {
                    span: span.clone(),
                    message: format!("`{}` is not a number", p.as_str()),
                })?;
            Ok(Position::Number { value, span })
        }
    }
}

fn allow_decl(inner: Vec<Pair<Rule>>, span: Span, base: usize) -> Res<AllowDecl> {
    let mut it = inner.into_iter().skip(1);
    let rule = ident(it.next().ok_or_else(|| internal(&span))?, base);
    let reason = string(it.next().ok_or_else(|| internal(&span))?, base);
    Ok(AllowDecl { rule, reason, span })
}

fn targets(pair: Pair<Rule>, base: usize) -> Targets {
    let span = span_of(&pair, base);
    let first = children(pair.clone()).next();
    match first.as_ref().map(|p| p.as_rule()) {
        Some(Rule::kw_all) => Targets::All(span),
        Some(Rule::kw_none) => Targets::None(span),
        Some(Rule::kw_focus) => Targets::Focus(span),
        _ => {
            let items: Vec<(Str, Option<Ident>)> = children(pair)
                .map(|item| {
                    let mut it = children(item);
                    let name = it.next().map(|p| string(p, base));
                    let column = it.nth(1).map(|p| ident(p, base));
                    (name, column)
                })
                .filter_map(|(n, c)| n.map(|n| (n, c)))
                .collect();
            if items.iter().any(|(_, c)| c.is_some()) {
                Targets::Cells(
                    items
                        .into_iter()
                        .map(|(n, c)| {
                            let col = c.unwrap_or_else(|| Ident {
                                name: String::new(),
                                span: n.span.clone(),
                            });
                            (n, col)
                        })
                        .collect(),
                )
            } else {
                Targets::Names(items.into_iter().map(|(n, _)| n).collect())
            }
        }
    }
}

fn convert_frame_stmt(pair: Pair<Rule>, base: usize) -> Res<FrameStmt> {
    let span = span_of(&pair, base);
    let rule = pair.as_rule();
    let inner: Vec<Pair<Rule>> = children(pair).collect();
    let last_string = |inner: &[Pair<Rule>]| {
        inner
            .iter()
            .rev()
            .find(|p| p.as_rule() == Rule::string)
            .cloned()
            .map(|p| string(p, base))
            .ok_or_else(|| internal(&span))
    };
    Ok(match rule {
        Rule::chart_stmt => {
            let form = match inner[0].as_str() {
                "line" => ChartForm::Line,
                "bars" => ChartForm::Bars,
                "dots" => ChartForm::Dots,
                "scatter" => ChartForm::Scatter,
                "pie" => ChartForm::Pie,
                _ => ChartForm::Table,
            };
            let view = ident(inner[1].clone(), base);
            let mut opts = Vec::new();
            for o in inner.into_iter().skip(2) {
                let ospan = span_of(&o, base);
                let mut oi = children(o);
                let name = match oi.next().map(|p| p.as_str().to_string()).as_deref() {
                    Some("x") => OptName::X,
                    Some("y") => OptName::Y,
                    Some("series") => OptName::Series,
                    Some("category") => OptName::Category,
                    Some("value") => OptName::Value,
                    Some("ordered") => OptName::Ordered,
                    Some("horizontal") => OptName::Horizontal,
                    Some("vertical") => OptName::Vertical,
                    Some("stack") => OptName::Stack,
                    Some("group") => OptName::Group,
                    Some("label") => OptName::Label,
                    Some("fit") => OptName::Fit,
                    _ => return Err(internal(&ospan)),
                };
                opts.push(ChartOpt {
                    name,
                    column: oi.next().map(|c| ident(c, base)),
                    span: ospan,
                });
            }
            FrameStmt::Chart(ChartStmt {
                form,
                view,
                opts,
                span,
            })
        }
        Rule::axis_title_stmt => FrameStmt::AxisTitle {
            axis: if inner[0].as_str() == "x" {
                AxisName::X
            } else {
                AxisName::Y
            },
            text: last_string(&inner)?,
            span,
        },
        Rule::show_stmt | Rule::hide_stmt | Rule::spotlight_stmt => {
            let t = targets(inner[1].clone(), base);
            match rule {
                Rule::show_stmt => FrameStmt::Show { targets: t, span },
                Rule::hide_stmt => FrameStmt::Hide { targets: t, span },
                _ => FrameStmt::Spotlight { targets: t, span },
            }
        }
        Rule::frame_allow => FrameStmt::Allow(allow_decl(inner, span, base)?),
        Rule::draw_stmt => {
            let mut names: Vec<Ident> = Vec::new();
            let mut opts = Vec::new();
            for p in inner.into_iter().skip(1) {
                match p.as_rule() {
                    Rule::ident => names.push(ident(p, base)),
                    Rule::draw_opt => {
                        let mut o = children(p);
                        if let (Some(k), Some(v)) = (o.next(), o.next()) {
                            opts.push((ident(k, base), ident(v, base)));
                        }
                    }
                    _ => {}
                }
            }
            let (plugin, form, view) = match names.len() {
                2 => (names.remove(0), None, names.remove(0)),
                3 => (names.remove(0), Some(names.remove(0)), names.remove(0)),
                _ => return Err(internal(&span)),
            };
            FrameStmt::Draw(DrawStmt {
                plugin,
                form,
                view,
                opts,
                span,
            })
        }
        Rule::figure_stmt => {
            let strings: Vec<Str> = inner.into_iter().skip(1).map(|p| string(p, base)).collect();
            let [text, caption] = <[Str; 2]>::try_from(strings).map_err(|_| internal(&span))?;
            FrameStmt::Figure {
                text,
                caption,
                span,
            }
        }
        Rule::split_stmt => {
            let mut it = inner.into_iter().skip(1);
            let key = ident(it.next().ok_or_else(|| internal(&span))?, base);
            let mut split = SplitStmt {
                key,
                descending: None,
                by: None,
                order: Vec::new(),
                trim: false,
                free: false,
                span: span.clone(),
            };
            for opt in it {
                let parts: Vec<Pair<Rule>> = children(opt).collect();
                match parts.first().map(|p| p.as_rule()) {
                    Some(Rule::direction) => {
                        split.descending = Some(parts[0].as_str() == "descending")
                    }
                    Some(Rule::kw_by) => split.by = parts.get(1).cloned().map(|p| ident(p, base)),
                    Some(Rule::kw_order) => {
                        split.order = parts.into_iter().skip(1).map(|p| string(p, base)).collect()
                    }
                    Some(Rule::kw_trim) => split.trim = true,
                    Some(Rule::kw_free) => split.free = true,
                    _ => {}
                }
            }
            FrameStmt::Split(split)
        }
        Rule::unfold_stmt => FrameStmt::Unfold {
            order: inner.into_iter().skip(1).map(|p| string(p, base)).collect(),
            span,
        },
        Rule::callout_stmt => {
            let mut it = inner.into_iter().skip(1);
            let at = position(it.next().ok_or_else(|| internal(&span))?, base)?;
            let rest: Vec<Pair<Rule>> = it.collect();
            let text = rest
                .iter()
                .rev()
                .find(|p| p.as_rule() == Rule::string)
                .cloned()
                .map(|p| string(p, base))
                .ok_or_else(|| internal(&span))?;
            let on = if rest.iter().any(|p| p.as_rule() == Rule::kw_on) {
                rest.iter()
                    .find(|p| p.as_rule() == Rule::string)
                    .cloned()
                    .map(|p| string(p, base))
            } else {
                None
            };
            FrameStmt::Callout { at, on, text, span }
        }
        Rule::band_stmt => {
            let parts: Vec<Pair<Rule>> = inner.into_iter().skip(1).collect();
            let from = position(parts.first().cloned().ok_or_else(|| internal(&span))?, base)?;
            let to = position(parts.get(2).cloned().ok_or_else(|| internal(&span))?, base)?;
            let text = parts.get(3).cloned().map(|p| string(p, base));
            FrameStmt::Band {
                from,
                to,
                text,
                span,
            }
        }
        Rule::reference_stmt => {
            let v = inner.get(1).ok_or_else(|| internal(&span))?;
            let value = v
                .as_str()
                .parse::<f64>()
                .ok()
                .filter(|x| x.is_finite())
                .ok_or_else(|| ConvertError {
                    span: span_of(v, base),
                    message: format!("`{}` is not a number", v.as_str()),
                })?;
            let text = string(inner.get(2).cloned().ok_or_else(|| internal(&span))?, base);
            FrameStmt::Reference { value, text, span }
        }
        Rule::label_ends_stmt => FrameStmt::LabelEnds { span },
        Rule::gridlines_stmt => FrameStmt::Gridlines {
            on: !inner.iter().any(|p| p.as_rule() == Rule::kw_off),
            span,
        },
        Rule::range_stmt => {
            let axis = if inner[0].as_str() == "x" {
                AxisName::X
            } else {
                AxisName::Y
            };
            let num = |p: &Pair<Rule>| -> Res<f64> {
                p.as_str()
                    .parse::<f64>()
                    .ok()
                    .filter(|v| v.is_finite())
                    .ok_or_else(|| ConvertError {
                        span: span_of(p, base),
                        message: format!("`{}` is not a number", p.as_str()),
                    })
            };
            let from = num(inner.get(2).ok_or_else(|| internal(&span))?)?;
            let to = num(inner.get(4).ok_or_else(|| internal(&span))?)?;
            FrameStmt::Range {
                axis,
                from,
                to,
                span,
            }
        }
        Rule::takeaway_stmt => FrameStmt::Takeaway {
            text: last_string(&inner)?,
            span,
        },
        Rule::notes_stmt => FrameStmt::Notes {
            text: last_string(&inner)?,
            span,
        },
        _ => return Err(internal(&span)),
    })
}

#[cfg(test)]
mod tests {
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
        // ((1 + (2 * 3)) - (-x))
        let Expr::Binary {
            op: BinOp::Sub,
            left,
            right,
            span,
        } = expr
        else {
            panic!("{expr:?}")
        };
        assert_eq!(*span, 21..35);
        assert!(matches!(**right, Expr::Neg { .. }));
        let Expr::Binary {
            op: BinOp::Add,
            right: r2,
            ..
        } = &**left
        else {
            panic!()
        };
        assert!(matches!(**r2, Expr::Binary { op: BinOp::Mul, .. }));
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
        let Expr::Binary {
            op: BinOp::Or,
            right,
            ..
        } = expr
        else {
            panic!()
        };
        assert!(matches!(**right, Expr::Binary { op: BinOp::And, .. }));
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
}

/// Split a string literal of the story into literal text and quoted values
/// (`{EXPRESSION}` or `{EXPRESSION:FORMAT}`); `{{` and `}}` are literal
/// braces. Spans point into the story source. Strings whose span does not
/// cover a literal in `source` (e.g. made up by tests) are taken literally.
pub fn parse_template(source: &Arc<Source>, s: &Str) -> Result<Template, Vec<Diagnostic>> {
    let text = source.text.as_str();
    let inner_ok = s.span.end >= s.span.start + 2
        && s.span.end <= text.len()
        && text.is_char_boundary(s.span.start + 1)
        && text.is_char_boundary(s.span.end - 1)
        && text[s.span.start..].starts_with('"');
    if !inner_ok {
        return Ok(Template {
            parts: vec![TextPart::Literal(s.value.clone())],
        });
    }
    let start = s.span.start + 1;
    let raw = &text[start..s.span.end - 1];
    let mut parts = Vec::new();
    let mut diags = Vec::new();
    let mut lit = String::new();
    let mut chars = raw.char_indices().peekable();
    while let Some((i, c)) = chars.next() {
        match c {
            '\\' => match chars.next() {
                Some((_, 'n')) => lit.push('\n'),
                Some((_, 't')) => lit.push('\t'),
                Some((_, other)) => lit.push(other),
                None => {}
            },
            '{' if chars.peek().is_some_and(|(_, n)| *n == '{') => {
                chars.next();
                lit.push('{');
            }
            '}' if chars.peek().is_some_and(|(_, n)| *n == '}') => {
                chars.next();
                lit.push('}');
            }
            '}' => diags.push(
                Diagnostic::error("template", "a `}` without its `{`")
                    .at(source, start + i..start + i + 1, "unmatched")
                    .help("write `}}` for a literal brace"),
            ),
            '{' => {
                let Some(close) = raw[i + 1..].find('}').map(|o| i + 1 + o) else {
                    diags.push(
                        Diagnostic::error("template", "a `{` without its `}`")
                            .at(source, start + i..start + i + 1, "unmatched")
                            .help("close the quoted value with `}`, or write `{{` for a literal brace"),
                    );
                    break;
                };
                let body = &raw[i + 1..close];
                let body_start = start + i + 1;
                // skip to after the closing brace
                while chars.peek().is_some_and(|(j, _)| *j <= close) {
                    chars.next();
                }
                if body.contains('\\') || body.contains('"') {
                    diags.push(
                        Diagnostic::error(
                            "template",
                            "quoted strings cannot appear inside `{...}`",
                        )
                        .at(
                            source,
                            body_start..body_start + body.len(),
                            "in this quoted value",
                        )
                        .help("define a `value` with the selection and quote its name"),
                    );
                    continue;
                }
                match StoryParser::parse(Rule::quote, body) {
                    Ok(mut pairs) => {
                        let Some(q) = pairs.next() else { continue };
                        let mut expr = None;
                        let mut format = FormatSpec::default();
                        for p in children(q) {
                            match p.as_rule() {
                                Rule::vexpr => match convert_vexpr(p, body_start) {
                                    Ok(e) => expr = Some(e),
                                    Err(e) => diags.push(e.into_diag(source)),
                                },
                                Rule::format_spec => format = format_spec(p.as_str()),
                                _ => {}
                            }
                        }
                        if let Some(expr) = expr {
                            if !lit.is_empty() {
                                parts.push(TextPart::Literal(std::mem::take(&mut lit)));
                            }
                            parts.push(TextPart::Quote {
                                expr,
                                format,
                                span: start + i..start + close + 1,
                            });
                        }
                    }
                    Err(err) => {
                        let at = match err.location {
                            InputLocation::Pos(p) => p,
                            InputLocation::Span((s, _)) => s,
                        };
                        let shifted = Source::file(source.name.clone(), source.text.clone());
                        let mut d = syntax_error(&shifted, body_start, at, &err.variant);
                        d.message = format!("in a quoted value: {}", d.message);
                        if let Some(p) = d.primary.as_mut() {
                            p.source = Arc::clone(source);
                        }
                        diags.push(d.note("inside braces write a value name, arithmetic, and an optional format such as `:.1` or `:+.0%`"));
                    }
                }
            }
            _ => lit.push(c),
        }
    }
    if !lit.is_empty() {
        parts.push(TextPart::Literal(lit));
    }
    if diags.is_empty() {
        Ok(Template { parts })
    } else {
        Err(diags)
    }
}

fn format_spec(spec: &str) -> FormatSpec {
    let mut f = FormatSpec {
        sign: spec.starts_with('+'),
        ..FormatSpec::default()
    };
    match spec {
        "quarter" => f.style = NumberStyle::Quarter,
        "year" => f.style = NumberStyle::Year,
        _ => {}
    }
    if f.style != NumberStyle::Plain {
        return f;
    }
    let rest = spec.trim_start_matches('+');
    let (digits, style) = match rest.strip_suffix('%') {
        Some(d) => (d, NumberStyle::Percent),
        None => match rest.strip_suffix('k') {
            Some(d) => (d, NumberStyle::Compact),
            None => (rest, NumberStyle::Plain),
        },
    };
    f.style = style;
    f.decimals = digits
        .strip_prefix('.')
        .and_then(|d| d.parse().ok())
        .map(|d: usize| d.min(12));
    f
}

#[cfg(test)]
mod value_tests {
    use super::*;

    fn parse_str(text: &str) -> (StoryAst, Vec<Diagnostic>) {
        parse(&Source::file("v.cresc", text))
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
        let VExpr::Call { func, args, .. } = &v.expr else {
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
        let VExpr::Call { args, .. } = &t.expr else {
            panic!()
        };
        let CallArg::Selection(sel) = &args[0] else {
            panic!()
        };
        assert_eq!(sel.by.as_ref().unwrap().name, "month");
        let Item::Value(c) = &ast.items[3] else {
            panic!()
        };
        let VExpr::Call { args, .. } = &c.expr else {
            panic!()
        };
        let CallArg::Selection(sel) = &args[0] else {
            panic!()
        };
        assert!(sel.column.is_none() && sel.filter.is_some());
        let Item::Value(r) = &ast.items[4] else {
            panic!()
        };
        let VExpr::Call { args, .. } = &r.expr else {
            panic!()
        };
        assert!(matches!(args[0], CallArg::Value(VExpr::Binary { .. })));
        let Item::Claim(cl) = &ast.items[5] else {
            panic!()
        };
        assert!(matches!(cl.condition, VCond::And { .. }));
        assert_eq!(cl.sentence.value, "over twice as many");
        let Item::Claim(about) = &ast.items[6] else {
            panic!()
        };
        let VCond::About { tolerance, .. } = &about.condition else {
            panic!()
        };
        assert!(tolerance.relative && (tolerance.amount - 0.05).abs() < 1e-12);
        let Item::Claim(abs) = &ast.items[7] else {
            panic!()
        };
        let VCond::About { tolerance, .. } = &abs.condition else {
            panic!()
        };
        assert!(!tolerance.relative && (tolerance.amount - 0.5).abs() < 1e-12);
    }

    #[test]
    fn a_claim_needs_a_comparison_and_a_sentence() {
        let (_, d) = parse_str("claim multiple \"x\"\n");
        assert_eq!(d.len(), 1);
        let (_, d) = parse_str("claim multiple > 2\n");
        assert_eq!(d.len(), 1);
        assert!(d[0].message.contains("quoted string"), "{}", d[0].message);
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
        assert!(d.is_empty(), "{d:?}");
        let Item::Title(t) = &ast.items[0] else {
            panic!()
        };
        parse_template(&src, &t.text)
    }

    #[test]
    fn templates_split_text_and_quotes() {
        let text = r#"story "Now {multiple:.1}× the riders ({share:+.0%}), {{braces}} \"q\" {n}""#;
        let t = template_of(text).unwrap();
        assert_eq!(t.parts.len(), 6, "{t:#?}");
        assert_eq!(t.parts[0], TextPart::Literal("Now ".into()));
        let TextPart::Quote { format, span, .. } = &t.parts[1] else {
            panic!()
        };
        assert_eq!(format.decimals, Some(1));
        assert_eq!(&text[span.clone()], "{multiple:.1}");
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
    }

    #[test]
    fn template_errors_are_located() {
        let errs = template_of(r#"story "a {b + } c""#).unwrap_err();
        assert_eq!(errs.len(), 1);
        let (_, line, col) = errs[0].location().unwrap();
        assert_eq!((line, col), (1, 15));
        let errs = template_of(r#"story "x } y""#).unwrap_err();
        assert_eq!(errs[0].location().unwrap().2, 10);
        let errs = template_of(r#"story "x { y""#).unwrap_err();
        assert!(errs[0].message.contains("without its `}`"));
        let errs = template_of(r#"story "{x:q}""#).unwrap_err();
        assert!(
            errs[0].message.contains("quoted value"),
            "{}",
            errs[0].message
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
}

/// The byte ranges of every keyword (`kw_*` rule) the parser matches in a
/// story that parses, in order; empty when it does not parse. For tools
/// that check an editor's highlighting against the grammar.
pub fn keyword_spans(text: &str) -> Vec<std::ops::Range<usize>> {
    match StoryParser::parse(Rule::file, text) {
        Ok(pairs) => pairs
            .flatten()
            .filter(|p| format!("{:?}", p.as_rule()).starts_with("kw_"))
            .map(|p| p.as_span().start()..p.as_span().end())
            .collect(),
        Err(_) => Vec::new(),
    }
}
