//! The display list: what layout decided to draw, positioned on the 1280×720
//! canvas, before any SVG is written. The renderer's writer replays it into
//! SVG; tests and lint rules read geometry from it (text boxes are measured
//! with [`crate::metrics`] as the items are made, the way the SVG will show
//! them).

use crate::metrics::{line_height, text_width};
use crate::theme::Rgb;

/// Horizontal alignment of a text relative to its `x`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Align {
    /// `x` is the left edge.
    Start,
    /// `x` is the centre.
    Middle,
    /// `x` is the right edge.
    End,
}

/// An axis-aligned rectangle in px.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Rect {
    /// Left edge.
    pub x0: f64,
    /// Top edge.
    pub y0: f64,
    /// Right edge.
    pub x1: f64,
    /// Bottom edge.
    pub y1: f64,
}

impl Rect {
    /// Area shared with `other` (0 when apart or touching).
    pub fn overlap(&self, other: &Rect) -> f64 {
        let dx = self.x1.min(other.x1) - self.x0.max(other.x0);
        let dy = self.y1.min(other.y1) - self.y0.max(other.y0);
        if dx > 0.0 && dy > 0.0 {
            dx * dy
        } else {
            0.0
        }
    }

    /// True if the two rectangles share more than `tolerance` px in both
    /// directions.
    pub fn overlaps(&self, other: &Rect, tolerance: f64) -> bool {
        let dx = self.x1.min(other.x1) - self.x0.max(other.x0);
        let dy = self.y1.min(other.y1) - self.y0.max(other.y0);
        dx > tolerance && dy > tolerance
    }

    /// The rectangle grown by `m` on every side.
    pub fn grow(&self, m: f64) -> Rect {
        Rect {
            x0: self.x0 - m,
            y0: self.y0 - m,
            x1: self.x1 + m,
            y1: self.y1 + m,
        }
    }

    /// True if `self` lies inside `outer`.
    pub fn inside(&self, outer: &Rect) -> bool {
        self.x0 >= outer.x0 && self.y0 >= outer.y0 && self.x1 <= outer.x1 && self.y1 <= outer.y1
    }

    /// Whether the segment `a`–`b` passes through the rectangle.
    pub fn hit_by(&self, a: (f64, f64), b: (f64, f64)) -> bool {
        self.clip(a, b).is_some()
    }

    /// The part of segment `a`–`b` inside the rectangle, if any
    /// (Liang–Barsky clipping, a published method: Liang & Barsky 1984).
    pub fn clip(&self, a: (f64, f64), b: (f64, f64)) -> Option<((f64, f64), (f64, f64))> {
        let (dx, dy) = (b.0 - a.0, b.1 - a.1);
        let (mut t0, mut t1) = (0.0_f64, 1.0_f64);
        for (p, q) in [
            (-dx, a.0 - self.x0),
            (dx, self.x1 - a.0),
            (-dy, a.1 - self.y0),
            (dy, self.y1 - a.1),
        ] {
            if p == 0.0 {
                if q < 0.0 {
                    return None;
                }
                continue;
            }
            let t = q / p;
            if p < 0.0 {
                t0 = t0.max(t);
            } else {
                t1 = t1.min(t);
            }
            if t0 > t1 {
                return None;
            }
        }
        let at = |t: f64| (a.0 + t * dx, a.1 + t * dy);
        Some((at(t0), at(t1)))
    }
}

/// The box of one line of text: `text_width` wide, one line height tall
/// from `top`, placed by `align` around `x`.
pub fn text_box(text: &str, x: f64, top: f64, size: f64, bold: bool, align: Align) -> Rect {
    let w = text_width(text, size, bold);
    let x0 = match align {
        Align::Start => x,
        Align::Middle => x - w / 2.0,
        Align::End => x - w,
    };
    Rect {
        x0,
        y0: top,
        x1: x0 + w,
        y1: top + line_height(size),
    }
}

/// One line of text, positioned by the top of its box. The display list
/// owns its text; the renderer lays text out with a borrowed one
/// (`Text<&str>`).
#[derive(Clone, Debug, PartialEq)]
pub struct Text<S = String> {
    /// The text as drawn (already fitted).
    pub text: S,
    /// Anchor position along x (see [`Text::align`]).
    pub x: f64,
    /// Top of the text box.
    pub top: f64,
    /// Font size in px, as it appears in the SVG.
    pub size: f64,
    /// Bold weight.
    pub bold: bool,
    /// Fill colour.
    pub color: Rgb,
    /// What `x` refers to.
    pub align: Align,
}

impl<S: AsRef<str>> Text<S> {
    /// The box the text takes ([`text_box`]).
    pub fn bounds(&self) -> Rect {
        let Text {
            text,
            x,
            top,
            size,
            bold,
            align,
            ..
        } = self;
        text_box(text.as_ref(), *x, *top, *size, *bold, *align)
    }
}

impl Text<&str> {
    /// The same text, owning its string (for the display list).
    pub fn to_owned_text(&self) -> Text {
        Text {
            text: self.text.to_string(),
            x: self.x,
            top: self.top,
            size: self.size,
            bold: self.bold,
            color: self.color,
            align: self.align,
        }
    }
}

/// What a group of items is, for readers of the display list.
#[derive(Clone, Debug, PartialEq)]
pub enum Part {
    /// The painted page behind everything.
    Page,
    /// The headline lines; `needed` is how many lines the whole headline
    /// needs at its size and width (more than are drawn when it is cut).
    Headline {
        /// Lines the whole headline needs.
        needed: usize,
    },
    /// The takeaway lines; `needed` is how many lines the whole takeaway
    /// needs (more than are drawn when it is cut).
    Takeaway {
        /// Lines the whole takeaway needs.
        needed: usize,
    },
    /// Notices drawn on a draft frame.
    Notices,
    /// The source note's lines; `needed` as for the takeaway.
    Source {
        /// Lines the whole source note needs.
        needed: usize,
    },
    /// The tick labels along a horizontal axis. `wanted` holds the width of
    /// every label the axis asked for, measured before any was dropped for
    /// lack of room.
    XTicks {
        /// Measured widths of every tick label, in axis order.
        wanted: Vec<f64>,
    },
    /// Everything the chart form drew in its region.
    Chart,
    /// The outlines, brackets and paths a `cite` draws over the data: an
    /// annotation, not a mark (the marks' colour rules skip it).
    Evidence,
    /// A note the label placer put on the chart: a `cite`d value's
    /// figure, a callout, a moment's label (empty when no spot clear of
    /// text was found); `covers` when it could only go over data or was
    /// left out.
    Note {
        /// Which note.
        of: NoteOf,
        /// The note covers a data mark or line, or was not drawn.
        covers: bool,
    },
    /// The plot rectangle of a chart with axes (empty: a mark for readers
    /// of the layout): left and right are the plot's edges, the same on
    /// every chart frame of a deck; top and bottom span the value range.
    Plot(Rect),
    /// A label inside a chart cut with an ellipsis to fit its room (empty:
    /// a note for the lint, which reports every cut); `full` is the whole
    /// text.
    Cut {
        /// The text before it was cut.
        full: String,
    },
    /// A light fill behind the data (a highlighted band, a shaded or
    /// tinted table row): a background, not a mark, so the marks' contrast
    /// rules do not apply to it.
    Tint,
}

/// Which note a [`Part::Note`] holds, as the lint finds where it was
/// written.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum NoteOf {
    /// The figure of a `cite`d value, by the value's name.
    Cite(String),
    /// The frame's callout number `k`, in the order the callouts were
    /// written through the sequence (on a line or on any form's marks).
    Callout(usize),
    /// The label of the frame's moment number `k`, in the order written.
    Moment(usize),
}

/// A mark's colour as drawn: a fill (bar, segment, slice, dot, area) or a
/// data line of 2 px or more (baselines, gridlines and thin rules are not
/// marks), found inside the chart outside any [`Part::Tint`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Mark {
    /// The colour drawn.
    pub color: Rgb,
    /// A fill (true) or a stroke (false).
    pub fill: bool,
}

/// One thing to draw. Coordinates are canvas px; the writer rounds them to
/// whole pixels.
#[derive(Clone, Debug, PartialEq)]
pub enum Item {
    /// One line of text.
    Text(Text),
    /// An open polyline (a line when it has two points).
    Polyline {
        /// The points in order.
        points: Vec<(f64, f64)>,
        /// Stroke colour.
        color: Rgb,
        /// Stroke width in px.
        width: u32,
    },
    /// A filled rectangle between two corners (any order).
    Rect {
        /// One corner.
        a: (f64, f64),
        /// The opposite corner.
        b: (f64, f64),
        /// Fill colour.
        color: Rgb,
    },
    /// A filled dot.
    Dot {
        /// Centre.
        at: (f64, f64),
        /// Radius in px.
        radius: u32,
        /// Fill colour.
        color: Rgb,
    },
    /// A filled polygon without outline.
    Polygon {
        /// The corners in order.
        points: Vec<(f64, f64)>,
        /// Fill colour.
        color: Rgb,
    },
    /// A filled circular sector (a pie slice), drawn as a true arc: from
    /// angle `from` to `to` in radians, clockwise from 12 o'clock; a whole
    /// turn is a disc.
    Wedge {
        /// Centre.
        centre: (f64, f64),
        /// Radius in px.
        radius: f64,
        /// Start angle.
        from: f64,
        /// End angle (greater than `from`).
        to: f64,
        /// Fill colour.
        color: Rgb,
    },
    /// Items that belong together, with what they are.
    Group {
        /// What the group is.
        part: Part,
        /// Its items, in drawing order.
        items: Vec<Item>,
    },
}

/// A frame's drawing: every item in drawing order, and the text alternative
/// the SVG carries for screen readers.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct DisplayList {
    /// The items, in drawing order (later items are drawn over earlier ones).
    pub items: Vec<Item>,
    /// A description that replaces the frame's own (a plugin's description
    /// of what it drew), when there is one.
    pub description: Option<String>,
}

impl DisplayList {
    /// Every item in drawing order, groups opened (a group itself is not
    /// listed, only its items).
    pub fn flat(&self) -> Vec<&Item> {
        fn walk<'a>(items: &'a [Item], out: &mut Vec<&'a Item>) {
            for item in items {
                match item {
                    Item::Group { items, .. } => walk(items, out),
                    other => out.push(other),
                }
            }
        }
        let mut out = Vec::new();
        walk(&self.items, &mut out);
        out
    }

    /// The distinct mark colours drawn in the chart ([`Mark`]), in the
    /// order first drawn (light tints and a cite's evidence are not marks).
    pub fn marks(&self) -> Vec<Mark> {
        fn walk(items: &[Item], in_chart: bool, out: &mut Vec<Mark>) {
            for item in items {
                let mark = match item {
                    Item::Group {
                        part: Part::Tint | Part::Evidence,
                        ..
                    } => None,
                    Item::Group { part, items } => {
                        walk(items, in_chart || *part == Part::Chart, out);
                        None
                    }
                    Item::Rect { color, .. }
                    | Item::Dot { color, .. }
                    | Item::Wedge { color, .. }
                    | Item::Polygon { color, .. } => Some(Mark {
                        color: *color,
                        fill: true,
                    }),
                    Item::Polyline { color, width, .. } if *width >= 2 => Some(Mark {
                        color: *color,
                        fill: false,
                    }),
                    Item::Polyline { .. } | Item::Text(_) => None,
                };
                if let Some(m) = mark.filter(|_| in_chart) {
                    if !out.contains(&m) {
                        out.push(m);
                    }
                }
            }
        }
        let mut out = Vec::new();
        walk(&self.items, false, &mut out);
        out
    }

    /// Every text in drawing order.
    pub fn texts(&self) -> Vec<&Text> {
        self.flat()
            .into_iter()
            .filter_map(|i| match i {
                Item::Text(t) => Some(t),
                _ => None,
            })
            .collect()
    }

    /// The groups whose part satisfies `which`, outermost first, in
    /// drawing order.
    pub fn groups(&self, which: impl Fn(&Part) -> bool) -> Vec<(&Part, &[Item])> {
        fn walk<'a>(
            items: &'a [Item],
            which: &dyn Fn(&Part) -> bool,
            out: &mut Vec<(&'a Part, &'a [Item])>,
        ) {
            for item in items {
                if let Item::Group { part, items } = item {
                    if which(part) {
                        out.push((part, items));
                    }
                    walk(items, which, out);
                }
            }
        }
        let mut out = Vec::new();
        walk(&self.items, &which, &mut out);
        out
    }
}

#[cfg(test)]
#[path = "display_tests.rs"]
mod tests;
