//! The chart-form plugin interface of crescendo.
//!
//! A plugin is a shared library (a Rust `cdylib` built with this crate's
//! SDK) that exports one entry symbol, [`ENTRY_SYMBOL`], returning a
//! `#[repr(C)]` [`Descriptor`]: the ABI version, the plugin's name and
//! version, the forms it provides, and two function pointers, one to render
//! a panel and one to free what it returned. Data crosses the boundary as
//! JSON messages ([`Request`], [`Reply`]); the plugin answers with drawing
//! [`Primitive`]s that carry a [`Role`], never a colour, so the host's theme
//! styles plugin output like built-in output and the lint can see it.
//!
//! Plugins are native code that runs with the rights of the user who builds
//! the deck: load only plugins you would run as programs. This crate holds
//! no loader (no `libloading`, no hashing): the drawing model, the renderer
//! and plugin authors need only the messages, their validation and the SDK;
//! `crescendo-plugin-host` loads and calls libraries.

pub mod abi;
pub mod message;
pub mod sdk;
pub mod validate;
mod writing;

pub use abi::{Descriptor, OutBuffer, ABI_VERSION, ENTRY_SYMBOL};
pub use message::*;
