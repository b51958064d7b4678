//! Reading rendered SVG back: canvas size and the box of every text, for
//! tests (here and end-to-end over every demo frame) and for lints.
//!
//! Boxes are computed the way plotters writes text: `x`/`y` attributes,
//! `text-anchor` (start, middle, end), `dy` in `em`, `ex` (taken as 0.5 em,
//! the CSS fallback) or px, and `font-size` in px. The width comes from
//! [`crate::metrics::text_width`] on the whitespace-collapsed content; the
//! height spans the font's ascent above and descent below the baseline.

use crate::metrics;

/// The box a `<text>` element occupies on the canvas, in px.
#[derive(Clone, Debug, PartialEq)]
pub struct TextBox {
    /// Whitespace-collapsed text content.
    pub text: String,
    /// Left edge.
    pub x0: f64,
    /// Top edge (baseline minus the font's ascent).
    pub y0: f64,
    /// Right edge.
    pub x1: f64,
    /// Bottom edge (baseline plus the font's descent).
    pub y1: f64,
}

impl TextBox {
    /// True if the two boxes share more than `tolerance` px in both
    /// directions.
    pub fn overlaps(&self, other: &TextBox, tolerance: f64) -> bool {
        let dx = self.x1.min(other.x1) - self.x0.max(other.x0);
        let dy = self.y1.min(other.y1) - self.y0.max(other.y0);
        dx > tolerance && dy > tolerance
    }
}

fn parse_doc(svg: &str) -> Result<roxmltree::Document<'_>, String> {
    roxmltree::Document::parse(svg).map_err(|e| format!("invalid SVG: {e}"))
}

fn number(value: &str) -> Option<f64> {
    let v = value.trim().trim_end_matches("px").trim();
    v.parse::<f64>().ok().filter(|v| v.is_finite())
}

/// Width and height of the root `<svg>` (from `width`/`height`, else from
/// `viewBox`).
pub fn canvas_size(svg: &str) -> Result<(f64, f64), String> {
    let doc = parse_doc(svg)?;
    let root = doc.root_element();
    if root.tag_name().name() != "svg" {
        return Err(format!(
            "root element is <{}>, not <svg>",
            root.tag_name().name()
        ));
    }
    let w = root.attribute("width").and_then(number);
    let h = root.attribute("height").and_then(number);
    if let (Some(w), Some(h)) = (w, h) {
        return Ok((w, h));
    }
    let vb: Vec<f64> = root
        .attribute("viewBox")
        .unwrap_or("")
        .split(|c: char| c == ',' || c.is_whitespace())
        .filter(|s| !s.is_empty())
        .filter_map(number)
        .collect();
    match vb.as_slice() {
        [_, _, w, h] => Ok((*w, *h)),
        _ => Err("the <svg> element has neither width/height nor a viewBox".to_string()),
    }
}

fn length(value: &str, font_size: f64) -> Result<f64, String> {
    let v = value.trim();
    if let Some(n) = v.strip_suffix("em") {
        return number(n)
            .map(|n| n * font_size)
            .ok_or_else(|| format!("bad length `{v}`"));
    }
    if let Some(n) = v.strip_suffix("ex") {
        return number(n)
            .map(|n| n * 0.5 * font_size)
            .ok_or_else(|| format!("bad length `{v}`"));
    }
    number(v).ok_or_else(|| format!("bad length `{v}`"))
}

/// The box of every `<text>` element, in document order.
pub fn text_boxes(svg: &str) -> Result<Vec<TextBox>, String> {
    let doc = parse_doc(svg)?;
    let mut out = Vec::new();
    for node in doc.descendants().filter(|n| n.has_tag_name("text")) {
        let content: String = node
            .descendants()
            .filter(|n| n.is_text())
            .filter_map(|n| n.text())
            .collect();
        let text = metrics::normalize(&content);
        let attr = |name: &str| node.attribute(name);
        if attr("transform").is_some() {
            return Err(format!(
                "text `{text}` is transformed (rotated text is not allowed)"
            ));
        }
        let size = attr("font-size")
            .and_then(number)
            .ok_or_else(|| format!("text `{text}` has no font-size"))?;
        let x = attr("x")
            .map(|v| length(v, size))
            .transpose()?
            .unwrap_or(0.0);
        let y = attr("y")
            .map(|v| length(v, size))
            .transpose()?
            .unwrap_or(0.0);
        let dy = attr("dy")
            .map(|v| length(v, size))
            .transpose()?
            .unwrap_or(0.0);
        let bold = matches!(attr("font-weight"), Some("bold" | "700" | "800" | "900"));
        let width = metrics::text_width(&text, size, bold);
        let (x0, x1) = match attr("text-anchor").unwrap_or("start") {
            "middle" => (x - width / 2.0, x + width / 2.0),
            "end" => (x - width, x),
            _ => (x, x + width),
        };
        let baseline = y + dy;
        out.push(TextBox {
            text,
            x0,
            y0: baseline - metrics::ascent(size),
            x1,
            y1: baseline + metrics::descent(size),
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_plotters_style_text() {
        let svg = r##"<svg width="1280" height="720" viewBox="0 0 1280 720" xmlns="http://www.w3.org/2000/svg">
<text x="100" y="50" dy="0.76em" text-anchor="end" font-family="x" font-size="20" opacity="1" fill="#000000">
A &amp; B
</text>
</svg>"##;
        assert_eq!(canvas_size(svg).unwrap(), (1280.0, 720.0));
        let b = text_boxes(svg).unwrap();
        assert_eq!(b.len(), 1);
        assert_eq!(b[0].text, "A & B");
        assert!((b[0].x1 - 100.0).abs() < 1e-9);
        let w = metrics::text_width("A & B", 20.0, false);
        assert!((b[0].x0 - (100.0 - w)).abs() < 1e-9);
        let baseline = 50.0 + 0.76 * 20.0;
        assert!((b[0].y0 - (baseline - metrics::ascent(20.0))).abs() < 1e-9);
        assert!((b[0].y1 - (baseline + metrics::descent(20.0))).abs() < 1e-9);
    }

    #[test]
    fn rejects_broken_and_rotated() {
        assert!(canvas_size("<svg").is_err());
        assert!(canvas_size("<g/>").is_err());
        let rotated = r#"<svg viewBox="0 0 10 10"><text x="1" y="1" font-size="14" transform="rotate(90)">a</text></svg>"#;
        assert_eq!(canvas_size(rotated).unwrap(), (10.0, 10.0));
        assert!(text_boxes(rotated).is_err());
    }

    #[test]
    fn overlap_is_strict() {
        let a = TextBox {
            text: "a".into(),
            x0: 0.0,
            y0: 0.0,
            x1: 10.0,
            y1: 10.0,
        };
        let b = TextBox {
            text: "b".into(),
            x0: 10.0,
            y0: 0.0,
            x1: 20.0,
            y1: 10.0,
        };
        let c = TextBox {
            text: "c".into(),
            x0: 5.0,
            y0: 5.0,
            x1: 20.0,
            y1: 20.0,
        };
        assert!(!a.overlaps(&b, 0.0));
        assert!(a.overlaps(&c, 0.0));
        assert!(!a.overlaps(&c, 6.0));
    }
}
