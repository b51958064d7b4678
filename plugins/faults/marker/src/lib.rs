//! TEST FIXTURE: a shared library whose initialiser runs as soon as the
//! system loader maps it, before any entry point is looked up, and writes
//! the file named by `CRESCENDO_FAULT_MARKER` (when set). Tests use it as
//! the "evil" library a pinned plugin must never let run: swapped in while
//! the good one is read, or found on a library search path.

/// Write the marker file, if asked to.
extern "C" fn mark() {
    if let Some(path) = std::env::var_os("CRESCENDO_FAULT_MARKER") {
        let _ = std::fs::write(path, b"the marker library's initialiser ran\n");
    }
}

/// Run `mark` when the library is loaded (an ELF initialiser).
#[used]
#[unsafe(link_section = ".init_array")]
static INITIALISER: extern "C" fn() = mark;

/// Some exported function, so the library is not empty.
#[unsafe(no_mangle)]
pub extern "C" fn crescendo_fixture_marker() -> u32 {
    9
}
