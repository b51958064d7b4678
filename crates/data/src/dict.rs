//! The dictionary of a text column ([`crate::column`]): each distinct text
//! held once, all of them in one string, numbered in the order they came.
//!
//! Its hash index (text to id) is only needed to add texts one at a time
//! ([`Dict::intern`]). A dictionary made from texts known to be distinct
//! ([`Dict::distinct`], e.g. the keys of a group table, which are
//! distinct by construction) leaves them out of the index until a text is
//! next interned: a million group keys that are only read again never pay
//! for the index, its growth or its memory.

use hashbrown::HashTable;

use crate::hash::hash_bytes;

/// The id that marks a missing text cell (no dictionary holds it).
pub(crate) const NO_TEXT: u32 = u32::MAX;

/// Distinct texts, each held once: all of them in one string, the end of
/// each in `ends`, and a hash index from text to id over the first
/// `indexed` of them.
#[derive(Clone, Default)]
pub(crate) struct Dict {
    text: String,
    ends: Vec<usize>,
    index: HashTable<u32>,
    /// Texts `0..indexed` are in `index`; the others are distinct from
    /// every other text and enter it before the next lookup.
    indexed: usize,
}

/// Text `id` of a dictionary's parts (empty when out of range).
fn slice<'a>(text: &'a str, ends: &[usize], id: u32) -> &'a str {
    let i = id as usize;
    let end = ends.get(i).copied().unwrap_or(0);
    let start = match i.checked_sub(1) {
        Some(p) => ends.get(p).copied().unwrap_or(0),
        None => 0,
    };
    text.get(start..end).unwrap_or("")
}

impl Dict {
    /// The dictionary of texts known to be distinct: `text` holds them one
    /// after another, `ends` where each ends (each at a character
    /// boundary); `None` when there are too many for ids or an end is out
    /// of order.
    pub(crate) fn distinct(text: String, ends: Vec<usize>) -> Option<Dict> {
        let ordered = ends.windows(2).all(|w| w[0] <= w[1]);
        let bounded = ends.last().is_none_or(|&e| e == text.len());
        let fits = ends.len() < NO_TEXT as usize;
        let boundaries = ends.iter().all(|&e| text.is_char_boundary(e));
        (ordered && bounded && fits && boundaries).then_some(Dict {
            text,
            ends,
            ..Dict::default()
        })
    }

    /// The text with this id.
    pub(crate) fn get(&self, id: u32) -> &str {
        slice(&self.text, &self.ends, id)
    }

    /// Number of distinct texts.
    pub(crate) fn len(&self) -> usize {
        self.ends.len()
    }

    /// The id of `s`, added when new; `None` when the dictionary is full.
    pub(crate) fn intern(&mut self, s: &str) -> Option<u32> {
        self.index_all();
        let h = hash_bytes(s.as_bytes());
        let Dict {
            text, ends, index, ..
        } = self;
        if let Some(&id) = index.find(h, |&id| slice(text, ends, id) == s) {
            return Some(id);
        }
        let id = self.push_distinct(s)?;
        self.index_all();
        Some(id)
    }

    /// Add `s`, known to differ from every text held, without looking it
    /// up; its id, `None` when the dictionary is full.
    fn push_distinct(&mut self, s: &str) -> Option<u32> {
        let id = u32::try_from(self.ends.len())
            .ok()
            .filter(|&id| id != NO_TEXT)?;
        self.text.push_str(s);
        self.ends.push(self.text.len());
        Some(id)
    }

    /// Enter the texts not yet in the index.
    fn index_all(&mut self) {
        let Dict {
            text,
            ends,
            index,
            indexed,
        } = self;
        if *indexed == ends.len() {
            return;
        }
        let (text, ends) = (&*text, &*ends);
        let rehash = |&id: &u32| hash_bytes(slice(text, ends, id).as_bytes());
        index.reserve(ends.len() - *indexed, rehash);
        for id in *indexed..ends.len() {
            let id = id as u32;
            index.insert_unique(rehash(&id), id, rehash);
        }
        *indexed = ends.len();
    }

    /// Bytes of memory held.
    pub(crate) fn heap_bytes(&self) -> usize {
        // a hash-table bucket is the id and one control byte
        self.text.capacity() + self.ends.capacity() * 8 + self.index.capacity() * 5
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn texts_known_distinct_are_found_by_later_interns() {
        let texts = ["a", "b", "cc", "", "é"];
        let ends = texts.iter().scan(0, |end, s| {
            *end += s.len();
            Some(*end)
        });
        let mut d = Dict::distinct(texts.concat(), ends.collect()).expect("distinct");
        assert_eq!(d.len(), 5);
        for (i, s) in texts.iter().enumerate() {
            assert_eq!(d.get(i as u32), *s);
            assert_eq!(d.intern(s), Some(i as u32), "{s:?}");
        }
        assert_eq!(d.intern("new"), Some(5));
        assert_eq!(d.intern("b"), Some(1));
        assert_eq!(d.intern("new"), Some(5));
        assert_eq!(d.len(), 6);
        // ends out of order, past the text, or inside a character
        assert!(Dict::distinct("ab".into(), vec![2, 1]).is_none());
        assert!(Dict::distinct("ab".into(), vec![1]).is_none());
        assert!(Dict::distinct("é".into(), vec![1, 2]).is_none());
        assert!(Dict::distinct(String::new(), Vec::new()).is_some());
    }
}
