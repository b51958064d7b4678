//! The story's tables by name: each data item and view as it was read or
//! computed, and what the loads learnt that later messages cite.

use std::collections::{BTreeMap, BTreeSet};
use std::sync::Arc;

use crescendo_data::{self as data, ColType, Step, Table, Value};
use crescendo_diag::{closest, Diagnostic, Source};
use crescendo_lang::ast::{self, Ident};

use crate::context::{Ctx, Outcome, Reported};

/// A table known by name, with where it was declared.
pub struct Named {
    pub table: Table,
    pub decl: ast::Span,
    /// `true` for data items, `false` for views.
    pub is_data: bool,
    /// The label of the folded "other" row when the view ends with `top`.
    pub rest: Option<String>,
    /// The data item this table derives from (itself for data items).
    pub root: String,
    /// Columns that count rows (from `count` aggregates), for the
    /// small-counts rule.
    pub counts: BTreeSet<String>,
}

/// A view prefix computed while its data item was read (streamed from a
/// file, or run in a database): the steps it resolved to and its table.
pub struct Streamed {
    /// Number of the view's steps (as written) the prefix covers.
    pub(crate) ast_steps: usize,
    pub(crate) steps: Vec<Step>,
    pub(crate) table: Table,
}

/// Every data and view table of a story, by name.
#[derive(Default)]
pub struct Tables {
    pub(crate) by_name: BTreeMap<String, Named>,
    /// Names whose item failed, with the proof that it was reported: uses
    /// of them are not reported again.
    pub(crate) broken: BTreeMap<String, Reported>,
    /// Prefixes of views computed while their data item was read, by view
    /// name.
    pub(crate) streamed: BTreeMap<String, Streamed>,
    /// For streamed data items, (data item, column) → the first data row
    /// (0-based) and text of a text column's cell that is not a number.
    pub(crate) first_text: BTreeMap<(String, String), (usize, String)>,
    /// Parquet data items some of whose row groups were skipped by their
    /// statistics: the first `keep` of a view over one is not checked for
    /// texts no row holds (the skipped rows were never read; see
    /// `crate::unmatched`).
    pub(crate) thinned: std::collections::BTreeSet<String>,
}

/// What to say about a cell written with thousands separators or a
/// decimal comma (never that it could be read as missing: it is a real
/// value): the data item's options that read it.
fn grouped(t: &str) -> String {
    match data::digits::suggest(t) {
        Some(options) => format!(
            ", a number written with group separators or a decimal comma: name how the file \
             writes numbers on the data item (`{options}`)"
        ),
        _ => String::new(),
    }
}

impl Tables {
    /// The prefix of view `decl` computed while its data item `input` was
    /// read (see `loading/`), if it was streamed.
    pub(crate) fn prefix_of(&self, decl: &ast::ViewDecl, input: &Named) -> Option<&Streamed> {
        if input.is_data && input.root == decl.input.name {
            self.streamed.get(&decl.name.name)
        } else {
            None
        }
    }

    /// Why a column is text rather than number: the first cell of the same
    /// column in the table's data that is not a number, as a note such as
    /// "`riders` was read as text: data row 14 of `trips` holds `n/a`".
    pub fn why_text(&self, table: &str, column: &str) -> Option<String> {
        let root = &self.by_name.get(table)?.root;
        if let Some((i, t)) = self.first_text.get(&(root.clone(), column.to_string())) {
            return Some(format!(
                "`{column}` was read as text because data row {} of `{root}` holds `{t}`{}",
                i + 1,
                grouped(t)
            ));
        }
        let data = &self.by_name.get(root)?.table;
        let col = data.columns.iter().find(|c| c.name == column)?;
        if col.ty != ColType::Text {
            return None;
        }
        col.values.iter().enumerate().find_map(|(i, v)| match v {
            Value::Text(t) if data::load::parse_number(&t).is_none() => Some(format!(
                "`{column}` was read as text because data row {} of `{root}` holds `{t}`{}",
                i + 1,
                grouped(&t)
            )),
            _ => None,
        })
    }

    /// The error for a name no table has, with a suggestion.
    fn unknown(&self, src: &Arc<Source>, id: &Ident) -> Diagnostic {
        let mut d = Diagnostic::error(
            "unknown-name",
            format!("no data or view named `{}`", id.name),
        )
        .at(src, id.span.clone(), "not defined before this point");
        if let Some(s) = closest(&id.name, self.by_name.keys().map(String::as_str)) {
            d = d.help(format!("did you mean `{s}`?"));
        } else if !self.by_name.is_empty() {
            let names: Vec<&str> = self.by_name.keys().map(String::as_str).collect();
            d = d.note(format!("known tables: {}", names.join(", ")));
        }
        d
    }

    /// Look up a table used at `id`; reports unknown names with a suggestion
    /// (a name whose item failed was reported already).
    pub fn get<'a>(
        &'a self,
        src: &Arc<Source>,
        id: &Ident,
        diags: &mut Vec<Diagnostic>,
    ) -> Option<&'a Named> {
        if let Some(n) = self.by_name.get(&id.name) {
            return Some(n);
        }
        if !self.broken.contains_key(&id.name) {
            diags.push(self.unknown(src, id));
        }
        None
    }

    /// [`Tables::get`], reporting into the planning context.
    pub(crate) fn named<'a>(&'a self, cx: &mut Ctx, id: &Ident) -> Outcome<&'a Named> {
        if let Some(n) = self.by_name.get(&id.name) {
            return Ok(n);
        }
        match self.broken.get(&id.name) {
            Some(r) => Err(*r),
            None => Err(cx.report(self.unknown(cx.src, id))),
        }
    }
}
