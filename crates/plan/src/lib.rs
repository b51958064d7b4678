//! The planner: resolves a parsed story against its data, type-checks it,
//! runs the views, applies the build-up steps frame by frame and computes
//! scale domains and ticks. Its output, [`DeckPlan`], is the renderer's only
//! input.

pub mod anchors;
mod build;
pub mod cache;
mod database;
mod forms;
mod functions;
pub mod limits;
mod loading;
pub mod model;
mod overflow;
pub mod paths;
pub mod plugins;
mod resolve;
mod rows;
pub mod scale;
mod steps;
pub mod style;
pub mod values;

pub use build::{plan_story, slug, Options, PlanResult, Planned};
pub use database::DbOptions;
pub use model::*;
pub use resolve::LoadReport;
