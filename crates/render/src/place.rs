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
//! [`settle`] does all of it for one label with a leader of its own: its
//! usual place when free and its leader clear of other marks and data lines
//! ([`Obstacles::leader_clear`]), else the nearest free shift, else the
//! usual place; part names and the category names of stacks and panels go
//! through it.
//!
//! Forms place their labels in order of importance: axis texts and direct
//! labels first, then value labels, then notes (callouts have the most
//! freedom and come last). Notes bound to data values build on the same
//! calls: an anchor from the value, [`around`], [`pick`], [`leader`].

use crate::canvas::{Canvas, Label, HEIGHT, WIDTH};
use crate::theme::Rgb;
use crate::RenderError;
use crescendo_look::display::{NoteOf, Part, Rect};

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

    /// True when a leader from `a` (on its own mark) to `b` crosses no
    /// other data mark and no data line: a leader over a bar or a peak
    /// would point at the wrong thing.
    pub fn leader_clear(&self, a: (f64, f64), b: (f64, f64)) -> bool {
        let own = |m: &Rect| {
            let g = m.grow(4.0);
            a.0 >= g.x0 && a.0 <= g.x1 && a.1 >= g.y0 && a.1 <= g.y1
        };
        let shrunk = |m: &Rect| m.grow(-0.5);
        self.marks
            .iter()
            .filter(|m| !own(m))
            .all(|m| !shrunk(m).hit_by(a, b))
            && !self.segments.iter().any(|&(p, q)| crosses((a, b), (p, q)))
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

/// The group a placed note is drawn in: it says whether the note's box
/// (`None`: no spot clear of text, so it was left out) covers a data mark
/// or line, for the lint.
pub(crate) fn note_part(of: NoteOf, chosen: Option<Rect>, obstacles: &Obstacles) -> Part {
    Part::Note {
        of,
        covers: chosen.is_none_or(|r| !obstacles.free(&r)),
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

/// Picks the first of `cands` (slid sideways into `bounds`) that is free of
/// texts and marks and whose leader `lead(candidate)` is clear
/// ([`Obstacles::leader_clear`]); `None` when no candidate is, so the
/// caller keeps its label's usual place.
pub(crate) fn pick_led(
    cands: &[Rect],
    obstacles: &Obstacles,
    bounds: &Rect,
    lead: impl Fn(&Rect) -> Option<((f64, f64), (f64, f64))>,
) -> Option<Rect> {
    cands.iter().find_map(|c| {
        let r = pick(std::slice::from_ref(c), obstacles, bounds, Pick::FirstFree)?;
        let clear = lead(&r).is_none_or(|(a, b)| obstacles.leader_clear(a, b));
        (obstacles.free(&r) && clear).then_some(r)
    })
}

/// A leader from a mark to its label, given the label's offset from its
/// usual place: drawn as a polyline (`true`) or a plain line.
pub(crate) type Lead<'f> = (bool, &'f dyn Fn(f64, f64) -> ((f64, f64), (f64, f64)));

/// Sets `label` through the placer ([`pick_led`]): at its usual
/// place when that is free of texts and marks and its leader crosses
/// no other mark, else at the first such place moved by one of
/// `shifts`, else at its usual place. Draws the leader first (when
/// there is one) and records both.
pub(crate) fn settle(
    canvas: &Canvas,
    ink: Rgb,
    obstacles: &mut Obstacles,
    label: &Label<'_>,
    (shifts, lead): (&[(f64, f64)], Option<Lead<'_>>),
) -> Result<(), RenderError> {
    let home = label.bounds();
    let cands: Vec<Rect> = (std::iter::once(&(0.0, 0.0)).chain(shifts))
        .map(|&(dx, dy)| rect(home.x0 + dx, home.y0 + dy, home.x1 + dx, home.y1 + dy))
        .collect();
    let bounds = rect(0.0, 0.0, f64::from(WIDTH), f64::from(HEIGHT));
    let offset = |r: &Rect| (r.x0 - home.x0, r.y0 - home.y0);
    let ends = |r: &Rect| lead.map(|(_, f)| f(offset(r).0, offset(r).1));
    let (dx, dy) = pick_led(&cands, obstacles, &bounds, ends)
        .map(|r| offset(&r))
        .unwrap_or((0.0, 0.0));
    if let Some((poly, f)) = lead {
        let (a, b) = f(dx, dy);
        if poly {
            canvas.polyline(&[a, b], ink, 1)?;
        } else {
            canvas.line(a, b, ink, 1)?;
        }
        obstacles.segments.push((a, b));
    }
    let moved = Label {
        x: label.x + dx,
        top: label.top + dy,
        ..*label
    };
    if moved.text.is_empty() {
        return Ok(());
    }
    obstacles.boxes.push(moved.bounds());
    canvas.text(&moved)
}

/// Shifts of `d` px along one axis (`across` for x), nearest first, up to
/// `k` steps each way (or only `one_way` when given its sign).
pub(crate) fn shifts(d: f64, k: usize, across: bool, one_way: Option<f64>) -> Vec<(f64, f64)> {
    let mut out = Vec::new();
    for i in 1..=k {
        let m = d * i as f64;
        let signs: &[f64] = match one_way {
            Some(s) if s < 0.0 => &[-1.0],
            Some(_) => &[1.0],
            None => &[-1.0, 1.0],
        };
        for sg in signs {
            out.push(if across { (sg * m, 0.0) } else { (0.0, sg * m) });
        }
    }
    out
}

/// Whether the segment `s` (a leader) crosses the segment `t`: an end of
/// `s` on `t` counts as apart, an end of `t` inside `s` as a crossing (a
/// leader through the vertex of a peak crosses that line).
fn crosses(s: ((f64, f64), (f64, f64)), t: ((f64, f64), (f64, f64))) -> bool {
    let side = |a: (f64, f64), b: (f64, f64), p: (f64, f64)| {
        (b.0 - a.0) * (p.1 - a.1) - (b.1 - a.1) * (p.0 - a.0)
    };
    let (d1, d2) = (side(t.0, t.1, s.0), side(t.0, t.1, s.1));
    let (d3, d4) = (side(s.0, s.1, t.0), side(s.0, s.1, t.1));
    d1 * d2 < 0.0 && d3 * d4 <= 0.0
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

    /// A leader through the vertex of another line crosses it; one that
    /// ends on a line, or passes a vertex beyond its end, does not.
    #[test]
    fn a_leader_through_a_vertex_crosses_the_line() {
        let leader = ((0.0, 0.0), (0.0, 10.0));
        assert!(crosses(leader, ((-5.0, 8.0), (0.0, 5.0))));
        assert!(crosses(leader, ((0.0, 5.0), (5.0, 8.0))));
        assert!(crosses(leader, ((-5.0, 5.0), (5.0, 5.0))));
        assert!(!crosses(leader, ((-5.0, 12.0), (0.0, 12.0))));
        assert!(!crosses(
            ((0.0, 0.0), (0.0, 5.0)),
            ((-5.0, 5.0), (5.0, 5.0))
        ));
    }

    /// A part name whose usual place is taken moves to the nearest free
    /// place whose leader crosses no other bar, and its leader follows it.
    #[test]
    fn a_taken_name_moves_and_its_leader_follows() {
        let theme = crate::theme::CLEAR;
        let canvas = Canvas::new();
        let mut obstacles = Obstacles::default();
        let label = Label {
            text: "Audio",
            x: 500.0,
            top: 300.0,
            size: theme.label_size,
            bold: false,
            color: theme.muted,
            align: crate::canvas::Align::Start,
        };
        // its own bar at the left, a text on its usual place, and a bar
        // right above it, so the way up is barred and the way down is free
        obstacles.add_mark((400.0, 310.0), (440.0, 500.0));
        obstacles.boxes.push(label.bounds());
        let step = theme.label_step();
        obstacles.add_mark((450.0, 200.0), (470.0, 305.0));
        let lead = |dx: f64, dy: f64| ((443.0, 320.0), (496.0 + dx, 300.0 + dy));
        let moves = shifts(step, 2, false, None);
        let how = (
            moves.as_slice(),
            Some((true, &lead as &dyn Fn(f64, f64) -> _)),
        );
        settle(&canvas, theme.baseline, &mut obstacles, &label, how).unwrap();
        let placed = obstacles.boxes.last().copied().unwrap();
        assert!((placed.y0 - (300.0 + step)).abs() < 1e-9, "{placed:?}");
        assert_eq!(
            obstacles.segments.last(),
            Some(&((443.0, 320.0), (496.0, 300.0 + step)))
        );
    }

    #[test]
    fn leaders_keep_off_other_marks_and_lines() {
        let mut o = Obstacles::default();
        // the label's own bar, another bar, and a data line's peak
        o.add_mark((0.0, 100.0), (20.0, 200.0));
        o.add_mark((40.0, 50.0), (60.0, 200.0));
        o.segments.push(((100.0, 200.0), (120.0, 20.0)));
        o.segments.push(((120.0, 20.0), (140.0, 200.0)));
        // from the top of its own bar to a label beside it: clear
        assert!(o.leader_clear((10.0, 100.0), (30.0, 80.0)));
        // across the other bar, or through the peak: not
        assert!(!o.leader_clear((10.0, 100.0), (70.0, 100.0)));
        assert!(!o.leader_clear((90.0, 60.0), (150.0, 60.0)));
        // above the peak it is clear again
        assert!(o.leader_clear((90.0, 10.0), (150.0, 10.0)));
        // the placer skips a spot whose leader would cross the other bar
        let bounds = rect(0.0, 0.0, 400.0, 400.0);
        let far = rect(70.0, 90.0, 100.0, 110.0);
        let near = rect(22.0, 60.0, 38.0, 80.0);
        let lead = |r: &Rect| Some(((10.0, 100.0), (r.x0, (r.y0 + r.y1) / 2.0)));
        assert_eq!(pick_led(&[far, near], &o, &bounds, lead), Some(near));
        assert_eq!(pick_led(&[far], &o, &bounds, lead), None);
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
