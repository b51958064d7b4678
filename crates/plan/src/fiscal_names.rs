//! `fiscal names year "GJ ", quarter "Q", half "HJ"`: what a story calls its
//! fiscal periods. A part the story leaves out keeps its locale's name
//! (`crescendo_data::locale::fiscal_names_of`); the names are checked here,
//! before planning, like the locale and the fiscal year.

use std::sync::Arc;

use crescendo_data::locale::{self, FiscalNames, FiscalNamesOwned};
use crescendo_diag::{Diagnostic, Source};
use crescendo_lang::ast::{self, FiscalPart, Item};

/// The longest name a period may have (a tick label has little room).
const LONGEST: usize = 12;

/// The story's fiscal names over its locale's, or `None` when it names
/// none (or named them wrongly: each mistake is a located error in
/// `diags`). `fiscal`: whether the story has a fiscal year at all.
pub(crate) fn read(
    src: &Arc<Source>,
    story: &ast::StoryAst,
    locale: Option<&str>,
    fiscal: bool,
    diags: &mut Vec<Diagnostic>,
) -> Option<&'static FiscalNames> {
    let mut given: Vec<&ast::FiscalName> = Vec::new();
    let mut first: Option<&ast::Span> = None;
    for item in &story.items {
        let Item::FiscalNames(ast::FiscalNamesDecl { names, span }) = item else {
            continue;
        };
        if let Some(first) = first {
            diags.push(
                Diagnostic::error("duplicate", "the story names its fiscal periods twice")
                    .at(src, span.clone(), "second one here")
                    .also(src, first.clone(), "first one here")
                    .help("write every name in one `fiscal names` statement"),
            );
            continue;
        }
        first = Some(span);
        if !fiscal {
            diags.push(
                Diagnostic::warning(
                    "fiscal-names-unused",
                    "fiscal names without a fiscal year are never shown",
                )
                .at(src, span.clone(), "no `fiscal year starts` in this story")
                .help(
                    "say when the year starts, e.g. `fiscal year starts July`, or remove this line",
                ),
            );
        }
        for n in names {
            if let Some(before) = given.iter().find(|g| g.part == n.part) {
                diags.push(
                    Diagnostic::error("duplicate", format!("the {} is named twice", n.part.word()))
                        .at(src, n.span.clone(), "second name here")
                        .also(src, before.span.clone(), "first name here"),
                );
                continue;
            }
            match problem(n) {
                Some((label, help)) => diags.push(
                    Diagnostic::error(
                        "bad-fiscal-name",
                        match n.text.value.is_empty() {
                            true => {
                                format!("an empty name cannot name the fiscal {}", n.part.word())
                            }
                            false => format!(
                                "`{}` cannot name the fiscal {}",
                                n.text.value,
                                n.part.word()
                            ),
                        },
                    )
                    .at(src, n.text.span.clone(), label)
                    .help(help),
                ),
                None => given.push(n),
            }
        }
    }
    if given.is_empty() {
        return None;
    }
    let language = locale
        .and_then(|t| locale::Locale::new(t).ok())
        .map(|l| l.language().to_string());
    let base = locale::fiscal_names_of(language.as_deref().unwrap_or("en"));
    let pick = |part: FiscalPart, default: &str| {
        given
            .iter()
            .find(|g| g.part == part)
            .map_or(default.to_string(), |g| g.text.value.clone())
    };
    Some(locale::intern_names(FiscalNamesOwned {
        year: pick(FiscalPart::Year, base.year),
        quarter: pick(FiscalPart::Quarter, base.quarter),
        half: pick(FiscalPart::Half, base.half),
    }))
}

/// What is wrong with a name, as a caret label and a help line.
fn problem(n: &ast::FiscalName) -> Option<(&'static str, String)> {
    let text = &n.text.value;
    if text.trim().is_empty() && n.part != FiscalPart::Year {
        return Some((
            "empty",
            format!(
                "a {} needs a name before its number, e.g. `{} \"{}\"`",
                n.part.word(),
                n.part.word(),
                if n.part == FiscalPart::Quarter {
                    "Q"
                } else {
                    "H"
                }
            ),
        ));
    }
    if text.chars().count() > LONGEST {
        return Some((
            "too long",
            format!("a fiscal name has at most {LONGEST} characters: it is written on every tick"),
        ));
    }
    if text
        .chars()
        .any(|c| c.is_control() || matches!(c, '"' | '\'' | '\\' | '{' | '}'))
    {
        return Some((
            "quotes, braces, backslashes and control characters are not allowed here",
            "write letters, digits, spaces and punctuation such as `.` or `-`".to_string(),
        ));
    }
    None
}
