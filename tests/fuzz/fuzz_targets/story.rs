//! The story parser: any text gives a syntax tree and diagnostics, never a
//! panic or a stack overflow; every diagnostic renders.
#![no_main]

use crescendo_diag::Source;
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let src = Source::file("fuzz.cresc", text.to_string());
    let (_ast, diags) = crescendo_lang::parse(&src);
    let _ = crescendo_diag::render(&diags, false);
});
