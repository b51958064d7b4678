//! Text literals of streamed `keep` steps: does any row that reaches the
//! step hold them?
//!
//! A `keep region = "Nrth"` selects nothing, silently, when no row holds
//! the text (a misspelt category); the planner makes that a located error
//! with a suggestion. On a loaded table it looks at the column; on a
//! streamed file the rows are gone once read, so the stream engine watches
//! each such literal (a [`Probe`]) while it reads: for every record that
//! passes the `keep`s before the probe's step, it compares the column's
//! text. A probe found stops being looked at; until then it notes the
//! distinct texts it met (up to [`SEEN_CAP`], in order of first
//! appearance), the candidates of the suggestion.

use std::collections::HashSet;

use crate::model::{Cell, CmpOp, Expr, Value};
use crate::view::truth;

/// Distinct texts a probe keeps for the suggestion.
pub const SEEN_CAP: usize = 10_000;

/// A text literal compared for equality (`=`, `!=`, `in`) with a column in
/// one of a view's leading `keep`s.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Probe {
    /// Index of the `keep` among the view's leading `keep`s.
    pub keep: usize,
    /// The column (index into the file's columns).
    pub column: usize,
    pub text: String,
}

/// What a probe met.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Seen {
    /// Some row reaching the step holds the text.
    pub found: bool,
    /// Until found: the distinct texts met, first appearance first (at
    /// most [`SEEN_CAP`]); empty once found.
    pub values: Vec<String>,
}

/// Every text literal compared for equality with a column in `keeps`.
pub fn probes(keeps: &[Expr]) -> Vec<Probe> {
    let mut out = Vec::new();
    for (keep, e) in keeps.iter().enumerate() {
        walk(keep, e, &mut out);
    }
    out
}

fn walk(keep: usize, e: &Expr, out: &mut Vec<Probe>) {
    let mut add = |column: usize, text: &str| {
        let p = Probe {
            keep,
            column,
            text: text.to_string(),
        };
        if !out.contains(&p) {
            out.push(p);
        }
    };
    match e {
        Expr::Cmp(CmpOp::Eq | CmpOp::Ne, a, b) => match (&**a, &**b) {
            (Expr::Col(c), Expr::Lit(Value::Text(t)))
            | (Expr::Lit(Value::Text(t)), Expr::Col(c)) => add(*c, t),
            _ => {}
        },
        Expr::In(a, list) => {
            if let Expr::Col(c) = &**a {
                for v in list {
                    if let Value::Text(t) = v {
                        add(*c, t);
                    }
                }
            }
        }
        Expr::And(parts) | Expr::Or(parts) => {
            for p in parts {
                walk(keep, p, out);
            }
        }
        Expr::Not(inner) => walk(keep, inner, out),
        _ => {}
    }
}

/// The probes of one view while a stream reads.
#[derive(Clone, Debug, Default)]
pub(crate) struct Watch {
    probes: Vec<Probe>,
    seen: Vec<Seen>,
    index: Vec<HashSet<String>>,
    /// Probes not found yet.
    open: usize,
}

impl Watch {
    pub(crate) fn new(keeps: &[Expr]) -> Watch {
        let probes = probes(keeps);
        let n = probes.len();
        Watch {
            probes,
            seen: vec![Seen::default(); n],
            index: vec![HashSet::new(); n],
            open: n,
        }
    }

    /// Has every probe found its text (so rows need no more looking at)?
    pub(crate) fn settled(&self) -> bool {
        self.open == 0
    }

    /// Does the row pass every `keep`? Probes of a step look at the row
    /// when it passed the steps before.
    pub(crate) fn passes<'c>(
        &mut self,
        row: &impl Fn(usize) -> Cell<'c>,
        keeps: &'c [Expr],
    ) -> bool {
        if self.open == 0 {
            return keeps.iter().all(|k| truth(row, k));
        }
        for (i, k) in keeps.iter().enumerate() {
            self.observe(i, row);
            if !truth(row, k) {
                return false;
            }
        }
        true
    }

    fn observe<'c>(&mut self, keep: usize, row: &impl Fn(usize) -> Cell<'c>) {
        for (j, p) in self.probes.iter().enumerate() {
            let seen = &mut self.seen[j];
            if p.keep != keep || seen.found {
                continue;
            }
            let Cell::Text(t) = row(p.column) else {
                continue;
            };
            if t == p.text {
                seen.found = true;
                seen.values = Vec::new();
                self.index[j] = HashSet::new();
                self.open -= 1;
            } else if seen.values.len() < SEEN_CAP && !self.index[j].contains(t) {
                self.index[j].insert(t.to_string());
                seen.values.push(t.to_string());
            }
        }
    }

    /// Add what a later part of the file met (chunks merge in file order).
    pub(crate) fn merge(&mut self, later: Watch) {
        for (j, s) in later.seen.into_iter().enumerate() {
            let Some(mine) = self.seen.get_mut(j) else {
                continue;
            };
            if mine.found {
                continue;
            }
            if s.found {
                mine.found = true;
                mine.values = Vec::new();
                self.index[j] = HashSet::new();
                self.open -= 1;
                continue;
            }
            for t in s.values {
                if mine.values.len() < SEEN_CAP && self.index[j].insert(t.clone()) {
                    mine.values.push(t);
                }
            }
        }
    }

    /// [`Watch::merge`] view by view.
    pub(crate) fn merge_all(mine: &mut [Watch], later: Vec<Watch>) {
        for (m, l) in mine.iter_mut().zip(later) {
            m.merge(l);
        }
    }

    /// The probes and what each met.
    pub(crate) fn finish(self) -> Vec<(Probe, Seen)> {
        self.probes.into_iter().zip(self.seen).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn text(t: &str) -> Box<Expr> {
        Box::new(Expr::Lit(Value::Text(t.into())))
    }

    #[test]
    fn probes_of_equalities_in_and_or_not() {
        let keeps = vec![
            Expr::And(vec![
                Expr::Cmp(CmpOp::Eq, Box::new(Expr::Col(1)), text("North")),
                Expr::Not(Box::new(Expr::Cmp(
                    CmpOp::Ne,
                    text("Oslo"),
                    Box::new(Expr::Col(2)),
                ))),
            ]),
            Expr::In(
                Box::new(Expr::Col(1)),
                vec![Value::Text("A".into()), Value::Number(1.0)],
            ),
            // not an equality: no probe
            Expr::Cmp(CmpOp::Lt, Box::new(Expr::Col(1)), text("M")),
        ];
        let got = probes(&keeps);
        let got: Vec<(usize, usize, &str)> = got
            .iter()
            .map(|p| (p.keep, p.column, p.text.as_str()))
            .collect();
        assert_eq!(got, vec![(0, 1, "North"), (0, 2, "Oslo"), (1, 1, "A")]);
    }

    #[test]
    fn a_probe_looks_only_at_rows_reaching_its_step() {
        // keep c0 = "x" | keep c1 = "b": "b" only on a row where c0 is "y"
        let keeps = vec![
            Expr::Cmp(CmpOp::Eq, Box::new(Expr::Col(0)), text("x")),
            Expr::Cmp(CmpOp::Eq, Box::new(Expr::Col(1)), text("b")),
        ];
        let rows = [("x", "a"), ("y", "b"), ("x", "c"), ("x", "a")];
        let mut w = Watch::new(&keeps);
        for (a, b) in rows {
            let cells = [Cell::Text(a), Cell::Text(b)];
            let row = |c: usize| cells.get(c).copied().unwrap_or(Cell::Missing);
            w.passes(&row, &keeps);
        }
        let out = w.finish();
        assert!(out[0].1.found);
        assert!(!out[1].1.found);
        assert_eq!(out[1].1.values, vec!["a", "c"]);
    }

    #[test]
    fn merged_chunks_equal_one_pass() {
        let keeps = vec![Expr::Cmp(CmpOp::Eq, Box::new(Expr::Col(0)), text("z"))];
        let feed = |w: &mut Watch, texts: &[&str]| {
            for t in texts {
                let cells = [Cell::Text(t)];
                let row = |c: usize| cells.get(c).copied().unwrap_or(Cell::Missing);
                w.passes(&row, &keeps);
            }
        };
        let mut one = Watch::new(&keeps);
        feed(&mut one, &["b", "a", "b", "c", "a"]);
        let (mut first, mut second) = (Watch::new(&keeps), Watch::new(&keeps));
        feed(&mut first, &["b", "a"]);
        feed(&mut second, &["b", "c", "a"]);
        first.merge(second);
        assert_eq!(first.finish(), one.finish());
        // found in a later chunk
        let (mut first, mut second) = (Watch::new(&keeps), Watch::new(&keeps));
        feed(&mut first, &["b"]);
        feed(&mut second, &["z"]);
        first.merge(second);
        let out = first.finish();
        assert!(out[0].1.found && out[0].1.values.is_empty());
    }
}
