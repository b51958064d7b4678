//! Where things were said in the story: moved to `crescendo-frame`.

pub use crescendo_frame::anchors::*;
