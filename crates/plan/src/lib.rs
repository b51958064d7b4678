//! The planner: resolves a parsed story against its data, type-checks it,
//! runs the views, applies the build-up steps frame by frame and computes
//! scale domains and ticks. Its output, [`DeckPlan`], is the renderer's only
//! input.

pub mod model;
pub mod scale;

pub use model::*;
