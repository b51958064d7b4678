//! The deck-diff reader: two manifests (the input split at its first NUL
//! byte) read as JSON and compared; any bytes give lines or an error.
#![no_main]

use libfuzzer_sys::fuzz_target;

/// What `src/diff.rs` needs from the command's deck module.
mod deck {
    pub const MANIFEST: &str = "deck.json";
}

/// The chart contents `diff` compares.
#[allow(dead_code)]
#[path = "../../../src/content.rs"]
mod content;

#[allow(dead_code)]
#[path = "../../../src/diff.rs"]
mod diff;

fuzz_target!(|data: &[u8]| {
    let (a, b) = match data.iter().position(|&c| c == 0) {
        Some(i) => (&data[..i], &data[i + 1..]),
        None => (data, &b"{}"[..]),
    };
    let (Ok(old), Ok(new)) = (
        serde_json::from_slice::<serde_json::Value>(a),
        serde_json::from_slice::<serde_json::Value>(b),
    ) else {
        return;
    };
    let _ = diff::diff(&old, &new);
    let _ = diff::diff(&new, &old);
});
