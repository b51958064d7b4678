//! What every chart form's planner does: accept a table of options,
//! resolve the columns playing each role, and build the chart a new
//! sequence starts from.

use crescendo_lang::ast::ChartStmt;

use crate::context::{Ctx, Outcome};
use crate::forms::options::Opt;
use crate::forms::spec::{ChartSpec, SpecInput};
use crate::sequence::SeqState;

/// The planner of one chart form.
pub(crate) trait FormPlanner: Sync {
    /// The options the form accepts, in the order messages list them.
    fn options(&self) -> &'static [Opt];

    /// Resolve the columns playing each role.
    fn spec(&self, cx: &mut Ctx, input: &SpecInput) -> Outcome<ChartSpec>;

    /// The chart of a new sequence, every item in context. The view has
    /// rows.
    fn chart(&self, cx: &mut Ctx, spec: &ChartSpec, c: &ChartStmt) -> Outcome<SeqState>;
}
