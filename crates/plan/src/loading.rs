//! How data items are read: streamed when only views read them, loaded
//! (the used columns only) otherwise, and views cached between builds.
//!
//! # Streaming
//!
//! Before any item is resolved, [`Tables::prepare`] looks at the whole story.
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
//! With a cache folder, a streamed view's prefix table is stored under a key
//! made of: the cache format, the data file's content hash (xxh3-128 of its
//! bytes; see `Cache::file_hash` for the size-and-time shortcut), the
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
//! A data file is opened once, and the open file is checked to lie in the
//! story's folder (or an allowed one, `crescendo_data::files`); the cache's
//! content hash, the type probe, the streaming threads and the whole load
//! all read that one descriptor, never the path again.

use std::collections::BTreeSet;
use std::path::Path;
use std::sync::Arc;

use std::fs::File;

use crescendo_data::files::{OpenError, Within};
use crescendo_data::load::{io_error, probe_file};
use crescendo_data::store::StoredTable;
use crescendo_data::stream::{self, Chunks, ScanFailure, ScanInput, StreamView};
use crescendo_data::{ColType, Column, Columns, CsvSpec, Step, Table, Values};
use crescendo_diag::{Diagnostic, Source};
use crescendo_lang::ast::{self, Item, StepAst, StoryAst};
use crescendo_lang::visit::{walk_database, walk_selection, walk_story, Visit};
use serde::{Deserialize, Serialize};

use crate::cache::{hash_hex, Cache, FORMAT};
use crate::resolve::{
    build_view_inner, data_spec, load_reported, report_load, Named, StoryFacts, Streamed, Tables,
};

/// Records read to guess the types of undeclared columns.
const SAMPLE: usize = 1000;

/// What the cache keeps about a data file (under the data key).
#[derive(Clone, Debug, Serialize, Deserialize)]
struct DataEntry {
    schema: Vec<(String, ColType)>,
    data_start: u64,
    first_text: Vec<Option<(usize, String)>>,
}

/// Collects every name written as an identifier (an `Ident` of the syntax
/// tree, whatever node holds it), quoted values included; with
/// `skip_order`, not the `in order of` columns of a database source.
#[derive(Default)]
struct Names {
    names: BTreeSet<String>,
    skip_order: bool,
}

impl<'a> Visit<'a> for Names {
    fn visit_ident(&mut self, ident: &'a ast::Ident) {
        self.names.insert(ident.name.clone());
    }

    fn visit_database(&mut self, db: &'a ast::DatabaseSource) {
        if self.skip_order {
            self.visit_ident(&db.env);
        } else {
            walk_database(self, db);
        }
    }
}

/// Every name written as an identifier in an item.
fn names_in_item(item: &Item, skip_order: bool) -> BTreeSet<String> {
    let mut v = Names {
        skip_order,
        ..Names::default()
    };
    v.visit_item(item);
    v.names
}

/// Every name written as an identifier in some view steps.
fn names_in_steps(steps: &[StepAst]) -> BTreeSet<String> {
    let mut v = Names::default();
    steps.iter().for_each(|s| v.visit_step(s));
    v.names
}

/// Collects the names used as the table of a chart (`line NAME: …`), a
/// plugin chart (`draw FORM NAME`) or a value selection (`sum(NAME.col …)`),
/// and whether a `table` chart is drawn.
#[derive(Default)]
struct TablesNamed {
    named: BTreeSet<String>,
    table_chart: bool,
}

impl<'a> Visit<'a> for TablesNamed {
    fn visit_chart(&mut self, chart: &'a ast::ChartStmt) {
        self.named.insert(chart.view.name.clone());
        self.table_chart |= chart.form == ast::ChartForm::Table;
    }

    fn visit_draw(&mut self, draw: &'a ast::DrawStmt) {
        self.named.insert(draw.view.name.clone());
    }

    fn visit_selection(&mut self, selection: &'a ast::Selection) {
        self.named.insert(selection.view.name.clone());
        walk_selection(self, selection);
    }
}

/// The tables an item names (see [`TablesNamed`]).
fn tables_named_in(item: &Item) -> BTreeSet<String> {
    let mut v = TablesNamed::default();
    v.visit_item(item);
    v.named
}

/// Number of leading steps of a view over a database item that run in the
/// database: `keep`s and `add`s, at most one `by`, then `keep`, `add`,
/// `sort` and `columns` steps (a `top` or a second `by` ends it).
pub(crate) fn database_prefix_len(steps: &[StepAst]) -> usize {
    // After the group (or a row-level `sort` or `columns`), only `keep`,
    // `add`, `sort` and `columns` are printed: see `crescendo_sql::print::pushable`.
    let mut after = false;
    let mut n = 0;
    for s in steps {
        match s {
            StepAst::Keep { .. } | StepAst::Add { .. } => {}
            StepAst::By { .. } if !after => after = true,
            StepAst::Sort { .. } | StepAst::Columns { .. } => after = true,
            _ => break,
        }
        n += 1;
    }
    n
}

/// Number of leading steps of a view that stream: `keep`s, then one `by`.
pub(crate) fn prefix_len(steps: &[StepAst]) -> usize {
    let keeps = steps
        .iter()
        .take_while(|s| matches!(s, StepAst::Keep { .. }))
        .count();
    match steps.get(keeps) {
        Some(StepAst::By { .. }) => keeps + 1,
        _ => keeps,
    }
}

impl Tables {
    /// Look at the whole story before its items are resolved: which data
    /// items can stream, which columns anything reads. `cache` is the folder
    /// for the view cache (none: no caching).
    pub fn prepare(&mut self, story: &StoryAst, cache: Option<&Path>) {
        self.cache = cache.map(Cache::new);
        let mut idents = BTreeSet::new();
        let mut idents_outside_order = BTreeSet::new();
        for item in &story.items {
            idents.extend(names_in_item(item, false));
            idents_outside_order.extend(names_in_item(item, true));
        }
        let views: Vec<&ast::ViewDecl> = story
            .items
            .iter()
            .filter_map(|i| match i {
                Item::View(v) => Some(v),
                _ => None,
            })
            .collect();
        let top_before_by = views.iter().any(|v| {
            let by = v.steps.iter().position(|s| matches!(s, StepAst::By { .. }));
            let top = v
                .steps
                .iter()
                .position(|s| matches!(s, StepAst::Top { .. }));
            matches!((top, by), (Some(t), b) if b.is_none_or(|b| t < b))
        });
        let mut charts = TablesNamed::default();
        walk_story(&mut charts, story);
        let all_columns = top_before_by || charts.table_chart;
        let mut names = BTreeSet::new();
        let mut duplicate = false;
        for item in &story.items {
            if let Item::Data(ast::DataDecl { name, .. }) | Item::View(ast::ViewDecl { name, .. }) =
                item
            {
                duplicate |= !names.insert(name.name.clone());
            }
        }
        let mut streamable = std::collections::BTreeMap::new();
        for (i, item) in story.items.iter().enumerate() {
            let Item::Data(d) = item else { continue };
            if duplicate {
                break;
            }
            let name = &d.name.name;
            let read_elsewhere = story.items.iter().any(|other| {
                !matches!(other, Item::Data(_) | Item::View(_))
                    && if d.database.is_some() {
                        // A database item is read elsewhere only where a
                        // chart, a plugin chart or a value selection names
                        // it as its table, so that a column of the same name
                        // does not bring every row over the network.
                        tables_named_in(other).contains(name.as_str())
                    } else {
                        names_in_item(other, false).contains(name.as_str())
                    }
            });
            let mine: Vec<ast::ViewDecl> = story.items[i + 1..]
                .iter()
                .filter_map(|it| match it {
                    Item::View(v) if v.input.name == *name => Some(v.clone()),
                    _ => None,
                })
                .collect();
            let early = story.items[..i]
                .iter()
                .any(|it| matches!(it, Item::View(v) if v.input.name == *name));
            if !read_elsewhere
                && !early
                && !mine.is_empty()
                && mine.iter().all(|v| {
                    if d.database.is_some() {
                        database_prefix_len(&v.steps) > 0
                    } else {
                        prefix_len(&v.steps) > 0
                    }
                })
            {
                streamable.insert(name.clone(), mine);
            }
        }
        self.story = StoryFacts {
            idents,
            idents_outside_order,
            all_columns,
            streamable,
        };
    }

    /// Load one `data` item: streamed (its views' prefixes computed, the item
    /// itself without rows) or loaded with the used columns.
    pub fn load(
        &mut self,
        src: &Arc<Source>,
        story_dir: &Path,
        decl: &ast::DataDecl,
        replacement: Option<&Path>,
        diags: &mut Vec<Diagnostic>,
    ) -> Option<Table> {
        if let Some(db) = &decl.database {
            if replacement.is_none() {
                let table = self.load_database(src, decl, db, diags);
                if let Some(c) = &self.cache {
                    c.put("report", "last", &self.report);
                }
                return table;
            }
        }
        let spec = data_spec(src, story_dir, decl, replacement, diags)?;
        // `--data` names a file on the user's own command line
        let within = match replacement {
            Some(_) => Within::anywhere(),
            None => self.within.clone(),
        };
        let file = match within.open(&spec.path) {
            Ok(f) => f,
            Err(OpenError::Outside { real }) => {
                let why = format!(
                    "`{}` is outside the story's folder ({})",
                    decl.file.value,
                    real.display()
                );
                diags.push(crate::paths::outside(
                    src,
                    decl.file.span.clone(),
                    "data file",
                    &why,
                ));
                return None;
            }
            Err(OpenError::Io(e)) => {
                return report_load(src, decl, Err(io_error(&spec, &e)), diags);
            }
        };
        let keep = if self.story.all_columns {
            Columns::All
        } else {
            Columns::Only(self.story.idents.clone())
        };
        let name = decl.name.name.clone();
        let mut result = None;
        if let Some(views) = self.story.streamable.get(&name).cloned() {
            result = self.stream(src, decl, (&spec, &file), &views, &keep, diags);
        }
        let table = match result {
            Some(r) => {
                self.report.streamed.push(name);
                r
            }
            None => {
                self.report.loaded.push(name);
                load_reported(src, decl, (&spec, &file), &keep, &self.limits, diags)
            }
        };
        if let Some(c) = &self.cache {
            c.put("report", "last", &self.report);
        }
        table
    }

    /// Stream a data item. `None`: load it whole instead (a problem in the
    /// file, a wrong type guess, or a view that does not check).
    fn stream(
        &mut self,
        src: &Arc<Source>,
        decl: &ast::DataDecl,
        (spec, file): (&CsvSpec, &File),
        views: &[ast::ViewDecl],
        keep: &Columns,
        diags: &mut Vec<Diagnostic>,
    ) -> Option<Option<Table>> {
        let name = decl.name.name.clone();
        // Columns to parse: declared, read by a prefix, or kept by a
        // `keep`-only prefix.
        let mut parse_names: BTreeSet<String> =
            spec.declared.iter().map(|(n, _)| n.clone()).collect();
        let mut keep_only = false;
        for v in views {
            let n = prefix_len(&v.steps);
            parse_names.extend(names_in_steps(&v.steps[..n]));
            keep_only |= !v.steps[..n].iter().any(|s| matches!(s, StepAst::By { .. }));
        }
        // The rows of a `keep`-only prefix carry the cells of every kept
        // column, which are only read when parsed.
        match (keep_only, keep) {
            (true, Columns::Only(k)) => parse_names.extend(k.iter().cloned()),
            (true, Columns::All) => return None,
            (false, _) => {}
        }
        let cache = self.cache.clone();
        let content = match &cache {
            Some(c) => match c.file_hash(&spec.path, file) {
                Ok(h) => Some(h),
                // Let the load report the unreadable file.
                Err(_) => return None,
            },
            None => None,
        };
        let keep_key = match (keep_only, keep) {
            (false, _) => "-".to_string(),
            (true, Columns::All) => "*".to_string(),
            (true, Columns::Only(k)) => format!("{k:?}"),
        };
        let data_key = content.as_ref().map(|h| {
            hash_hex(&[
                &FORMAT.to_le_bytes(),
                h.as_bytes(),
                format!("{:?}", spec.declared).as_bytes(),
                format!("{:?}", spec.missing).as_bytes(),
                format!("{parse_names:?}").as_bytes(),
                keep_key.as_bytes(),
            ])
        });
        let cached_data = match (&cache, &data_key) {
            (Some(c), Some(k)) => c.get::<DataEntry>("data", k),
            _ => None,
        };
        let known = cached_data.is_some();
        let entry = match cached_data {
            Some(e) => e,
            None => {
                let only = Columns::Only(parse_names.clone());
                let p = match probe_file(spec, file, &only, SAMPLE, &self.limits) {
                    Ok(p) => p,
                    Err(_) => return None,
                };
                let mut schema = Vec::new();
                for (n, t) in p.names.iter().zip(&p.types) {
                    let ty = match t {
                        Some(t) => *t,
                        // a parsed column without a value in the sample:
                        // its type is unknown, load the file whole
                        None if parse_names.contains(n) => return None,
                        None => ColType::Text,
                    };
                    schema.push((n.clone(), ty));
                }
                DataEntry {
                    schema,
                    data_start: p.data_start,
                    first_text: Vec::new(),
                }
            }
        };
        let schema = &entry.schema;
        // Check every view against the columns (quietly: the regular pass
        // reports), and keep the resolved prefix steps.
        let shell = Table {
            columns: schema
                .iter()
                .map(|(n, t)| Column {
                    name: n.clone(),
                    ty: *t,
                    values: Values::new(),
                })
                .collect(),
        };
        let named = Named {
            table: shell.clone(),
            decl: decl.span.clone(),
            is_data: true,
            rest: None,
            root: name.clone(),
            counts: BTreeSet::new(),
        };
        let mut prefixes = Vec::new();
        for v in views {
            let mut scratch = Vec::new();
            let mut steps = Vec::new();
            build_view_inner(src, v, self, &named, &mut scratch, None, &mut steps)?;
            if !scratch.is_empty() {
                return None;
            }
            let n = prefix_len(&v.steps);
            let prefix: Vec<Step> = steps.get(..n)?.to_vec();
            let mut keeps = Vec::new();
            let mut group = None;
            for s in &prefix {
                match s {
                    Step::Keep(e) => keeps.push(e.clone()),
                    Step::Group { keys, aggregates } => {
                        group = Some((keys.clone(), aggregates.clone()))
                    }
                    _ => return None,
                }
            }
            let key = data_key
                .as_ref()
                .map(|k| hash_hex(&[k.as_bytes(), format!("{prefix:?}").as_bytes()]));
            prefixes.push((
                v.name.name.clone(),
                n,
                prefix,
                StreamView { keeps, group },
                key,
            ));
        }
        let mut tables: Vec<Option<Table>> = prefixes
            .iter()
            .map(|(.., key)| match (&cache, key, known) {
                (Some(c), Some(k), true) => c.get::<StoredTable>("views", k).map(Table::from),
                _ => None,
            })
            .collect();
        let missing: Vec<usize> = (0..tables.len()).filter(|&i| tables[i].is_none()).collect();
        let mut first_text = entry.first_text.clone();
        if !missing.is_empty() {
            let parse: Vec<bool> = schema
                .iter()
                .map(|(n, _)| parse_names.contains(n))
                .collect();
            let keep_values: Vec<bool> = schema.iter().map(|(n, _)| keep.keeps(n)).collect();
            let stream_views: Vec<StreamView> =
                missing.iter().map(|&i| prefixes[i].3.clone()).collect();
            let input = ScanInput {
                spec,
                file,
                limits: &self.limits,
                schema,
                parse: &parse,
                keep_values: &keep_values,
                data_start: entry.data_start,
                views: &stream_views,
            };
            match stream::scan(&input, &Chunks::Auto) {
                Ok(out) => {
                    if out.rows == 0 {
                        // "a header but no data rows" is the loader's to say
                        return None;
                    }
                    first_text = out.first_text;
                    for (&i, t) in missing.iter().zip(out.tables) {
                        if let (Some(c), Some(k)) = (&cache, &prefixes[i].4) {
                            c.put("views", k, &StoredTable::from(&t));
                        }
                        tables[i] = Some(t);
                    }
                    if let (Some(c), Some(k)) = (&cache, &data_key) {
                        let mut e = entry.clone();
                        e.first_text = first_text.clone();
                        c.put("data", k, &e);
                    }
                }
                Err(ScanFailure::Fallback) => return None,
                Err(ScanFailure::Io(e)) => {
                    return Some(report_load::<Table>(src, decl, Err(*e), diags));
                }
            }
        }
        for (j, t) in first_text.iter().enumerate() {
            if let (Some((row, text)), Some((col, _))) = (t, schema.get(j)) {
                self.first_text
                    .insert((name.clone(), col.clone()), (*row, text.clone()));
            }
        }
        if let Some(k) = &data_key {
            self.report.cache_keys.push(format!("data/{k}"));
        }
        for (i, ((view, n, steps, _, key), table)) in prefixes.into_iter().zip(tables).enumerate() {
            let table = table?;
            if let Some(k) = key {
                self.report.cache_keys.push(format!("views/{k}"));
            }
            if missing.contains(&i) {
                self.report.computed_views.push(view.clone());
            } else {
                self.report.cached_views.push(view.clone());
            }
            self.streamed.insert(
                view,
                Streamed {
                    ast_steps: n,
                    steps,
                    table,
                },
            );
        }
        Some(Some(shell))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tables_are_the_view_fields_of_charts_plugins_and_selections() {
        let src = Source::file(
            "t.cresc",
            "data visits from \"d.csv\"\nview monthly = visits\n  | by pool: visits = sum(visits)\n\
             value top = max(monthly.visits where pool = \"A\")\n\
             value n = count(raw where visits > 3)\n\
             compare pool by visits\n\
             frame \"f\" {\n  bars monthly: category pool, value visits\n}\n\
             frame \"g\" {\n  draw slope trips: category pool, value visits\n}\n",
        );
        let (ast, diags) = crescendo_lang::parse(&src);
        assert!(diags.is_empty(), "{diags:?}");
        let found: Vec<String> = ast
            .items
            .iter()
            .filter(|i| !matches!(i, Item::Data(_) | Item::View(_)))
            .flat_map(tables_named_in)
            .collect();
        assert_eq!(found, ["monthly", "raw", "monthly", "trips"]);
    }

    #[test]
    fn idents_are_read_from_any_node() {
        let src = Source::file(
            "t.cresc",
            "data d from \"d.csv\"\nview v = d\n  | keep a > 1\n  | by b: s = sum(c)\n",
        );
        let (ast, diags) = crescendo_lang::parse(&src);
        assert!(diags.is_empty());
        let ids: BTreeSet<String> = ast
            .items
            .iter()
            .flat_map(|i| names_in_item(i, false))
            .collect();
        for n in ["d", "v", "a", "b", "s", "sum", "c"] {
            assert!(ids.contains(n), "{n}: {ids:?}");
        }
        assert!(!ids.contains("d.csv"));
    }
}
