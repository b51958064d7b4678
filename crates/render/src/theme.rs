//! Themes for drawing: the built-in themes and the effective theme of a deck
//! live in `crescendo-look` (re-exported here, with [`effective`]'s error
//! as a [`RenderError`]).

pub use crescendo_look::theme::*;

use crate::RenderError;

/// The theme a deck is drawn with ([`crescendo_look::theme::effective`]),
/// with its error as a [`RenderError`].
pub fn effective(deck: &crescendo_frame::DeckPlan) -> Result<Theme, RenderError> {
    crescendo_look::theme::effective(deck).map_err(|e| RenderError::new(e.message))
}
