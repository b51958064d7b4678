//! TEST FIXTURE: a shared library with no crescendo entry point. The host
//! must refuse it with `PluginError::NoEntry`.

/// Some other exported function, so the library is not empty.
#[unsafe(no_mangle)]
pub extern "C" fn crescendo_fixture_not_an_entry() -> u32 {
    7
}
