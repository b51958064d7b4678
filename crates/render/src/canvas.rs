//! The drawing surface layout draws on, in our own terms: text positioned
//! by the top of its box, lines, polylines, filled rectangles, dots and
//! polygons. It draws nothing itself: every call appends an item to a
//! display list ([`crescendo_look::display`]), which [`crate::svg`] writes
//! as SVG through plotters.

use std::cell::RefCell;

pub use crescendo_look::display::Align;
use crescendo_look::display::{text_box, Item, Part, Text};
pub use crescendo_look::theme::{FONT_FAMILY, HEIGHT, WIDTH};

use crate::theme::Rgb;
use crate::RenderError;

/// One piece of text to draw.
#[derive(Clone, Debug)]
pub struct Label<'a> {
    /// The text, already fitted (the writer escapes it).
    pub text: &'a str,
    /// Anchor position along x (see [`Label::align`]).
    pub x: f64,
    /// Top of the text box (see [`crate::metrics::line_height`]).
    pub top: f64,
    /// Font size in px, as it will appear in the SVG.
    pub size: f64,
    /// Bold weight.
    pub bold: bool,
    /// Fill colour.
    pub color: Rgb,
    /// What `x` refers to.
    pub align: Align,
}

/// A data mark by its item index and, where the form has them, its part.
type MarkKey = (usize, Option<usize>);

/// Records what layout draws, in order, into a display list. Groups
/// ([`Canvas::group`]) nest.
#[derive(Default)]
pub struct Canvas {
    /// The open groups, innermost last; the first is the whole list.
    open: RefCell<Vec<(Option<Part>, Vec<Item>)>>,
    /// Where each data mark was drawn (its item and part indexes, see
    /// [`Canvas::anchor`]), for the notes placed on marks afterwards.
    anchors: RefCell<Vec<(MarkKey, (f64, f64))>>,
}

impl Canvas {
    /// An empty 1280×720 canvas. Nothing is painted: the background stays
    /// transparent.
    pub fn new() -> Self {
        Self {
            open: RefCell::new(vec![(None, Vec::new())]),
            anchors: RefCell::default(),
        }
    }

    /// Records the point a note on mark `item` (bar, category, row, point
    /// or table row), `part` (part, series or column) points at. Draws
    /// nothing.
    pub(crate) fn anchor(&self, item: usize, part: Option<usize>, at: (f64, f64)) {
        self.anchors.borrow_mut().push(((item, part), at));
    }

    /// The point recorded for a mark, the first if several.
    pub(crate) fn anchor_of(&self, item: usize, part: Option<usize>) -> Option<(f64, f64)> {
        (self.anchors.borrow().iter())
            .find(|(k, _)| *k == (item, part))
            .map(|(_, at)| *at)
    }

    /// Every item drawn so far, in open groups too, groups opened; tints
    /// and the page left out (backgrounds, not marks).
    pub(crate) fn drawn(&self) -> Vec<Item> {
        fn walk(items: &[Item], out: &mut Vec<Item>) {
            for i in items {
                match i {
                    Item::Group {
                        part: Part::Tint | Part::Page,
                        ..
                    } => {}
                    Item::Group { items, .. } => walk(items, out),
                    other => out.push(other.clone()),
                }
            }
        }
        let mut out = Vec::new();
        for (_, items) in self.open.borrow().iter() {
            walk(items, &mut out);
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

    /// One line of text (the caller has measured and fitted it).
    pub fn text(&self, label: &Label<'_>) -> Result<(), RenderError> {
        if label.text.is_empty() {
            return Ok(());
        }
        self.push(Item::Text(Text {
            text: label.text.to_string(),
            x: label.x,
            top: label.top,
            size: label.size,
            bold: label.bold,
            color: label.color,
            align: label.align,
            bounds: text_box(
                label.text,
                label.x,
                label.top,
                label.size,
                label.bold,
                label.align,
            ),
        }))
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
