//! The build-up state carried from frame to frame within a sequence (the
//! frames that share one chart statement).

use std::collections::BTreeSet;

use crescendo_diag::closest;
use crescendo_lang::ast::Str;

use crate::anchors::FrameAnchors;
use crate::context::{Ctx, Reported};
use crate::model::Chart;
use crate::values::Resolved;

/// The build-up state of the current sequence.
pub(crate) struct SeqState {
    pub(crate) chart: Chart,
    /// Every series or bar name in the chart, in display order.
    pub(crate) names: Vec<String>,
    pub(crate) hidden: BTreeSet<String>,
    pub(crate) spotlight: BTreeSet<String>,
    pub(crate) x_title: Option<Resolved>,
    pub(crate) y_title: Option<Resolved>,
    pub(crate) view_name: String,
    pub(crate) key_name: String,
    /// A table's columns: the view's name of each and its header text.
    pub(crate) column_titles: Vec<(String, String)>,
    /// Spotlighted table cells: (row key, column title).
    pub(crate) cells: BTreeSet<(String, String)>,
    /// The measure column's name (`split ... by` must name it).
    pub(crate) measure_name: String,
    /// Where things were said, for the lint.
    pub(crate) anchors: FrameAnchors,
    /// The chart statement that started the sequence (`cite` reads which
    /// column plays which part).
    pub(crate) chart_stmt: Option<crescendo_lang::ast::ChartStmt>,
    /// `cite`d values, each with whether its figure may still follow how
    /// this frame's texts quote it.
    pub(crate) cites: Vec<(crescendo_frame::Cite, bool)>,
    /// Callouts on marks of forms other than lines (kept through the
    /// sequence, like a line chart's annotations).
    pub(crate) mark_notes: Vec<crate::model::MarkNote>,
}

impl SeqState {
    /// A new sequence over `chart`: nothing hidden or spotlighted yet.
    pub(crate) fn new(chart: Chart) -> SeqState {
        SeqState {
            chart,
            names: Vec::new(),
            hidden: BTreeSet::new(),
            spotlight: BTreeSet::new(),
            x_title: None,
            y_title: None,
            view_name: String::new(),
            key_name: String::new(),
            column_titles: Vec::new(),
            cells: BTreeSet::new(),
            measure_name: String::new(),
            anchors: FrameAnchors::default(),
            chart_stmt: None,
            cites: Vec::new(),
            mark_notes: Vec::new(),
        }
    }

    /// The error for `name`, which is none of the chart's names: `message`
    /// at its place with `label`, and the closest name as a suggestion.
    pub(crate) fn unknown(
        &self,
        cx: &mut Ctx,
        name: &Str,
        message: String,
        label: &str,
    ) -> Reported {
        let mut d = cx.at("unknown-series", message, name.span.clone(), label);
        if let Some(c) = closest(&name.value, self.names.iter().map(String::as_str)) {
            d = d.help(format!("did you mean \"{c}\"?"));
        }
        cx.report(d)
    }
}

/// Where the build-up stands before a frame.
pub(crate) enum Sequence {
    /// No chart has been started yet.
    NotStarted,
    /// The last chart statement failed, and that was reported: the frames
    /// that build on it are skipped without blaming each of them again.
    Broken(Reported),
    /// A chart, with its build-up state.
    Open(Box<SeqState>),
}
