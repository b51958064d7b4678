//! View checking: each `view` item's steps type-checked against the
//! columns before them (see `steps.rs`) and run by the view engine, one
//! step at a time. A view over a data item that was streamed or read from a
//! database takes the prefix computed during the read in place of running
//! it.

mod steps;

use std::collections::BTreeSet;
use std::sync::Arc;

use crescendo_data::{self as data, AggFn, Step, Table};
use crescendo_diag::{Diagnostic, Source};
use crescendo_lang::ast;

use crate::rows::schema_of;
use crate::tables::{Named, Streamed, Tables};
use steps::Checked;

use crate::rows::At;

/// A view checked and run.
pub(crate) struct Built {
    pub(crate) table: Table,
    /// The label of its folded "other" row (see [`Named::rest`]).
    pub(crate) rest: Option<String>,
    /// Its columns that count rows (see [`Named::counts`]).
    pub(crate) counts: BTreeSet<String>,
    /// Its steps, resolved.
    pub(crate) steps: Vec<Step>,
}

/// Type-check one view's steps against its input and run them; `prefix`
/// is the table of a prefix computed during the read, used in place of
/// running those steps (see [`Tables::prefix_of`]).
pub(crate) fn build_view(
    src: &Arc<Source>,
    decl: &ast::ViewDecl,
    tables: &Tables,
    input: &Named,
    diags: &mut Vec<Diagnostic>,
    prefix: Option<&Streamed>,
) -> Option<Built> {
    let why = |col: &str| tables.why_text(&decl.input.name, col);
    let place = format!("at this step of `{}`", decl.name.name);
    let mut built = Built {
        table: input.table.clone(),
        rest: input.rest.clone(),
        counts: input.counts.clone(),
        steps: Vec::new(),
    };
    for (index, step_ast) in decl.steps.iter().enumerate() {
        let schema = schema_of(&built.table);
        let before = diags.len();
        let at = At {
            src,
            schema: &schema,
            place: &place,
            why: &why,
        };
        let checked = steps::check(&at, step_ast, diags);
        if diags.len() > before {
            return None;
        }
        // The prefix computed during the read ends with this step.
        let ends = prefix.filter(|p| index + 1 == p.ast_steps);
        // A text literal no row holds (the steps of a prefix computed
        // during the read were checked there; a table without rows is a
        // data item's columns only).
        let read = prefix.is_some_and(|p| index < p.ast_steps);
        let thinned = index == 0 && input.is_data && tables.thinned.contains(&input.root);
        let rows = built.table.columns.first().map_or(0, |c| c.values.len());
        if let (ast::StepAst::Keep { expr, .. }, false) = (step_ast, read) {
            // (a Parquet item whose row groups were all skipped has no rows)
            if thinned || rows > 0 {
                use crate::unmatched::{in_table_checking, Which};
                let which = if thinned { Which::Positive } else { Which::All };
                let unmatched = in_table_checking(src, &built.table, expr, which);
                if !unmatched.is_empty() {
                    diags.extend(unmatched);
                    return None;
                }
            }
        }
        match checked? {
            Checked::Columns(picked) => {
                built.table = Table {
                    columns: picked
                        .iter()
                        .map(|&i| built.table.columns[i].clone())
                        .collect(),
                };
                let table = &built.table;
                built
                    .counts
                    .retain(|c| table.columns.iter().any(|t| t.name == *c));
                // A prefix computed in the database may end with `columns`.
                if let Some(p) = ends {
                    built.table = prefix_table(decl, p, &built.steps, diags)?;
                }
            }
            Checked::Step(step) => {
                // a year and a quarter that make no quarter (the steps of a
                // prefix computed during the read were checked there)
                if !read {
                    let of =
                        (index == 0 && input.is_data && !thinned).then_some(input.root.as_str());
                    let bad = crate::quarter_cells::check(src, step_ast, &step, &built.table, of);
                    if !bad.is_empty() {
                        diags.extend(bad);
                        return None;
                    }
                }
                note(&mut built, &step);
                built.steps.push(step.clone());
                built.table = match ends {
                    Some(p) => prefix_table(decl, p, &built.steps, diags)?,
                    None => data::run_view(&built.table, std::slice::from_ref(&step)),
                };
                // a sum too large for a number, streamed or computed here
                if let Some(d) = crate::overflow::check(src, step_ast, &step, &built.table) {
                    diags.push(d);
                    return None;
                }
            }
        }
    }
    Some(built)
}

/// The resolved steps of view `v` over data item `decl`, read so far only
/// as `shell` (its columns, no rows), checked quietly (the regular pass
/// reports); `None` when it does not check.
pub(crate) fn resolved_quietly(
    src: &Arc<Source>,
    tables: &Tables,
    decl: &ast::DataDecl,
    shell: &Table,
    v: &ast::ViewDecl,
) -> Option<Vec<Step>> {
    let named = Named {
        table: shell.clone(),
        decl: decl.span.clone(),
        is_data: true,
        rest: None,
        root: decl.name.name.clone(),
        counts: BTreeSet::new(),
    };
    let mut scratch = Vec::new();
    let built = build_view(src, v, tables, &named, &mut scratch, None)?;
    scratch.is_empty().then_some(built.steps)
}

/// What a step changes besides the table: the columns that count rows,
/// and the label of a folded "other" row.
fn note(built: &mut Built, step: &Step) {
    if let Step::Group { aggregates, .. } = step {
        built.counts = aggregates
            .iter()
            .filter(|a| a.func == AggFn::Count)
            .map(|a| a.name.clone())
            .collect();
    }
    match step {
        Step::Top { rest, .. } => built.rest = Some(rest.clone()),
        Step::Group { keys, .. } if keys.is_empty() => built.rest = None,
        _ => {}
    }
}

/// The table of a prefix computed during the read, when the steps it was
/// computed from are the ones just resolved.
fn prefix_table(
    decl: &ast::ViewDecl,
    p: &Streamed,
    resolved: &[Step],
    diags: &mut Vec<Diagnostic>,
) -> Option<Table> {
    if resolved != p.steps {
        diags.push(Diagnostic::error(
            "internal",
            format!(
                "view `{}` resolved differently while its data was streamed",
                decl.name.name
            ),
        ));
        return None;
    }
    Some(p.table.clone())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crescendo_data::{ColType, Column, Value};
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
        let input = &tables.by_name["d"];
        let prefix = tables.prefix_of(view, input);
        let out = build_view(&src, view, &tables, input, &mut diags, prefix).map(|b| b.table);
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
