//! Name resolution and type checking of the data and view items: turns the
//! syntax tree's `data` and `view` items into loaded tables.

use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;
use std::sync::Arc;

use crate::cache::Cache;
use crescendo_data::Columns;

use crescendo_data::{
    self as data, AggFn, Aggregate, ColType, CsvSpec, LoadError, Step, Table, Value,
};
use crescendo_diag::{closest, Diagnostic, Source};
use crescendo_lang::ast::{self, Ident, StepAst};

pub use crate::rows::{column, schema_of, Schema};
use crate::rows::{Checker, Ty};

/// A table known by name, with where it was declared.
pub struct Named {
    pub table: Table,
    pub decl: ast::Span,
    /// `true` for data items, `false` for views.
    pub is_data: bool,
    /// The label of the folded "other" row when the view ends with `top`.
    pub rest: Option<String>,
    /// The data item this table derives from (itself for data items).
    pub root: String,
    /// Columns that count rows (from `count` aggregates), for the
    /// small-counts rule.
    pub counts: std::collections::BTreeSet<String>,
}

/// Every data and view table of a story, by name.
#[derive(Default)]
pub struct Tables {
    pub by_name: BTreeMap<String, Named>,
    /// Names whose item failed; uses of them are not reported again.
    pub broken: Vec<String>,
    /// What [`Tables::prepare`] learnt from the whole story.
    pub(crate) story: StoryFacts,
    /// Prefixes of views computed while their data item was streamed, by
    /// view name.
    pub(crate) streamed: BTreeMap<String, Streamed>,
    /// For streamed data items, (data item, column) → the first data row
    /// (0-based) and text of a text column's cell that is not a number.
    pub(crate) first_text: BTreeMap<(String, String), (usize, String)>,
    /// Where views are cached between builds.
    pub(crate) cache: Option<Cache>,
    /// What the loads did, for the command to report.
    pub report: LoadReport,
    /// How database sources are reached.
    pub(crate) db: crate::database::DbOptions,
    /// The queries database sources ran (for `check --explain-sql`).
    pub(crate) sql: Arc<std::sync::Mutex<Vec<crescendo_sql::Explained>>>,
    /// Where the story's data files may be opened from.
    pub(crate) within: crescendo_data::files::Within,
    /// The text and row limits of a read.
    pub(crate) limits: crescendo_data::load::ReadLimits,
}

/// How the data items of one plan were read (also stored in the cache
/// folder as `report/last.json`).
#[derive(Clone, Debug, Default, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct LoadReport {
    /// Data items read in one streaming pass.
    pub streamed: Vec<String>,
    /// Data items loaded whole (the used columns).
    pub loaded: Vec<String>,
    /// Views whose streamed prefix came from the cache.
    pub cached_views: Vec<String>,
    /// Views whose streamed prefix was computed by this build.
    pub computed_views: Vec<String>,
    /// The cache entries this build read or wrote (`views/KEY`,
    /// `data/KEY`); the command deletes the others after a good build, so
    /// the cache does not grow with every data refresh.
    #[serde(default)]
    pub cache_keys: Vec<String>,
}

/// A streamed view prefix: the steps it resolved to and its table.
pub struct Streamed {
    /// Number of the view's steps (as written) the prefix covers.
    pub(crate) ast_steps: usize,
    pub(crate) steps: Vec<Step>,
    pub(crate) table: Table,
}

/// Facts about the whole story that decide how data is read.
#[derive(Default)]
pub(crate) struct StoryFacts {
    /// Every name used as an identifier anywhere in the story: a superset
    /// of the columns anything reads.
    pub(crate) idents: BTreeSet<String>,
    /// The same, without the names in `in order of` lists of database
    /// sources (order columns are read only when used elsewhere).
    pub(crate) idents_outside_order: BTreeSet<String>,
    /// Some step may see every column of a data item (a `top` before any
    /// `by` folds by all text columns; a `table` chart may list them all).
    pub(crate) all_columns: bool,
    /// Data item name → its views (in story order) when the item can be
    /// streamed: nothing but views reads it, and every view over it starts
    /// with `keep` or `by`.
    pub(crate) streamable: BTreeMap<String, Vec<ast::ViewDecl>>,
}

impl Tables {
    /// Why a column is text rather than number: the first cell of the same
    /// column in the table's data that is not a number, as a note such as
    /// "`riders` was read as text: data row 14 of `trips` holds `n/a`".
    pub fn why_text(&self, table: &str, column: &str) -> Option<String> {
        let root = &self.by_name.get(table)?.root;
        if let Some((i, t)) = self.first_text.get(&(root.clone(), column.to_string())) {
            return Some(format!(
                "`{column}` was read as text because data row {} of `{root}` holds `{t}`",
                i + 1
            ));
        }
        let data = &self.by_name.get(root)?.table;
        let col = data.columns.iter().find(|c| c.name == column)?;
        if col.ty != ColType::Text {
            return None;
        }
        col.values.iter().enumerate().find_map(|(i, v)| match v {
            Value::Text(t) if data::load::parse_number(&t).is_none() => Some(format!(
                "`{column}` was read as text because data row {} of `{root}` holds `{t}`",
                i + 1
            )),
            _ => None,
        })
    }

    /// Look up a table used at `id`; reports unknown names with a suggestion.
    pub fn get<'a>(
        &'a self,
        src: &Arc<Source>,
        id: &Ident,
        diags: &mut Vec<Diagnostic>,
    ) -> Option<&'a Named> {
        if let Some(n) = self.by_name.get(&id.name) {
            return Some(n);
        }
        if !self.broken.contains(&id.name) {
            let mut d = Diagnostic::error(
                "unknown-name",
                format!("no data or view named `{}`", id.name),
            )
            .at(src, id.span.clone(), "not defined before this point");
            if let Some(s) = closest(&id.name, self.by_name.keys().map(String::as_str)) {
                d = d.help(format!("did you mean `{s}`?"));
            } else if !self.by_name.is_empty() {
                let names: Vec<&str> = self.by_name.keys().map(String::as_str).collect();
                d = d.note(format!("known tables: {}", names.join(", ")));
            }
            diags.push(d);
        }
        None
    }
}

fn col_type(src: &Arc<Source>, id: &Ident, diags: &mut Vec<Diagnostic>) -> Option<ColType> {
    Some(match id.name.as_str() {
        "text" => ColType::Text,
        "number" => ColType::Number,
        "date" => ColType::Date,
        "month" => ColType::Month,
        "year" => ColType::Year,
        other => {
            let mut d = Diagnostic::error("unknown-type", format!("unknown column type `{other}`"))
                .at(src, id.span.clone(), "not a type")
                .note("column types are text, number, date (YYYY-MM-DD), month (YYYY-MM) and year (YYYY)");
            if let Some(s) = closest(other, ["text", "number", "date", "month", "year"]) {
                d = d.help(format!("did you mean `{s}`?"));
            }
            diags.push(d);
            return None;
        }
    })
}

/// The CSV spec of a `data` item; reports bad column declarations.
pub(crate) fn data_spec(
    src: &Arc<Source>,
    story_dir: &Path,
    decl: &ast::DataDecl,
    replacement: Option<&Path>,
    diags: &mut Vec<Diagnostic>,
) -> Option<CsvSpec> {
    let mut declared = Vec::new();
    let mut ok = true;
    for c in &decl.columns {
        if declared
            .iter()
            .any(|(n, _): &(String, ColType)| *n == c.name.name)
        {
            diags.push(
                Diagnostic::error(
                    "duplicate-name",
                    format!("column `{}` is declared twice", c.name.name),
                )
                .at(src, c.name.span.clone(), "declared again here"),
            );
            ok = false;
            continue;
        }
        match col_type(src, &c.ty, diags) {
            Some(t) => declared.push((c.name.name.clone(), t)),
            None => ok = false,
        }
    }
    if !ok {
        return None;
    }
    // `--data NAME=FILE` replaces the file (relative to the working folder).
    let path = match replacement {
        Some(p) => p.to_path_buf(),
        None => story_dir.join(&decl.file.value),
    };
    let spec = CsvSpec {
        display_name: path.display().to_string(),
        path,
        declared,
        missing: match &decl.missing {
            Some(m) => m.iter().map(|s| s.value.clone()).collect(),
            None => vec![String::new(), "NA".to_string()],
        },
    };
    Some(spec)
}

/// Load (the selected columns of) a data file; reports its errors.
pub(crate) fn load_reported(
    src: &Arc<Source>,
    decl: &ast::DataDecl,
    (spec, file): (&CsvSpec, &std::fs::File),
    columns: &Columns,
    limits: &data::load::ReadLimits,
    diags: &mut Vec<Diagnostic>,
) -> Option<Table> {
    let result = data::load::load_file(spec, file, columns, limits);
    report_load(src, decl, result, diags)
}

pub(crate) fn report_load<T>(
    src: &Arc<Source>,
    decl: &ast::DataDecl,
    result: Result<T, LoadError>,
    diags: &mut Vec<Diagnostic>,
) -> Option<T> {
    match result {
        Ok(t) => Some(t),
        Err(LoadError::Csv(d)) => {
            diags.push(d.also(
                src,
                decl.file.span.clone(),
                format!("while loading `{}`", decl.name.name),
            ));
            None
        }
        Err(LoadError::Story {
            code,
            message,
            help,
            declared,
        }) => {
            let span = match declared {
                Some(i) => decl
                    .columns
                    .get(i)
                    .map_or(decl.file.span.clone(), |c| c.name.span.clone()),
                None => decl.file.span.clone(),
            };
            let mut d = Diagnostic::error(code, message).at(src, span, "");
            d.help = help;
            diags.push(d);
            None
        }
    }
}

fn agg_fn(src: &Arc<Source>, id: &Ident, diags: &mut Vec<Diagnostic>) -> Option<AggFn> {
    const NAMES: [&str; 8] = [
        "sum", "mean", "median", "min", "max", "count", "first", "last",
    ];
    Some(match id.name.as_str() {
        "sum" => AggFn::Sum,
        "mean" => AggFn::Mean,
        "median" => AggFn::Median,
        "min" => AggFn::Min,
        "max" => AggFn::Max,
        "count" => AggFn::Count,
        "first" => AggFn::First,
        "last" => AggFn::Last,
        other => {
            let mut d = Diagnostic::error("unknown-name", format!("unknown aggregate `{other}`"))
                .at(src, id.span.clone(), "not an aggregate")
                .note(format!("aggregates are {}", NAMES.join(", ")));
            if let Some(s) = closest(other, NAMES) {
                d = d.help(format!("did you mean `{s}`?"));
            }
            diags.push(d);
            return None;
        }
    })
}

fn check_new_name(
    src: &Arc<Source>,
    schema: &Schema,
    id: &Ident,
    diags: &mut Vec<Diagnostic>,
) -> bool {
    if schema.iter().any(|(n, _)| *n == id.name) {
        diags.push(
            Diagnostic::error(
                "duplicate-name",
                format!("a column named `{}` already exists here", id.name),
            )
            .at(src, id.span.clone(), "name taken")
            .help("choose another name"),
        );
        return false;
    }
    true
}

/// Type-check one view's steps against its input and run them. Returns the
/// table and the label of its folded "other" row (see [`Named::rest`]).
pub fn build_view(
    src: &Arc<Source>,
    decl: &ast::ViewDecl,
    tables: &Tables,
    input: &Named,
    diags: &mut Vec<Diagnostic>,
) -> Option<(Table, Option<String>, std::collections::BTreeSet<String>)> {
    // A view over a streamed data item: its prefix was computed while the
    // file was read (see `Tables::load`).
    let prefix = if input.is_data && input.root == decl.input.name {
        tables.streamed.get(&decl.name.name)
    } else {
        None
    };
    build_view_inner(src, decl, tables, input, diags, prefix, &mut Vec::new())
}

/// [`build_view`], with the table of a streamed prefix to use in place of
/// running it, and the resolved steps in `resolved_steps`.
pub(crate) fn build_view_inner(
    src: &Arc<Source>,
    decl: &ast::ViewDecl,
    tables: &Tables,
    input: &Named,
    diags: &mut Vec<Diagnostic>,
    prefix: Option<&Streamed>,
    resolved_steps: &mut Vec<Step>,
) -> Option<(Table, Option<String>, std::collections::BTreeSet<String>)> {
    let why = |col: &str| tables.why_text(&decl.input.name, col);
    let mut table = input.table.clone();
    let mut rest_label = input.rest.clone();
    let mut counts = input.counts.clone();
    for (index, step) in decl.steps.iter().enumerate() {
        let schema = schema_of(&table);
        let before = diags.len();
        let at_step = format!("at this step of `{}`", decl.name.name);
        let name = at_step.as_str();
        // `columns a, b, c`: keep only these columns, in this order.
        if let StepAst::Columns { names, .. } = step {
            let mut picked: Vec<usize> = Vec::new();
            for n in names {
                if let Some((i, _)) = column(src, &schema, name, n, diags) {
                    if picked.contains(&i) {
                        diags.push(
                            Diagnostic::error(
                                "duplicate-name",
                                format!("`{}` is listed twice", n.name),
                            )
                            .at(src, n.span.clone(), "again here"),
                        );
                    }
                    picked.push(i);
                }
            }
            if diags.len() > before {
                return None;
            }
            table = Table {
                columns: picked.iter().map(|&i| table.columns[i].clone()).collect(),
            };
            counts.retain(|c| table.columns.iter().any(|t| t.name == *c));
            // A prefix computed in the database may end with `columns`.
            if let Some(p) = prefix.filter(|p| index + 1 == p.ast_steps) {
                if *resolved_steps != p.steps {
                    diags.push(Diagnostic::error(
                        "internal",
                        format!(
                            "view `{}` resolved differently while its data was streamed",
                            decl.name.name
                        ),
                    ));
                    return None;
                }
                table = p.table.clone();
            }
            continue;
        }
        let resolved = match step {
            StepAst::Columns { .. } => None,
            StepAst::Keep { expr, .. } => {
                let mut ck = Checker {
                    src,
                    schema: &schema,
                    table: name,
                    diags,
                    why: &why,
                };
                match ck.check(expr) {
                    Some((e, Ty::Bool)) => Some(Step::Keep(e)),
                    Some((_, t)) => {
                        ck.err(
                            expr.span(),
                            format!("`keep` needs a condition, but this is {}", t.describe()),
                            "not a condition",
                        );
                        None
                    }
                    None => None,
                }
            }
            StepAst::Add {
                name: new, expr, ..
            } => {
                if !check_new_name(src, &schema, new, diags) {
                    None
                } else {
                    let mut ck = Checker {
                        src,
                        schema: &schema,
                        table: name,
                        diags,
                        why: &why,
                    };
                    match ck.check(expr) {
                        Some((e, Ty::Col(ColType::Number))) => Some(Step::Derive {
                            name: new.name.clone(),
                            expr: e,
                        }),
                        Some((_, t)) => {
                            ck.err(
                                expr.span(),
                                format!("`add` computes a number, but this is {}", t.describe()),
                                "not a number",
                            );
                            None
                        }
                        None => None,
                    }
                }
            }
            StepAst::By {
                keys, aggregates, ..
            } => {
                let mut key_idx = Vec::new();
                let mut out: Schema = Vec::new();
                for k in keys {
                    if let Some((i, t)) = column(src, &schema, name, k, diags) {
                        if key_idx.contains(&i) {
                            diags.push(
                                Diagnostic::error(
                                    "duplicate-name",
                                    format!("`{}` is already a key", k.name),
                                )
                                .at(
                                    src,
                                    k.span.clone(),
                                    "repeated key",
                                ),
                            );
                        }
                        key_idx.push(i);
                        out.push((k.name.clone(), t));
                    }
                }
                let mut aggs = Vec::new();
                for a in aggregates {
                    if !check_new_name(src, &out, &a.name, diags) {
                        continue;
                    }
                    let Some(func) = agg_fn(src, &a.func, diags) else {
                        continue;
                    };
                    let col = match &a.column {
                        None if func == AggFn::Count => None,
                        None => {
                            diags.push(
                                Diagnostic::error(
                                    "type",
                                    format!("`{}` needs a column", a.func.name),
                                )
                                .at(src, a.span.clone(), "no column given")
                                .help(format!("write `{} = {}(COLUMN)`", a.name.name, a.func.name)),
                            );
                            continue;
                        }
                        Some(c) => {
                            let Some((i, t)) = column(src, &schema, name, c, diags) else {
                                continue;
                            };
                            let numeric = matches!(func, AggFn::Sum | AggFn::Mean | AggFn::Median);
                            if numeric && t != ColType::Number {
                                diags.push(
                                    Diagnostic::error(
                                        "type",
                                        format!(
                                            "`{}` needs a number column, but `{}` is {}",
                                            a.func.name,
                                            c.name,
                                            t.name()
                                        ),
                                    )
                                    .at(
                                        src,
                                        c.span.clone(),
                                        "not a number column",
                                    ),
                                );
                                if let (Some(n), Some(d)) = (why(&c.name), diags.last_mut()) {
                                    d.notes.push(n);
                                }
                                continue;
                            }
                            Some(i)
                        }
                    };
                    let ty = match (func, col) {
                        (AggFn::Count | AggFn::Sum | AggFn::Mean | AggFn::Median, _) => {
                            ColType::Number
                        }
                        (_, Some(i)) => schema[i].1,
                        (_, None) => ColType::Number,
                    };
                    out.push((a.name.name.clone(), ty));
                    aggs.push(Aggregate {
                        name: a.name.name.clone(),
                        func,
                        column: col,
                    });
                }
                Some(Step::Group {
                    keys: key_idx,
                    aggregates: aggs,
                })
            }
            StepAst::Sort { keys, .. } => {
                let mut out = Vec::new();
                for k in keys {
                    if let Some((i, _)) = column(src, &schema, name, &k.column, diags) {
                        out.push((i, k.descending));
                    }
                }
                Some(Step::Sort { keys: out })
            }
            StepAst::Top {
                n,
                n_span,
                key,
                by,
                rest,
                ..
            } => {
                let k = column(src, &schema, name, key, diags);
                let b = column(src, &schema, name, by, diags);
                if *n == 0 {
                    diags.push(Diagnostic::error("type", "`top 0` would keep nothing").at(
                        src,
                        n_span.clone(),
                        "must be 1 or more",
                    ));
                }
                match (k, b) {
                    (Some((ki, kt)), Some((bi, bt))) => {
                        if kt != ColType::Text {
                            diags.push(
                                Diagnostic::error(
                                    "type",
                                    format!(
                                        "`top` folds text categories, but `{}` is {}",
                                        key.name,
                                        kt.name()
                                    ),
                                )
                                .at(
                                    src,
                                    key.span.clone(),
                                    "not a text column",
                                ),
                            );
                        }
                        if bt != ColType::Number {
                            diags.push(
                                Diagnostic::error(
                                    "type",
                                    format!(
                                        "`top` ranks by a number column, but `{}` is {}",
                                        by.name,
                                        bt.name()
                                    ),
                                )
                                .at(
                                    src,
                                    by.span.clone(),
                                    "not a number column",
                                ),
                            );
                        }
                        Some(Step::Top {
                            key: ki,
                            by: bi,
                            n: usize::try_from(*n).unwrap_or(usize::MAX),
                            rest: rest
                                .as_ref()
                                .map_or_else(|| "Other".to_string(), |r| r.value.clone()),
                        })
                    }
                    _ => None,
                }
            }
        };
        if diags.len() > before {
            return None;
        }
        let step = resolved?;
        if let Step::Group { aggregates, .. } = &step {
            counts = aggregates
                .iter()
                .filter(|a| a.func == AggFn::Count)
                .map(|a| a.name.clone())
                .collect();
        }
        match &step {
            Step::Top { rest, .. } => rest_label = Some(rest.clone()),
            Step::Group { keys, .. } if keys.is_empty() => rest_label = None,
            _ => {}
        }
        resolved_steps.push(step.clone());
        table = match prefix {
            Some(p) if index + 1 == p.ast_steps => {
                if *resolved_steps != p.steps {
                    diags.push(Diagnostic::error(
                        "internal",
                        format!(
                            "view `{}` resolved differently while its data was streamed",
                            decl.name.name
                        ),
                    ));
                    return None;
                }
                p.table.clone()
            }
            _ => data::run_view(&table, std::slice::from_ref(&step)),
        };
        if let Some(d) = crate::overflow::check(src, &decl.steps[index], &step, &table) {
            diags.push(d);
            return None;
        }
    }
    Some((table, rest_label, counts))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crescendo_data::Column;
    use crescendo_lang::ast::Item;

    /// Run the first view of `story` over a table `d` with a year column `y`
    /// (2019..=2022) and a number column `n` (equal to the year).
    fn run(story: &str) -> (Option<Table>, Vec<Diagnostic>) {
        let src = Source::file("t.cresc", story);
        let (ast, parse_diags) = crescendo_lang::parse(&src);
        assert!(parse_diags.is_empty(), "{parse_diags:#?}");
        let Some(Item::View(view)) = ast.items.first() else {
            panic!("no view in {story}");
        };
        let years = [2019, 2020, 2021, 2022];
        let table = Table {
            columns: vec![
                Column {
                    name: "y".into(),
                    ty: ColType::Year,
                    values: years.iter().map(|&y| Value::Year(y)).collect(),
                },
                Column {
                    name: "n".into(),
                    ty: ColType::Number,
                    values: years.iter().map(|&y| Value::Number(f64::from(y))).collect(),
                },
            ],
        };
        let mut tables = Tables::default();
        tables.by_name.insert(
            "d".into(),
            Named {
                table,
                decl: 0..0,
                is_data: true,
                rest: None,
                root: "d".into(),
                counts: Default::default(),
            },
        );
        let mut diags = Vec::new();
        let out =
            build_view(&src, view, &tables, &tables.by_name["d"], &mut diags).map(|(t, _, _)| t);
        (out, diags)
    }

    fn rows(t: &Option<Table>) -> usize {
        t.as_ref().map_or(0, |t| t.columns[0].values.len())
    }

    #[test]
    fn years_compare_with_numbers_on_either_side() {
        for keep in [
            "y >= 2021",
            "2021 <= y",
            "y >= n - 1 and n >= 2021",
            "n >= y and 2021 <= y",
        ] {
            let (t, diags) = run(&format!("view v = d\n  | keep {keep}\n"));
            assert!(diags.is_empty(), "{keep}: {diags:#?}");
            assert_eq!(rows(&t), 2, "{keep}");
        }
        // a year is a whole number
        let (t, diags) = run("view v = d\n  | keep 2020.5 < y\n");
        assert!(t.is_none());
        assert_eq!(diags.len(), 1, "{diags:#?}");
        assert_eq!(diags[0].location(), Some(("t.cresc".into(), 2, 10)));
    }
}
