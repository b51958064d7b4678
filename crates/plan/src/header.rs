//! The story's header: title, byline, source note, conclusion, theme,
//! comparison, focus, house style, accent and conventions, each given at
//! most once and checked.

use std::collections::BTreeSet;
use std::sync::Arc;

use crescendo_data::time;
use crescendo_diag::{Diagnostic, Source};
use crescendo_lang::ast::{self, Ident, Item, Str, Text};

use crate::anchors::{Allowance, Anchors};
use crate::context::Ctx;
use crate::model::THEMES;
use crate::scope::Scope;
use crate::tables::Tables;
use crate::values::{Quantity, Resolved};

/// Header values with where they were set (to report duplicates).
#[derive(Default)]
pub(crate) struct Header {
    pub(crate) title: Option<Text>,
    pub(crate) byline: Option<Text>,
    pub(crate) source: Option<Text>,
    pub(crate) theme: Option<Ident>,
    pub(crate) conclusion: Option<Text>,
    pub(crate) compare: Option<ast::CompareDecl>,
    pub(crate) focus: Option<Vec<Str>>,
    pub(crate) accent: Option<String>,
    pub(crate) style: Option<Str>,
}

/// The header's texts with their quoted values resolved.
pub(crate) struct HeaderTexts {
    pub(crate) title: String,
    pub(crate) byline: Option<String>,
    pub(crate) source: Option<Resolved>,
    pub(crate) conclusion: Option<Resolved>,
    pub(crate) theme: String,
}

/// `#RRGGBB`.
fn is_hex_colour(s: &str) -> bool {
    s.len() == 7 && s.starts_with('#') && s[1..].chars().all(|c| c.is_ascii_hexdigit())
}

fn set_once<T>(cx: &mut Ctx, slot: &mut Option<T>, value: T, span: &ast::Span, what: &str) {
    if slot.is_some() {
        let d = cx
            .at(
                "duplicate",
                format!("the story sets its {what} twice"),
                span.clone(),
                "second one here",
            )
            .help("keep one");
        cx.report(d);
    } else {
        *slot = Some(value);
    }
}

/// A text header item (title, byline, source note, conclusion), set once.
fn set_text(cx: &mut Ctx, slot: &mut Option<Text>, t: &ast::TextItem, what: &str) {
    set_once(cx, slot, t.text.clone(), &t.span, what);
}

impl Header {
    /// Take a header item (or a story-wide `allow`); `false` for the other
    /// items.
    pub(crate) fn take(&mut self, cx: &mut Ctx, item: &Item, anchors: &mut Anchors) -> bool {
        match item {
            Item::Title(t) => set_text(cx, &mut self.title, t, "title (`story`)"),
            Item::Byline(t) => set_text(cx, &mut self.byline, t, "byline"),
            Item::Source(t) => set_text(cx, &mut self.source, t, "source note"),
            Item::Conclusion(t) => set_text(cx, &mut self.conclusion, t, "conclusion"),
            Item::Theme { name, span } => {
                set_once(cx, &mut self.theme, name.clone(), span, "theme")
            }
            Item::Compare(c) => set_once(
                cx,
                &mut self.compare,
                c.clone(),
                &c.span,
                "comparison (`compare`)",
            ),
            Item::Focus { names, span } => {
                set_once(cx, &mut self.focus, names.clone(), span, "focus")
            }
            Item::Style(t) => {
                anchors.style = Some(t.text.span.clone());
                set_once(
                    cx,
                    &mut self.style,
                    t.text.clone(),
                    &t.span,
                    "house style (`style`)",
                )
            }
            Item::Allow(a) => anchors.allows.push(Allowance {
                rule: a.rule.name.clone(),
                rule_span: a.rule.span.clone(),
                reason: a.reason.value.clone(),
            }),
            Item::Accent(t) => self.accent(cx, t, anchors),
            // read before planning (`read_conventions`)
            Item::Locale(_) | Item::Fiscal { .. } | Item::FiscalNames(_) => {}
            Item::Data(_)
            | Item::View(_)
            | Item::Value(_)
            | Item::Claim(_)
            | Item::Plugin(_)
            | Item::Frame(_) => return false,
        }
        true
    }

    fn accent(&mut self, cx: &mut Ctx, t: &ast::StrItem, anchors: &mut Anchors) {
        if self.accent.is_some() {
            cx.error(
                "duplicate",
                "the story sets its accent twice",
                t.span.clone(),
                "second one here",
            );
        } else if !is_hex_colour(&t.text.value) {
            let d = cx
                .at(
                    "bad-colour",
                    format!("`{}` is not a colour", t.text.value),
                    t.text.span.clone(),
                    "expected #RRGGBB",
                )
                .help("write the colour as six hex digits, e.g. `accent \"#1D5FA8\"`");
            cx.report(d);
        } else {
            self.accent = Some(t.text.value.to_ascii_uppercase());
            anchors.accent = Some(t.text.span.clone());
        }
    }

    /// Charts fall back to the columns `compare` names, and skip them where
    /// a view lacks them; a name no table has at all is a typo that would
    /// otherwise be ignored without a word.
    pub(crate) fn check_compare(&self, cx: &mut Ctx, tables: &Tables) {
        // Columns of a failed item are unknown: do not guess.
        let Some(c) = self.compare.as_ref().filter(|_| tables.broken.is_empty()) else {
            return;
        };
        let columns: BTreeSet<&str> = tables
            .by_name
            .values()
            .flat_map(|n| n.table.columns.iter().map(|c| c.name.as_str()))
            .collect();
        for id in [&c.key, &c.measure] {
            if columns.contains(id.name.as_str()) {
                continue;
            }
            let mut d = cx
                .at(
                    "unknown-column",
                    format!("no data or view has a column named `{}`", id.name),
                    id.span.clone(),
                    "unknown column",
                )
                .note("`compare KEY by MEASURE` names columns of the views the frames draw");
            d = d.suggest(&id.name, columns.iter().copied());
            cx.report(d);
        }
    }

    /// Resolve the header's texts (they may quote values; the conclusion
    /// can be quoted as `{conclusion}` everywhere after) and check the
    /// title and the theme.
    pub(crate) fn texts(&self, cx: &mut Ctx, scope: &mut Scope) -> HeaderTexts {
        let conclusion = self.conclusion.as_ref().map(|c| scope.text(cx, c));
        if let Some(c) = &conclusion {
            scope
                .values
                .by_name
                .insert("conclusion".into(), Quantity::Text(c.text.clone()));
            scope
                .values
                .deps
                .insert("conclusion".into(), c.depends.clone());
        }
        let source = self.source.as_ref().map(|s| scope.text(cx, s));
        let byline = self.byline.as_ref().map(|b| scope.text(cx, b).text);
        let title = match &self.title {
            Some(t) => scope.text(cx, t).text,
            None => {
                let d = cx
                    .at(
                        "missing-title",
                        "the story has no title",
                        0..0,
                        "expected `story \"...\"` in this file",
                    )
                    .help("add a line like `story \"Riders grew fastest on the Harbour Loop\"`");
                cx.report(d);
                String::new()
            }
        };
        HeaderTexts {
            title,
            byline,
            source,
            conclusion,
            theme: self.theme(cx),
        }
    }

    fn theme(&self, cx: &mut Ctx) -> String {
        match &self.theme {
            None => THEMES[0].to_string(),
            Some(t) if THEMES.contains(&t.name.as_str()) => t.name.clone(),
            Some(t) => {
                let d = cx
                    .at(
                        "unknown-theme",
                        format!("unknown theme `{}`", t.name),
                        t.span.clone(),
                        "not a built-in theme",
                    )
                    .among(&t.name, "built-in themes", THEMES.iter().copied());
                cx.report(d);
                String::new()
            }
        }
    }
}

/// A statement the story may give once, given `again` after `first`.
fn twice(src: &Arc<Source>, message: &str, again: &ast::Span, first: &ast::Span) -> Diagnostic {
    Diagnostic::error("duplicate", message)
        .at(src, again.clone(), "second one here")
        .also(src, first.clone(), "first one here")
}

/// The story's `locale` and `fiscal year starts` statements, checked: an
/// unknown locale or month, or a statement given twice, is an error.
pub(crate) fn read_conventions(
    src: &Arc<Source>,
    story: &ast::StoryAst,
    diags: &mut Vec<Diagnostic>,
) -> (Option<String>, Option<u32>) {
    let mut locale: Option<(String, ast::Span)> = None;
    let mut fiscal: Option<(u32, ast::Span)> = None;
    for item in &story.items {
        match item {
            Item::Locale(t) => {
                if let Some((_, first)) = &locale {
                    let what = "the story sets its locale twice";
                    diags.push(twice(src, what, &t.span, first));
                    continue;
                }
                match crescendo_data::locale::Locale::new(&t.text.value) {
                    Ok(l) => {
                        if crate::sentences::of_language(l.language()).is_none() {
                            diags.push(
                                Diagnostic::warning(
                                    "locale-sentences",
                                    format!(
                                        "crescendo has no sentences in the language of `{}`: descriptions are written in English",
                                        l.tag()
                                    ),
                                )
                                .at(src, t.text.span.clone(), "numbers and dates follow this locale")
                                .note("descriptions (the text a screen reader reads) are written in English, German, French and Spanish"),
                            );
                        }
                        locale = Some((l.tag().to_string(), t.span.clone()));
                    }
                    Err(message) => diags.push(
                        Diagnostic::error("bad-locale", message)
                            .at(src, t.text.span.clone(), "not a locale crescendo knows")
                            .help("write a language and region tag, e.g. `locale \"de-DE\"`, `locale \"fr-FR\"` or `locale \"en-IN\"`"),
                    ),
                }
            }
            Item::Fiscal { month, span } => {
                if let Some((_, first)) = &fiscal {
                    let what = "the story says twice when its year starts";
                    diags.push(twice(src, what, span, first));
                    continue;
                }
                match time::month_from_name(&month.name) {
                    Some(m) => fiscal = Some((m, span.clone())),
                    None => diags.push(
                        Diagnostic::error("bad-month", format!("`{}` is not a month", month.name))
                            .at(src, month.span.clone(), "expected a month's name")
                            .help("write the month in English, e.g. `fiscal year starts July` or `fiscal year starts Apr`"),
                    ),
                }
            }
            _ => {}
        }
    }
    (
        locale.map(|(l, _)| l),
        fiscal.map(|(m, _)| m).filter(|&m| m != 1),
    )
}
