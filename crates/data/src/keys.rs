//! The key table of the group engine ([`crate::groups`], and the other
//! engines that number distinct keys): distinct encoded keys numbered in
//! order of first appearance, interned in one byte arena.
//!
//! The table is our own open-addressing table with linear probing
//! (Knuth, TAOCP vol. 3, 6.4, algorithm L): one 16-byte entry per slot, so a
//! lookup of a short key reads one cache line of the table and nothing
//! else, and the caller can ask for that line early ([`KeyIndex::prefetch`])
//! while it still has other rows to read. The table is kept at most three
//! quarters full.

use crate::hash::hash_bytes;

/// Bytes of a key held in its table entry.
const HEAD: usize = 12;

/// The id of an empty slot.
const EMPTY: u32 = u32::MAX;

/// A key [`KeyIndex::find_all`] did not find.
pub(crate) const NOT_FOUND: u32 = u32::MAX;

/// Keys from which [`KeyIndex::find_all`] looks up on two threads (fewer
/// cost less than starting a thread).
const PARALLEL_FROM: usize = 1 << 16;

/// How many keys ahead [`KeyIndex::find_all`] fetches a key's slot.
const AHEAD: usize = 16;

/// A key's number and its head: a key of at most [`HEAD`] bytes whole
/// (zeros after its end); a longer key's first 8 bytes (the first with
/// its top bit set, which no key's first byte has) and 32 bits of its
/// hash. Encoded keys of one key list are prefix-free (no key is the
/// start of another), so equal heads of short keys mean the same key; a
/// longer key compares the rest with the arena.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[repr(C, align(16))]
struct Entry {
    head: [u8; HEAD],
    id: u32,
}

const FREE: Entry = Entry {
    head: [0; HEAD],
    id: EMPTY,
};

/// The head of `key` (hashed `h`), see [`Entry`].
fn head_of(key: &[u8], h: u64) -> [u8; HEAD] {
    let mut head = [0u8; HEAD];
    if key.len() <= HEAD {
        head[..key.len()].copy_from_slice(key);
    } else {
        head[..8].copy_from_slice(&key[..8]);
        head[0] |= 0x80;
        head[8..].copy_from_slice(&((h >> 32) as u32).to_le_bytes());
    }
    head
}

/// Distinct encoded keys numbered in order of first appearance, interned
/// in one arena.
#[derive(Clone, Debug, Default)]
pub(crate) struct KeyIndex {
    /// Open addressing: a power of two slots (or none), probed from the
    /// hash's low bits.
    slots: Vec<Entry>,
    /// Every key, one after another.
    arena: Vec<u8>,
    /// Where each key ends in `arena`.
    ends: Ends,
}

/// Where each key ends in the arena: the low 32 bits of each end (4 bytes
/// a key, not 8), and the keys whose end passed another multiple of 2^32
/// (none while the arena is under 4 GiB).
#[derive(Clone, Debug, Default)]
struct Ends {
    low: Vec<u32>,
    wraps: Vec<usize>,
}

impl Ends {
    fn len(&self) -> usize {
        self.low.len()
    }

    /// Where key `g` ends.
    fn get(&self, g: usize) -> Option<usize> {
        let low = u64::from(*self.low.get(g)?);
        let wraps = match self.wraps.is_empty() {
            true => 0,
            false => self.wraps.partition_point(|&w| w <= g) as u64,
        };
        usize::try_from(low + (wraps << 32)).ok()
    }

    /// The next key ends at `end` (not before the last end).
    fn push(&mut self, end: usize) {
        let g = self.len();
        let before = g.checked_sub(1).and_then(|p| self.get(p)).unwrap_or(0) as u64;
        for _ in (before >> 32)..(end as u64 >> 32) {
            self.wraps.push(g);
        }
        self.low.push(end as u32);
    }

    /// Forget the last key.
    fn pop(&mut self) {
        let g = self.len().wrapping_sub(1);
        while self.wraps.last() == Some(&g) {
            self.wraps.pop();
        }
        self.low.pop();
    }
}

impl KeyIndex {
    /// The number of keys.
    pub(crate) fn len(&self) -> usize {
        self.ends.len()
    }

    /// The bytes of all keys together.
    pub(crate) fn bytes(&self) -> usize {
        self.arena.len()
    }

    /// The bytes of key `g`.
    pub(crate) fn key(&self, g: usize) -> &[u8] {
        key_of(&self.arena, &self.ends, g)
    }

    /// Drop the hash table (the keys stay readable by number): for a table
    /// whose keys are only read from now on.
    pub(crate) fn drop_table(&mut self) {
        self.slots = Vec::new();
    }

    /// Ask the processor to fetch the slot a key hashed `h` is looked up
    /// in first (a hint only: it changes no result).
    #[inline]
    pub(crate) fn prefetch(&self, h: u64) {
        let mask = self.slots.len().wrapping_sub(1);
        if let Some(slot) = self.slots.get(h as usize & mask) {
            prefetch(slot);
        }
    }

    /// The number of `key` (hashed `h`, see [`hash_bytes`]), and whether it
    /// is new.
    pub(crate) fn id(&mut self, h: u64, key: &[u8]) -> (usize, bool) {
        if self.slots.is_empty() {
            self.rebuild(16);
        }
        let head = head_of(key, h);
        let i = match self.probe(h, key, &head) {
            Ok(id) => return (id, false),
            Err(i) => i,
        };
        let id = self.ends.len();
        self.arena.extend_from_slice(key);
        self.ends.push(self.arena.len());
        // past 2^32 - 1 keys (more than memory holds) the table cannot
        // number them: the arena is searched instead (never in practice)
        let Some(id32) = u32::try_from(id).ok().filter(|&x| x != EMPTY) else {
            return self.slow_id(key, id);
        };
        if let Some(slot) = self.slots.get_mut(i) {
            *slot = Entry { head, id: id32 };
        }
        if (id + 1) * 4 > self.slots.len() * 3 {
            self.rebuild(self.slots.len() * 2);
        }
        (id, true)
    }

    /// The number of `key` (hashed `h`, with head `head`), or the empty
    /// slot where its probe ended.
    #[inline]
    fn probe(&self, h: u64, key: &[u8], head: &[u8; HEAD]) -> Result<usize, usize> {
        let mask = self.slots.len().wrapping_sub(1);
        let mut i = h as usize & mask;
        while let Some(e) = self.slots.get(i) {
            if e.id == EMPTY {
                break;
            }
            let same = e.head == *head
                && (key.len() <= HEAD
                    || same_bytes(key_of(&self.arena, &self.ends, e.id as usize), key));
            if same {
                return Ok(e.id as usize);
            }
            i = (i + 1) & mask;
        }
        Err(i)
    }

    /// The number in this table of every key of `other`, in `other`'s
    /// order ([`NOT_FOUND`] for a key it lacks, or one past the numbers the
    /// table holds), looked up on two threads when there are many: the
    /// table is only read.
    pub(crate) fn find_all(&self, other: &KeyIndex) -> Vec<u32> {
        let n = other.len();
        let mut found = vec![NOT_FOUND; n];
        let cores = std::thread::available_parallelism().map_or(1, |c| c.get());
        if n < PARALLEL_FROM || cores < 2 || self.slots.is_empty() {
            self.find_range(other, 0, &mut found);
            return found;
        }
        let (first, second) = found.split_at_mut(n / 2);
        std::thread::scope(|s| {
            s.spawn(|| self.find_range(other, n / 2, second));
            self.find_range(other, 0, first);
        });
        found
    }

    /// [`KeyIndex::find_all`] of `other`'s keys from number `from` on, into
    /// `out`; each key's slot is fetched [`AHEAD`] keys early.
    fn find_range(&self, other: &KeyIndex, from: usize, out: &mut [u32]) {
        if self.slots.is_empty() {
            return;
        }
        let mut hashes = [0u64; AHEAD];
        let hash_at = |k: usize| hash_bytes(other.key(from + k));
        for (k, h) in hashes.iter_mut().enumerate().take(out.len()) {
            *h = hash_at(k);
            self.prefetch(*h);
        }
        for k in 0..out.len() {
            let h = hashes[k % AHEAD];
            if k + AHEAD < out.len() {
                let next = hash_at(k + AHEAD);
                self.prefetch(next);
                hashes[k % AHEAD] = next;
            }
            let key = other.key(from + k);
            if let (Some(f), Ok(id)) = (out.get_mut(k), self.probe(h, key, &head_of(key, h))) {
                *f = u32::try_from(id).unwrap_or(NOT_FOUND);
            }
        }
    }

    /// Make the table `n` slots long (a power of two) and enter every key
    /// the table numbers again (read from the arena in order, so the old
    /// table is freed first: old and new are never held together).
    fn rebuild(&mut self, n: usize) {
        self.slots = Vec::new();
        let mut slots = vec![FREE; n];
        let mask = n - 1;
        let numbered = self.ends.len().min(EMPTY as usize);
        // a block of keys at a time: their slots are fetched together
        // (new slots are scattered over the whole table)
        const BLOCK: usize = 32;
        let mut hashes = [0u64; BLOCK];
        for first in (0..numbered).step_by(BLOCK) {
            let block = first..numbered.min(first + BLOCK);
            for (g, h) in block.clone().zip(&mut hashes) {
                *h = hash_bytes(key_of(&self.arena, &self.ends, g));
                if let Some(slot) = slots.get(*h as usize & mask) {
                    prefetch(slot);
                }
            }
            for (g, &h) in block.zip(&hashes) {
                let mut i = h as usize & mask;
                while slots.get(i).is_some_and(|e| e.id != EMPTY) {
                    i = (i + 1) & mask;
                }
                if let Some(slot) = slots.get_mut(i) {
                    *slot = Entry {
                        head: head_of(key_of(&self.arena, &self.ends, g), h),
                        id: g as u32,
                    };
                }
            }
        }
        self.slots = slots;
    }

    /// The number of `key`, just appended as key `id`, among the keys past
    /// those the table numbers.
    #[cold]
    fn slow_id(&mut self, key: &[u8], id: usize) -> (usize, bool) {
        let first = EMPTY as usize;
        let found = (first..id).find(|&g| same_bytes(self.key(g), key));
        match found {
            Some(g) => {
                self.ends.pop();
                self.arena.truncate(key_start(&self.ends, id));
                (g, false)
            }
            None => (id, true),
        }
    }
}

/// A hint to fetch the cache line of `x` (no effect on results).
#[inline]
pub(crate) fn prefetch<T>(x: &T) {
    #[cfg(target_arch = "x86_64")]
    {
        use std::arch::x86_64::{_mm_prefetch, _MM_HINT_T0};
        // SAFETY: a prefetch is a hint that never faults and reads or
        // writes nothing the program sees; SSE (which has it) is part of
        // the x86-64 baseline.
        unsafe { _mm_prefetch::<_MM_HINT_T0>((x as *const T).cast::<i8>()) };
    }
    #[cfg(not(target_arch = "x86_64"))]
    let _ = x;
}

/// Equal byte strings of equal length: word by word (group keys are
/// short, and a call to `memcmp` cost more than the comparison).
pub(crate) fn same_bytes(a: &[u8], b: &[u8]) -> bool {
    let n = a.len();
    if n != b.len() || n < 8 {
        return a == b;
    }
    let word = |s: &[u8], i: usize| {
        s.get(i..i + 8)
            .map(|w| u64::from_le_bytes([w[0], w[1], w[2], w[3], w[4], w[5], w[6], w[7]]))
    };
    let mut i = 0;
    while i + 8 < n {
        if word(a, i) != word(b, i) {
            return false;
        }
        i += 8;
    }
    // the last word (overlapping the one before when `n` is not a multiple)
    word(a, n - 8) == word(b, n - 8)
}

/// The bytes of key `g`.
fn key_of<'a>(arena: &'a [u8], ends: &Ends, g: usize) -> &'a [u8] {
    let end = ends.get(g).unwrap_or(0);
    arena.get(key_start(ends, g)..end).unwrap_or(&[])
}

/// Where key `g` starts in the arena.
fn key_start(ends: &Ends, g: usize) -> usize {
    g.checked_sub(1).and_then(|p| ends.get(p)).unwrap_or(0)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::groups::encode_key;
    use crate::model::Cell;
    use proptest::prelude::*;

    #[test]
    fn keys_compare_word_by_word_at_every_length() {
        for n in 0..40usize {
            let a: Vec<u8> = (0..n as u8).collect();
            assert!(same_bytes(&a, &a.clone()));
            for i in 0..n {
                let mut b = a.clone();
                b[i] ^= 0x40;
                assert!(!same_bytes(&a, &b), "length {n}, byte {i}");
            }
            assert!(!same_bytes(&a, &a[..n.saturating_sub(1)]) || n == 0);
        }
    }

    #[test]
    fn short_and_long_keys_sharing_a_head_are_distinct() {
        // two-column keys: texts whose encodings share their first bytes,
        // short ones held whole in the entry, long ones compared with the
        // arena past it
        let mut k = KeyIndex::default();
        let mut keys = Vec::new();
        for a in ["", "x", "xxxxxxxxxx", "xxxxxxxxxxx", "xxxxxxxxxxxxxxxxxxxx"] {
            for b in ["", "x", "y", "xxxxxxxxxxxxxxxx", "xxxxxxxxxxxxxxxy"] {
                let mut key = Vec::new();
                encode_key(&mut key, Cell::Text(a));
                encode_key(&mut key, Cell::Text(b));
                keys.push(key);
            }
        }
        for round in 0..2 {
            for (i, key) in keys.iter().enumerate() {
                assert_eq!(k.id(hash_bytes(key), key), (i, round == 0));
            }
        }
        for (i, key) in keys.iter().enumerate() {
            assert_eq!(k.key(i), &key[..]);
        }
    }

    #[test]
    fn long_keys_with_equal_heads_and_hashes_are_told_apart_by_the_arena() {
        // the same hash for every key (as many keys as the first table
        // holds without growing, which hashes the keys again): every lookup
        // walks one probe chain and the long keys share their head, so only
        // the arena tells them apart
        let mut k = KeyIndex::default();
        let keys: Vec<Vec<u8>> = (0..11u32)
            .map(|i| format!("\u{2}same prefix {i}").into_bytes())
            .collect();
        for round in 0..2 {
            for (i, key) in keys.iter().enumerate() {
                assert_eq!(k.id(7, key), (i, round == 0));
            }
        }
    }

    #[test]
    fn keys_are_numbered_in_order_of_first_appearance() {
        let mut k = KeyIndex::default();
        let keys: Vec<Vec<u8>> = (0..5000u32)
            .map(|i| format!("key{}", i % 1700).into_bytes())
            .collect();
        for (i, key) in keys.iter().enumerate() {
            k.prefetch(hash_bytes(key));
            let (id, new) = k.id(hash_bytes(key), key);
            assert_eq!((id, new), (i % 1700, i < 1700));
        }
        assert_eq!(k.len(), 1700);
        assert_eq!(k.key(1234), b"key1234");
    }

    #[test]
    #[cfg(target_pointer_width = "64")]
    fn key_ends_past_four_gib_are_kept() {
        let mut ends = Ends::default();
        let at = [
            0usize,
            5,
            u32::MAX as usize,
            (1 << 32) + 3,
            (1 << 32) + 3,
            (3 << 32) + 1,
        ];
        for &e in &at {
            ends.push(e);
        }
        for (g, &e) in at.iter().enumerate() {
            assert_eq!(ends.get(g), Some(e), "key {g}");
        }
        ends.pop();
        ends.push((1 << 32) + 9);
        assert_eq!(ends.get(5), Some((1 << 32) + 9));
        assert_eq!(ends.get(6), None);
    }

    #[test]
    fn keys_of_another_table_are_found_on_two_threads_as_one_by_one() {
        // enough keys for the two-thread lookup; half of them missing,
        // short and long keys
        let key = |i: u32| -> Vec<u8> {
            let mut k = Vec::new();
            let long = format!("a key longer than a head {i}");
            encode_key(
                &mut k,
                Cell::Text(if i.is_multiple_of(3) { &long } else { "k" }),
            );
            encode_key(&mut k, Cell::Number(f64::from(i)));
            k
        };
        let n = (PARALLEL_FROM * 2) as u32;
        let mut table = KeyIndex::default();
        let mut other = KeyIndex::default();
        for i in 0..n {
            if i.is_multiple_of(2) {
                table.id(hash_bytes(&key(i)), &key(i));
            }
            // the other table's keys in another order
            let j = (i * 7919) % n;
            other.id(hash_bytes(&key(j)), &key(j));
        }
        let ids: std::collections::HashMap<&[u8], usize> =
            (0..table.len()).map(|g| (table.key(g), g)).collect();
        let found = table.find_all(&other);
        assert_eq!(found.len(), other.len());
        for (h, &f) in found.iter().enumerate() {
            let want = ids.get(other.key(h)).map_or(NOT_FOUND, |&g| g as u32);
            assert_eq!(f, want, "key {h}");
        }
        // both halves hold found and missing keys
        for half in found.chunks(n as usize / 2) {
            assert!(half.contains(&NOT_FOUND) && half.iter().any(|&f| f != NOT_FOUND));
        }
    }

    proptest! {
        /// The table numbers keys as a map from key to first position does,
        /// across many growths, for keys of one and of several cells.
        #[test]
        fn numbers_keys_as_a_map_does(
            cells in proptest::collection::vec((0u8..40, 0usize..30, any::<bool>()), 0..600)
        ) {
            let mut k = KeyIndex::default();
            let mut map = std::collections::HashMap::new();
            for &(v, len, two) in &cells {
                let text: String = std::iter::repeat_n('z', len).collect();
                let mut key = Vec::new();
                encode_key(&mut key, Cell::Text(&text));
                encode_key(&mut key, if two { Cell::Number(f64::from(v)) } else { Cell::Missing });
                let next = map.len();
                let want = *map.entry(key.clone()).or_insert(next);
                prop_assert_eq!(k.id(hash_bytes(&key), &key), (want, want == next));
                prop_assert_eq!(k.key(want), &key[..]);
            }
            prop_assert_eq!(k.len(), map.len());
        }
    }
}
