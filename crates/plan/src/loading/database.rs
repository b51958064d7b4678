//! `data NAME from table "t" via ENVVAR` (or `from query "..."`): data
//! items read from PostgreSQL.
//!
//! The item is split like a streamed CSV file (see the module docs of `loading`): when
//! nothing but views reads it and every view over it starts with `keep`,
//! `add`, `by`, `sort` or `columns`, each view's prefix (its leading `keep`s
//! and `add`s, at most one `by`, then `keep`, `add`, `sort` and `columns`
//! steps up to a `top` or a second `by`; see `database_prefix_len`) is
//! printed as one SQL query by `crescendo_sql::print::pipeline` and run in
//! the database, and only its result comes back; the data item itself has
//! no rows. Otherwise (a chart or value reads the item itself, or a view
//! starts with `top`) the item's rows are fetched whole, in row order, and
//! a warning says how many.
//!
//! Everything runs in one read-only transaction per data item, with the
//! statement timeout of `DbOptions::timeout`. Every failure is a located
//! error that names the data item; the connection string and password
//! never appear in it.

use std::collections::BTreeSet;
use std::time::Duration;

use crescendo_data::{Column, CsvSpec, Step, Table};
use crescendo_diag::Diagnostic;
use crescendo_lang::ast::{self, DbFrom};
use crescendo_sql::print::{self, RowOrder};
use crescendo_sql::{types, Explained, SrcColumn};

use crate::context::{Ctx, Outcome};
use crate::io::Database;
use crate::loading::db_probe;
use crate::loading::facts::database_prefix_len;
use crate::loading::files::data_spec;
use crate::loading::state::Loader;
use crate::tables::{Streamed, Tables};
use crate::views::resolved_quietly;

/// A view's prefix query: the view, the number of its steps (as written)
/// the prefix covers, the resolved prefix steps, the query, and the
/// queries that ask about the text literals of its `keep`s.
type PrefixQuery = (String, usize, Vec<Step>, print::Query, Vec<db_probe::Probe>);

/// The database data item being read.
struct Item<'a> {
    decl: &'a ast::DataDecl,
    db: &'a ast::DatabaseSource,
    from: crescendo_sql::From,
    timeout: Duration,
    /// Ask for each query's plan too (`DbOptions::explain`).
    explain: bool,
}

impl Item<'_> {
    fn name(&self) -> &str {
        &self.decl.name.name
    }

    /// "cannot read data `NAME`: ..." at `span`.
    fn fail(&self, cx: &Ctx, span: ast::Span, msg: String, label: &str) -> Diagnostic {
        cx.at(
            "database",
            format!("cannot read data `{}`: {msg}", self.name()),
            span,
            label,
        )
    }
}

/// What the source offers: the row order, the columns the story reads,
/// and an empty table of them.
struct Described {
    order: RowOrder,
    cols: Vec<SrcColumn>,
    shell: Table,
}

/// Load a database `data` item (see the module docs).
pub(crate) fn load(
    cx: &mut Ctx,
    loader: &mut Loader,
    tables: &mut Tables,
    (decl, db): (&ast::DataDecl, &ast::DatabaseSource),
) -> Outcome<Table> {
    if let Some(m) = decl.missing.as_ref().and_then(|m| m.first()) {
        return Err(cx.error(
            "database",
            format!(
                "data `{}` reads a database, where NULL is the missing value",
                decl.name.name
            ),
            m.span.clone(),
            "`missing` applies to files only",
        ));
    }
    // Declared types (the path of the spec is unused).
    let spec = data_spec(cx, decl, None)?;
    let conn = connection(cx, (decl, db))?;
    let item = Item {
        decl,
        db,
        from: match &db.from {
            DbFrom::Table { schema, name } => crescendo_sql::From::Table {
                schema: schema.as_ref().map(|s| s.value.clone()),
                name: name.value.clone(),
            },
            DbFrom::Query(q) => crescendo_sql::From::Query(q.value.clone()),
        },
        timeout: cx.options.database.timeout,
        explain: cx.options.database.explain,
    };
    let mut session = match cx.io.connect(&conn, item.timeout) {
        Ok(s) => s,
        Err(e) => {
            let d = item.fail(cx, db.env.span.clone(), e.message, "while connecting");
            return Err(cx.report(d));
        }
    };
    let mut explained = Vec::new();
    let table = read(
        cx,
        loader,
        tables,
        &item,
        &spec,
        (session.as_mut(), &mut explained),
    );
    session.close();
    loader.sql.extend(explained);
    table
}

/// The connection string, from the variable the story (or `--connection`)
/// names.
fn connection(cx: &mut Ctx, (decl, db): (&ast::DataDecl, &ast::DatabaseSource)) -> Outcome<String> {
    let name = &decl.name.name;
    let overridden = cx.options.database.connections.get(name).cloned();
    let var = overridden.clone().unwrap_or_else(|| db.env.name.clone());
    if let Some(c) = cx.io.env_var(&var).filter(|c| !c.trim().is_empty()) {
        return Ok(c);
    }
    let mut d = cx
        .at(
            "database",
            format!("cannot read data `{name}`: the environment variable `{var}` is not set"),
            db.env.span.clone(),
            "this variable should hold the connection string",
        )
        .help(format!(
            "set it, e.g. `export {var}='postgresql://user@host/database'`"
        ));
    if overridden.is_some() {
        d = d.note(format!("`--connection {name}={var}` names this variable"));
    }
    Err(cx.report(d))
}

/// An open session, and the log of the queries it ran.
type Session<'s> = (&'s mut dyn Database, &'s mut Vec<Explained>);

/// Read the item in an open session: its views' prefixes when they all go
/// to SQL, else its rows whole.
fn read(
    cx: &mut Ctx,
    loader: &mut Loader,
    tables: &mut Tables,
    item: &Item,
    spec: &CsvSpec,
    (session, explained): Session,
) -> Outcome<Table> {
    let described = match session.columns(&print::describe(&item.from), item.timeout) {
        Ok(c) => c,
        Err(e) => {
            let span = item.decl.file.span.clone();
            let d = item.fail(cx, span, e.message, "while reading this source");
            return Err(cx.report(d));
        }
    };
    let source = describe(cx, &loader.facts, item, spec, &described)?;
    let prefixes = match loader.facts.streamable.get(item.name()) {
        Some(views) => prefix_queries(cx, tables, item, &source, views),
        None => None,
    };
    match prefixes {
        Some(prefixes) => {
            fetch_views(cx, loader, tables, item, (session, explained), prefixes)?;
            loader.report.streamed.push(item.name().to_string());
            Ok(source.shell)
        }
        None => {
            let table = fetch_whole(cx, item, (session, explained), &source)?;
            loader.report.loaded.push(item.name().to_string());
            Ok(table)
        }
    }
}

/// The row order and the columns the story reads, checked against the
/// source's columns.
fn describe(
    cx: &mut Ctx,
    facts: &crate::loading::facts::StoryFacts,
    item: &Item,
    spec: &CsvSpec,
    described: &[(String, String)],
) -> Outcome<Described> {
    let (decl, db) = (item.decl, item.db);
    let mut order = RowOrder::default();
    for o in &db.order {
        match described.iter().find(|(n, _)| *n == o.name) {
            Some((n, t)) => order.columns.push((n.clone(), types::is_text(t))),
            None => {
                let names: Vec<&str> = described.iter().map(|(n, _)| n.as_str()).collect();
                let msg = format!("its source has no column `{}`", o.name);
                let d = item
                    .fail(cx, o.span.clone(), msg, "not a column of the source")
                    .note(format!("columns: {}", names.join(", ")));
                return Err(cx.report(d));
            }
        }
    }
    let cp = cx.checkpoint();
    // Declared columns must exist.
    for c in &decl.columns {
        if !described.iter().any(|(n, _)| *n == c.name.name) {
            let msg = format!("its source has no column `{}`", c.name.name);
            let d = item.fail(cx, c.name.span.clone(), msg, "declared here");
            cx.report(d);
        }
    }
    // The columns the story can read: declared, or used as a name
    // anywhere but in an `in order of` list (order columns only give the
    // row order unless they are declared or used elsewhere).
    let mut cols: Vec<SrcColumn> = Vec::new();
    let mut seen = BTreeSet::new();
    for (n, t) in described {
        let declared = spec.declared.iter().find(|(d, _)| d == n).map(|(_, t)| *t);
        let used = declared.is_some()
            || facts.idents_outside_order.contains(n)
            || (facts.all_columns && !db.order.iter().any(|o| o.name == *n));
        if !used || !seen.insert(n.clone()) {
            continue;
        }
        match types::map(t, declared) {
            Ok((ty, read)) => cols.push(SrcColumn {
                name: n.clone(),
                ty,
                read,
            }),
            Err(why) => {
                let span = decl
                    .columns
                    .iter()
                    .find(|c| c.name.name == *n)
                    .map_or(decl.file.span.clone(), |c| c.name.span.clone());
                let msg = format!("column `{n}` cannot be read: {why}");
                let d = item.fail(cx, span, msg, "this column");
                cx.report(d);
            }
        }
    }
    cx.errors_since(cp)?;
    let shell = Table {
        columns: cols
            .iter()
            .map(|c| Column {
                name: c.name.clone(),
                ty: c.ty,
                values: Default::default(),
            })
            .collect(),
    };
    Ok(Described { order, cols, shell })
}

/// Run one query and decode its rows; the query is logged.
fn run(
    item: &Item,
    (session, explained): Session,
    q: &print::Query,
    view: Option<String>,
) -> Result<Table, String> {
    let (rows, bytes) = session
        .rows(&q.sql, &q.params, item.timeout)
        .map_err(|e| e.message)?;
    let plan = if item.explain {
        session
            .explain(&q.sql, &q.params, item.timeout)
            .map_err(|e| e.message)?
    } else {
        Vec::new()
    };
    explained.push(Explained {
        plan,
        data: item.name().to_string(),
        view,
        sql: q.sql.clone(),
        params: q.params.clone(),
        rows: rows.len() as u64,
        bytes,
    });
    crescendo_sql::decode::table(&rows, &q.outputs)
}

fn plural(n: usize) -> &'static str {
    if n == 1 {
        ""
    } else {
        "s"
    }
}

/// Run each view's prefix query; the results stand in for the prefixes.
fn fetch_views(
    cx: &mut Ctx,
    loader: &mut Loader,
    tables: &mut Tables,
    item: &Item,
    (session, explained): Session,
    prefixes: Vec<PrefixQuery>,
) -> Outcome<()> {
    let span = item.decl.file.span.clone();
    let views = loader.facts.streamable.get(item.name()).cloned();
    for (view, n, steps, q, asked) in prefixes {
        let decl = views.iter().flatten().find(|v| v.name.name == view);
        if let (Some(decl), false) = (decl, asked.is_empty()) {
            match db_probe::check(cx, &mut *session, item.timeout, decl, &asked) {
                Ok(ds) if ds.is_empty() => {}
                Ok(ds) => {
                    let reported = ds.into_iter().map(|d| cx.report(d)).last();
                    return Err(reported.unwrap_or_else(|| cx.already_reported()));
                }
                Err(m) => {
                    let msg = format!("{m} (checking the texts of view `{view}`)");
                    let d = item.fail(cx, span, msg, "while reading this source");
                    return Err(cx.report(d));
                }
            }
        }
        let table = match run(
            item,
            (&mut *session, &mut *explained),
            &q,
            Some(view.clone()),
        ) {
            Ok(t) => t,
            Err(m) => {
                let msg = format!("{m} (running view `{view}`)");
                let d = item.fail(cx, span, msg, "while reading this source");
                return Err(cx.report(d));
            }
        };
        if !steps.iter().any(|s| matches!(s, Step::Group { .. })) {
            let rows = table.columns.first().map_or(0, |c| c.values.len());
            cx.warn(
                Diagnostic::warning(
                    "database-rows",
                    format!(
                        "view `{view}` fetched {rows} row{} of `{}` from the database",
                        plural(rows),
                        item.name()
                    ),
                )
                .at(cx.src, span.clone(), "rows fetched")
                .note("the view does not aggregate (`by`) before its other steps, so its rows cross the network"),
            );
        }
        loader.report.computed_views.push(view.clone());
        tables.streamed.insert(
            view,
            Streamed {
                ast_steps: n,
                steps,
                table,
            },
        );
    }
    Ok(())
}

/// Fetch every row of the item, in row order.
fn fetch_whole(cx: &mut Ctx, item: &Item, session: Session, source: &Described) -> Outcome<Table> {
    let span = item.decl.file.span.clone();
    let q = print::prefix(&item.from, &source.order, &source.cols, &[], None);
    let table = match run(item, session, &q, None) {
        Ok(t) => t,
        Err(m) => {
            let d = item.fail(cx, span, m, "while reading this source");
            return Err(cx.report(d));
        }
    };
    let rows = table.columns.first().map_or(0, |c| c.values.len());
    let name = item.name();
    cx.warn(
        Diagnostic::warning(
            "database-rows",
            format!(
                "all {rows} row{} of `{name}` were fetched from the database",
                plural(rows)
            ),
        )
        .at(cx.src, span, "read whole")
        .note(
            "a chart or value reads this data item itself, or a view over \
             it starts with `top`; views that start with another step are \
             computed in the database",
        )
        .help(format!(
            "point charts and values at views over `{name}`, and aggregate \
             (`by`) before `top`"
        )),
    );
    Ok(table)
}

/// The prefix query of every view over a database item, or `None` when
/// one does not resolve (the item is then fetched whole, and the
/// regular pass reports the view's errors).
fn prefix_queries(
    cx: &Ctx,
    tables: &Tables,
    item: &Item,
    source: &Described,
    views: &[ast::ViewDecl],
) -> Option<Vec<PrefixQuery>> {
    let (src, decl, from) = (cx.src, item.decl, &item.from);
    let (order, cols, shell) = (&source.order, &source.cols, &source.shell);
    let mut out = Vec::new();
    for v in views {
        let steps = resolved_quietly(src, tables, decl, shell, v)?;
        let n = database_prefix_len(&v.steps);
        // The prefix as printed pieces: `columns` steps are not resolved
        // steps, so their picks are found by name in the schema the
        // steps before them give (run over the empty shell).
        let mut pieces = Vec::new();
        let mut asked = Vec::new();
        let mut resolved = steps.iter();
        let mut schema = shell.clone();
        for s in v.steps.get(..n)? {
            match s {
                ast::StepAst::Columns { names, .. } => {
                    let picked = names
                        .iter()
                        .map(|c| schema.columns.iter().position(|t| t.name == c.name))
                        .collect::<Option<Vec<usize>>>()?;
                    schema = Table {
                        columns: picked
                            .iter()
                            .filter_map(|&i| schema.columns.get(i).cloned())
                            .collect(),
                    };
                    pieces.push(print::Piece::Columns(picked));
                }
                _ => {
                    let step = resolved.next()?.clone();
                    let before = schema;
                    schema = crescendo_data::run_view(&before, std::slice::from_ref(&step));
                    pieces.push(print::Piece::Step(step));
                    let at = pieces.len() - 1;
                    let source = (from, order, cols.as_slice());
                    asked.extend(db_probe::of_keep(source, &pieces, at, &before));
                }
            }
        }
        if !print::pushable(&pieces) {
            return None;
        }
        let prefix: Vec<Step> = pieces
            .iter()
            .filter_map(|p| match p {
                print::Piece::Step(s) => Some(s.clone()),
                print::Piece::Columns(_) => None,
            })
            .collect();
        let q = print::pipeline(from, order, cols, &pieces);
        out.push((v.name.name.clone(), n, prefix, q, asked));
    }
    Some(out)
}
