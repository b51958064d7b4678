//! Who reads which piece of a streamed CSV file ([`crate::stream`]).
//!
//! The file is cut into many pieces (each starting just after a line break
//! at or after a nominal offset), but only a few *runs* start: one per
//! core, evenly spaced. A run reads on through the boundaries of the pieces
//! after its own, with one state, until it meets a piece where another run
//! started. A core that finishes early takes over the second half of the
//! longest stretch of pieces no run has reached yet: it starts a new run
//! there, and the run heading for that stretch stops at its start. So both
//! cores stay busy to the end, while the number of states to merge stays a
//! handful.
//!
//! A new run costs a new state (and its merge), so a core takes over only
//! when the state it just finished is small: a view with a million groups
//! keeps one run per core, as many groups would otherwise cost memory.
//!
//! Each piece has one of three marks, changed by compare-and-swap only:
//! free, passed (a run read on into it) or started (a run starts there).
//! A run stops only at a started piece, so a run's stop always names a
//! piece where a run's result will be found. A boundary that a record spans
//! (a guess inside a quoted field) is passed, never stopped at; the run
//! that started there, if any, read from a wrong place, and its result is
//! not on the chain that [`crate::stream`] follows from the first piece.

use std::sync::atomic::{AtomicU8, Ordering};

const FREE: u8 = 0;
const PASSED: u8 = 1;
const STARTED: u8 = 2;

/// Most entries (groups and kept rows, over all views) a finished run may
/// hold for its core to start another one.
pub(crate) const SMALL_STATE: usize = 1 << 16;

/// The pieces of one file and their marks.
pub(crate) struct Pieces {
    /// The start offset of each piece, increasing; the first is the data.
    pub(crate) starts: Vec<u64>,
    marks: Vec<AtomicU8>,
}

impl Pieces {
    /// Pieces at `starts`, of which those in `runs` are started.
    pub(crate) fn new(starts: Vec<u64>, runs: &[usize]) -> Pieces {
        let marks = (0..starts.len())
            .map(|j| AtomicU8::new(if runs.contains(&j) { STARTED } else { FREE }))
            .collect();
        Pieces { starts, marks }
    }

    fn mark(&self, j: usize, to: u8) -> Result<u8, u8> {
        self.marks[j].compare_exchange(FREE, to, Ordering::AcqRel, Ordering::Acquire)
    }

    /// A run verified that a record ends at piece `j`'s start: may it read
    /// on into the piece? Not when a run started there.
    pub(crate) fn pass(&self, j: usize) -> bool {
        self.mark(j, PASSED) != Err(STARTED)
    }

    /// A record spans piece `j`'s start: the run reads on in any case, and
    /// no run may start there from now on.
    pub(crate) fn absorb(&self, j: usize) {
        let _ = self.mark(j, PASSED);
    }

    /// Take over the second half of the longest stretch of free pieces
    /// (the piece itself when the stretch is one piece long): the piece
    /// where a new run starts, `None` when no piece is free.
    pub(crate) fn take_over(&self) -> Option<usize> {
        loop {
            let mut best: Option<(usize, usize)> = None;
            let mut j = 0;
            while j < self.marks.len() {
                if self.marks[j].load(Ordering::Acquire) != FREE {
                    j += 1;
                    continue;
                }
                let a = j;
                while j < self.marks.len() && self.marks[j].load(Ordering::Acquire) == FREE {
                    j += 1;
                }
                if best.is_none_or(|(b, e)| j - a > e - b) {
                    best = Some((a, j));
                }
            }
            let (a, b) = best?;
            let mid = a + (b - a) / 2;
            if self.mark(mid, STARTED).is_ok() {
                return Some(mid);
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn runs_stop_only_where_a_run_started() {
        let p = Pieces::new(vec![0, 10, 20, 30, 40, 50, 60, 70], &[0, 4]);
        assert!(p.pass(1) && p.pass(2));
        assert!(!p.pass(4), "a run started at piece 4");
        // the longest free stretch is 5..8: its second half starts at 6
        assert_eq!(p.take_over(), Some(6));
        assert!(p.pass(5) && !p.pass(6));
        // then 3 alone, then 7 alone
        assert_eq!(p.take_over(), Some(3));
        assert_eq!(p.take_over(), Some(7));
        assert_eq!(p.take_over(), None);
        // a passed piece is passed again (a run that read from a wrong
        // place may have marked it first)
        assert!(p.pass(1));
    }

    #[test]
    fn an_absorbed_boundary_is_never_taken_over() {
        let p = Pieces::new(vec![0, 10, 20], &[0]);
        p.absorb(2);
        assert_eq!(p.take_over(), Some(1));
        assert_eq!(p.take_over(), None);
        assert!(!p.pass(1));
        assert!(p.pass(2));
    }

    #[test]
    fn two_cores_racing_for_the_same_pieces_never_both_start_one() {
        for _ in 0..200 {
            let p = Pieces::new((0..64).map(|k| k * 100).collect(), &[0]);
            let taken: Vec<Vec<usize>> = std::thread::scope(|s| {
                let hands: Vec<_> = (0..3)
                    .map(|_| s.spawn(|| std::iter::from_fn(|| p.take_over()).collect()))
                    .collect();
                hands.into_iter().map(|h| h.join().unwrap()).collect()
            });
            let mut all: Vec<usize> = taken.concat();
            all.sort_unstable();
            assert_eq!(all, (1..64).collect::<Vec<_>>());
        }
    }
}
