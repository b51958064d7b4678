//! What the whole story says about how its data is read, learnt before
//! any item is resolved: the names it uses (a superset of the columns
//! anything reads), whether some step may see every column, and which data
//! items can be streamed (see the module docs of `loading`).

use std::collections::{BTreeMap, BTreeSet};

use crescendo_lang::ast::{self, Item, StepAst, StoryAst};
use crescendo_lang::visit::{walk_database, walk_selection, walk_story, Visit};

use crescendo_sql::print::{self, StepKind};

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
pub(crate) fn names_in_steps(steps: &[StepAst]) -> BTreeSet<String> {
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

impl StoryFacts {
    /// Look at the whole story: which data items can stream, which columns
    /// anything reads.
    pub(crate) fn of(story: &StoryAst) -> StoryFacts {
        let mut idents = BTreeSet::new();
        let mut idents_outside_order = BTreeSet::new();
        for item in &story.items {
            idents.extend(names_in_item(item, false));
            idents_outside_order.extend(names_in_item(item, true));
        }
        let views: Vec<&ast::ViewDecl> = story.views().collect();
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
        let mut streamable = BTreeMap::new();
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
        StoryFacts {
            idents,
            idents_outside_order,
            all_columns,
            streamable,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crescendo_diag::Source;

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
