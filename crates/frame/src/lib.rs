//! crescendo-frame: the frame plan, the one contract between what a story
//! means and how it is drawn. The planner (`crescendo-plan`) produces a
//! [`DeckPlan`]; the renderer, the lint and plugins read it. Pure data
//! (serde), semantic rather than pixels, and every string that is drawn is
//! already written here: the renderer formats nothing.
//!
//! [`anchors`] says where each part was said in the story (for the lint's
//! diagnostics); [`style`] is a validated house style.

pub mod anchors;
mod cite;
mod model;
pub mod style;

pub use cite::*;
pub use model::*;
