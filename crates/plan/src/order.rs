//! The order definitions take effect. One rule for the whole story: a view,
//! value or claim may use a view or value defined anywhere in it, above or
//! below; each definition is computed after what it uses, and a definition
//! that uses itself (directly or through others) is an error naming the
//! whole circle. Among definitions that do not depend on each other, story
//! order is kept.

use std::collections::{BTreeMap, BTreeSet};

use crescendo_lang::ast::{self, Item, Selection};
use crescendo_lang::visit::{walk_selection, Visit};

use crate::context::{Ctx, Reported};
use crate::values;

/// A view or a value item.
#[derive(Clone, Copy)]
pub(crate) enum Def<'s> {
    View(&'s ast::ViewDecl),
    Value(&'s ast::ValueDecl),
}

impl<'s> Def<'s> {
    pub(crate) fn of(item: &'s Item) -> Option<Def<'s>> {
        match item {
            Item::View(v) => Some(Def::View(v)),
            Item::Value(v) => Some(Def::Value(v)),
            _ => None,
        }
    }

    fn name(&self) -> &'s ast::Ident {
        match self {
            Def::View(v) => &v.name,
            Def::Value(v) => &v.name,
        }
    }

    /// The view and value names this definition uses (row expressions
    /// name columns, never values or views, so a view uses only its input).
    fn uses(&self) -> BTreeSet<String> {
        match self {
            Def::View(v) => BTreeSet::from([v.input.name.clone()]),
            Def::Value(v) => {
                let mut names = BTreeSet::new();
                values::names_in(&v.expr, &mut names);
                let mut tables = Tables::default();
                tables.visit_expr(&v.expr);
                names.extend(tables.0);
                names
            }
        }
    }
}

/// The views a value's selections read.
#[derive(Default)]
struct Tables(BTreeSet<String>);

impl<'a> Visit<'a> for Tables {
    fn visit_selection(&mut self, s: &'a Selection) {
        self.0.insert(s.view.name.clone());
        walk_selection(self, s);
    }
}

/// The definitions in the order they are computed; those on a circle are
/// reported (once per circle) and left out, with the proof of the report
/// for each name left out.
pub(crate) fn order<'s>(
    cx: &mut Ctx,
    defs: &[Def<'s>],
) -> (Vec<Def<'s>>, BTreeMap<String, (Def<'s>, Reported)>) {
    // the first definition of a name is the one others use (a second one
    // is reported as a duplicate where it is computed)
    let mut by_name: BTreeMap<&str, usize> = BTreeMap::new();
    for (i, d) in defs.iter().enumerate() {
        by_name.entry(d.name().name.as_str()).or_insert(i);
    }
    let uses: Vec<Vec<usize>> = defs
        .iter()
        .map(|d| {
            d.uses()
                .iter()
                .filter_map(|n| by_name.get(n.as_str()).copied())
                .collect()
        })
        .collect();
    let mut done = vec![false; defs.len()];
    let mut out = Vec::with_capacity(defs.len());
    // repeatedly take the first definition (in story order) whose uses are
    // all computed: story order wherever the story allows it
    loop {
        let next = (0..defs.len()).find(|&i| !done[i] && uses[i].iter().all(|&u| done[u]));
        match next {
            Some(i) => {
                done[i] = true;
                out.push(defs[i]);
            }
            None => break,
        }
    }
    let mut left_out = BTreeMap::new();
    while let Some(start) = (0..defs.len()).find(|&i| !done[i]) {
        // walk from `start` along unfinished uses until a name repeats
        let mut path = vec![start];
        let circle = loop {
            let last = *path.last().unwrap_or(&start);
            let Some(&next) = uses[last].iter().find(|&&u| !done[u]) else {
                break None;
            };
            if let Some(at) = path.iter().position(|&p| p == next) {
                break Some(path.split_off(at));
            }
            path.push(next);
        };
        match circle {
            Some(circle) => {
                let r = report_circle(cx, defs, &circle);
                for &i in &circle {
                    done[i] = true;
                    left_out.insert(defs[i].name().name.clone(), (defs[i], r));
                }
            }
            None => {
                // only waits on definitions already left out: compute it
                // (it meets them as broken and says nothing more)
                done[start] = true;
                out.push(defs[start]);
            }
        }
    }
    (out, left_out)
}

fn report_circle(cx: &mut Ctx, defs: &[Def], circle: &[usize]) -> Reported {
    let first = defs[circle[0]].name();
    let mut names: Vec<String> = circle
        .iter()
        .map(|&i| format!("`{}`", defs[i].name().name))
        .collect();
    names.push(format!("`{}`", first.name));
    let mut d = cx.at(
        "definition-circle",
        if circle.len() == 1 {
            format!("`{}` is defined in terms of itself", first.name)
        } else {
            format!(
                "`{}` is defined in terms of itself: {}",
                first.name,
                names.join(" → ")
            )
        },
        first.span.clone(),
        "defined here",
    );
    for &i in &circle[1..] {
        let n = defs[i].name();
        d = d.also(cx.src, n.span.clone(), "on the circle");
    }
    cx.report(d.help(if circle.len() == 1 {
        "define it from the data and other values, without itself"
    } else {
        "define one of them from the data alone, without the others"
    }))
}
