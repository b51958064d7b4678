//! crescendo-look: how a frame looks, in one place for the renderer and the
//! lint.
//!
//! - [`theme`]: the built-in themes ([`THEMES`] is the one list of their
//!   names) and the effective theme of a deck (theme, then house style, then
//!   the story's accent);
//! - [`metrics`]: text measurement and wrapping with the bundled DejaVu Sans,
//!   so layout is identical on every machine;
//! - [`colour`]: colour science (WCAG relative luminance and contrast,
//!   CIELAB, CIEDE2000, Machado colour-vision simulation);
//! - [`display`]: the display list layout produces (positioned text with its
//!   measured box, lines, rectangles, dots, polygons, groups with roles),
//!   which one writer in the renderer turns into SVG and which geometry
//!   tests and lint rules read.

pub mod colour;
pub mod display;
pub mod metrics;
pub mod theme;

pub use display::{Align, DisplayList, Item, NoteOf, Part, Rect, Text};
pub use theme::{effective, Rgb, Theme, ThemeError, THEMES};
