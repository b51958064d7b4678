//! A chart statement resolved against its view: the table, and the columns
//! playing each role of the form.

use std::collections::BTreeSet;

use crescendo_data::{ColType, Table};
use crescendo_lang::ast::{ChartStmt, CompareDecl, Ident, OptName, Span};

use crate::anchors::FrameAnchors;
use crate::context::{Ctx, Outcome, Reported};
use crate::forms::options::Chosen;
use crate::model::{Chart, Orientation, PartsMode};
use crate::rows::{self, Schema};
use crate::sequence::SeqState;
use crate::tables::Tables;

/// A resolved chart statement: the table and the columns playing each role.
pub(crate) struct ChartSpec {
    pub(crate) table_name: String,
    pub(crate) table: Table,
    /// Line: x; bars: category.
    pub(crate) x: usize,
    /// Line: y; bars: value.
    pub(crate) y: usize,
    pub(crate) series: Option<usize>,
    pub(crate) ordered: bool,
    /// Label of a folded "other" row, drawn last among sorted bars.
    pub(crate) rest: Option<String>,
    /// `horizontal` or `vertical` given explicitly.
    pub(crate) orientation: Option<Orientation>,
    /// The measure is a count of rows (for the small-counts rule).
    pub(crate) measure_is_count: bool,
    /// Parts of bars (`stack`/`group`), series of dots, labels of points.
    pub(crate) extra: Option<usize>,
    /// `stack COL` or `group COL`.
    pub(crate) parts_mode: Option<PartsMode>,
    /// `fit` on a scatter.
    pub(crate) fit: bool,
}

impl ChartSpec {
    /// The build-up state of a chart planned from this spec: its names, its
    /// measure (the y column), its view and its key.
    pub(crate) fn state(
        &self,
        chart: Chart,
        names: Vec<String>,
        key_name: String,
        anchors: FrameAnchors,
    ) -> SeqState {
        SeqState {
            names,
            measure_name: self.table.columns[self.y].name.clone(),
            view_name: self.table_name.clone(),
            key_name,
            anchors,
            ..SeqState::new(chart)
        }
    }

    /// The error for a view without a value of the measure.
    pub(crate) fn no_values(&self, cx: &mut Ctx, c: &ChartStmt) -> Reported {
        cx.error(
            "empty-view",
            format!(
                "`{}` has no values of `{}` to draw",
                self.table_name, self.table.columns[self.y].name
            ),
            c.span.clone(),
            "nothing to draw",
        )
    }

    /// The number of rows of the view.
    pub(crate) fn rows(&self) -> usize {
        self.table.columns.first().map_or(0, |c| c.values.len())
    }
}

/// What resolving a chart statement starts from: the statement, its view
/// and the options it gave.
pub(crate) struct SpecInput<'a> {
    pub(crate) c: &'a ChartStmt,
    pub(crate) view: String,
    pub(crate) table: &'a Table,
    pub(crate) schema: Schema,
    pub(crate) rest: Option<String>,
    /// Columns of the view that count rows.
    pub(crate) counts: &'a BTreeSet<String>,
    pub(crate) chosen: Chosen<'a>,
    pub(crate) compare: Option<&'a CompareDecl>,
    pub(crate) tables: &'a Tables,
}

impl SpecInput<'_> {
    /// The column given for `name`.
    pub(crate) fn given(&self, name: OptName) -> Option<&Ident> {
        self.chosen.column(name)
    }

    /// The error for a column option the chart needs and was not given:
    /// `question` asks for the column, `help` shows the statement with it.
    pub(crate) fn missing(
        &self,
        cx: &mut Ctx,
        name: OptName,
        question: String,
        help: String,
    ) -> Reported {
        let label = format!("no `{}` given", name.keyword());
        cx.error_with_help("chart-option", question, self.c.span.clone(), label, help)
    }

    /// The column given for `name`, else the comparison's key when the
    /// view has it.
    pub(crate) fn given_or_key(&self, name: OptName) -> Option<&Ident> {
        self.given(name)
            .or(self.compare.map(|c| &c.key).filter(|k| self.has(k)))
    }

    /// The column given for `name`, else the comparison's measure when the
    /// view has it.
    pub(crate) fn given_or_measure(&self, name: OptName) -> Option<&Ident> {
        self.given(name)
            .or(self.compare.map(|c| &c.measure).filter(|m| self.has(m)))
    }

    fn has(&self, id: &Ident) -> bool {
        self.schema.iter().any(|(n, _)| *n == id.name)
    }

    /// The span of the column given for `name`, else the statement's.
    pub(crate) fn span_of(&self, name: OptName) -> Span {
        self.given(name)
            .map_or(self.c.span.clone(), |i| i.span.clone())
    }

    /// Find a column of the view; reports unknown names.
    pub(crate) fn lookup(&self, cx: &mut Ctx, id: &Ident) -> Outcome<(usize, ColType)> {
        let place = format!("in `{}`", self.view);
        let src = cx.src;
        cx.collect(|diags| rows::At::new(src, &self.schema, &place).column(id, diags))
    }

    /// The column of option `name`, looked up when given.
    pub(crate) fn optional(&self, cx: &mut Ctx, id: Option<&Ident>) -> Outcome<Option<usize>> {
        match id {
            Some(id) => Ok(Some(self.lookup(cx, id)?.0)),
            None => Ok(None),
        }
    }

    /// Why a column is text (a note naming the data row), if known.
    pub(crate) fn why_text(&self, column: usize) -> Option<String> {
        self.tables.why_text(&self.view, &self.schema[column].0)
    }

    /// A measure must be a number column; otherwise report it, with the
    /// data row that made the column text when there is one.
    pub(crate) fn number_column(
        &self,
        cx: &mut Ctx,
        col: (usize, ColType),
        span: Span,
        what: &str,
    ) -> Outcome<()> {
        if col.1 == ColType::Number {
            return Ok(());
        }
        let needed = format!("{what} must be a number column");
        Err(self.not_a_number(cx, col, span, &needed))
    }

    /// The error for column `col` where `needed` says a number must stand,
    /// with the data row that made the column text when there is one.
    pub(crate) fn not_a_number(
        &self,
        cx: &mut Ctx,
        (index, ty): (usize, ColType),
        span: Span,
        needed: &str,
    ) -> Reported {
        let name = &self.schema[index].0;
        let message = format!("{needed}, but `{name}` is {}", ty.name());
        let mut d = cx.at("chart-type", message, span, "not a number");
        d.notes.extend(self.why_text(index));
        cx.report(d)
    }

    /// Does the view count rows in column `col`?
    pub(crate) fn counts(&self, col: usize) -> bool {
        self.counts.contains(&self.schema[col].0)
    }

    /// A chart spec with these columns and the defaults of the others.
    pub(crate) fn spec(&self, x: usize, y: usize) -> ChartSpec {
        ChartSpec {
            table_name: self.view.clone(),
            table: self.table.clone(),
            x,
            y,
            series: None,
            ordered: true,
            rest: self.rest.clone(),
            orientation: None,
            measure_is_count: false,
            extra: None,
            parts_mode: None,
            fit: false,
        }
    }
}

/// Where a new sequence's chart was said, for the lint.
pub(crate) fn anchors(c: &ChartStmt, spec: &ChartSpec) -> FrameAnchors {
    FrameAnchors {
        chart: c.span.clone(),
        view: spec.table_name.clone(),
        measure_is_count: spec.measure_is_count,
        ordered: c
            .opts
            .iter()
            .find(|o| o.name == OptName::Ordered)
            .map(|o| o.span.clone()),
        ..FrameAnchors::default()
    }
}

/// [`anchors`] of a chart over the categories of column `spec.x`: whether
/// they are texts.
pub(crate) fn category_anchors(c: &ChartStmt, spec: &ChartSpec) -> FrameAnchors {
    FrameAnchors {
        x_is_text: spec.table.columns[spec.x].ty == ColType::Text,
        ..anchors(c, spec)
    }
}
