//! How data items are read: streamed when only views read them, loaded
//! (the used columns only) otherwise, and views cached between builds.
//!
//! # Streaming
//!
//! Before any item is resolved, [`Loader::prepare`] looks at the whole story
//! (`facts.rs`).
//! A data item is *streamed* when nothing but views reads it (no chart, value
//! or other item names it) and every view over it starts with `keep` or `by`.
//! Its file is then read once: the prefix of each view (its leading `keep`
//! steps and at most one `by`) is evaluated record by record on both cores
//! (`crescendo_data::stream`), and the data item itself keeps only its
//! column names and types (no rows). The views' remaining steps run on the
//! small prefix tables as usual. The column types come from the first 1000
//! records; a later cell that contradicts them, or any problem in the file,
//! falls back to the whole load, which reports located diagnostics exactly
//! as before.
//!
//! # Columns
//!
//! Only the columns the story can read are parsed: the declared ones (so
//! their cells are still checked) and the names used as identifiers anywhere
//! in the story (a superset of the columns any step, chart or value reads).
//! Every column when a `top` step may see a data item's raw rows (it folds by
//! all text columns) or a `table` chart is present.
//!
//! # The view cache
//!
//! When the build keeps a cache (the planner's I/O offers one, see
//! `io.rs`), a streamed view's prefix table is stored under a key
//! made of: the cache format, the data file's content hash (xxh3-128 of its
//! bytes; the build command's cache keeps a size-and-time shortcut), the
//! declared types, the missing-value tokens, the parsed columns, and the
//! resolved prefix steps. The file's final column types are stored under the
//! same key without the steps. An unchanged view is then not recomputed, and
//! when every view of a data item is cached its file is not read at all (nor
//! hashed again, when its size and time are unchanged). Entries hold their
//! tables losslessly (numbers as bits), so cached and uncached builds are
//! byte-identical.
//!
//! # One open file
//!
//! A data file is opened once, through the planner's I/O ([`Io::open`]),
//! and the open file is checked to lie in the story's folder (or an
//! allowed one); the cache's content hash, the type probe, the streaming
//! threads and the whole load all read that one descriptor, never the path
//! again. The reads stop at the text and row limits (`--max-text`,
//! `--max-rows`, see `limits.rs`) on both paths.
//!
//! Database sources are read in `database.rs`; what the loads did comes
//! back with the plan ([`LoadReport`], the SQL log).

mod columnar;
mod database;
mod db_probe;
mod facts;
mod files;
mod skip;
mod state;
mod stream;

use std::fs::File;
use std::path::Path;

use crescendo_data::files::OpenError;
use crescendo_data::load::io_error;
use crescendo_data::{Columns, CsvSpec, Table};
use crescendo_lang::ast;

use crate::context::{Ctx, Outcome};
#[cfg(doc)]
use crate::io::Io;
use crate::tables::Tables;

pub use state::LoadReport;
pub(crate) use state::Loader;
use stream::StreamItem;

impl Loader {
    /// Load one `data` item: streamed (its views' prefixes computed, the
    /// item itself without rows), loaded with the used columns, or read
    /// from its database. `replacement`: the file `--data` names instead.
    pub(crate) fn load(
        &mut self,
        cx: &mut Ctx,
        tables: &mut Tables,
        decl: &ast::DataDecl,
        replacement: Option<&Path>,
    ) -> Outcome<Table> {
        if let Some(db) = decl.database.as_ref().filter(|_| replacement.is_none()) {
            if let Some(o) = decl.thousands.as_ref().or(decl.decimal.as_ref()) {
                return Err(cx.error_with_help(
                    "bad-option",
                    "a database sends numbers as numbers: `thousands` and `decimal` go with a file",
                    o.span.clone(),
                    "not for a database",
                    "remove the option",
                ));
            }
            return database::load(cx, self, tables, (decl, db));
        }
        let spec = files::data_spec(cx, decl, replacement)?;
        let file = open(cx, decl, &spec, replacement.is_some())?;
        let keep = if self.facts.all_columns {
            Columns::All
        } else {
            Columns::Only(self.facts.idents.clone())
        };
        let name = decl.name.name.clone();
        let clause = decl.sheet.is_some() || decl.cells.is_some();
        let views = self.facts.streamable.get(&name).cloned();
        let item = views.as_deref().map(|views| StreamItem {
            decl,
            spec: &spec,
            file: &file,
            views,
        });
        if crescendo_data::parquet::is_parquet(&spec.path) && !clause {
            let keeps = skip::first_keeps(cx.src, &spec, &file, &keep, views.as_ref());
            if let Some(item) = &item {
                let streamed =
                    columnar::stream_parquet(cx, self, tables, item, (&keep, keeps.as_slice()));
                if let Some(streamed) = streamed {
                    let (shell, n) = streamed?;
                    if n > 0 {
                        self.report.skipped_groups.push(format!("{name}: {n}"));
                        tables.thinned.insert(name.clone());
                    }
                    self.report.streamed.push(name);
                    return Ok(shell);
                }
            }
            whole_size(cx, decl, &spec)?;
            let read = crescendo_data::parquet::load_parquet_skipping(
                &spec,
                &file,
                &keep,
                &self.limits,
                &keeps,
            );
            if let Ok((_, n @ 1..)) = &read {
                self.report.skipped_groups.push(format!("{name}: {n}"));
                tables.thinned.insert(name.clone());
            }
            self.report.loaded.push(name);
            return files::reported(cx, decl, read.map(|(t, _)| t));
        }
        if let Some(read) = other_format(decl, &spec, &file, &keep, &self.limits) {
            self.report.loaded.push(name);
            return files::reported(cx, decl, read);
        }
        if let Some(item) = &item {
            if let Some(table) = stream::stream(cx, self, tables, item, &keep) {
                self.report.streamed.push(name);
                return table;
            }
        }
        whole_size(cx, decl, &spec)?;
        self.report.loaded.push(name);
        let read = cx.io.load_csv(&spec, &file, &keep, &self.limits);
        files::reported(cx, decl, read)
    }
}

impl Loader {
    /// May the file of `decl` at `path` be streamed (so that only a byte
    /// limit the user set applies to it, unless it is read whole after
    /// all)? A CSV or Parquet file (no `sheet` or `cells`) that only views
    /// starting with `keep` or `by` read.
    pub(crate) fn may_stream(&self, decl: &ast::DataDecl, path: &Path) -> bool {
        decl.database.is_none()
            && decl.sheet.is_none()
            && decl.cells.is_none()
            && !crescendo_data::workbook::is_workbook(path)
            && self.facts.streamable.contains_key(&decl.name.name)
    }
}

/// A file about to be read whole is within the byte limit, the default
/// one included (the check before the read skipped it for a file that
/// might have been streamed).
fn whole_size(cx: &mut Ctx, decl: &ast::DataDecl, spec: &CsvSpec) -> Outcome<()> {
    let len = cx.io.file_len(&spec.path);
    match crate::limits::size(&spec.path, len, &cx.options.limits, false) {
        Ok(()) => Ok(()),
        Err(why) => Err(cx.error("limit", why, decl.file.span.clone(), "this file")),
    }
}

/// A workbook (see `crescendo_data::workbook`) or a Parquet file
/// (`crescendo_data::parquet`) read whole: `None` for a CSV file. A `sheet` or `cells` clause on a story's CSV file is an error.
fn other_format(
    decl: &ast::DataDecl,
    spec: &CsvSpec,
    file: &File,
    keep: &Columns,
    limits: &crescendo_data::load::ReadLimits,
) -> Option<Result<Table, crescendo_data::LoadError>> {
    use crescendo_data::workbook::{is_workbook, load_workbook, SheetSpec};
    if is_workbook(&spec.path) {
        let sheet = SheetSpec {
            sheet: decl.sheet.as_ref().map(|s| s.value.clone()),
            cells: decl.cells.as_ref().map(|s| s.value.clone()),
        };
        return Some(load_workbook(spec, file, &sheet, keep, limits));
    }
    let clause = decl.sheet.is_some() || decl.cells.is_some();
    if clause && spec.path.ends_with(&decl.file.value) {
        return Some(Err(crescendo_data::LoadError::Story {
            code: "data-file",
            message: format!(
                "`{}` is not a workbook, so it has no sheets or cells to choose",
                decl.file.value
            ),
            help: Some(
                "`sheet` and `cells` go with a `.xlsx` or `.ods` file; remove them for a CSV or Parquet file"
                    .into(),
            ),
            declared: None,
        }));
    }
    if crescendo_data::parquet::is_parquet(&spec.path) {
        return Some(crescendo_data::parquet::load_parquet(
            spec, file, keep, limits,
        ));
    }
    None
}

/// The data file of `decl`, opened once and checked where it really is
/// (`--data` names a file on the user's own command line, which may be
/// anywhere).
fn open(cx: &mut Ctx, decl: &ast::DataDecl, spec: &CsvSpec, named: bool) -> Outcome<File> {
    let dir = if named { None } else { Some(cx.dir) };
    match cx.io.open(dir, &spec.path) {
        Ok(f) => Ok(f),
        Err(OpenError::Outside { real }) => {
            let why = format!(
                "`{}` is outside the story's folder ({})",
                decl.file.value,
                real.display()
            );
            let d = crate::paths::outside(cx.src, decl.file.span.clone(), "data file", &why);
            Err(cx.report(d))
        }
        Err(OpenError::Io(e)) => files::reported(cx, decl, Err(io_error(spec, &e))),
    }
}
