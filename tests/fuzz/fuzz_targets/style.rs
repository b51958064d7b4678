//! The house-style (TOML) parser: any text gives a style or located errors.
#![no_main]

use crescendo_diag::Source;
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let src = Source::file("house.toml", text.to_string());
    if let Err(d) = crescendo_plan::style::parse(&src, "house.toml") {
        let _ = crescendo_diag::render(&d, false);
    }
});
