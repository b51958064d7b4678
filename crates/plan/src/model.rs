//! The frame plan model now lives in `crescendo-frame`, the theme names in
//! `crescendo-look`; re-exported so planner code keeps its paths.

pub use crescendo_frame::*;
pub use crescendo_look::THEMES;
