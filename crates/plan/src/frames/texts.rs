//! A frame's texts as resolved: the values they quote, the texts as
//! written, and the value names they depend on (for draft notices).

use std::collections::{BTreeMap, BTreeSet};

use crate::values::Resolved;

/// A frame's resolved texts and what they depend on.
#[derive(Default)]
pub(crate) struct FrameTexts {
    pub(crate) quoted: BTreeMap<String, String>,
    pub(crate) templates: BTreeMap<String, String>,
    pub(crate) depends: BTreeSet<String>,
    /// Each quoted number with its figure.
    pub(crate) numbers: Vec<crate::numbers::Quoted>,
}

impl FrameTexts {
    pub(crate) fn add(&mut self, field: &str, r: &Resolved) {
        for (k, v) in &r.quoted {
            self.quoted.entry(k.clone()).or_insert_with(|| v.clone());
        }
        if let Some(t) = &r.template {
            self.templates.insert(field.to_string(), t.clone());
        }
        self.depends.extend(r.depends.iter().cloned());
        self.numbers.extend(r.numbers.iter().cloned());
    }
}
