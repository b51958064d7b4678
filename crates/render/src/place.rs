//! The one label placer every chart form uses.
//!
//! A label belongs to an *anchor* (a data point, a bar end, a line end). The
//! placer works in three small steps:
//!
//! 1. [`around`] lists candidate boxes for a label of a given size near its
//!    anchor, nearest first: above, below, right, left and the four
//!    diagonals, at growing distances.
//! 2. [`Obstacles`] holds what a label must avoid: the boxes of texts
//!    already placed, the boxes of data marks (bars, segments, dots) and the
//!    segments of data lines; the plot bounds are passed to [`pick`].
//! 3. [`pick`] returns the first candidate inside the bounds that is free
//!    of everything ([`Pick::FirstFree`]), or, when none is free, the one
//!    clear of text that crosses the fewest marks ([`Pick::Fewest`]
//!    considers every candidate by that score from the start). A label is
//!    never put on another text.
//!
//! When the chosen box lies away from its anchor, [`leader`] gives the short
//! line from near the anchor to the nearest edge of the box, so the reader
//! can tell what the label names. [`Obstacles::place`] records the box (and
//! the leader) so later labels avoid them.
//!
//! Forms place their labels in order of importance: axis texts and direct
//! labels first, then value labels, then notes (callouts have the most
//! freedom and come last). Notes bound to data values build on the same
//! calls: an anchor from the value, [`around`], [`pick`], [`leader`].

use crate::canvas::Canvas;
use crate::RenderError;
use crescendo_look::display::Rect;

/// The rectangle from `(x0, y0)` (top left) to `(x1, y1)`.
pub(crate) fn rect(x0: f64, y0: f64, x1: f64, y1: f64) -> Rect {
    Rect { x0, y0, x1, y1 }
}

/// Margin kept around every placed text, in px.
pub(crate) const MARGIN: f64 = 2.0;
/// A label this far (px) or more from its anchor gets a leader line.
pub(crate) const LEADER_FROM: f64 = 8.0;

/// What a new label should avoid.
#[derive(Clone, Debug, Default)]
pub(crate) struct Obstacles {
    /// Boxes of texts already drawn (or reserved).
    pub boxes: Vec<Rect>,
    /// Boxes of data marks (bars, segments, dots).
    pub marks: Vec<Rect>,
    /// Line segments of the marks (data lines, leaders, reference lines).
    pub segments: Vec<((f64, f64), (f64, f64))>,
}

impl Obstacles {
    /// True if `r` (grown by [`MARGIN`]) touches no text box.
    pub fn clear_of_text(&self, r: &Rect) -> bool {
        let g = r.grow(MARGIN);
        self.boxes.iter().all(|b| g.overlap(b) == 0.0)
    }

    /// True if `r` touches no text, no mark box and no line segment.
    pub fn free(&self, r: &Rect) -> bool {
        self.clear_of_text(r)
            && self.marks.iter().all(|m| r.overlap(m) == 0.0)
            && !self.segments.iter().any(|(a, b)| r.hit_by(*a, *b))
    }

    /// Penalty of putting a label at `r`: overlapping text weighs far more
    /// than covering a mark or crossing a line.
    pub fn score(&self, r: &Rect) -> f64 {
        let g = r.grow(MARGIN);
        let text: f64 = self.boxes.iter().map(|b| g.overlap(b)).sum();
        let marks: f64 = self.marks.iter().map(|m| r.overlap(m)).sum();
        let lines = self
            .segments
            .iter()
            .filter(|(a, b)| r.hit_by(*a, *b))
            .count();
        text * 1000.0 + marks + lines as f64 * 50.0
    }

    /// Adds the segments of a polyline.
    pub fn add_polyline(&mut self, pts: &[(f64, f64)]) {
        for w in pts.windows(2) {
            self.segments.push((w[0], w[1]));
        }
    }

    /// Adds the box of a mark between two corners (any order).
    pub fn add_mark(&mut self, a: (f64, f64), b: (f64, f64)) {
        self.marks
            .push(rect(a.0.min(b.0), a.1.min(b.1), a.0.max(b.0), a.1.max(b.1)));
    }

    /// Records a placed label box and draws its leader from `anchor` when
    /// the box moved away from it ([`leader`]).
    pub fn place(
        &mut self,
        canvas: &Canvas,
        color: crate::theme::Rgb,
        anchor: Option<(f64, f64)>,
        r: Rect,
    ) -> Result<(), RenderError> {
        if let Some((from, to)) = anchor.and_then(|p| leader(p, &r)) {
            canvas.line(from, to, color, 1)?;
            self.segments.push((from, to));
        }
        self.boxes.push(r);
        Ok(())
    }
}

/// How [`pick`] chooses among candidates.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Pick {
    /// The first candidate free of everything; failing that, the one clear
    /// of text with the lowest [`Obstacles::score`].
    FirstFree,
    /// The candidate clear of text with the lowest score (earlier ones win
    /// ties).
    Fewest,
}

/// Candidate boxes `w` × `h` around `anchor`, at each distance in `dists`:
/// above, below, right, left, then the four diagonals. Nearest first.
pub(crate) fn around(anchor: (f64, f64), w: f64, h: f64, dists: &[f64]) -> Vec<Rect> {
    let (x, y) = anchor;
    let mut out = Vec::with_capacity(dists.len() * 8);
    for &d in dists {
        let g = d * 0.7;
        for (x0, y0) in [
            (x - w / 2.0, y - d - h),
            (x - w / 2.0, y + d),
            (x + d, y - h / 2.0),
            (x - d - w, y - h / 2.0),
            (x + g, y - g - h),
            (x - g - w, y - g - h),
            (x + g, y + g),
            (x - g - w, y + g),
        ] {
            out.push(rect(x0, y0, x0 + w, y0 + h));
        }
    }
    out
}

/// Picks a candidate (slid sideways into `bounds` first) that lies inside
/// `bounds` and is clear of text; see [`Pick`]. `None` when every candidate
/// would cover a text or leave the bounds.
pub(crate) fn pick(
    cands: &[Rect],
    obstacles: &Obstacles,
    bounds: &Rect,
    how: Pick,
) -> Option<Rect> {
    let mut best: Option<(f64, Rect)> = None;
    for (k, c) in cands.iter().enumerate() {
        let w = c.x1 - c.x0;
        let x0 = c.x0.max(bounds.x0).min(bounds.x1 - w);
        let c = Rect {
            x0,
            x1: x0 + w,
            ..*c
        };
        if !c.inside(bounds) || !obstacles.clear_of_text(&c) {
            continue;
        }
        if how == Pick::FirstFree && obstacles.free(&c) {
            return Some(c);
        }
        let s = obstacles.score(&c) + k as f64 * 0.5;
        if best.is_none_or(|(b, _)| s < b) {
            best = Some((s, c));
        }
    }
    best.map(|(_, r)| r)
}

/// The leader from near `anchor` to the nearest edge of the box `r` (grown
/// by 4 px), or `None` when the box is within [`LEADER_FROM`] of it.
pub(crate) fn leader(anchor: (f64, f64), r: &Rect) -> Option<((f64, f64), (f64, f64))> {
    let p = anchor;
    let g = r.grow(4.0);
    let to = (p.0.clamp(g.x0, g.x1), p.1.clamp(g.y0, g.y1));
    let (dx, dy) = (to.0 - p.0, to.1 - p.1);
    let len = (dx * dx + dy * dy).sqrt();
    (len > LEADER_FROM).then(|| ((p.0 + dx / len * 4.0, p.1 + dy / len * 4.0), to))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rect(x0: f64, y0: f64, x1: f64, y1: f64) -> Rect {
        Rect { x0, y0, x1, y1 }
    }

    #[test]
    fn first_free_skips_marks_lines_and_text() {
        let bounds = rect(0.0, 0.0, 400.0, 400.0);
        let cands = around((200.0, 200.0), 40.0, 20.0, &[10.0, 40.0]);
        let mut o = Obstacles::default();
        // nothing in the way: the first candidate, above the anchor
        assert_eq!(pick(&cands, &o, &bounds, Pick::FirstFree), Some(cands[0]));
        // a bar above: below is taken; a line below: right is taken
        o.add_mark((150.0, 100.0), (250.0, 185.0));
        o.add_polyline(&[(150.0, 215.0), (250.0, 215.0)]);
        assert_eq!(pick(&cands, &o, &bounds, Pick::FirstFree), Some(cands[2]));
        // texts on the right and left: a farther spot, never on a text
        o.boxes.push(cands[2]);
        o.boxes.push(cands[3]);
        let r = pick(&cands, &o, &bounds, Pick::FirstFree).unwrap();
        assert!(o.free(&r));
        assert!(cands[8..].contains(&r));
        // all taken by text: nothing
        o.boxes.extend(cands.iter().copied());
        assert_eq!(pick(&cands, &o, &bounds, Pick::FirstFree), None);
    }

    #[test]
    fn candidates_stay_inside_the_bounds() {
        let bounds = rect(0.0, 0.0, 100.0, 100.0);
        let cands = around((98.0, 50.0), 40.0, 20.0, &[10.0]);
        let r = pick(&cands, &Obstacles::default(), &bounds, Pick::FirstFree).unwrap();
        assert!(r.inside(&bounds));
    }

    #[test]
    fn leader_only_when_moved() {
        assert_eq!(leader((0.0, 0.0), &rect(2.0, 2.0, 40.0, 20.0)), None);
        let (from, to) = leader((0.0, 0.0), &rect(30.0, -10.0, 60.0, 10.0)).unwrap();
        assert_eq!(from, (4.0, 0.0));
        assert_eq!(to, (26.0, 0.0));
    }
}
