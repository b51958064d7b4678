//! The planner: resolves a parsed story against its data, type-checks it,
//! runs the views, applies the build-up steps frame by frame and computes
//! scale domains and ticks. Its output, [`DeckPlan`], is the renderer's only
//! input.
//!
//! Planning runs in phases (see `driver.rs`): the header (`header.rs`),
//! data loading (`sources.rs`, `loading/`), the tables (`tables.rs`), view
//! checking (`views/`, row expressions in `rows.rs`), values and claims (`values.rs`, `functions.rs`, `claims.rs`), the
//! frames (`frames/`: sequences, targets, roles, split and unfold) with one
//! planner per chart form (`forms/`), scales (`scale.rs`) and descriptions
//! (`describe.rs`). Every step reports into one context (`context.rs`) and
//! reads through one I/O interface (`io.rs`).

pub mod anchors;
pub mod cache;
mod claims;
mod context;
mod describe;
mod driver;
mod fiscal_names;
mod forms;
mod frames;
mod functions;
mod header;
pub mod io;
mod labels;
pub mod limits;
mod loading;
pub mod model;
pub mod numbers;
mod options;
mod order;
mod overflow;
pub mod paths;
pub mod plugins;
mod quarter_cells;
mod rows;
pub mod scale;
mod scope;
mod sentences;
mod sequence;
mod sources;
pub mod style;
mod tables;
mod unmatched;
pub mod values;
mod views;

pub use driver::{plan_story, plan_story_with, PlanResult, Planned};
pub use labels::slug;
pub use loading::LoadReport;
pub use model::*;
pub use options::{DbOptions, Options};
