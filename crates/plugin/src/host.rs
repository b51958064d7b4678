//! The host side: load a plugin explicitly by path, check it, call it, and
//! validate everything it returns. (Being written.)

use std::path::{Path, PathBuf};

use crate::message::{Primitive, Request};

/// What a loaded plugin says about itself.
#[derive(Clone, Debug, PartialEq)]
pub struct PluginInfo {
    pub name: String,
    pub version: String,
    pub abi_version: u32,
    pub forms: Vec<String>,
    pub path: PathBuf,
    /// SHA-256 of the library file, lowercase hex.
    pub sha256: String,
}

/// Why a plugin could not be loaded or used. `Display` gives a sentence for
/// the user.
#[derive(Clone, Debug, PartialEq)]
pub enum PluginError {
    /// The file is missing or unreadable.
    Unreadable(String),
    /// The file's SHA-256 differs from the pin in the story.
    ChecksumMismatch { expected: String, actual: String },
    /// The file is not a loadable shared library.
    NotALibrary(String),
    /// The library exports no entry symbol.
    NoEntry,
    /// The descriptor reports another ABI version.
    WrongAbi { found: u32, expected: u32 },
    /// The descriptor is unusable (null pointers, invalid UTF-8, no forms).
    BadDescriptor(String),
    /// The plugin answered with an error message.
    Failed(String),
    /// The plugin panicked or crashed while rendering (caught at the boundary).
    Panicked(String),
    /// The reply is not a valid message.
    Malformed(String),
    /// The reply is a valid message with invalid contents (NaN, outside the
    /// plot area, too large).
    Invalid(String),
}

impl std::fmt::Display for PluginError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            PluginError::Unreadable(e) => write!(f, "cannot read the plugin file: {e}"),
            PluginError::ChecksumMismatch { expected, actual } => {
                write!(f, "the plugin file's sha256 is {actual}, but the story pins {expected}")
            }
            PluginError::NotALibrary(e) => write!(f, "not a shared library that can be loaded: {e}"),
            PluginError::NoEntry => write!(f, "the library exports no crescendo plugin entry point"),
            PluginError::WrongAbi { found, expected } => write!(
                f,
                "the plugin was built for plugin ABI version {found}, but this crescendo speaks version {expected}"
            ),
            PluginError::BadDescriptor(e) => write!(f, "the plugin describes itself wrongly: {e}"),
            PluginError::Failed(e) => write!(f, "the plugin reported an error: {e}"),
            PluginError::Panicked(e) => write!(f, "the plugin failed while drawing: {e}"),
            PluginError::Malformed(e) => write!(f, "the plugin's answer is not a valid message: {e}"),
            PluginError::Invalid(e) => write!(f, "the plugin's drawing is invalid: {e}"),
        }
    }
}

/// A drawing that passed validation: every point in plot pixels.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Validated {
    pub primitives: Vec<Primitive>,
    pub description: Option<String>,
}

/// A loaded plugin.
pub struct Plugin {
    info: PluginInfo,
}

impl Plugin {
    /// Load the library at `path`; `pin` is an expected SHA-256 (hex).
    pub fn load(path: &Path, pin: Option<&str>) -> Result<Plugin, PluginError> {
        let _ = (path, pin);
        Err(PluginError::NoEntry)
    }

    pub fn info(&self) -> &PluginInfo {
        &self.info
    }

    /// Ask the plugin to draw, then validate the answer.
    pub fn render(&self, request: &Request) -> Result<Validated, PluginError> {
        let _ = request;
        Err(PluginError::Failed("not loaded".into()))
    }
}
