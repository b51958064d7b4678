//! Texts that quote values: `"now {multiple:.1}× as many"`. A text is read
//! once, at parse time, into its value (escapes resolved) and its parts:
//! literal pieces and quoted values (`{EXPRESSION}` or
//! `{EXPRESSION:FORMAT}`); `{{` and `}}` are literal braces.

use std::sync::Arc;

use crescendo_diag::{Diagnostic, Source};
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
                chars.next();
                lit.push(c);
                value.push(c);
                value.push(c);
            }
            '}' => {
                diags.push(
                    Diagnostic::error("template", "a `}` without its `{`")
                        .at(source, start + i..start + i + 1, "unmatched")
                        .help("write `}}` for a literal brace"),
                );
                value.push(c);
            }
            '{' => {
                let Some(close) = raw[i + 1..].find('}').map(|o| i + 1 + o) else {
                    diags.push(
                        Diagnostic::error("template", "a `{` without its `}`")
                            .at(source, start + i..start + i + 1, "unmatched")
                            .help("close the quoted value with `}`, or write `{{` for a literal brace"),
                    );
                    value.push_str(&super::unescape(&raw[i..]));
                    break;
                };
                // skip to after the closing brace
                while chars.peek().is_some_and(|(j, _)| *j <= close) {
                    chars.next();
                }
                value.push_str(&raw[i..=close]);
                let body = &raw[i + 1..close];
                if let Some((expr, format)) = quote(source, body, start + i + 1, diags) {
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

/// The expression and format of a quoted value whose text between the
/// braces is `body`, at `body_start` in the story; `None` after reporting
/// what is wrong with it.
fn quote(
    source: &Arc<Source>,
    body: &str,
    body_start: usize,
    diags: &mut Vec<Diagnostic>,
) -> Option<(Expr, FormatSpec)> {
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
            d.message = format!("in a quoted value: {}", d.message);
            diags.push(d.note(
                "inside braces write a value name, arithmetic, and an optional format such as `:.1` or `:+.0%`",
            ));
            return None;
        }
    };
    let mut conv = Conv::new(source, body_start);
    let mut expr = None;
    let mut format = FormatSpec::default();
    for p in children(q) {
        match p.as_rule() {
            Rule::expr => match conv.expr(p) {
                Ok(e) => expr = Some(e),
                Err(e) => diags.push(e.into_diag(source)),
            },
            Rule::format_spec => {
                let at = body_start + p.as_span().start();
                match format_spec(p.as_str()) {
                    Ok(f) => format = f,
                    Err(digits) => {
                        let start = at + digits.start;
                        diags.push(too_many_decimals(source, start..at + digits.end));
                        return None;
                    }
                }
            }
            _ => {}
        }
    }
    diags.append(&mut conv.diags);
    Some((expr?, format))
}

/// The error for a `.N` asking for more than [`MAX_DECIMALS`] decimals
/// (its digits at `span`).
fn too_many_decimals(source: &Arc<Source>, span: Span) -> Diagnostic {
    let digits = source.text.get(span.clone()).unwrap_or("");
    Diagnostic::error(
        "format",
        format!("a quoted value shows at most {MAX_DECIMALS} decimals, not {digits}"),
    )
    .at(source, span, "too many decimals")
    .help(format!("write `.{MAX_DECIMALS}` or fewer"))
}

/// A format as written after the `:` of a quoted value; `Err` with the
/// byte range of the digits of a `.N` above [`MAX_DECIMALS`] (or too large
/// to read).
fn format_spec(spec: &str) -> Result<FormatSpec, std::ops::Range<usize>> {
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
        return Ok(f);
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
    if let Some(d) = digits.strip_prefix('.') {
        let start = spec.len() - rest.len() + 1;
        match d.parse::<usize>() {
            Ok(n) if n <= MAX_DECIMALS => f.decimals = Some(n),
            _ => return Err(start..start + d.len()),
        }
    }
    Ok(f)
}
