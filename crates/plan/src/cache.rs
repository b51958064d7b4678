//! Keys of cache entries: content hashes (xxh3-128). The planner names its
//! view-cache entries with them and reaches the cache through its I/O
//! interface (`io.rs`); the command keeps the folder.

use std::io::Read;
use std::path::Path;

/// Bump when the meaning of an entry changes.
pub const FORMAT: u32 = 2;

/// A 128-bit hash as 32 hex digits (xxh3-128: fast, not cryptographic; the
/// cache only needs to tell its own inputs apart).
pub fn hash_hex(parts: &[&[u8]]) -> String {
    let mut h = xxhash_rust::xxh3::Xxh3::new();
    for p in parts {
        h.update(&(p.len() as u64).to_le_bytes());
        h.update(p);
    }
    format!("{:032x}", h.digest128())
}

/// xxh3-128 of a file's bytes.
pub fn hash_file(path: &Path) -> std::io::Result<String> {
    hash_reader(std::fs::File::open(path)?)
}

/// xxh3-128 of the bytes of a reader (an open file: see
/// `crescendo_data::files::ReadAt`).
pub fn hash_reader(mut f: impl Read) -> std::io::Result<String> {
    let mut h = xxhash_rust::xxh3::Xxh3::new();
    let mut buf = vec![0u8; 1 << 20];
    loop {
        let n = f.read(&mut buf)?;
        if n == 0 {
            break;
        }
        h.update(&buf[..n]);
    }
    Ok(format!("{:032x}", h.digest128()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hashes_tell_inputs_apart() {
        // parts are length-prefixed: moving a byte between parts changes it
        assert_ne!(hash_hex(&[b"ab", b"c"]), hash_hex(&[b"a", b"bc"]));
        assert_eq!(hash_hex(&[b"ab", b"c"]), hash_hex(&[b"ab", b"c"]));
        assert_eq!(hash_hex(&[]).len(), 32);
    }
}
