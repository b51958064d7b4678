//! A fast hash for keys that come from the user's own files (group keys,
//! interned texts): the multiply-rotate of the Fx hash used in rustc, with a
//! final mix. Hash flooding is no concern here (the input is the user's own
//! data), and no hash-table order ever reaches the output.

use std::hash::Hasher;

#[derive(Default, Clone, Copy)]
pub(crate) struct Fx(u64);

impl Hasher for Fx {
    fn write(&mut self, bytes: &[u8]) {
        const K: u64 = 0x51_7c_c1_b7_27_22_0a_95;
        let mut chunks = bytes.chunks_exact(8);
        for c in &mut chunks {
            let mut w = [0u8; 8];
            w.copy_from_slice(c);
            self.0 = (self.0.rotate_left(5) ^ u64::from_le_bytes(w)).wrapping_mul(K);
        }
        // the last 1 to 7 bytes as one word (with their count in the top
        // byte), not byte by byte: byte-wise rounds let keys that differ
        // only in their last digits collide outright
        let tail = chunks.remainder();
        if !tail.is_empty() {
            let mut w = [0u8; 8];
            w[..tail.len()].copy_from_slice(tail);
            w[7] = tail.len() as u8;
            self.0 = (self.0.rotate_left(5) ^ u64::from_le_bytes(w)).wrapping_mul(K);
        }
    }

    /// The multiply leaves the low bits depending only on the low bits of
    /// the input, and the table picks buckets by the low bits: keys that
    /// differ in a few digits (`cat0000001`, `cat0000002`, …) piled into few
    /// buckets. The final mix (the 64-bit finaliser of MurmurHash3,
    /// Appleby) spreads every input bit over every output bit.
    fn finish(&self) -> u64 {
        let mut h = self.0;
        h ^= h >> 33;
        h = h.wrapping_mul(0xff51_afd7_ed55_8ccd);
        h ^= h >> 33;
        h = h.wrapping_mul(0xc4ce_b9fe_1a85_ec53);
        h ^= h >> 33;
        h
    }
}

/// The hash of a byte string.
pub(crate) fn hash_bytes(bytes: &[u8]) -> u64 {
    let mut h = Fx::default();
    h.write(bytes);
    h.finish()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn group_key_hashes_spread_over_the_low_bits() {
        // 4,096 keys that differ only in their last digits: no two hashes
        // are equal (byte-wise rounds gave only 3,118 distinct hashes), and
        // the low 12 bits fill about 1 - 1/e of 4,096 buckets (2,589 for a
        // random function; without the final mix they filled 1,024)
        let hashes: Vec<u64> = (0..4096)
            .map(|i| hash_bytes(format!("cat{i:07}").as_bytes()))
            .collect();
        let distinct: std::collections::BTreeSet<u64> = hashes.iter().copied().collect();
        assert_eq!(distinct.len(), 4096);
        let buckets: std::collections::BTreeSet<u64> = hashes.iter().map(|h| h & 4095).collect();
        assert!(buckets.len() > 2450, "{} buckets", buckets.len());
    }
}
