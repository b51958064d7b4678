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
//! statement timeout of [`DbOptions::timeout`]. Every failure is a located
//! error that names the data item; the connection string and password
//! never appear in it.

use std::collections::BTreeSet;
use std::sync::Arc;
use std::time::Duration;

use crescendo_data::{Column, Step, Table};
use crescendo_diag::{Diagnostic, Source};
use crescendo_lang::ast::{self, DbFrom};
use crescendo_sql::print::{self, RowOrder};
use crescendo_sql::{types, Explained, Session, SrcColumn};

use crate::loading::database_prefix_len;
use crate::resolve::{build_view_inner, data_spec, Named, Streamed, Tables};

/// How database sources are reached.
#[derive(Clone, Debug)]
pub struct DbOptions {
    /// `--connection NAME=ENVVAR`: data item → the environment variable that
    /// holds its connection string (over the one the story names).
    pub connections: std::collections::BTreeMap<String, String>,
    /// The statement timeout of every query.
    pub timeout: Duration,
}

impl Default for DbOptions {
    fn default() -> Self {
        DbOptions {
            connections: Default::default(),
            timeout: Duration::from_secs(60),
        }
    }
}

/// A view's prefix query: the view, the number of its steps (as written)
/// the prefix covers, the resolved prefix steps and the query.
type PrefixQuery = (String, usize, Vec<Step>, print::Query);

impl Tables {
    /// Load a database `data` item (see the module docs).
    pub(crate) fn load_database(
        &mut self,
        src: &Arc<Source>,
        decl: &ast::DataDecl,
        db: &ast::DatabaseSource,
        diags: &mut Vec<Diagnostic>,
    ) -> Option<Table> {
        let name = decl.name.name.clone();
        let fail = |diags: &mut Vec<Diagnostic>, span: ast::Span, msg: String, label: &str| {
            diags.push(
                Diagnostic::error("database", format!("cannot read data `{name}`: {msg}")).at(
                    src,
                    span,
                    label.to_string(),
                ),
            );
        };
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
        let overridden = self.db.connections.get(&name).cloned();
        let var = overridden.clone().unwrap_or_else(|| db.env.name.clone());
        let conn = match std::env::var(&var) {
            Ok(c) if !c.trim().is_empty() => c,
            _ => {
                let mut d = Diagnostic::error(
                    "database",
                    format!(
                        "cannot read data `{name}`: the environment variable `{var}` is not set"
                    ),
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
                return None;
            }
        };
        let timeout = self.db.timeout;
        let from = match &db.from {
            DbFrom::Table { schema, name } => crescendo_sql::From::Table {
                schema: schema.as_ref().map(|s| s.value.clone()),
                name: name.value.clone(),
            },
            DbFrom::Query(q) => crescendo_sql::From::Query(q.value.clone()),
        };
        let mut session = match Session::open(&conn, timeout) {
            Ok(s) => s,
            Err(e) => {
                fail(diags, db.env.span.clone(), e.message, "while connecting");
                return None;
            }
        };
        let described = match session.columns(&print::describe(&from), timeout) {
            Ok(c) => c,
            Err(e) => {
                fail(
                    diags,
                    decl.file.span.clone(),
                    e.message,
                    "while reading this source",
                );
                session.close();
                return None;
            }
        };
        // The row order.
        let mut order = RowOrder::default();
        for o in &db.order {
            match described.iter().find(|(n, _)| *n == o.name) {
                Some((n, t)) => order.columns.push((n.clone(), types::is_text(t))),
                None => {
                    let names: Vec<&str> = described.iter().map(|(n, _)| n.as_str()).collect();
                    diags.push(
                        Diagnostic::error(
                            "database",
                            format!(
                                "cannot read data `{name}`: its source has no column `{}`",
                                o.name
                            ),
                        )
                        .at(src, o.span.clone(), "not a column of the source")
                        .note(format!("columns: {}", names.join(", "))),
                    );
                    session.close();
                    return None;
                }
            }
        }
        // Declared columns must exist.
        let mut ok = true;
        for c in &decl.columns {
            if !described.iter().any(|(n, _)| *n == c.name.name) {
                fail(
                    diags,
                    c.name.span.clone(),
                    format!("its source has no column `{}`", c.name.name),
                    "declared here",
                );
                ok = false;
            }
        }
        // The columns the story can read: declared, or used as a name
        // anywhere but in an `in order of` list (order columns only give
        // the row order unless they are declared or used elsewhere).
        let mut cols: Vec<SrcColumn> = Vec::new();
        let mut seen = BTreeSet::new();
        for (n, t) in &described {
            let declared = spec.declared.iter().find(|(d, _)| d == n).map(|(_, t)| *t);
            let used = declared.is_some()
                || if self.story.all_columns {
                    !db.order.iter().any(|o| o.name == *n)
                        || self.story.idents_outside_order.contains(n)
                } else {
                    self.story.idents_outside_order.contains(n)
                };
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
                    fail(
                        diags,
                        span,
                        format!("column `{n}` cannot be read: {why}"),
                        "this column",
                    );
                    ok = false;
                }
            }
        }
        if !ok {
            session.close();
            return None;
        }
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
        let result = match self.story.streamable.get(&name).cloned() {
            Some(views) => self.database_views(src, decl, &from, &order, &cols, &shell, &views),
            None => None,
        };
        let run = |session: &mut Session,
                   q: &print::Query,
                   explained: &mut Vec<Explained>,
                   view: Option<String>|
         -> Result<Table, String> {
            let (rows, bytes) = session
                .rows(&q.sql, &q.params, timeout)
                .map_err(|e| e.message)?;
            explained.push(Explained {
                data: name.clone(),
                view,
                sql: q.sql.clone(),
                params: q.params.clone(),
                rows: rows.len() as u64,
                bytes,
            });
            crescendo_sql::decode::table(&rows, &q.outputs)
        };
        let mut explained = Vec::new();
        let table = match result {
            Some(prefixes) => {
                for (view, n, steps, q) in prefixes {
                    let aggregates = steps.iter().any(|s| matches!(s, Step::Group { .. }));
                    match run(&mut session, &q, &mut explained, Some(view.clone())) {
                        Ok(table) => {
                            if !aggregates {
                                let n = table.columns.first().map_or(0, |c| c.values.len());
                                diags.push(
                                    Diagnostic::warning(
                                        "database-rows",
                                        format!(
                                            "view `{view}` fetched {n} row{} of `{name}` from the database",
                                            if n == 1 { "" } else { "s" }
                                        ),
                                    )
                                    .at(src, decl.file.span.clone(), "rows fetched")
                                    .note("the view does not aggregate (`by`) before its other steps, so its rows cross the network"),
                                );
                            }
                            self.report.computed_views.push(view.clone());
                            self.streamed.insert(
                                view,
                                Streamed {
                                    ast_steps: n,
                                    steps,
                                    table,
                                },
                            );
                        }
                        Err(m) => {
                            fail(
                                diags,
                                decl.file.span.clone(),
                                format!("{m} (running view `{view}`)"),
                                "while reading this source",
                            );
                            session.close();
                            self.push_explained(explained);
                            return None;
                        }
                    }
                }
                self.report.streamed.push(name.clone());
                shell
            }
            None => {
                let q = print::prefix(&from, &order, &cols, &[], None);
                match run(&mut session, &q, &mut explained, None) {
                    Ok(table) => {
                        let n = table.columns.first().map_or(0, |c| c.values.len());
                        diags.push(
                            Diagnostic::warning(
                                "database-rows",
                                format!(
                                    "all {n} row{} of `{name}` were fetched from the database",
                                    if n == 1 { "" } else { "s" }
                                ),
                            )
                            .at(src, decl.file.span.clone(), "read whole")
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
                        self.report.loaded.push(name.clone());
                        table
                    }
                    Err(m) => {
                        fail(
                            diags,
                            decl.file.span.clone(),
                            m,
                            "while reading this source",
                        );
                        session.close();
                        self.push_explained(explained);
                        return None;
                    }
                }
            }
        };
        session.close();
        self.push_explained(explained);
        Some(table)
    }

    fn push_explained(&self, e: Vec<Explained>) {
        if let Ok(mut all) = self.sql.lock() {
            all.extend(e);
        }
    }

    /// The prefix query of every view over a database item, or `None` when
    /// one does not resolve (the item is then fetched whole, and the
    /// regular pass reports the view's errors).
    #[allow(clippy::too_many_arguments)]
    fn database_views(
        &self,
        src: &Arc<Source>,
        decl: &ast::DataDecl,
        from: &crescendo_sql::From,
        order: &RowOrder,
        cols: &[SrcColumn],
        shell: &Table,
        views: &[ast::ViewDecl],
    ) -> Option<Vec<PrefixQuery>> {
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
            build_view_inner(src, v, self, &named, &mut scratch, None, &mut steps)?;
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
}
