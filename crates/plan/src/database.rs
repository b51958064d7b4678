//! `data NAME from table "t" via ENVVAR` (or `from query "..."`): data
//! items read from PostgreSQL.
//!
//! The item is split like a streamed CSV file (see `loading.rs`): when
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
use std::sync::Arc;
use std::time::Duration;

use crescendo_data::{Column, CsvSpec, Step, Table};
use crescendo_diag::{Diagnostic, Source};
use crescendo_lang::ast::{self, DbFrom};
use crescendo_sql::print::{self, RowOrder, StepKind};
use crescendo_sql::{types, Explained, SrcColumn};

use crate::io::{Database, Io};
use crate::resolve::{build_view_inner, data_spec, Named, Streamed, Tables};

/// A view's prefix query: the view, the number of its steps (as written)
/// the prefix covers, the resolved prefix steps and the query.
type PrefixQuery = (String, usize, Vec<Step>, print::Query);

/// Number of leading steps of a view over a database item that run in the
/// database: the rule of `crescendo_sql::print::pushable_len`, over the
/// steps as written.
pub(crate) fn database_prefix_len(steps: &[ast::StepAst]) -> usize {
    print::pushable_len(steps.iter().map(|s| match s {
        ast::StepAst::Keep { .. } => StepKind::Keep,
        ast::StepAst::Add { .. } => StepKind::Derive,
        ast::StepAst::By { .. } => StepKind::Group,
        ast::StepAst::Sort { .. } => StepKind::Sort,
        ast::StepAst::Columns { .. } => StepKind::Columns,
        ast::StepAst::Top { .. } => StepKind::Top,
    }))
}

/// The database data item being read.
struct Item<'a> {
    src: &'a Arc<Source>,
    decl: &'a ast::DataDecl,
    db: &'a ast::DatabaseSource,
    from: crescendo_sql::From,
    timeout: Duration,
}

impl Item<'_> {
    fn name(&self) -> &str {
        &self.decl.name.name
    }

    /// "cannot read data `NAME`: ..." at `span`.
    fn fail(&self, span: ast::Span, msg: String, label: &str) -> Diagnostic {
        Diagnostic::error(
            "database",
            format!("cannot read data `{}`: {msg}", self.name()),
        )
        .at(self.src, span, label.to_string())
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
    tables: &mut Tables,
    io: &mut dyn Io,
    src: &Arc<Source>,
    (decl, db): (&ast::DataDecl, &ast::DatabaseSource),
    diags: &mut Vec<Diagnostic>,
) -> Option<Table> {
    let name = &decl.name.name;
    if let Some(m) = decl.missing.as_ref().and_then(|m| m.first()) {
        diags.push(
            Diagnostic::error(
                "database",
                format!("data `{name}` reads a database, where NULL is the missing value"),
            )
            .at(src, m.span.clone(), "`missing` applies to files only"),
        );
        return None;
    }
    // Declared types (the path of the spec is unused).
    let spec = data_spec(src, std::path::Path::new("."), decl, None, diags)?;
    let conn = connection(tables, io, src, (decl, db), diags)?;
    let item = Item {
        src,
        decl,
        db,
        from: match &db.from {
            DbFrom::Table { schema, name } => crescendo_sql::From::Table {
                schema: schema.as_ref().map(|s| s.value.clone()),
                name: name.value.clone(),
            },
            DbFrom::Query(q) => crescendo_sql::From::Query(q.value.clone()),
        },
        timeout: tables.db.timeout,
    };
    let mut session = match io.connect(&conn, item.timeout) {
        Ok(s) => s,
        Err(e) => {
            diags.push(item.fail(db.env.span.clone(), e.message, "while connecting"));
            return None;
        }
    };
    let mut explained = Vec::new();
    let table = read(
        tables,
        &item,
        &spec,
        session.as_mut(),
        &mut explained,
        diags,
    );
    session.close();
    tables.sql.extend(explained);
    table
}

/// The connection string, from the variable the story (or `--connection`)
/// names.
fn connection(
    tables: &Tables,
    io: &dyn Io,
    src: &Arc<Source>,
    (decl, db): (&ast::DataDecl, &ast::DatabaseSource),
    diags: &mut Vec<Diagnostic>,
) -> Option<String> {
    let name = &decl.name.name;
    let overridden = tables.db.connections.get(name).cloned();
    let var = overridden.clone().unwrap_or_else(|| db.env.name.clone());
    if let Some(c) = io.env_var(&var).filter(|c| !c.trim().is_empty()) {
        return Some(c);
    }
    let mut d = Diagnostic::error(
        "database",
        format!("cannot read data `{name}`: the environment variable `{var}` is not set"),
    )
    .at(
        src,
        db.env.span.clone(),
        "this variable should hold the connection string",
    )
    .help(format!(
        "set it, e.g. `export {var}='postgresql://user@host/database'`"
    ));
    if overridden.is_some() {
        d = d.note(format!("`--connection {name}={var}` names this variable"));
    }
    diags.push(d);
    None
}

/// Read the item in an open session: its views' prefixes when they all go
/// to SQL, else its rows whole.
fn read(
    tables: &mut Tables,
    item: &Item,
    spec: &CsvSpec,
    session: &mut dyn Database,
    explained: &mut Vec<Explained>,
    diags: &mut Vec<Diagnostic>,
) -> Option<Table> {
    let described = match session.columns(&print::describe(&item.from), item.timeout) {
        Ok(c) => c,
        Err(e) => {
            let span = item.decl.file.span.clone();
            diags.push(item.fail(span, e.message, "while reading this source"));
            return None;
        }
    };
    let source = describe(tables, item, spec, &described, diags)?;
    let prefixes = match tables.story.streamable.get(item.name()).cloned() {
        Some(views) => prefix_queries(tables, item, &source, &views),
        None => None,
    };
    match prefixes {
        Some(prefixes) => {
            fetch_views(tables, item, session, prefixes, explained, diags)?;
            tables.report.streamed.push(item.name().to_string());
            Some(source.shell)
        }
        None => {
            let table = fetch_whole(item, session, &source, explained, diags)?;
            tables.report.loaded.push(item.name().to_string());
            Some(table)
        }
    }
}

/// The row order and the columns the story reads, checked against the
/// source's columns.
fn describe(
    tables: &Tables,
    item: &Item,
    spec: &CsvSpec,
    described: &[(String, String)],
    diags: &mut Vec<Diagnostic>,
) -> Option<Described> {
    let (decl, db) = (item.decl, item.db);
    let mut order = RowOrder::default();
    for o in &db.order {
        match described.iter().find(|(n, _)| *n == o.name) {
            Some((n, t)) => order.columns.push((n.clone(), types::is_text(t))),
            None => {
                let names: Vec<&str> = described.iter().map(|(n, _)| n.as_str()).collect();
                let msg = format!("its source has no column `{}`", o.name);
                diags.push(
                    item.fail(o.span.clone(), msg, "not a column of the source")
                        .note(format!("columns: {}", names.join(", "))),
                );
                return None;
            }
        }
    }
    // Declared columns must exist.
    let mut ok = true;
    for c in &decl.columns {
        if !described.iter().any(|(n, _)| *n == c.name.name) {
            let msg = format!("its source has no column `{}`", c.name.name);
            diags.push(item.fail(c.name.span.clone(), msg, "declared here"));
            ok = false;
        }
    }
    // The columns the story can read: declared, or used as a name
    // anywhere but in an `in order of` list (order columns only give the
    // row order unless they are declared or used elsewhere).
    let facts = &tables.story;
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
                diags.push(item.fail(span, msg, "this column"));
                ok = false;
            }
        }
    }
    if !ok {
        return None;
    }
    let shell = Table {
        columns: cols
            .iter()
            .map(|c| Column {
                name: c.name.clone(),
                ty: c.ty,
                values: Vec::new(),
            })
            .collect(),
    };
    Some(Described { order, cols, shell })
}

/// Run one query and decode its rows; the query is logged in `explained`.
fn run(
    item: &Item,
    session: &mut dyn Database,
    q: &print::Query,
    explained: &mut Vec<Explained>,
    view: Option<String>,
) -> Result<Table, String> {
    let (rows, bytes) = session
        .rows(&q.sql, &q.params, item.timeout)
        .map_err(|e| e.message)?;
    explained.push(Explained {
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
    tables: &mut Tables,
    item: &Item,
    session: &mut dyn Database,
    prefixes: Vec<PrefixQuery>,
    explained: &mut Vec<Explained>,
    diags: &mut Vec<Diagnostic>,
) -> Option<()> {
    let span = item.decl.file.span.clone();
    for (view, n, steps, q) in prefixes {
        let table = match run(item, session, &q, explained, Some(view.clone())) {
            Ok(t) => t,
            Err(m) => {
                let msg = format!("{m} (running view `{view}`)");
                diags.push(item.fail(span, msg, "while reading this source"));
                return None;
            }
        };
        if !steps.iter().any(|s| matches!(s, Step::Group { .. })) {
            let rows = table.columns.first().map_or(0, |c| c.values.len());
            diags.push(
                Diagnostic::warning(
                    "database-rows",
                    format!(
                        "view `{view}` fetched {rows} row{} of `{}` from the database",
                        plural(rows),
                        item.name()
                    ),
                )
                .at(item.src, span.clone(), "rows fetched")
                .note("the view does not aggregate (`by`) before its other steps, so its rows cross the network"),
            );
        }
        tables.report.computed_views.push(view.clone());
        tables.streamed.insert(
            view,
            Streamed {
                ast_steps: n,
                steps,
                table,
            },
        );
    }
    Some(())
}

/// Fetch every row of the item, in row order.
fn fetch_whole(
    item: &Item,
    session: &mut dyn Database,
    source: &Described,
    explained: &mut Vec<Explained>,
    diags: &mut Vec<Diagnostic>,
) -> Option<Table> {
    let span = item.decl.file.span.clone();
    let q = print::prefix(&item.from, &source.order, &source.cols, &[], None);
    let table = match run(item, session, &q, explained, None) {
        Ok(t) => t,
        Err(m) => {
            diags.push(item.fail(span, m, "while reading this source"));
            return None;
        }
    };
    let rows = table.columns.first().map_or(0, |c| c.values.len());
    let name = item.name();
    diags.push(
        Diagnostic::warning(
            "database-rows",
            format!(
                "all {rows} row{} of `{name}` were fetched from the database",
                plural(rows)
            ),
        )
        .at(item.src, span, "read whole")
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
    Some(table)
}

/// The prefix query of every view over a database item, or `None` when
/// one does not resolve (the item is then fetched whole, and the
/// regular pass reports the view's errors).
fn prefix_queries(
    tables: &Tables,
    item: &Item,
    source: &Described,
    views: &[ast::ViewDecl],
) -> Option<Vec<PrefixQuery>> {
    let (src, decl, from) = (item.src, item.decl, &item.from);
    let (order, cols, shell) = (&source.order, &source.cols, &source.shell);
    let named = Named {
        table: shell.clone(),
        decl: decl.span.clone(),
        is_data: true,
        rest: None,
        root: decl.name.name.clone(),
        counts: BTreeSet::new(),
    };
    let mut out = Vec::new();
    for v in views {
        let mut scratch = Vec::new();
        let mut steps = Vec::new();
        build_view_inner(src, v, tables, &named, &mut scratch, None, &mut steps)?;
        if !scratch.is_empty() {
            return None;
        }
        let n = database_prefix_len(&v.steps);
        // The prefix as printed pieces: `columns` steps are not resolved
        // steps, so their picks are found by name in the schema the
        // steps before them give (run over the empty shell).
        let mut pieces = Vec::new();
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
                    schema = crescendo_data::run_view(&schema, std::slice::from_ref(&step));
                    pieces.push(print::Piece::Step(step));
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
        out.push((v.name.name.clone(), n, prefix, q));
    }
    Some(out)
}
