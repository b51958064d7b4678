//! House styles: a small TOML file named by the story (`style "house.toml"`)
//! that sets fonts, sizes, colours and margins over the theme. Validated
//! here, so an unknown key or an invalid colour is a located error in the
//! style file.

use std::path::Path;
use std::sync::Arc;

use crescendo_diag::{Diagnostic, Source};
use crescendo_lang::ast::Str;
use serde::{Deserialize, Serialize};

/// The validated contents of a house-style file (being written).
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct HouseStyle {}

/// Load and validate the style file `file` (relative to `dir`).
pub fn load(
    src: &Arc<Source>,
    dir: &Path,
    file: &Str,
    diags: &mut Vec<Diagnostic>,
) -> Option<HouseStyle> {
    let _ = (src, dir, file, diags);
    None
}
