//! Streaming a Parquet file: its row groups, each typed as the whole load
//! types a file, through the CSV stream's engine (`crescendo_data::fold`):
//! after the first, the groups are split into one run of consecutive
//! groups per core, each run folded on its own thread and the folds merged
//! in file order. Memory grows with the row groups (and the
//! rows a `keep`-only view keeps), not with the file. The views' leading
//! `keep` and `by` steps run per row group; the rest of each view runs on
//! the small table they give, as for a streamed CSV file.
//!
//! The column types come from the first row group read; a later group
//! whose types differ (say an undeclared text column whose first group
//! held only months) or any problem in the file falls back to the whole
//! load, which gives the same tables or reports the problem, located.

use crescendo_data::fold::Fold;
use crescendo_data::parquet::{first_group, fold_groups_from, Parts};
use crescendo_data::probe::{Probe, Seen};
use crescendo_data::stream::StreamView;
use crescendo_data::{Column, Columns, Expr, Table, Values};
use crescendo_lang::ast::StepAst;

use crate::context::{Ctx, Outcome};
use crate::loading::facts::prefix_len;
use crate::loading::state::Loader;
use crate::loading::stream::{prefixes, probed, record, StreamItem};
use crate::tables::Tables;

/// Stream a Parquet data item; the item's table without rows and the row
/// groups skipped by their statistics. `None`: load it whole instead;
/// `Some(Err)`: a `keep` compares a column with a text no row holds
/// (reported).
pub(crate) fn stream_parquet(
    cx: &mut Ctx,
    loader: &mut Loader,
    tables: &mut Tables,
    item: &StreamItem,
    (keep, keeps): (&Columns, &[Expr]),
) -> Option<Outcome<(Table, usize)>> {
    let keep_only = item.views.iter().any(|v| {
        let n = prefix_len(&v.steps);
        !v.steps[..n].iter().any(|s| matches!(s, StepAst::By { .. }))
    });
    if keep_only && matches!(keep, Columns::All) {
        // a `keep`-only prefix would keep every column of every row
        return None;
    }
    let limits = loader.limits.clone();
    // The first row group that holds rows gives the column types; it is
    // folded first, then the groups after it.
    let (g0, first, skipped_before) =
        first_group(item.spec, item.file, (keep, &limits, keeps)).ok()??;
    let shell = Table {
        columns: first
            .columns
            .iter()
            .map(|c| Column {
                name: c.name.clone(),
                ty: c.ty,
                values: Values::new(),
            })
            .collect(),
    };
    let prefixes = prefixes(cx, tables, item.decl, &shell, item.views, None)?;
    let runs: Vec<StreamView> = prefixes.iter().map(|p| p.run.clone()).collect();
    let schema: Vec<_> = shell
        .columns
        .iter()
        .map(|c| (c.name.clone(), c.ty))
        .collect();
    let keep_values: Vec<bool> = schema.iter().map(|(n, _)| keep.keeps(n)).collect();
    let new = || Fold::new(&runs, &keep_values, &limits, schema.clone());
    let mut fold = new();
    if !fold.add(&first) {
        return None;
    }
    drop(first);
    // the groups after the first split among the cores, each run folded
    // apart, the folds merged in file order
    let parts = Parts {
        first: fold,
        new: &new,
        each: &|f: &mut Fold, t: Table| f.add(&t),
    };
    let read = (keep, &limits, keeps);
    let (folds, mut done) = fold_groups_from(item.spec, item.file, read, g0 + 1, parts).ok()?;
    let mut folds = folds.into_iter();
    let mut fold = folds.next()?;
    for later in folds {
        if !fold.merge(later) {
            return None;
        }
    }
    done.skipped += skipped_before;
    if done.stopped || fold.rows() == 0 {
        return None;
    }
    let probes = fold.probes();
    let unread = |met: &Vec<(Probe, Seen)>| met.iter().any(|(p, s)| p.keep == 0 && !s.found);
    if done.skipped > 0 && probes.iter().any(unread) {
        // a first `keep`'s text may be held only by rows of skipped groups,
        // which were never read: the whole load checks it (see
        // `crate::unmatched::Which`)
        return None;
    }
    let found: Vec<Option<Table>> = fold.finish()?.into_iter().map(Some).collect();
    let all: Vec<usize> = (0..found.len()).collect();
    let unmatched = probed(cx, &schema, item.views, &all, &probes);
    if !unmatched.is_empty() {
        let reported = unmatched.into_iter().map(|d| cx.report(d)).last();
        return reported.map(Err);
    }
    record(loader, tables, None, prefixes, found, &all)?;
    Some(Ok((shell, done.skipped)))
}
