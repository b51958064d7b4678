//! The clarity lint: checks a finished plan (every frame, the theme and the
//! story's texts) for clutter, distortion, contrast and colour-vision
//! safety, and reports located diagnostics with a suggested fix.
//!
//! One rule per file in `rules/`. Every rule has its documentation in
//! `rule_docs.txt`: a one-line summary, a story excerpt the rule flags
//! (before), the same excerpt fixed (after), and why (what the audience
//! misreads, with its source); `crescendo explain RULE` prints exactly that
//! text.

mod docs;
mod rules;

/// The colour science the rules use (moved to `crescendo-look`).
pub use crescendo_look::colour;

use std::sync::Arc;

use crescendo_diag::{closest, Diagnostic, Severity, Source};
use crescendo_frame::anchors::{Allowance, Anchors, Span};
use crescendo_frame::DeckPlan;
use crescendo_look::{DisplayList, Theme};

pub use rules::{CONFUSABLE_THRESHOLD, RULES};

/// The parts of a rule's documentation after its summary.
pub struct Doc {
    /// A story excerpt the rule flags: lines of `tests/lint/RULE/fires.cresc`
    /// in order (a test holds this), with comments of its own; `...`
    /// stands for lines left out.
    pub before: &'static str,
    /// The same excerpt fixed: lines of `tests/lint/RULE/passes.cresc`.
    pub after: &'static str,
    /// What the audience misreads, and the perception research or common
    /// practice behind it.
    pub why: &'static str,
}

/// One lint rule.
pub struct Rule {
    /// Short, our own, describes the flagged pattern.
    pub name: &'static str,
    pub severity: Severity,
    pub check: fn(&Input, &mut Vec<Finding>),
}

impl Rule {
    /// A rule; its documentation is its part of `rule_docs.txt`.
    pub const fn new(
        name: &'static str,
        severity: Severity,
        check: fn(&Input, &mut Vec<Finding>),
    ) -> Rule {
        Rule {
            name,
            severity,
            check,
        }
    }

    /// One line.
    pub fn summary(&self) -> &'static str {
        docs::entry(self.name).summary
    }

    /// The parts of the documentation after the summary.
    pub fn doc(&self) -> &'static Doc {
        &docs::entry(self.name).doc
    }
}

/// What the rules look at.
pub struct Input<'a> {
    pub src: &'a Arc<Source>,
    pub plan: &'a DeckPlan,
    pub anchors: &'a Anchors,
    /// The theme the deck is drawn with (accent override applied).
    pub theme: &'a Theme,
    /// The laid-out frames, one per frame of `plan` in order (the
    /// renderer's display lists), for the rules about geometry. A frame
    /// without one (empty, or a shorter list) is skipped by those rules.
    pub displays: &'a [DisplayList],
    /// Counts of rows below this are flagged by `small-counts` (default 5).
    pub small_counts: f64,
}

/// One problem a rule found.
pub struct Finding {
    /// Index into `plan.frames`, or `None` for the whole story.
    pub frame: Option<usize>,
    pub span: Span,
    pub label: String,
    pub message: String,
    /// The suggested fix.
    pub fix: String,
}

/// How to lint.
#[derive(Clone, Copy, Debug, Default)]
pub struct Options {
    /// `--strict`: report warnings as errors (for CI); advice stays advice.
    pub strict: bool,
}

/// Look a rule up by name.
pub fn rule(name: &str) -> Option<&'static Rule> {
    RULES.iter().copied().find(|r| r.name == name)
}

/// Names rules once had, with the rule's name now: `allow` and `explain`
/// refuse them and name the new one.
pub static RENAMED: &[(&str, &str)] = &[
    ("no-conclusion", "conclusion-missing"),
    ("text-contrast", "text-faint"),
    ("marks-contrast", "marks-faint"),
    ("stack-middle", "stack-spotlight-floats"),
];

/// The diagnostic for a rule name no rule has (`explain` and `allow`):
/// the rule a renamed name stands for, or the closest name.
pub fn unknown_rule(name: &str) -> Diagnostic {
    let d = Diagnostic::error(
        "unknown-rule",
        format!("there is no lint rule named `{name}`"),
    )
    .note("`crescendo explain` lists the rules");
    if let Some((_, now)) = RENAMED.iter().find(|(old, _)| *old == name) {
        return d.help(format!("the rule is named `{now}`"));
    }
    match closest(name, RULES.iter().map(|r| r.name)) {
        Some(s) => d.help(format!("did you mean `{s}`?")),
        None => d,
    }
}

fn severity_name(s: Severity) -> &'static str {
    match s {
        Severity::Error => "error",
        Severity::Warning => "warning",
        Severity::Advice => "advice",
    }
}

/// The documentation of a rule, as `crescendo explain` prints it.
pub fn explain(name: &str) -> Option<String> {
    let r = rule(name)?;
    Some(format!(
        "{} ({})\n{}\n\nBefore\n{}\n\nAfter\n{}\n\nWhy\n{}\n",
        r.name,
        severity_name(r.severity),
        r.summary(),
        indent(r.doc().before),
        indent(r.doc().after),
        indent(r.doc().why),
    ))
}

/// The rule reference as Markdown (`crates/lint/RULES.md` is this text; a
/// test keeps the file in step with the rules' own documentation).
pub fn reference_markdown() -> String {
    let mut out = String::from(
        "# Lint rules\n\n\
         <!-- Generated from the rules' own documentation (crates/lint/src/rule_docs.txt) by\n\
         `UPDATE_DOCS=1 cargo test --test docs`; do not edit by hand. -->\n\n\
         `crescendo build` and `crescendo check` run every rule on every frame. Errors stop the\n\
         build; warnings and advice are printed (`--strict` lets warnings stop it too, for\n\
         CI). Accept a finding by saying why: `allow RULE \"reason\"` for the whole story,\n\
         or the same line inside one frame. `crescendo explain RULE` prints one rule.\n\n\
         Each rule below shows a story excerpt it flags (before), the same excerpt fixed\n\
         (after), and why it matters: what the audience misreads, and the source.\n\n\
         Some chart forms mislead decisions, and the rules say so plainly: bars cut off from\n\
         zero exaggerate differences (`bars-off-zero`, an error); small multiples on unequal\n\
         scales make a small panel look as large as a big one (`panels-own-scales`); an axis\n\
         that moves between frames of a build-up fakes a change (`axes-shift`). crescendo has\n\
         no chart form with two value axes at all: with two scales on one plot, the author\n\
         decides where the lines cross.\n\n\
         | Rule | Severity | Flags |\n|---|---|---|\n",
    );
    for r in RULES.iter() {
        out.push_str(&format!(
            "| [`{}`](#{}) | {} | {} |\n",
            r.name,
            r.name,
            severity_name(r.severity),
            r.summary()
        ));
    }
    for r in RULES.iter() {
        out.push_str(&format!(
            "\n## {}\n\n*{}* — {}.\n\n**Before**\n\n```text\n{}\n```\n\n\
             **After**\n\n```text\n{}\n```\n\n**Why.** {}\n",
            r.name,
            severity_name(r.severity),
            r.summary(),
            r.doc().before,
            r.doc().after,
            one_paragraph(r.doc().why),
        ));
    }
    out
}

/// Join hard-wrapped doc lines into one Markdown paragraph.
fn one_paragraph(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// One line per rule: name, severity, summary.
pub fn list() -> String {
    let width = RULES.iter().map(|r| r.name.len()).max().unwrap_or(0);
    RULES
        .iter()
        .map(|r| {
            format!(
                "{:width$}  {:8}  {}\n",
                r.name,
                severity_name(r.severity),
                r.summary()
            )
        })
        .collect()
}

fn indent(text: &str) -> String {
    text.lines()
        .map(|l| format!("  {l}"))
        .collect::<Vec<_>>()
        .join("\n")
}

/// Run every rule, apply the story's and the frames' allowances, and turn
/// the findings into diagnostics.
pub fn lint(input: &Input, options: &Options) -> Vec<Diagnostic> {
    let mut out = Vec::new();
    let mut used: Vec<(Option<usize>, usize)> = Vec::new();
    let check_allow = |a: &Allowance, out: &mut Vec<Diagnostic>| -> bool {
        if rule(&a.rule).is_none() {
            out.push(unknown_rule(&a.rule).at(input.src, a.rule_span.clone(), "unknown rule"));
            return false;
        }
        if a.reason.trim().is_empty() {
            out.push(
                Diagnostic::error("allow-without-reason", format!("allowing `{}` needs a reason", a.rule))
                    .at(input.src, a.rule_span.clone(), "say why this is acceptable here")
                    .help("write the reason a reviewer would need, e.g. `allow bars-off-zero \"index values, 100 = 2019\"`"),
            );
            return false;
        }
        true
    };
    let story_allows: Vec<bool> = input
        .anchors
        .allows
        .iter()
        .map(|a| check_allow(a, &mut out))
        .collect();
    let frame_allows: Vec<Vec<bool>> = input
        .anchors
        .frames
        .iter()
        .map(|f| f.allows.iter().map(|a| check_allow(a, &mut out)).collect())
        .collect();

    for r in RULES {
        let mut findings = Vec::new();
        (r.check)(input, &mut findings);
        for f in findings {
            // a frame's own allowance first, then the story's
            let frame_allow = f.frame.and_then(|i| {
                let fa = input.anchors.frames.get(i)?;
                fa.allows
                    .iter()
                    .enumerate()
                    .position(|(k, a)| a.rule == r.name && frame_allows[i][k])
                    .map(|k| (Some(i), k))
            });
            let story_allow = || {
                input
                    .anchors
                    .allows
                    .iter()
                    .enumerate()
                    .position(|(k, a)| a.rule == r.name && story_allows[k])
                    .map(|k| (None, k))
            };
            if let Some(key) = frame_allow.or_else(story_allow) {
                if !used.contains(&key) {
                    used.push(key);
                }
                continue;
            }
            let severity = match r.severity {
                Severity::Warning if options.strict => Severity::Error,
                s => s,
            };
            let mut d = Diagnostic::error(r.name, f.message).at(input.src, f.span, f.label);
            d.severity = severity;
            if let Some(i) = f.frame {
                if let Some(fp) = input.plan.frames.get(i) {
                    d = d.note(format!("in frame {} \"{}\"", fp.number, fp.headline));
                }
            }
            d = d
                .note(format!(
                    "`crescendo explain {}` says why; `allow {} \"reason\"` accepts it",
                    r.name, r.name
                ))
                .help(f.fix);
            out.push(d);
        }
    }
    // allowances that allowed nothing, the story's then each frame's
    let story = (None, "story", &input.anchors.allows, &story_allows);
    let frames = (input.anchors.frames.iter().enumerate())
        .map(|(i, fa)| (Some(i), "frame", &fa.allows, &frame_allows[i]));
    for (frame, place, allows, active) in std::iter::once(story).chain(frames) {
        for (k, a) in allows.iter().enumerate() {
            if active[k] && !used.contains(&(frame, k)) {
                out.push(
                    Diagnostic::warning(
                        "unused-allow",
                        format!("`{}` finds nothing to allow in this {place}", a.rule),
                    )
                    .at(input.src, a.rule_span.clone(), "nothing to allow")
                    .help("remove the allowance"),
                );
            }
        }
    }
    if options.strict {
        for d in &mut out {
            if d.severity == Severity::Warning {
                d.severity = Severity::Error;
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::BTreeSet;

    #[test]
    fn at_least_fifteen_rules_with_unique_names() {
        assert!(RULES.len() >= 15, "{}", RULES.len());
        let names: BTreeSet<&str> = RULES.iter().map(|r| r.name).collect();
        assert_eq!(names.len(), RULES.len(), "rule names are unique");
    }

    #[test]
    fn rule_docs_has_one_part_per_rule() {
        let mut names: Vec<&str> = RULES.iter().map(|r| r.name).collect();
        names.sort_unstable();
        assert_eq!(docs::names(), names);
    }

    #[test]
    fn every_rule_is_documented() {
        for r in RULES {
            assert!(
                r.name.chars().all(|c| c.is_ascii_lowercase() || c == '-') && r.name.len() <= 24,
                "{}: short lowercase name",
                r.name
            );
            for (part, text) in [
                ("summary", r.summary()),
                ("before", r.doc().before),
                ("after", r.doc().after),
                ("why", r.doc().why),
            ] {
                assert!(text.trim().len() >= 10, "{}: `{part}` is too thin", r.name);
            }
            assert!(!r.summary().contains('\n'), "{}: one line", r.name);
            assert_ne!(r.doc().before, r.doc().after, "{}", r.name);
            let text = explain(r.name).unwrap();
            let at = |h: &str| text.find(&format!("\n\n{h}\n"));
            assert!(
                at("Before") < at("After") && at("After") < at("Why") && at("Before").is_some(),
                "{}: {text}",
                r.name
            );
        }
        assert!(explain("no-such-rule").is_none());
    }

    #[test]
    fn renamed_rules_name_the_rule_now() {
        for (old, now) in RENAMED {
            assert!(rule(old).is_none(), "{old}");
            assert!(rule(now).is_some(), "{now}");
            let d = unknown_rule(old);
            assert_eq!(
                d.help.as_deref(),
                Some(&*format!("the rule is named `{now}`"))
            );
        }
        let d = unknown_rule("bars-of-zero");
        assert_eq!(d.help.as_deref(), Some("did you mean `bars-off-zero`?"));
    }
}
