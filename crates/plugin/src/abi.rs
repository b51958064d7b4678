//! The C ABI: what crosses the shared-library boundary.

use std::os::raw::c_char;

/// The ABI version this crate speaks. The host refuses a plugin whose
/// descriptor reports another version before calling anything else.
pub const ABI_VERSION: u32 = 1;

/// The one symbol a plugin exports: `extern "C" fn() -> *const Descriptor`.
pub const ENTRY_SYMBOL: &[u8] = b"crescendo_plugin_entry\0";

/// An optional second symbol: `extern "C" fn(out: *mut OutBuffer) -> i32`
/// writes the options each form takes as JSON (a list of
/// [`crate::FormOptions`]) into `out`, freed with the descriptor's `free`.
/// A plugin without it declares nothing, and the host checks no option.
pub const OPTIONS_SYMBOL: &[u8] = b"crescendo_plugin_options\0";

/// Bytes handed from the plugin to the host; freed by the plugin's `free`.
#[repr(C)]
pub struct OutBuffer {
    pub ptr: *mut u8,
    pub len: usize,
    pub cap: usize,
}

/// What a plugin describes itself with. All strings are NUL-terminated UTF-8
/// owned by the plugin for the life of the process.
#[repr(C)]
pub struct Descriptor {
    /// Must equal [`ABI_VERSION`]; checked first.
    pub abi_version: u32,
    pub name: *const c_char,
    pub version: *const c_char,
    /// `form_count` pointers to form names.
    pub forms: *const *const c_char,
    pub form_count: usize,
    /// Render one panel: `request` is `request_len` bytes of JSON
    /// ([`crate::Request`]); the plugin writes a JSON [`crate::Reply`] into
    /// `out` and returns 0, or returns non-zero when it could not even do
    /// that. Must not unwind.
    pub render: extern "C" fn(request: *const u8, request_len: usize, out: *mut OutBuffer) -> i32,
    /// Free a buffer returned by `render`.
    pub free: extern "C" fn(buffer: OutBuffer),
}
