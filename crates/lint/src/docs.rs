//! The rules' documentation: prose kept in `rule_docs.txt`, one part per
//! rule, so that a rule's file holds its check and the text reads as text.
//! A rule's part starts with `=== NAME`; its summary is the next line, then
//! `--- before`, `--- after` and `--- why`, each followed by its text.

use std::collections::BTreeMap;
use std::sync::LazyLock;

use crate::Doc;

/// A rule's one-line summary and the rest of its documentation.
pub(crate) struct Entry {
    pub summary: &'static str,
    pub doc: Doc,
}

static ENTRIES: LazyLock<BTreeMap<&'static str, Entry>> =
    LazyLock::new(|| parse(include_str!("rule_docs.txt")));

fn parse(text: &'static str) -> BTreeMap<&'static str, Entry> {
    text.split("\n=== ")
        .skip(1)
        .map(|part| {
            let part = part.strip_suffix('\n').unwrap_or(part);
            let cut = |text: &'static str, mark: &str| {
                text.split_once(mark)
                    .unwrap_or_else(|| panic!("rule_docs.txt: `{mark:?}` missing in {part:?}"))
            };
            let (name, rest) = cut(part, "\n");
            let (summary, rest) = cut(rest, "\n--- before\n");
            let (before, rest) = cut(rest, "\n--- after\n");
            let (after, why) = cut(rest, "\n--- why\n");
            let doc = Doc { before, after, why };
            (name, Entry { summary, doc })
        })
        .collect()
}

/// The documentation of the rule called `name`; every rule has a part
/// (a test holds this).
pub(crate) fn entry(name: &str) -> &'static Entry {
    ENTRIES
        .get(name)
        .unwrap_or_else(|| panic!("lint rule `{name}` has no part in rule_docs.txt"))
}

/// The names that have a part, in the file's order of names.
#[cfg(test)]
pub(crate) fn names() -> Vec<&'static str> {
    ENTRIES.keys().copied().collect()
}
