//! A thin drawing surface over plotters' SVG backend in our own terms: text
//! positioned by the top of its box, lines, polylines and filled rectangles.
//!
//! Every text is written with plotters' top anchor (`dy="0.76em"`), so the
//! box of a text whose `y` attribute is `y` spans
//! `y + 0.76·size − ascent .. y + 0.76·size + descent` ([`crate::inspect`]
//! computes exactly this).

use crate::metrics;
use crate::theme::Rgb;
use crate::RenderError;
use plotters::backend::SVGBackend;
use plotters::coord::Shift;
use plotters::drawing::{DrawingArea, IntoDrawingArea};
use plotters::element::{Circle, PathElement, Polygon, Rectangle};
use plotters::style::text_anchor::{HPos, Pos, VPos};
use plotters::style::{FontDesc, FontFamily, FontStyle, RGBColor, ShapeStyle, TextStyle};
use std::sync::OnceLock;

/// Canvas width in px.
pub const WIDTH: u32 = 1280;
/// Canvas height in px.
pub const HEIGHT: u32 = 720;

/// The font family string written into the SVG; the bundled DejaVu Sans is
/// registered with plotters under this same name.
pub const FONT_FAMILY: &str = "DejaVu Sans, Helvetica, Arial, sans-serif";

/// plotters' SVG backend writes `font-size` as the requested size / 1.24.
const PLOTTERS_SIZE_DIVISOR: f64 = 1.24;

/// The `dy` plotters writes for [`VPos::Top`], in em.
pub(crate) const TOP_DY_EM: f64 = 0.76;

/// Registers DejaVu Sans regular and bold with plotters (once per process).
pub(crate) fn register_fonts() -> Result<(), RenderError> {
    static DONE: OnceLock<Result<(), String>> = OnceLock::new();
    DONE.get_or_init(|| {
        plotters::style::register_font(FONT_FAMILY, FontStyle::Normal, dejavu::sans::regular())
            .map_err(|_| "cannot load the bundled DejaVu Sans regular font".to_string())?;
        plotters::style::register_font(FONT_FAMILY, FontStyle::Bold, dejavu::sans::bold())
            .map_err(|_| "cannot load the bundled DejaVu Sans bold font".to_string())
    })
    .clone()
    .map_err(RenderError::new)
}

/// The size to request from plotters so that the SVG says exactly
/// `font-size="{target}"`: the smallest float `s` near `target · 1.24` with
/// `s / 1.24 == target`.
pub(crate) fn requested_size(target: f64) -> f64 {
    let base = target * PLOTTERS_SIZE_DIVISOR;
    if base / PLOTTERS_SIZE_DIVISOR == target {
        return base;
    }
    for k in 1..64u64 {
        for candidate in [
            f64::from_bits(base.to_bits() + k),
            f64::from_bits(base.to_bits() - k),
        ] {
            if candidate / PLOTTERS_SIZE_DIVISOR == target {
                return candidate;
            }
        }
    }
    base
}

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

/// One piece of text to draw.
#[derive(Clone, Debug)]
pub struct Label<'a> {
    /// The text, already fitted (plotters escapes it).
    pub text: &'a str,
    /// Anchor position along x (see [`Label::align`]).
    pub x: f64,
    /// Top of the text box (see [`metrics::line_height`]).
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

fn rgb(c: Rgb) -> RGBColor {
    RGBColor(c.0, c.1, c.2)
}

fn px(v: f64) -> i32 {
    if v.is_finite() {
        v.round().clamp(-1.0e6, 1.0e6) as i32
    } else {
        0
    }
}

fn err<E: std::fmt::Display>(e: E) -> RenderError {
    RenderError::new(format!("drawing failed: {e}"))
}

/// Draws onto an SVG string held by the caller.
pub struct Canvas<'b> {
    area: DrawingArea<SVGBackend<'b>, Shift>,
}

impl<'b> Canvas<'b> {
    /// Starts a 1280×720 SVG document in `buf`. Nothing is painted: the
    /// background stays transparent.
    pub fn new(buf: &'b mut String) -> Result<Self, RenderError> {
        register_fonts()?;
        Ok(Self {
            area: SVGBackend::with_string(buf, (WIDTH, HEIGHT)).into_drawing_area(),
        })
    }

    /// Draws one line of text (the caller has measured and fitted it).
    pub fn text(&self, label: &Label<'_>) -> Result<(), RenderError> {
        if label.text.is_empty() {
            return Ok(());
        }
        let style = if label.bold {
            FontStyle::Bold
        } else {
            FontStyle::Normal
        };
        let font = FontDesc::new(
            FontFamily::Name(FONT_FAMILY),
            requested_size(label.size),
            style,
        );
        let color = rgb(label.color);
        let h = match label.align {
            Align::Start => HPos::Left,
            Align::Middle => HPos::Center,
            Align::End => HPos::Right,
        };
        let text_style = TextStyle::from(font)
            .color(&color)
            .pos(Pos::new(h, VPos::Top));
        // Baseline sits at y + 0.76 em; the box top is baseline − ascent.
        let y = label.top + metrics::ascent(label.size) - TOP_DY_EM * label.size;
        self.area
            .draw_text(label.text, &text_style, (px(label.x), px(y)))
            .map_err(err)
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
        let pts: Vec<(i32, i32)> = points.iter().map(|&(x, y)| (px(x), px(y))).collect();
        let style = ShapeStyle {
            color: rgb(color).into(),
            filled: false,
            stroke_width: width,
        };
        self.area.draw(&PathElement::new(pts, style)).map_err(err)
    }

    /// A filled dot, used only for a data point with no neighbour to join.
    pub fn dot(&self, at: (f64, f64), radius: u32, color: Rgb) -> Result<(), RenderError> {
        let style = ShapeStyle {
            color: rgb(color).into(),
            filled: true,
            stroke_width: 0,
        };
        self.area
            .draw(&Circle::new((px(at.0), px(at.1)), radius, style))
            .map_err(err)
    }

    /// A filled rectangle between two corners (any order).
    pub fn rect(&self, a: (f64, f64), b: (f64, f64), color: Rgb) -> Result<(), RenderError> {
        let (x0, x1) = (px(a.0.min(b.0)), px(a.0.max(b.0)));
        let (y0, y1) = (px(a.1.min(b.1)), px(a.1.max(b.1)));
        if x1 <= x0 || y1 <= y0 {
            return Ok(());
        }
        let style = ShapeStyle {
            color: rgb(color).into(),
            filled: true,
            stroke_width: 0,
        };
        self.area
            .draw(&Rectangle::new([(x0, y0), (x1, y1)], style))
            .map_err(err)
    }

    /// A filled polygon without outline (pie slices).
    pub fn polygon(&self, points: &[(f64, f64)], color: Rgb) -> Result<(), RenderError> {
        if points.len() < 3 {
            return Ok(());
        }
        let pts: Vec<(i32, i32)> = points.iter().map(|&(x, y)| (px(x), px(y))).collect();
        let style = ShapeStyle {
            color: rgb(color).into(),
            filled: true,
            stroke_width: 0,
        };
        self.area.draw(&Polygon::new(pts, style)).map_err(err)
    }

    /// Closes the document.
    pub fn finish(self) -> Result<(), RenderError> {
        self.area.present().map_err(err)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn requested_sizes_come_out_exact() {
        use crate::layout::*;
        for target in [
            SOURCE_SIZE,
            LABEL_SIZE,
            TAKEAWAY_SIZE,
            HEADLINE_SIZE,
            18.0,
            24.0,
        ] {
            let s = requested_size(target);
            assert_eq!(format!("{}", s / 1.24), format!("{target}"));
        }
    }

    #[test]
    fn font_size_attribute_is_the_intended_size() {
        let mut buf = String::new();
        {
            let c = Canvas::new(&mut buf).unwrap();
            c.text(&Label {
                text: "Hi",
                x: 10.0,
                top: 10.0,
                size: 32.0,
                bold: true,
                color: Rgb(0, 0, 0),
                align: Align::Start,
            })
            .unwrap();
            c.finish().unwrap();
        }
        assert!(buf.contains("font-size=\"32\""), "{buf}");
        assert!(
            buf.contains(&format!("font-family=\"{FONT_FAMILY}\"")),
            "{buf}"
        );
        assert!(buf.contains("font-weight=\"bold\""));
    }
}
