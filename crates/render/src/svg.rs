//! The one SVG writer: replays a display list through plotters' SVG backend
//! with the bundled DejaVu Sans registered from bytes, then writes a house
//! style's font stack and sizes and the frame's text alternative.
//!
//! Every text is written with plotters' top anchor (`dy="0.76em"`), so the
//! box of a text whose `y` attribute is `y` spans
//! `y + 0.76·size − ascent .. y + 0.76·size + descent`, which is the box the
//! display list measured. Characters XML 1.0 cannot carry (most C0 controls,
//! U+FFFE, U+FFFF) are written as U+FFFD, so the SVG is always well-formed.

use std::borrow::Cow;
use std::sync::OnceLock;

use crescendo_look::display::{Align, DisplayList, Item, Text};
use plotters::backend::SVGBackend;
use plotters::coord::Shift;
use plotters::drawing::{DrawingArea, IntoDrawingArea};
use plotters::element::{Circle, PathElement, Polygon, Rectangle};
use plotters::style::text_anchor::{HPos, Pos, VPos};
use plotters::style::{FontDesc, FontFamily, FontStyle, RGBColor, ShapeStyle, TextStyle};

use crate::canvas::{FONT_FAMILY, HEIGHT, WIDTH};
use crate::metrics;
use crate::theme::{Rgb, Theme};
use crate::RenderError;

/// plotters' SVG backend writes `font-size` as the requested size / 1.24.
const PLOTTERS_SIZE_DIVISOR: f64 = 1.24;

/// The `dy` plotters writes for [`VPos::Top`], in em.
pub(crate) const TOP_DY_EM: f64 = 0.76;

/// The character written in place of one XML 1.0 cannot carry.
pub const SUBSTITUTE: char = '\u{FFFD}';

/// Whether XML 1.0 can carry `c` (its `Char` production: tab, line feed,
/// carriage return, U+0020–U+D7FF, U+E000–U+FFFD, U+10000 and above;
/// Rust strings hold no surrogates).
pub fn xml_char(c: char) -> bool {
    matches!(c, '\t' | '\n' | '\r' | '\u{20}'..='\u{D7FF}' | '\u{E000}'..='\u{FFFD}' | '\u{10000}'..)
}

/// `text` with every character XML 1.0 cannot carry replaced by U+FFFD
/// (borrowed when there is none).
pub fn xml_safe(text: &str) -> Cow<'_, str> {
    if text.chars().all(xml_char) {
        Cow::Borrowed(text)
    } else {
        Cow::Owned(
            text.chars()
                .map(|c| if xml_char(c) { c } else { SUBSTITUTE })
                .collect(),
        )
    }
}

/// Registers DejaVu Sans regular and bold with plotters (once per process).
fn register_fonts() -> Result<(), RenderError> {
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

fn shape(color: Rgb, filled: bool, stroke_width: u32) -> ShapeStyle {
    ShapeStyle {
        color: rgb(color).into(),
        filled,
        stroke_width,
    }
}

fn points(pts: &[(f64, f64)]) -> Vec<(i32, i32)> {
    pts.iter().map(|&(x, y)| (px(x), px(y))).collect()
}

type Area<'b> = DrawingArea<SVGBackend<'b>, Shift>;

fn draw_text(area: &Area<'_>, t: &Text) -> Result<(), RenderError> {
    if t.text.is_empty() {
        return Ok(());
    }
    let style = if t.bold {
        FontStyle::Bold
    } else {
        FontStyle::Normal
    };
    let font = FontDesc::new(FontFamily::Name(FONT_FAMILY), requested_size(t.size), style);
    let color = rgb(t.color);
    let h = match t.align {
        Align::Start => HPos::Left,
        Align::Middle => HPos::Center,
        Align::End => HPos::Right,
    };
    let text_style = TextStyle::from(font)
        .color(&color)
        .pos(Pos::new(h, VPos::Top));
    // Baseline sits at y + 0.76 em; the box top is baseline − ascent.
    let y = t.top + metrics::ascent(t.size) - TOP_DY_EM * t.size;
    area.draw_text(&xml_safe(&t.text), &text_style, (px(t.x), px(y)))
        .map_err(err)
}

/// Pie slices waiting to be written as true arcs: plotters draws only
/// whole-pixel polygons, so each wedge is drawn as a tiny polygon in a
/// placeholder colour no other item uses, and [`Wedges::write`] replaces
/// that element with an SVG path whose arc is exact.
#[derive(Default)]
struct Wedges {
    /// Every colour the list draws (placeholders avoid them).
    used: Vec<Rgb>,
    /// Placeholder colour and the path element that replaces it.
    placed: Vec<(Rgb, String)>,
}

impl Wedges {
    fn of(list: &DisplayList) -> Self {
        let mut used = Vec::new();
        for item in list.flat() {
            let c = match item {
                Item::Text(t) => t.color,
                Item::Polyline { color, .. }
                | Item::Rect { color, .. }
                | Item::Dot { color, .. }
                | Item::Polygon { color, .. }
                | Item::Wedge { color, .. } => *color,
                Item::Group { .. } => continue,
            };
            if !used.contains(&c) {
                used.push(c);
            }
        }
        Self {
            used,
            placed: Vec::new(),
        }
    }

    /// A colour for the next placeholder, used by nothing else.
    fn placeholder(&self) -> Rgb {
        (0u32..)
            .map(|k| Rgb(1, (k / 256 % 256) as u8, (k % 256) as u8))
            .find(|c| !self.used.contains(c) && !self.placed.iter().any(|(p, _)| p == c))
            .unwrap_or(Rgb(1, 1, 1))
    }

    /// The SVG path of a wedge: from the centre out along `from`, along
    /// the arc clockwise to `to`, back to the centre (a whole turn is two
    /// half arcs). Coordinates to 1/100 px.
    fn path(centre: (f64, f64), r: f64, from: f64, to: f64, color: Rgb) -> String {
        let at = |a: f64| (centre.0 + r * a.sin(), centre.1 - r * a.cos());
        let d = if to - from >= std::f64::consts::TAU - 1e-9 {
            let (top, bottom) = (at(0.0), at(std::f64::consts::PI));
            format!(
                "M{:.2},{:.2} A{r:.2},{r:.2} 0 1 1 {:.2},{:.2} A{r:.2},{r:.2} 0 1 1 {:.2},{:.2} Z",
                top.0, top.1, bottom.0, bottom.1, top.0, top.1
            )
        } else {
            let (a, b) = (at(from), at(to));
            let large = u8::from(to - from > std::f64::consts::PI);
            format!(
                "M{:.2},{:.2} L{:.2},{:.2} A{r:.2},{r:.2} 0 {large} 1 {:.2},{:.2} Z",
                centre.0, centre.1, a.0, a.1, b.0, b.1
            )
        };
        format!("<path d=\"{d}\" fill=\"{}\"/>", color.hex())
    }

    /// `svg` with every placeholder polygon replaced by its path.
    fn write(&self, mut svg: String) -> Result<String, RenderError> {
        for (placeholder, path) in &self.placed {
            let mark = format!("fill=\"{}\"", placeholder.hex());
            let found = svg.find(&mark).and_then(|at| {
                let start = svg[..at].rfind("<polygon")?;
                let end = at + svg[at..].find("/>")? + 2;
                Some((start, end))
            });
            let Some((start, end)) = found else {
                return Err(RenderError::new("a pie slice could not be written"));
            };
            svg.replace_range(start..end, path);
        }
        Ok(svg)
    }
}

fn draw_item(area: &Area<'_>, item: &Item, wedges: &mut Wedges) -> Result<(), RenderError> {
    match item {
        Item::Wedge {
            centre,
            radius,
            from,
            to,
            color,
        } => {
            let placeholder = wedges.placeholder();
            let c = (px(centre.0), px(centre.1));
            area.draw(&Polygon::new(
                vec![c, (c.0 + 1, c.1), (c.0, c.1 + 1)],
                shape(placeholder, true, 0),
            ))
            .map_err(err)?;
            let path = Wedges::path(*centre, *radius, *from, *to, *color);
            wedges.placed.push((placeholder, path));
            Ok(())
        }
        Item::Text(t) => draw_text(area, t),
        Item::Polyline {
            points: pts,
            color,
            width,
        } => {
            if pts.len() < 2 {
                return Ok(());
            }
            area.draw(&PathElement::new(points(pts), shape(*color, false, *width)))
                .map_err(err)
        }
        Item::Dot { at, radius, color } => area
            .draw(&Circle::new(
                (px(at.0), px(at.1)),
                *radius,
                shape(*color, true, 0),
            ))
            .map_err(err),
        Item::Rect { a, b, color } => {
            let (x0, x1) = (px(a.0.min(b.0)), px(a.0.max(b.0)));
            let (y0, y1) = (px(a.1.min(b.1)), px(a.1.max(b.1)));
            if x1 <= x0 || y1 <= y0 {
                return Ok(());
            }
            area.draw(&Rectangle::new(
                [(x0, y0), (x1, y1)],
                shape(*color, true, 0),
            ))
            .map_err(err)
        }
        Item::Polygon { points: pts, color } => {
            if pts.len() < 3 {
                return Ok(());
            }
            area.draw(&Polygon::new(points(pts), shape(*color, true, 0)))
                .map_err(err)
        }
        Item::Group { items, .. } => items.iter().try_for_each(|i| draw_item(area, i, wedges)),
    }
}

/// The display list as a 1280×720 SVG document (before the house style and
/// the text alternative are written into it).
pub(crate) fn plot(list: &DisplayList) -> Result<String, RenderError> {
    register_fonts()?;
    let mut buf = String::new();
    let mut wedges = Wedges::of(list);
    {
        let area = SVGBackend::with_string(&mut buf, (WIDTH, HEIGHT)).into_drawing_area();
        for item in &list.items {
            draw_item(&area, item, &mut wedges)?;
        }
        area.present().map_err(err)?;
    }
    wedges.write(buf)
}

/// Writes a house style's font stack and text sizes into an SVG drawn by
/// plotters: text is registered with plotters as the bundled font (so it
/// is measured the same everywhere) and the SVG then names the style's
/// stack; sizes plotters cannot write exactly through its `size / 1.24`
/// (15, 26, 27, 30, … px) are written as whole numbers. Without a style
/// the SVG is returned unchanged.
fn restyle_svg(mut svg: String, theme: &Theme) -> String {
    if theme.font_family != FONT_FAMILY {
        let stack = theme
            .font_family
            .replace('&', "&amp;")
            .replace('<', "&lt;")
            .replace('"', "&quot;");
        svg = svg.replace(
            &format!("font-family=\"{}\"", FONT_FAMILY),
            &format!("font-family=\"{stack}\""),
        );
    }
    for size in [
        theme.headline_size,
        theme.takeaway_size,
        theme.label_size,
        theme.source_size,
    ] {
        let written = format!("{}", requested_size(size) / 1.24);
        let wanted = format!("{size}");
        if written != wanted {
            svg = svg.replace(
                &format!("font-size=\"{written}\""),
                &format!("font-size=\"{wanted}\""),
            );
        }
    }
    svg
}

/// Writes a frame's display list as its SVG: the drawing, the house style's
/// font stack and sizes ([`restyle_svg`]), and a title and
/// description for screen readers.
pub fn write(
    list: &DisplayList,
    theme: &Theme,
    number: usize,
    headline: &str,
    description: &str,
) -> Result<String, RenderError> {
    let svg = restyle_svg(plot(list)?, theme);
    Ok(with_text_alternative(&svg, number, headline, description))
}

/// Give the SVG a title (the headline) and a description (the frame's text
/// alternative generated from the data), exposed to screen readers as an
/// image with a name and a description.
fn with_text_alternative(svg: &str, n: usize, headline: &str, description: &str) -> String {
    let Some(start) = svg.find("<svg") else {
        return svg.to_string();
    };
    let Some(close) = svg[start..].find('>').map(|i| start + i) else {
        return svg.to_string();
    };
    let mut out = String::with_capacity(svg.len() + description.len() + 256);
    out.push_str(&svg[..close]);
    out.push_str(&format!(
        " role=\"img\" aria-labelledby=\"frame-{n}-title\" aria-describedby=\"frame-{n}-desc\">\n<title id=\"frame-{n}-title\">{}</title>\n<desc id=\"frame-{n}-desc\">{}</desc>",
        crate::html::escape(&xml_safe(headline)),
        crate::html::escape(&xml_safe(description))
    ));
    out.push_str(&svg[close + 1..]);
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::canvas::{Canvas, Label};

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

    fn one_text(text: &str) -> String {
        let c = Canvas::new();
        c.text(&Label {
            text,
            x: 10.0,
            top: 10.0,
            size: 32.0,
            bold: true,
            color: Rgb(0, 0, 0),
            align: Align::Start,
        })
        .unwrap();
        plot(&DisplayList {
            items: c.finish(),
            description: None,
        })
        .unwrap()
    }

    #[test]
    fn font_size_attribute_is_the_intended_size() {
        let buf = one_text("Hi");
        assert!(buf.contains("font-size=\"32\""), "{buf}");
        assert!(
            buf.contains(&format!("font-family=\"{FONT_FAMILY}\"")),
            "{buf}"
        );
        assert!(buf.contains("font-weight=\"bold\""));
    }

    // XML 1.0 (Fifth Edition) §2.2, production [2] `Char`.
    #[test]
    fn characters_xml_cannot_carry_are_substituted() {
        for c in [
            '\0', '\u{1}', '\u{8}', '\u{B}', '\u{C}', '\u{E}', '\u{1F}', '\u{FFFE}', '\u{FFFF}',
        ] {
            assert!(!xml_char(c), "{:?}", c);
        }
        for c in [
            '\t',
            '\n',
            '\r',
            ' ',
            '\u{D7FF}',
            '\u{E000}',
            '\u{FFFD}',
            '\u{10000}',
            '\u{10FFFF}',
        ] {
            assert!(xml_char(c), "{:?}", c);
        }
        assert!(matches!(xml_safe("plain"), Cow::Borrowed("plain")));
        assert_eq!(xml_safe("a\u{1}b\u{FFFF}"), "a\u{FFFD}b\u{FFFD}");
        let svg = one_text("bell\u{7} and nul\u{0}");
        assert!(svg.contains("bell\u{FFFD} and nul\u{FFFD}"), "{svg}");
        let svg = with_text_alternative(&svg, 1, "head\u{1B}[2J", "desc\u{FFFE}");
        assert!(svg.contains("head\u{FFFD}[2J") && svg.contains("desc\u{FFFD}"));
        assert!(!svg.chars().any(|c| !xml_char(c)));
    }

    #[test]
    fn every_size_a_style_may_set_is_written_exactly() {
        // plotters writes `font-size` as the requested size / 1.24, which
        // misses a few whole sizes (15 px comes out as 15.000000000000002);
        // restyle_svg writes every size from 10 to 72 px as the style says.
        let mut missed = 0;
        for px in 10..=72 {
            let size = f64::from(px);
            let written = format!("{}", requested_size(size) / 1.24);
            missed += usize::from(written != px.to_string());
            let theme = Theme {
                label_size: size,
                ..crate::theme::CLEAR.clone()
            };
            let svg = restyle_svg(format!("<text font-size=\"{written}\"/>"), &theme);
            assert_eq!(svg, format!("<text font-size=\"{px}\"/>"));
        }
        assert!(missed > 0, "the fix-up is needed");
        // the default theme's SVG is left alone
        let svg = format!("<text font-family=\"{}\" font-size=\"16\"/>", FONT_FAMILY);
        assert_eq!(restyle_svg(svg.clone(), &crate::theme::CLEAR), svg);
    }
}
