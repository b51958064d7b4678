//! The drawing surface layout draws on, in our own terms: text positioned
//! by the top of its box, lines, polylines, filled rectangles, dots and
//! polygons. It draws nothing itself: every call appends an item to a
//! display list ([`crescendo_look::display`]), which [`crate::svg`] writes
//! as SVG through plotters.

use std::cell::RefCell;

pub use crescendo_look::display::Align;
use crescendo_look::display::{Item, Part, Text};
pub use crescendo_look::theme::{FONT_FAMILY, HEIGHT, WIDTH};

use crate::theme::Rgb;
use crate::RenderError;

/// One piece of text to draw, borrowing its text (already fitted; the
/// writer escapes it).
pub type Label<'a> = Text<&'a str>;

/// A data mark by its item index and, where the form has them, its part.
type MarkKey = (usize, Option<usize>);

/// Records what layout draws, in order, into a display list. Groups
/// ([`Canvas::group`]) nest.
#[derive(Default)]
pub struct Canvas {
    /// The open groups, innermost last; the first is the whole list.
    open: RefCell<Vec<(Option<Part>, Vec<Item>)>>,
    /// Where the plan's marks were drawn (for notes bound to values).
    anchors: RefCell<Vec<Anchor>>,
    /// The point a callout on each data mark points at (its item and part
    /// indexes, see [`Canvas::point`]).
    points: RefCell<Vec<(MarkKey, (f64, f64))>>,
    /// Where marks hidden in this frame would be drawn when a later frame
    /// of the sequence shows them (see [`Canvas::ghost`]).
    ghosts: RefCell<Vec<crescendo_look::display::Rect>>,
}

/// Where a mark of the plan was drawn: its box and, for a pie slice, its
/// arc (centre, radius, from, to). Read by [`crate::cite`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Anchor {
    pub mark: crescendo_frame::MarkRef,
    pub rect: crescendo_look::display::Rect,
    pub arc: Option<((f64, f64), f64, f64, f64)>,
}

impl Canvas {
    /// An empty 1280×720 canvas. Nothing is painted: the background stays
    /// transparent.
    pub fn new() -> Self {
        Self {
            open: RefCell::new(vec![(None, Vec::new())]),
            anchors: RefCell::new(Vec::new()),
            points: RefCell::default(),
            ghosts: RefCell::default(),
        }
    }

    /// Records where a mark hidden in this frame (a bar, a part, a dot, a
    /// point) would be drawn, between two corners (any order): draws
    /// nothing, but a cite's figure keeps off it, so the figure stays in
    /// place when the build-up shows the mark.
    pub(crate) fn ghost(&self, a: (f64, f64), b: (f64, f64)) {
        self.ghosts
            .borrow_mut()
            .push(crescendo_look::display::Rect {
                x0: a.0.min(b.0),
                y0: a.1.min(b.1),
                x1: a.0.max(b.0),
                y1: a.1.max(b.1),
            });
    }

    /// The boxes recorded with [`Canvas::ghost`].
    pub(crate) fn ghosts(&self) -> Vec<crescendo_look::display::Rect> {
        self.ghosts.borrow().clone()
    }

    /// Records the point a note on mark `item` (bar, category, row, point
    /// or table row), `part` (part, series or column) points at. Draws
    /// nothing.
    pub(crate) fn point(&self, item: usize, part: Option<usize>, at: (f64, f64)) {
        self.points.borrow_mut().push(((item, part), at));
    }

    /// The point recorded for a mark, the first if several.
    pub(crate) fn point_of(&self, item: usize, part: Option<usize>) -> Option<(f64, f64)> {
        (self.points.borrow().iter())
            .find(|(k, _)| *k == (item, part))
            .map(|(_, at)| *at)
    }

    /// Records where mark (`item`, `part`) of the plan was drawn, between
    /// two corners (any order).
    pub(crate) fn anchor(&self, (item, part): (usize, usize), a: (f64, f64), b: (f64, f64)) {
        self.anchors.borrow_mut().push(Anchor {
            mark: crescendo_frame::MarkRef { item, part },
            rect: crescendo_look::display::Rect {
                x0: a.0.min(b.0),
                y0: a.1.min(b.1),
                x1: a.0.max(b.0),
                y1: a.1.max(b.1),
            },
            arc: None,
        });
    }

    /// Records where slice `item` of a pie was drawn.
    pub(crate) fn anchor_arc(
        &self,
        item: usize,
        centre: (f64, f64),
        radius: f64,
        (from, to): (f64, f64),
    ) {
        self.anchor(
            (item, 0),
            (centre.0 - radius, centre.1 - radius),
            (centre.0 + radius, centre.1 + radius),
        );
        if let Some(a) = self.anchors.borrow_mut().last_mut() {
            a.arc = Some((centre, radius, from, to));
        }
    }

    /// The marks recorded with [`Canvas::anchor`], in drawing order.
    pub(crate) fn anchors(&self) -> Vec<Anchor> {
        self.anchors.borrow().clone()
    }

    /// Every item drawn so far, groups opened included, flattened (the
    /// painted page and light tints left out: they are backgrounds).
    pub(crate) fn drawn(&self) -> Vec<Item> {
        fn flat(items: &[Item], out: &mut Vec<Item>) {
            for i in items {
                match i {
                    Item::Group {
                        part: Part::Tint | Part::Page,
                        ..
                    } => {}
                    Item::Group { items, .. } => flat(items, out),
                    other => out.push(other.clone()),
                }
            }
        }
        let mut out = Vec::new();
        for (part, items) in self.open.borrow().iter() {
            if !matches!(part, Some(Part::Tint | Part::Page)) {
                flat(items, &mut out);
            }
        }
        out
    }

    fn push(&self, item: Item) -> Result<(), RenderError> {
        let mut open = self.open.borrow_mut();
        match open.last_mut() {
            Some((_, items)) => {
                items.push(item);
                Ok(())
            }
            None => Err(RenderError::new("drawing failed: the canvas is closed")),
        }
    }

    /// Runs `draw` with everything it draws collected into one group that
    /// says what it is.
    pub fn group<T>(
        &self,
        part: Part,
        draw: impl FnOnce() -> Result<T, RenderError>,
    ) -> Result<T, RenderError> {
        self.open.borrow_mut().push((Some(part), Vec::new()));
        let result = draw();
        let closed = self.open.borrow_mut().pop();
        if let Some((Some(part), items)) = closed {
            self.push(Item::Group { part, items })?;
        }
        result
    }

    /// Marks the plot rectangle of a chart with axes, from `(x0, y0)` to
    /// `(x1, y1)`, for readers of the layout ([`Part::Plot`]); draws nothing.
    pub fn plot(&self, (x0, y0): (f64, f64), (x1, y1): (f64, f64)) -> Result<(), RenderError> {
        let r = crescendo_look::display::Rect { x0, y0, x1, y1 };
        self.group(Part::Plot(r), || Ok(()))
    }

    /// One line of text (the caller has measured and fitted it).
    pub fn text(&self, label: &Label<'_>) -> Result<(), RenderError> {
        if label.text.is_empty() {
            return Ok(());
        }
        self.push(Item::Text(label.to_owned_text()))
    }

    /// A straight line.
    pub fn line(
        &self,
        from: (f64, f64),
        to: (f64, f64),
        color: Rgb,
        width: u32,
    ) -> Result<(), RenderError> {
        self.polyline(&[from, to], color, width)
    }

    /// An open polyline (no fill, no markers).
    pub fn polyline(
        &self,
        points: &[(f64, f64)],
        color: Rgb,
        width: u32,
    ) -> Result<(), RenderError> {
        if points.len() < 2 {
            return Ok(());
        }
        self.push(Item::Polyline {
            points: points.to_vec(),
            color,
            width,
        })
    }

    /// A filled dot, used only for a data point with no neighbour to join.
    pub fn dot(&self, at: (f64, f64), radius: u32, color: Rgb) -> Result<(), RenderError> {
        self.push(Item::Dot { at, radius, color })
    }

    /// A filled rectangle between two corners (any order).
    pub fn rect(&self, a: (f64, f64), b: (f64, f64), color: Rgb) -> Result<(), RenderError> {
        self.push(Item::Rect { a, b, color })
    }

    /// A filled polygon without outline (pie slices).
    pub fn polygon(&self, points: &[(f64, f64)], color: Rgb) -> Result<(), RenderError> {
        if points.len() < 3 {
            return Ok(());
        }
        self.push(Item::Polygon {
            points: points.to_vec(),
            color,
        })
    }

    /// A pie slice as a true arc ([`Item::Wedge`]).
    pub fn wedge(
        &self,
        centre: (f64, f64),
        radius: f64,
        (from, to): (f64, f64),
        color: Rgb,
    ) -> Result<(), RenderError> {
        if !to.is_finite()
            || !from.is_finite()
            || to <= from
            || !radius.is_finite()
            || radius <= 0.0
        {
            return Ok(());
        }
        self.push(Item::Wedge {
            centre,
            radius,
            from,
            to,
            color,
        })
    }

    /// The items drawn, in order.
    pub fn finish(self) -> Vec<Item> {
        let mut open = self.open.into_inner();
        open.truncate(1);
        open.pop().map(|(_, items)| items).unwrap_or_default()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn groups_nest_in_drawing_order() {
        let c = Canvas::new();
        c.line((0.0, 0.0), (1.0, 1.0), Rgb(0, 0, 0), 1).unwrap();
        c.group(Part::Source { needed: 1 }, || {
            c.rect((0.0, 0.0), (2.0, 2.0), Rgb(1, 1, 1))?;
            c.group(Part::Chart, || c.dot((1.0, 1.0), 2, Rgb(2, 2, 2)))
        })
        .unwrap();
        c.text(&Label {
            text: "",
            x: 0.0,
            top: 0.0,
            size: 16.0,
            bold: false,
            color: Rgb(0, 0, 0),
            align: Align::Start,
        })
        .unwrap();
        let items = c.finish();
        assert_eq!(items.len(), 2, "empty text is not recorded");
        let Item::Group { part, items } = &items[1] else {
            panic!("{items:?}")
        };
        assert_eq!(*part, Part::Source { needed: 1 });
        assert!(matches!(
            items[1],
            Item::Group {
                part: Part::Chart,
                ..
            }
        ));
    }
}
