//! TEST FIXTURE: a library whose descriptor reports plugin ABI version 0.
//! The host must refuse it with `PluginError::WrongAbi` after reading only
//! the version: this older "layout" has nothing valid after it.

use std::os::raw::c_char;

/// A made-up older descriptor layout: the version, then a pointer that is
/// deliberately null (reading it as a name would fail).
#[repr(C)]
pub struct OldDescriptor {
    pub abi_version: u32,
    pub name: *const c_char,
}

struct Shared(OldDescriptor);

// SAFETY: immutable, and its only pointer is null.
unsafe impl Sync for Shared {}

static DESCRIPTOR: Shared = Shared(OldDescriptor {
    abi_version: 0,
    name: std::ptr::null(),
});

/// The entry symbol, returning the old descriptor.
#[unsafe(no_mangle)]
pub extern "C" fn crescendo_plugin_entry() -> *const OldDescriptor {
    &DESCRIPTOR.0
}
