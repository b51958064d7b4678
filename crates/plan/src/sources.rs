//! The `data` and `view` items: each data item read (from a file the story
//! may read, within the limits, or from a database), each view checked and
//! run; and the names `--data` and `--connection` give, which must be data
//! items of the story.

use std::collections::BTreeSet;
use std::path::PathBuf;

use crescendo_lang::ast::{self, Ident};

use crate::context::{Ctx, Outcome};
use crate::loading::Loader;
use crate::tables::{Named, Tables};
use crate::views::build_view;

/// A data or view name must be new.
fn unique(cx: &mut Ctx, tables: &Tables, name: &Ident) -> Outcome<()> {
    let Some(prev) = tables.by_name.get(&name.name) else {
        return Ok(());
    };
    let kind = if prev.is_data { "data" } else { "view" };
    let d = cx
        .at(
            "duplicate-name",
            format!("`{}` is already defined", name.name),
            name.span.clone(),
            "defined again here",
        )
        .also(
            cx.src,
            prev.decl.clone(),
            format!("first defined here as {kind}"),
        );
    Err(cx.report(d))
}

/// Read a `data` item into `tables` (or mark its name broken).
pub(crate) fn data_item(cx: &mut Ctx, loader: &mut Loader, tables: &mut Tables, d: &ast::DataDecl) {
    if unique(cx, tables, &d.name).is_err() {
        return;
    }
    match read(cx, loader, tables, d) {
        Ok(table) => {
            tables.by_name.insert(
                d.name.name.clone(),
                Named {
                    table,
                    decl: d.span.clone(),
                    is_data: true,
                    rest: None,
                    root: d.name.name.clone(),
                    counts: BTreeSet::new(),
                },
            );
        }
        Err(r) => {
            tables.broken.insert(d.name.name.clone(), r);
        }
    }
}

fn read(
    cx: &mut Ctx,
    loader: &mut Loader,
    tables: &mut Tables,
    d: &ast::DataDecl,
) -> Outcome<crescendo_data::Table> {
    let options = cx.options;
    let replacement: Option<PathBuf> = options.data.get(&d.name.name).cloned();
    let path = match &replacement {
        // `--data` names a file on purpose; the story may not
        Some(p) => p.clone(),
        None => {
            cx.confined(&d.file, "data file")?;
            cx.dir.join(&d.file.value)
        }
    };
    // a file that may be streamed is checked against the default limit
    // only if it has to be read whole after all (`Loader::load`)
    let streamed = loader.may_stream(d, &path);
    if let Err(why) = crate::limits::size(&path, cx.io.file_len(&path), &options.limits, streamed) {
        return Err(cx.error("limit", why, d.file.span.clone(), "this file"));
    }
    let table = loader.load(cx, tables, d, replacement.as_deref())?;
    if let Err(why) = crate::limits::table(&table, &options.limits) {
        return Err(cx.error("limit", why, d.file.span.clone(), "this file"));
    }
    Ok(table)
}

/// Check and run a `view` item into `tables` (or mark its name broken).
pub(crate) fn view_item(cx: &mut Ctx, tables: &mut Tables, v: &ast::ViewDecl) {
    if unique(cx, tables, &v.name).is_err() {
        return;
    }
    let built = tables.named(cx, &v.input).and_then(|input| {
        let src = cx.src;
        let prefix = tables.prefix_of(v, input);
        let built = cx.collect(|diags| build_view(src, v, tables, input, diags, prefix))?;
        Ok((built, input.root.clone()))
    });
    match built {
        Ok((built, root)) => {
            tables.by_name.insert(
                v.name.name.clone(),
                Named {
                    table: built.table,
                    decl: v.span.clone(),
                    is_data: false,
                    rest: built.rest,
                    root,
                    counts: built.counts,
                },
            );
        }
        Err(r) => {
            tables.broken.insert(v.name.name.clone(), r);
        }
    }
}

/// Every `--data NAME=...` and `--connection NAME=...` must name a data
/// item of the story (a database one, for `--connection`).
pub(crate) fn check_named(cx: &mut Ctx, story: &ast::StoryAst) {
    let options = cx.options;
    let data: Vec<&ast::DataDecl> = story.data().collect();
    for name in options.data.keys() {
        if data.iter().any(|d| d.name.name == *name) {
            continue;
        }
        let names = data.iter().map(|d| d.name.name.as_str());
        let d = cx
            .at(
                "unknown-name",
                format!("`--data {name}=...` names no data item of this story"),
                0..0,
                "in this story",
            )
            .among(name, "data items", names);
        cx.report(d);
    }
    let databases: Vec<&str> = data
        .iter()
        .filter(|d| d.database.is_some())
        .map(|d| d.name.name.as_str())
        .collect();
    for name in options.database.connections.keys() {
        if databases.contains(&name.as_str()) {
            continue;
        }
        let d = cx.at(
            "unknown-name",
            format!("`--connection {name}=...` names no database data item of this story"),
            0..0,
            "in this story",
        );
        let d = if databases.is_empty() {
            d.note("no data item of this story reads a database")
        } else {
            d.among(name, "database data items", databases.iter().copied())
        };
        cx.report(d);
    }
}
