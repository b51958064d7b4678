//! What every chart form's planner does: accept a table of options,
//! resolve the columns playing each role, and build the chart a new
//! sequence starts from.

use crescendo_lang::ast::ChartStmt;

use crate::context::{Ctx, Outcome};
use crate::forms::grid;
use crate::forms::spec::{ChartSpec, SpecInput};
use crate::sequence::SeqState;

/// The planner of one chart form.
/// (Its table of options is beside it, see `forms/mod.rs`.)
pub(crate) trait FormPlanner: Sync {
    /// Resolve the columns playing each role; by default a category, a
    /// value and an optional part or series (bars, dots, pies).
    fn spec(&self, cx: &mut Ctx, input: &SpecInput) -> Outcome<ChartSpec> {
        grid::spec(cx, input)
    }

    /// The chart of a new sequence, every item in context. The view has
    /// rows.
    fn chart(&self, cx: &mut Ctx, spec: &ChartSpec, c: &ChartStmt) -> Outcome<SeqState>;
}
