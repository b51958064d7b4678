//! Texts that quote values: `"now {multiple to 1 decimal}× as many"`. A
//! text is read once, at parse time, into its value (escapes resolved) and
//! its parts: literal pieces and quoted values (`{EXPRESSION}`, with an
//! optional format in words: `as STYLE`, `to N decimals`); `\{` and `\}`
//! are literal braces.

use std::sync::Arc;

use crescendo_diag::{Diagnostic, Source};
use pest::iterators::Pair;
use pest::Parser;

use super::errors::{syntax_error, Context};
use super::{children, location, nesting, Conv, Rule, StoryParser};
use crate::ast::*;

/// Read the characters `raw` of a string literal at `span` (quotes
/// included) of `source`. Problems with its quoted values go to `diags`;
/// a text with problems keeps the parts that could be read.
pub(super) fn text(
    source: &Arc<Source>,
    raw: &str,
    span: Span,
    diags: &mut Vec<Diagnostic>,
) -> Text {
    let start = span.start + 1;
    let mut value = String::with_capacity(raw.len());
    let mut parts = Vec::new();
    let mut lit = String::new();
    let mut chars = raw.char_indices().peekable();
    while let Some((i, c)) = chars.next() {
        match c {
            '\\' => {
                let decoded = match chars.next() {
                    Some((_, 'n')) => '\n',
                    Some((_, 't')) => '\t',
                    Some((_, other)) => other,
                    None => continue,
                };
                lit.push(decoded);
                value.push(decoded);
            }
            '{' | '}' if chars.peek().is_some_and(|(_, n)| *n == c) => {
                // a doubled brace is no escape here: say which one is
                chars.next();
                diags.push(doubled_brace(source, start + i, c));
                lit.push(c);
                value.push(c);
            }
            '}' => {
                diags.push(
                    Diagnostic::error("template", "a `}` without its `{`")
                        .at(source, start + i..start + i + 1, "unmatched")
                        .help("write `\\}` for a literal brace"),
                );
                value.push(c);
            }
            '{' => {
                let Some(close) = raw[i + 1..].find('}').map(|o| i + 1 + o) else {
                    diags.push(
                        Diagnostic::error("template", "a `{` without its `}`")
                            .at(source, start + i..start + i + 1, "unmatched")
                            .help("close the quoted value with `}`, or write `\\{` for a literal brace"),
                    );
                    value.push_str(&super::unescape(&raw[i..]));
                    break;
                };
                // skip to after the closing brace
                while chars.peek().is_some_and(|(j, _)| *j <= close) {
                    chars.next();
                }
                let body = &raw[i + 1..close];
                let Some((expr, format, written)) = quote(source, body, start + i + 1, diags)
                else {
                    value.push_str(&raw[i..=close]);
                    continue;
                };
                // the value keeps what is quoted, not how it is formatted
                // (a frame's file name is made from its headline's value)
                value.push('{');
                value.push_str(source.text.get(written.clone()).unwrap_or(""));
                value.push('}');
                if !lit.is_empty() {
                    parts.push(TextPart::Literal(std::mem::take(&mut lit)));
                }
                parts.push(TextPart::Quote {
                    expr,
                    format,
                    span: start + i..start + close + 1,
                    written,
                });
            }
            _ => {
                lit.push(c);
                value.push(c);
            }
        }
    }
    if !lit.is_empty() {
        parts.push(TextPart::Literal(lit));
    }
    Text {
        value,
        span,
        template: Template { parts },
    }
}

/// The error for `{{` or `}}` at `at` (`brace` is the doubled character).
fn doubled_brace(source: &Arc<Source>, at: usize, brace: char) -> Diagnostic {
    Diagnostic::error(
        "template",
        format!("`{brace}{brace}` is not a literal brace"),
    )
    .at(source, at..at + 2, "a doubled brace")
    .help(format!("write `\\{brace}` for a literal `{brace}`"))
}

/// The expression, format and expression span of a quoted value whose text
/// between the braces is `body`, at `body_start` in the story; `None`
/// after reporting what is wrong with it.
fn quote(
    source: &Arc<Source>,
    body: &str,
    body_start: usize,
    diags: &mut Vec<Diagnostic>,
) -> Option<(Expr, FormatSpec, Span)> {
    if body.contains('\\') || body.contains('"') {
        diags.push(
            Diagnostic::error("template", "quoted strings cannot appear inside `{...}`")
                .at(
                    source,
                    body_start..body_start + body.len(),
                    "in this quoted value",
                )
                .help("define a `value` with the selection and quote its name"),
        );
        return None;
    }
    if let Some(colon) = body.find(':') {
        diags.push(colon_format(source, body, body_start, colon));
        return None;
    }
    // the same cap as for the rest of the story (whose check skips strings)
    if let Some(d) = nesting::check(source, body_start..body_start + body.len()) {
        diags.push(d);
        return None;
    }
    let q = match StoryParser::parse(Rule::quote, body) {
        Ok(mut pairs) => pairs.next()?,
        Err(err) => {
            let at = location(&err.location);
            let mut d = syntax_error(source, body_start, at, &err.variant, Context::Value);
            // inside braces the end of the text read is the closing brace
            let message = d
                .message
                .replacen("unknown keyword", "unknown format word", 1)
                .replace("the end of the statement", "`}`")
                .replace("the end of the file", "`}`");
            d.message = format!("in a quoted value: {message}");
            diags.push(d.note(
                "inside braces write a value name or arithmetic, then a format in words if \
                 you want one (`as percent`, `to 1 decimal`); `\\{` writes a literal brace",
            ));
            return None;
        }
    };
    let mut conv = Conv::new(source, body_start);
    let mut expr = None;
    let mut written = body_start..body_start;
    let mut format = FormatSpec::default();
    let mut digits_at = 0..0;
    let mut ok = true;
    for p in children(q) {
        match p.as_rule() {
            Rule::expr => {
                // without the blank space pest counts into the rule
                let start = conv.span_of(&p).start;
                written = start..start + p.as_str().trim_end().len();
                match conv.expr(p) {
                    Ok(e) => expr = Some(e),
                    Err(e) => diags.push(e.into_diag(source)),
                }
            }
            Rule::quote_style => ok &= style(&conv, p, &mut format, diags),
            Rule::quote_digits => {
                let start = conv.span_of(&p).start;
                digits_at = start..start + p.as_str().trim_end().len();
                ok &= digits(&conv, p, &mut format, diags);
            }
            _ => {}
        }
    }
    diags.append(&mut conv.diags);
    if ok && format.decimals.is_some() && is_period(format.style) {
        diags.push(
            Diagnostic::error("format", "a quarter or a year has no decimals")
                .at(source, digits_at, "no decimals here")
                .help("drop `to ... decimals`"),
        );
        return None;
    }
    Some((expr?, format, written)).filter(|_| ok)
}

fn is_period(style: NumberStyle) -> bool {
    matches!(style, NumberStyle::Quarter | NumberStyle::Year)
}

/// Read `as STYLE` into `format`; false after reporting `signed` on a
/// quarter or a year.
fn style(
    conv: &Conv,
    pair: Pair<Rule>,
    format: &mut FormatSpec,
    diags: &mut Vec<Diagnostic>,
) -> bool {
    let mut signed = None;
    for w in children(pair) {
        match w.as_rule() {
            Rule::fw_signed => signed = Some(conv.span_of(&w)),
            Rule::fw_percent => format.style = NumberStyle::Percent,
            Rule::fw_compact => format.style = NumberStyle::Compact,
            Rule::fw_quarter => format.style = NumberStyle::Quarter,
            Rule::fw_year => format.style = NumberStyle::Year,
            _ => {}
        }
    }
    format.sign = signed.is_some();
    match signed {
        Some(at) if is_period(format.style) => {
            let word = if format.style == NumberStyle::Quarter {
                "quarter"
            } else {
                "year"
            };
            diags.push(
                Diagnostic::error("format", format!("a {word} has no sign"))
                    .at(conv.source, at, "no sign for a period")
                    .help(format!("write `as {word}`")),
            );
            false
        }
        _ => true,
    }
}

/// Read `to N decimals` into `format`; false after reporting too many.
fn digits(
    conv: &Conv,
    pair: Pair<Rule>,
    format: &mut FormatSpec,
    diags: &mut Vec<Diagnostic>,
) -> bool {
    let Some(n) = children(pair).find(|p| p.as_rule() == Rule::integer) else {
        return false;
    };
    match n.as_str().parse::<usize>() {
        Ok(d) if d <= MAX_DECIMALS => {
            format.decimals = Some(d);
            true
        }
        _ => {
            diags.push(
                Diagnostic::error(
                    "format",
                    format!(
                        "a quoted value shows at most {MAX_DECIMALS} decimals, not {}",
                        n.as_str()
                    ),
                )
                .at(conv.source, conv.span_of(&n), "too many decimals")
                .help(format!("write `to {MAX_DECIMALS} decimals` or fewer")),
            );
            false
        }
    }
}

/// The error for a format written after a colon (`{share:.1%}`), caret on
/// the colon and what follows it; its help spells the same format in words
/// when the characters read as one.
fn colon_format(source: &Arc<Source>, body: &str, body_start: usize, colon: usize) -> Diagnostic {
    let expr = body[..colon].trim();
    let spec = body[colon + 1..].trim();
    let end = body_start + body.trim_end().len();
    let d = Diagnostic::error("format", "a quoted value's format is written in words").at(
        source,
        body_start + colon..end,
        "not a format",
    );
    match symbols(spec) {
        Some(f) => d.help(format!("write `{{{expr}{}}}`", f.words())),
        None => d.help(format!(
            "write the format after the value: `{{{expr} as percent}}`, `{{{expr} to 1 decimal}}`, \
             `{{{expr} as signed percent to 0 decimals}}`, `{{{expr} as compact}}`, `{{{expr} as quarter}}`"
        )),
    }
}

/// The format meant by characters after a colon (`+.1%`, `.0`, `k`,
/// `quarter`), to suggest the same format in words; `None` when they mean
/// none.
fn symbols(spec: &str) -> Option<FormatSpec> {
    let mut f = FormatSpec::default();
    match spec {
        "quarter" => f.style = NumberStyle::Quarter,
        "year" => f.style = NumberStyle::Year,
        _ => {
            let rest = spec.strip_prefix('+').unwrap_or(spec);
            f.sign = rest.len() < spec.len();
            let (digits, style) = match rest.strip_suffix('%') {
                Some(d) => (d, NumberStyle::Percent),
                None => match rest.strip_suffix('k') {
                    Some(d) => (d, NumberStyle::Compact),
                    None => (rest, NumberStyle::Plain),
                },
            };
            f.style = style;
            if !digits.is_empty() {
                let n = digits.strip_prefix('.')?;
                if n.is_empty() || !n.bytes().all(|b| b.is_ascii_digit()) {
                    return None;
                }
                f.decimals = Some(n.parse().ok()?);
            }
        }
    }
    Some(f)
}
