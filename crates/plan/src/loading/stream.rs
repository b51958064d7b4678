//! Streaming a data file: the prefixes of its views (leading `keep`s and
//! one `by`) computed record by record in one pass, or taken from the view
//! cache (see the module docs of `loading`).

use std::collections::BTreeSet;
use std::fs::File;

use crescendo_data::load::ReadLimits;
use crescendo_data::probe::{Probe, Seen};
use crescendo_data::store::StoredTable;
use crescendo_data::stream::{ScanFailure, ScanInput, StreamView};
use crescendo_data::{ColType, Column, Columns, CsvSpec, Step, Table, Values};
use crescendo_diag::Diagnostic;
use crescendo_lang::ast::{self, StepAst};
use serde::de::DeserializeOwned;
use serde::{Deserialize, Serialize};

use crate::cache::{hash_hex, FORMAT};
use crate::context::{Ctx, Outcome};
use crate::io::ViewCache;
use crate::loading::facts::{names_in_steps, prefix_len};
use crate::loading::files;
use crate::loading::state::Loader;
use crate::tables::{Streamed, Tables};
use crate::unmatched::{unmatched, Lookup};
use crate::views::resolved_quietly;

/// Records read to guess the types of undeclared columns.
const SAMPLE: usize = 1000;

/// What the cache keeps about a data file (under the data key).
#[derive(Clone, Debug, Serialize, Deserialize)]
struct DataEntry {
    schema: Vec<(String, ColType)>,
    data_start: u64,
    first_text: Vec<Option<(usize, String)>>,
}

/// A cache entry, when present and readable.
fn get<T: DeserializeOwned>(cache: Option<&mut dyn ViewCache>, kind: &str, key: &str) -> Option<T> {
    serde_json::from_slice(&cache?.get(kind, key)?).ok()
}

/// Store a cache entry (a failure only costs the next build time).
fn put<T: Serialize>(cache: Option<&mut dyn ViewCache>, kind: &str, key: &str, value: &T) {
    if let (Some(c), Ok(json)) = (cache, serde_json::to_vec(value)) {
        c.put(kind, key, json);
    }
}

/// The columns a stream parses: declared, read by a prefix, or kept by a
/// `keep`-only prefix; and the part of the data key that says which
/// values are kept. `None`: a `keep`-only prefix keeps every column, so
/// the file is loaded whole instead.
fn parsed(
    spec: &CsvSpec,
    views: &[ast::ViewDecl],
    keep: &Columns,
) -> Option<(BTreeSet<String>, String)> {
    let mut names: BTreeSet<String> = spec.declared.iter().map(|(n, _)| n.clone()).collect();
    let mut keep_only = false;
    for v in views {
        let n = prefix_len(&v.steps);
        names.extend(names_in_steps(&v.steps[..n]));
        keep_only |= !v.steps[..n].iter().any(|s| matches!(s, StepAst::By { .. }));
    }
    // The rows of a `keep`-only prefix carry the cells of every kept
    // column, which are only read when parsed.
    let keep_key = match (keep_only, keep) {
        (false, _) => "-".to_string(),
        (true, Columns::All) => return None,
        (true, Columns::Only(k)) => {
            names.extend(k.iter().cloned());
            format!("{k:?}")
        }
    };
    Some((names, keep_key))
}

/// The file's schema and where its records start: from the cache, or from
/// the first records. `None`: a parsed column has no value in the sample
/// (its type is unknown), or the file does not probe: load it whole.
fn data_entry(
    cx: &mut Ctx,
    (spec, file, limits): (&CsvSpec, &File, &ReadLimits),
    parse: &BTreeSet<String>,
    key: Option<&str>,
) -> Option<(DataEntry, bool)> {
    if let Some(e) = key.and_then(|k| get::<DataEntry>(cx.io.cache(), "data", k)) {
        return Some((e, true));
    }
    let only = Columns::Only(parse.clone());
    let p = cx.io.probe_csv((spec, file), &only, SAMPLE, limits).ok()?;
    let mut schema = Vec::new();
    for (n, t) in p.names.iter().zip(&p.types) {
        let ty = match t {
            Some(t) => *t,
            None if parse.contains(n) => return None,
            None => ColType::Text,
        };
        schema.push((n.clone(), ty));
    }
    let entry = DataEntry {
        schema,
        data_start: p.data_start,
        first_text: Vec::new(),
    };
    Some((entry, false))
}

/// A view's streamed prefix: the view, the number of its steps (as
/// written) the prefix covers, its resolved steps, what the stream runs,
/// and its cache key.
pub(crate) struct Prefix {
    view: String,
    ast_steps: usize,
    steps: Vec<Step>,
    pub(crate) run: StreamView,
    key: Option<String>,
}

/// Check every view against the file's columns (quietly: the regular pass
/// reports) and keep the resolved prefix steps. `None`: a view does not
/// check or its prefix does not stream; load the file whole.
pub(crate) fn prefixes(
    cx: &Ctx,
    tables: &Tables,
    decl: &ast::DataDecl,
    shell: &Table,
    views: &[ast::ViewDecl],
    data_key: Option<&str>,
) -> Option<Vec<Prefix>> {
    let mut out = Vec::new();
    for v in views {
        let steps = resolved_quietly(cx.src, tables, decl, shell, v)?;
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
        let key = data_key.map(|k| hash_hex(&[k.as_bytes(), format!("{prefix:?}").as_bytes()]));
        out.push(Prefix {
            view: v.name.name.clone(),
            ast_steps: n,
            steps: prefix,
            run: StreamView { keeps, group },
            key,
        });
    }
    Some(out)
}

/// A data item to stream: its declaration, read spec and open file, and
/// the views over it whose prefixes the pass computes.
pub(crate) struct StreamItem<'a> {
    pub(crate) decl: &'a ast::DataDecl,
    pub(crate) spec: &'a CsvSpec,
    pub(crate) file: &'a File,
    pub(crate) views: &'a [ast::ViewDecl],
}

/// Stream a data item. `None`: load it whole instead (a problem in the
/// file, a wrong type guess, or a view that does not check); `Some(Err)`:
/// the file could not be read (reported).
pub(crate) fn stream(
    cx: &mut Ctx,
    loader: &mut Loader,
    tables: &mut Tables,
    item: &StreamItem,
    keep: &Columns,
) -> Option<Outcome<Table>> {
    let (parse, keep_key) = parsed(item.spec, item.views, keep)?;
    let data_key = match cx.io.cache() {
        Some(c) => {
            // an unreadable file: let the load report it
            let content = c.content_hash(&item.spec.path, item.file).ok()?;
            Some(hash_hex(&[
                &FORMAT.to_le_bytes(),
                content.as_bytes(),
                format!("{:?}", item.spec.declared).as_bytes(),
                format!("{:?}", item.spec.missing).as_bytes(),
                format!("{:?}", item.spec.numbers).as_bytes(),
                format!("{parse:?}").as_bytes(),
                keep_key.as_bytes(),
            ]))
        }
        None => None,
    };
    let read = (item.spec, item.file, &loader.limits);
    let (entry, known) = data_entry(cx, read, &parse, data_key.as_deref())?;
    let shell = Table {
        columns: entry
            .schema
            .iter()
            .map(|(n, t)| Column {
                name: n.clone(),
                ty: *t,
                values: Values::new(),
            })
            .collect(),
    };
    let prefixes = prefixes(
        cx,
        tables,
        item.decl,
        &shell,
        item.views,
        data_key.as_deref(),
    )?;
    let mut found: Vec<Option<Table>> = prefixes
        .iter()
        .map(|p| match (&p.key, known) {
            (Some(k), true) => get::<StoredTable>(cx.io.cache(), "views", k).map(Table::from),
            _ => None,
        })
        .collect();
    let missing: Vec<usize> = (0..found.len()).filter(|&i| found[i].is_none()).collect();
    let mut first_text = entry.first_text.clone();
    if !missing.is_empty() {
        let scanned = scan(cx, read, &entry, (&parse, keep), &prefixes, &missing);
        let tables_read = match scanned {
            Ok(Some(t)) => t,
            Ok(None) => return None,
            Err(e) => return Some(files::reported(cx, item.decl, Err(*e))),
        };
        first_text = tables_read.0;
        let unmatched = probed(cx, &entry.schema, item.views, &missing, &tables_read.2);
        if !unmatched.is_empty() {
            let reported = unmatched.into_iter().map(|d| cx.report(d)).last();
            return reported.map(Err);
        }
        for (&i, t) in missing.iter().zip(tables_read.1) {
            if let Some(k) = &prefixes[i].key {
                put(cx.io.cache(), "views", k, &StoredTable::from(&t));
            }
            found[i] = Some(t);
        }
        if let Some(k) = &data_key {
            let e = DataEntry {
                first_text: first_text.clone(),
                ..entry.clone()
            };
            put(cx.io.cache(), "data", k, &e);
        }
    }
    let name = &item.decl.name.name;
    for (j, t) in first_text.iter().enumerate() {
        if let (Some((row, text)), Some((col, _))) = (t, entry.schema.get(j)) {
            tables
                .first_text
                .insert((name.clone(), col.clone()), (*row, text.clone()));
        }
    }
    record(loader, tables, data_key, prefixes, found, &missing)?;
    Some(Ok(shell))
}

/// What one pass over a file gives: per column the first cell of a text
/// column that is not a number (row, text), the prefix tables, and what
/// the text literals of their `keep`s met.
type Scanned = (
    Vec<Option<(usize, String)>>,
    Vec<Table>,
    Vec<Vec<(Probe, Seen)>>,
);

/// The text literals of the streamed views' `keep`s that no row reaching
/// them holds (see `crate::unmatched`), as located errors: `probes[k]` is
/// what the view `views[missing[k]]` met.
pub(crate) fn probed(
    cx: &Ctx,
    schema: &[(String, ColType)],
    views: &[ast::ViewDecl],
    missing: &[usize],
    probes: &[Vec<(Probe, Seen)>],
) -> Vec<Diagnostic> {
    let mut out = Vec::new();
    for (&i, met) in missing.iter().zip(probes) {
        let Some(v) = views.get(i) else { continue };
        // the streamed `keep`s are the view's first steps
        for (k, step) in v.steps.iter().enumerate() {
            let StepAst::Keep { expr, .. } = step else {
                break;
            };
            out.extend(unmatched(cx.src, expr, &mut |name, text| {
                let column = schema.iter().position(|(n, _)| n == name);
                let hit = met
                    .iter()
                    .find(|(p, _)| p.keep == k && Some(p.column) == column && p.text == text);
                match hit {
                    Some((_, seen)) if seen.found => Lookup::Found,
                    Some((_, seen)) => Lookup::Absent(seen.values.clone()),
                    None => Lookup::Unknown,
                }
            }));
        }
    }
    out
}

/// The first non-number texts and the tables of the views `missing`, in
/// one pass over the file. `Ok(None)`: fall back to the whole load.
fn scan(
    cx: &Ctx,
    (spec, file, limits): (&CsvSpec, &File, &ReadLimits),
    entry: &DataEntry,
    (parse, keep): (&BTreeSet<String>, &Columns),
    prefixes: &[Prefix],
    missing: &[usize],
) -> Result<Option<Scanned>, Box<crescendo_data::LoadError>> {
    let schema = &entry.schema;
    let parse: Vec<bool> = schema.iter().map(|(n, _)| parse.contains(n)).collect();
    let keep_values: Vec<bool> = schema.iter().map(|(n, _)| keep.keeps(n)).collect();
    let views: Vec<StreamView> = missing.iter().map(|&i| prefixes[i].run.clone()).collect();
    let input = ScanInput {
        spec,
        file,
        limits,
        schema,
        parse: &parse,
        keep_values: &keep_values,
        data_start: entry.data_start,
        views: &views,
    };
    match cx.io.scan_csv(&input) {
        // "a header but no data rows" is the loader's to say
        Ok(out) if out.rows == 0 => Ok(None),
        Ok(out) => Ok(Some((out.first_text, out.tables, out.probes))),
        Err(ScanFailure::Fallback) => Ok(None),
        Err(ScanFailure::Io(e)) => Err(e),
    }
}

/// Keep the prefixes' tables for their views, and say what was computed
/// and what came from the cache.
pub(crate) fn record(
    loader: &mut Loader,
    tables: &mut Tables,
    data_key: Option<String>,
    prefixes: Vec<Prefix>,
    found: Vec<Option<Table>>,
    missing: &[usize],
) -> Option<()> {
    let report = &mut loader.report;
    if let Some(k) = &data_key {
        report.cache_keys.push(format!("data/{k}"));
    }
    for (i, (p, table)) in prefixes.into_iter().zip(found).enumerate() {
        let table = table?;
        if let Some(k) = p.key {
            report.cache_keys.push(format!("views/{k}"));
        }
        if missing.contains(&i) {
            report.computed_views.push(p.view.clone());
        } else {
            report.cached_views.push(p.view.clone());
        }
        tables.streamed.insert(
            p.view,
            Streamed {
                ast_steps: p.ast_steps,
                steps: p.steps,
                table,
            },
        );
    }
    Some(())
}
