//! The streaming engine of [`crate::stream`] fed with whole tables (the
//! typed row groups of a Parquet file) instead of CSV records.

use crate::colfold::FastGroups;
use crate::groups::Groups;
use crate::load::ReadLimits;
use crate::model::Values;
use crate::model::{Cell, ColType, Table};
use crate::probe::{Probe, Seen, Watch};
use crate::stream::{add_record, finish, rows_fit, StreamView, ViewState};

/// The empty state of every view over `ncols` columns.
pub(crate) fn states(views: &[StreamView], ncols: usize) -> Vec<ViewState> {
    let state = |v: &StreamView| match &v.group {
        Some((keys, aggs)) => ViewState::Groups(Groups::new(keys, aggs)),
        None => ViewState::Rows(vec![Values::new(); ncols]),
    };
    views.iter().map(state).collect()
}

/// Fold each view's state of a later part of the rows into `mine`, view
/// by view (groups merged, kept rows appended); `false` when two states
/// are not of one kind.
pub(crate) fn merge_states(mine: &mut [ViewState], later: Vec<ViewState>) -> bool {
    for (m, l) in mine.iter_mut().zip(later) {
        match (m, l) {
            (ViewState::Groups(x), ViewState::Groups(y)) => x.merge(y),
            (ViewState::Rows(x), ViewState::Rows(y)) => {
                for (cx, cy) in x.iter_mut().zip(y) {
                    cx.extend_from(&cy);
                }
            }
            _ => return false,
        }
    }
    true
}

/// The views, per column whether kept rows carry its values, the limits.
#[derive(Clone, Copy)]
pub(crate) struct Sink<'a> {
    pub(crate) views: &'a [StreamView],
    pub(crate) keep_values: &'a [bool],
    pub(crate) limits: &'a ReadLimits,
}

/// The same engine fed with whole tables (the row groups of a Parquet
/// file, typed) instead of CSV records, one after another, so memory grows
/// with the groups (and the rows a `keep`-only view keeps), not with the
/// file. The tables must have the columns and types of `schema`; results
/// equal those of the table engine over all the tables' rows together.
pub struct Fold<'a> {
    sink: Sink<'a>,
    schema: Vec<(String, ColType)>,
    states: Vec<ViewState>,
    /// Per view: its group step evaluated column by column, when its
    /// aggregates allow (see [`crate::colfold`]); its state in `states`
    /// is then unused.
    fast: Vec<Option<FastGroups>>,
    watches: Vec<Watch>,
    kept: Vec<usize>,
    keybuf: Vec<u8>,
    rows: usize,
}

impl<'a> Fold<'a> {
    /// A fold of `views` over tables of `schema`; `keep_values`: per
    /// column, whether the rows of `keep`-only views carry its values.
    pub fn new(
        views: &'a [StreamView],
        keep_values: &'a [bool],
        limits: &'a ReadLimits,
        schema: Vec<(String, ColType)>,
    ) -> Fold<'a> {
        let states = states(views, schema.len());
        Fold {
            sink: Sink {
                views,
                keep_values,
                limits,
            },
            schema,
            states,
            fast: views
                .iter()
                .map(|v| {
                    let (keys, aggs) = v.group.as_ref()?;
                    FastGroups::new(keys, aggs)
                })
                .collect(),
            watches: views.iter().map(|v| Watch::new(&v.keeps)).collect(),
            kept: vec![0; views.len()],
            keybuf: Vec::with_capacity(64),
            rows: 0,
        }
    }

    /// Fold in the rows of `t`. `false`: its columns or types are not the
    /// schema's, or kept rows outgrow the limits (load the file instead).
    pub fn add(&mut self, t: &Table) -> bool {
        let same = t.columns.len() == self.schema.len()
            && t.columns
                .iter()
                .zip(&self.schema)
                .all(|(c, (n, ty))| c.name == *n && c.ty == *ty);
        if !same {
            return false;
        }
        let n = t.columns.first().map_or(0, |c| c.values.len());
        let cell =
            |c: usize, r: usize| t.columns.get(c).map_or(Cell::Missing, |v| v.values.cell(r));
        let mut cells: Vec<Cell<'_>> = Vec::with_capacity(t.columns.len());
        for vi in 0..self.sink.views.len() {
            let keeps = &self.sink.views[vi].keeps;
            let watch = &mut self.watches[vi];
            match &mut self.fast[vi] {
                // once every `keep` text was met, the whole table at once
                Some(f) if watch.settled() => f.add_table(t, keeps, &mut self.keybuf),
                Some(f) => {
                    for r in 0..n {
                        let row = |c: usize| cell(c, r);
                        if watch.passes(&row, keeps) {
                            f.add_row(&mut self.keybuf, &row);
                        }
                    }
                }
                None => {
                    let sink = Sink {
                        views: &self.sink.views[vi..=vi],
                        ..self.sink
                    };
                    for r in 0..n {
                        cells.clear();
                        cells.extend(t.columns.iter().map(|c| c.values.cell(r)));
                        let views = (&mut self.states[vi..=vi], &mut self.watches[vi..=vi]);
                        let kept = &mut self.kept[vi..=vi];
                        if !add_record(&sink, &cells, views, kept, &mut self.keybuf) {
                            return false;
                        }
                    }
                }
            }
        }
        self.rows += n;
        true
    }

    /// Fold in `later`, a fold of the same views over tables that come
    /// after this one's (row groups read on another thread): as if its
    /// tables had been added here. `false`: its states do not match.
    pub fn merge(&mut self, later: Fold<'a>) -> bool {
        if !merge_states(&mut self.states, later.states) {
            return false;
        }
        for (mine, theirs) in self.fast.iter_mut().zip(&later.fast) {
            if let (Some(x), Some(y)) = (mine, theirs) {
                x.merge(y);
            }
        }
        Watch::merge_all(&mut self.watches, later.watches);
        for (k, l) in self.kept.iter_mut().zip(later.kept) {
            *k += l;
        }
        self.rows += later.rows;
        true
    }

    /// The same fold, every view evaluated row by row (for tests of the
    /// column-by-column evaluation).
    #[cfg(test)]
    pub(crate) fn row_by_row(mut self) -> Fold<'a> {
        self.fast.iter_mut().for_each(|f| *f = None);
        self
    }

    /// Rows folded in so far.
    pub fn rows(&self) -> usize {
        self.rows
    }

    /// Per view: the text literals of its `keep`s and what each met so far
    /// (see [`crate::probe`]).
    pub fn probes(&self) -> Vec<Vec<(Probe, Seen)>> {
        self.watches.iter().cloned().map(Watch::finish).collect()
    }

    /// One table per view, as [`crate::stream::scan`] gives them; `None` when kept rows
    /// outgrow the limits.
    pub fn finish(self) -> Option<Vec<Table>> {
        for state in &self.states {
            if let ViewState::Rows(cols) = state {
                if !rows_fit(self.sink.limits, cols) {
                    return None;
                }
            }
        }
        let schema = &self.schema;
        Some(
            self.sink
                .views
                .iter()
                .zip(self.states.into_iter().zip(self.fast))
                .map(|(v, (state, fast))| match (fast, &v.group) {
                    (Some(f), Some((_, aggs))) => f.finish(schema, aggs),
                    _ => finish(schema, v, state),
                })
                .collect(),
        )
    }
}
