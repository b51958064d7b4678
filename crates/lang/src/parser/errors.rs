//! Syntax errors in words: what was expected (in the terms of the place
//! the error is in), what was found, and a suggestion for a misspelt
//! keyword.

use std::sync::Arc;

use crescendo_diag::{Diagnostic, Source};
use pest::error::ErrorVariant;

use super::{leading_trivia, Rule, TOP_KEYWORDS};

/// The kind of expression a place holds: it decides how an expected
/// expression is named and which operators are worth suggesting. The
/// grammar has one expression rule set for all of them.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Context {
    /// Over the cells of a row: a view step, a selection's `where`.
    Row,
    /// Over values: a `value`, a function's arguments, a quoted value.
    Value,
    /// A claim's condition over values.
    Condition,
}

impl Context {
    /// The context of the expressions of the item `text` starts with.
    pub(super) fn of_item(text: &str) -> Context {
        let word: String = text
            .chars()
            .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
            .collect();
        match word.as_str() {
            "value" => Context::Value,
            "claim" => Context::Condition,
            _ => Context::Row,
        }
    }

    /// The context at byte `at` of `text`, whose expressions start in
    /// `self`: after `where` up to the end of the selection a row
    /// condition, inside a function's parentheses a value.
    fn at(self, text: &str, at: usize) -> Context {
        // each open parenthesis: (context inside it, context after a comma)
        let mut levels = vec![(self, self)];
        let b = text.as_bytes();
        let mut after_name = false;
        let mut i = 0;
        while i < at.min(b.len()) {
            let c = b[i];
            let word_len = b[i..]
                .iter()
                .take_while(|c| c.is_ascii_alphanumeric() || **c == b'_')
                .count();
            if word_len > 0 {
                let word = &text[i..i + word_len];
                let keyword = matches!(
                    word,
                    "and" | "or" | "not" | "in" | "where" | "about" | "within" | "by" | "claim"
                );
                if word == "where" {
                    if let Some(top) = levels.last_mut() {
                        top.0 = Context::Row;
                    }
                }
                after_name = !keyword && !c.is_ascii_digit();
                i += word_len;
                continue;
            }
            match c {
                b'"' => {
                    i += 1;
                    while i < b.len() && b[i] != b'"' && b[i] != b'\n' {
                        i += if b[i] == b'\\' { 2 } else { 1 };
                    }
                }
                b'#' => {
                    while i < b.len() && b[i] != b'\n' {
                        i += 1;
                    }
                }
                b'(' => {
                    let outer = levels.last().map_or(self, |l| l.0);
                    let inner = match outer {
                        Context::Row => Context::Row,
                        _ if after_name => Context::Value,
                        other => other,
                    };
                    levels.push((inner, inner));
                }
                b')' if levels.len() > 1 => {
                    levels.pop();
                }
                b',' => {
                    if let Some(top) = levels.last_mut() {
                        top.0 = top.1;
                    }
                }
                _ => {}
            }
            if !matches!(c, b' ' | b'\t') {
                after_name = false;
            }
            i += 1;
        }
        levels.last().map_or(self, |l| l.0)
    }

    /// Whether `rule` is worth naming as expected here: operators the
    /// grammar accepts everywhere but this place does not allow are left
    /// out (the planner would refuse them).
    fn suggests(self, rule: Rule) -> bool {
        match self {
            Context::Row => !matches!(rule, Rule::call_open | Rule::kw_about | Rule::about_tail),
            Context::Value => !matches!(
                rule,
                Rule::kw_and
                    | Rule::kw_or
                    | Rule::cmp_op
                    | Rule::cmp_tail
                    | Rule::kw_about
                    | Rule::about_tail
                    | Rule::in_tail
                    | Rule::kw_in
            ),
            Context::Condition => !matches!(rule, Rule::in_tail | Rule::kw_in),
        }
    }
}

/// What a rule looks like to a reader of an error message, in `context`.
fn describe(rule: Rule, context: Context) -> Option<String> {
    let name = format!("{rule:?}");
    if let Some(kw) = name
        .strip_prefix("kw_")
        .or_else(|| name.strip_prefix("fw_"))
    {
        return Some(format!("`{kw}`"));
    }
    let logic = matches!(
        rule,
        Rule::expr
            | Rule::or_expr
            | Rule::and_expr
            | Rule::not_expr
            | Rule::negation
            | Rule::compare_expr
    );
    let arithmetic = matches!(
        rule,
        Rule::sum_expr | Rule::product | Rule::unary | Rule::neg_sign | Rule::call
    );
    if logic || arithmetic {
        return Some(
            match context {
                Context::Row => "an expression",
                Context::Condition if logic => "a condition over values",
                _ => "a value expression",
            }
            .to_string(),
        );
    }
    Some(
        match rule {
            Rule::ident => "a name",
            Rule::string => "a quoted string",
            Rule::number | Rule::integer => "a number",
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
            // items are parsed one at a time: the end of the input is the
            // end of the statement, not of the file
            Rule::EOI => "the end of the statement",
            Rule::dot => "`.`",
            Rule::cmp_tail | Rule::about_tail if context == Context::Condition => {
                "a comparison (`>`, `<`, `=`, ... or `about`)"
            }
            Rule::tolerance => "a tolerance such as `5%` or `0.1`",
            Rule::quote_style => "a format such as `as percent`",
            Rule::quote_digits => "`to N decimals`",
            Rule::eq => "`=`",
            Rule::colon => "`:`",
            Rule::open_brace => "`{`",
            Rule::close_brace => "`}`",
            Rule::open_paren | Rule::call_open => "`(`",
            Rule::close_paren => "`)`",
            Rule::targets => "`all`, `none`, `focus` or quoted names",
            Rule::chart_opt | Rule::opt_name => {
                "a chart option (x, y, series, category, value, ordered, heading)"
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
            "heading",
        ],
        Rule::targets => &["all", "none", "focus"],
        _ => {
            let name = format!("{rule:?}");
            return name
                .strip_prefix("kw_")
                .or_else(|| name.strip_prefix("fw_"))
                .map(|k| vec![k.to_string()])
                .unwrap_or_default();
        }
    };
    words.iter().map(|w| w.to_string()).collect()
}

/// What was found at byte `at` of `text`, in words.
fn found_at(text: &str, at: usize, word: &str) -> String {
    let rest_of_line = text[at.min(text.len())..].split('\n').next().unwrap_or("");
    if text[at.min(text.len())..].trim().is_empty() {
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
    }
}

/// The diagnostic for pest's error `variant` at byte `at` of the piece of
/// `source` that starts at `base`, whose expressions start in `context`.
pub(super) fn syntax_error(
    source: &Arc<Source>,
    base: usize,
    at: usize,
    variant: &ErrorVariant<Rule>,
    context: Context,
) -> Diagnostic {
    let text = &source.text[base..];
    let context = context.at(text, at);
    if context == Context::Condition {
        if let Some((string, what)) = sentence_taken_as_operand(text, at) {
            // `claim a > 1 and "sentence"`: the sentence was read as the
            // missing operand; say what is missing there
            let start = base + string;
            return Diagnostic::error("syntax", format!("expected {what}, found `\"`")).at(
                source,
                start..start + 1,
                "not expected here",
            );
        }
    }
    let word: String = text[at..]
        .chars()
        .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
        .collect();
    let rest_of_line = text[at.min(text.len())..].split('\n').next().unwrap_or("");
    let found = found_at(text, at, &word);
    let (expected, keywords): (Vec<String>, Vec<String>) = match variant {
        ErrorVariant::ParsingError { positives, .. } => {
            let positives: Vec<Rule> = positives
                .iter()
                .copied()
                .filter(|r| context.suggests(*r))
                .collect();
            let mut exp: Vec<String> = positives
                .iter()
                .filter_map(|r| describe(*r, context))
                .collect();
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
    let start = base + at;
    if found == "`,`" && in_add_step(text, at) {
        return Diagnostic::error(
            "syntax",
            "`add` makes one column per step, found `,`".to_string(),
        )
        .at(source, start..start + 1, "a second column here")
        .help("write each new column as a step of its own: `| add a = ... | add b = ...`");
    }
    let (code, message) = if expected.is_empty() {
        ("syntax", format!("{found} is not expected here"))
    } else if is_unknown_word && word.chars().next().is_some_and(|c| c.is_ascii_alphabetic()) {
        (
            "unknown-keyword",
            format!("unknown keyword `{word}`: expected {expected_text}"),
        )
    } else {
        ("syntax", format!("expected {expected_text}, found {found}"))
    };
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
        d = d.suggest(&word, keywords.iter().map(String::as_str));
    }
    d
}

/// Whether byte `at` of `text` lies in a view's `add` step (after the last
/// `|` before it, outside strings, the step starts with `add`).
fn in_add_step(text: &str, at: usize) -> bool {
    let before = &text[..at.min(text.len())];
    let mut step = None;
    let mut in_string = false;
    for (i, c) in before.char_indices() {
        match c {
            '"' => in_string = !in_string,
            '|' if !in_string => step = Some(i + 1),
            _ => {}
        }
    }
    step.is_some_and(|s| {
        let rest = before[s..].trim_start();
        rest.strip_prefix("add")
            .is_some_and(|r| r.starts_with(char::is_whitespace))
    })
}

/// When a claim's last string was read as an operand (where a condition or
/// a value was missing) and the sentence is then missing at the end of the
/// line at `at`: the string's offset and what was missing in its place.
fn sentence_taken_as_operand(text: &str, at: usize) -> Option<(usize, &'static str)> {
    let line_start = text[..at.min(text.len())].rfind('\n').map_or(0, |i| i + 1);
    let rest_of_line = text[at.min(text.len())..].split('\n').next().unwrap_or("");
    if !rest_of_line.trim().is_empty() && !rest_of_line.trim_start().starts_with('#') {
        return None;
    }
    let line = &text[line_start..at.min(text.len())];
    // the last string of the line, which must end it
    let mut last = None;
    let mut i = 0;
    let b = line.as_bytes();
    while i < b.len() {
        match b[i] {
            b'"' => {
                let start = i;
                i += 1;
                while i < b.len() && b[i] != b'"' {
                    i += if b[i] == b'\\' { 2 } else { 1 };
                }
                last = Some((start, i + 1));
            }
            b'#' => break,
            _ => {}
        }
        i += 1;
    }
    let (start, end) = last?;
    if !line
        .get(end..)
        .is_some_and(|t| t.trim().is_empty() || t.trim_start().starts_with('#'))
    {
        return None;
    }
    let before = line[..start].trim_end();
    let word = before
        .rsplit(|c: char| !(c.is_ascii_alphanumeric() || c == '_'))
        .next()
        .unwrap_or("");
    let what = if matches!(word, "and" | "or" | "not" | "claim") || before.ends_with('(') {
        "a condition over values"
    } else if word == "about" || before.ends_with(['=', '<', '>', '+', '-', '*', '/']) {
        "a value expression"
    } else {
        return None;
    };
    Some((line_start + start, what))
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
