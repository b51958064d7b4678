//! Text measurement with the bundled DejaVu Sans, so layout is identical on
//! every machine.
//!
//! All sizes are CSS pixels of the em box, i.e. exactly the `font-size` that
//! ends up in the SVG. The SVG names DejaVu Sans first in its font stack;
//! the fallbacks (Helvetica, Arial) are narrower, so measuring with DejaVu
//! errs on the safe side.

use ab_glyph::{Font, FontRef, GlyphId};
use std::collections::HashMap;
use std::sync::OnceLock;

/// Vertical metrics of the bundled font as fractions of the em.
#[derive(Clone, Copy, Debug)]
struct Vertical {
    ascent: f64,
    descent: f64,
}

/// Fallback when the font bytes cannot be parsed (never expected): DejaVu
/// Sans' hhea values, 1901/2048 and 483/2048.
const FALLBACK: Vertical = Vertical {
    ascent: 0.928_222_656_25,
    descent: 0.235_839_843_75,
};

fn regular() -> Option<&'static FontRef<'static>> {
    static FONT: OnceLock<Option<FontRef<'static>>> = OnceLock::new();
    FONT.get_or_init(|| FontRef::try_from_slice(dejavu::sans::regular()).ok())
        .as_ref()
}

fn bold_font() -> Option<&'static FontRef<'static>> {
    static FONT: OnceLock<Option<FontRef<'static>>> = OnceLock::new();
    FONT.get_or_init(|| FontRef::try_from_slice(dejavu::sans::bold()).ok())
        .as_ref()
}

fn vertical() -> Vertical {
    static V: OnceLock<Vertical> = OnceLock::new();
    *V.get_or_init(|| match regular() {
        Some(f) => {
            let upem = f64::from(f.units_per_em().unwrap_or(2048.0));
            Vertical {
                ascent: f64::from(f.ascent_unscaled()) / upem,
                descent: -f64::from(f.descent_unscaled()) / upem,
            }
        }
        None => FALLBACK,
    })
}

/// Advance width of `text` in px at `size_px`, including pair kerning, as a
/// browser lays out one line of it. Whitespace is measured as written, so
/// callers should collapse runs of whitespace first (SVG does).
pub fn text_width(text: &str, size_px: f64, bold: bool) -> f64 {
    let font = if bold { bold_font() } else { regular() };
    let Some(font) = font else {
        return text.chars().count() as f64 * 0.62 * size_px;
    };
    let upem = f64::from(font.units_per_em().unwrap_or(2048.0));
    let units = if text.len() > LONG {
        let chars: Vec<char> = text.chars().collect();
        Glyphs::new(font)
            .prefix_units(&chars)
            .last()
            .copied()
            .unwrap_or(0.0)
    } else {
        let mut units = 0.0f64;
        let mut prev = None;
        for c in text.chars() {
            let id = font.glyph_id(c);
            units += f64::from(font.h_advance_unscaled(id));
            if let Some(p) = prev {
                units += f64::from(font.kern_unscaled(p, id));
            }
            prev = Some(id);
        }
        units
    };
    units / upem * size_px
}

/// Texts longer than this (in bytes) are measured through [`Glyphs`].
const LONG: usize = 256;

/// A font's glyph lookups, remembered: a long text repeats few characters
/// and few pairs, and each lookup searches the font's tables.
struct Glyphs<'f> {
    font: &'f FontRef<'static>,
    glyphs: HashMap<char, (GlyphId, f64)>,
    kerns: HashMap<(GlyphId, GlyphId), f64>,
}

impl<'f> Glyphs<'f> {
    fn new(font: &'f FontRef<'static>) -> Self {
        Glyphs {
            font,
            glyphs: HashMap::new(),
            kerns: HashMap::new(),
        }
    }

    /// The glyph of `c` and its advance, in font units.
    fn glyph(&mut self, c: char) -> (GlyphId, f64) {
        let font = self.font;
        *self.glyphs.entry(c).or_insert_with(|| {
            let id = font.glyph_id(c);
            (id, f64::from(font.h_advance_unscaled(id)))
        })
    }

    fn kern(&mut self, a: GlyphId, b: GlyphId) -> f64 {
        let font = self.font;
        *self
            .kerns
            .entry((a, b))
            .or_insert_with(|| f64::from(font.kern_unscaled(a, b)))
    }

    /// Widths in font units of every prefix of `chars` (`chars.len() + 1`
    /// of them), each added up in the order [`text_width`] adds, so each is
    /// exactly the width `text_width` gives that prefix.
    fn prefix_units(&mut self, chars: &[char]) -> Vec<f64> {
        let mut out = Vec::with_capacity(chars.len() + 1);
        out.push(0.0f64);
        let mut units = 0.0f64;
        let mut prev = None;
        for &c in chars {
            let (id, advance) = self.glyph(c);
            units += advance;
            if let Some(p) = prev {
                units += self.kern(p, id);
            }
            prev = Some(id);
            out.push(units);
        }
        out
    }
}

/// Height of one line of text: ascent plus descent of the font (about
/// 1.16 em for DejaVu Sans). Text boxes are this tall.
pub fn line_height(size_px: f64) -> f64 {
    let v = vertical();
    (v.ascent + v.descent) * size_px
}

/// Distance from the top of the text box to the baseline.
pub fn ascent(size_px: f64) -> f64 {
    vertical().ascent * size_px
}

/// Distance from the baseline to the bottom of the text box.
pub fn descent(size_px: f64) -> f64 {
    vertical().descent * size_px
}

/// Collapses every run of whitespace (including newlines) into one space and
/// trims the ends, as SVG text rendering does.
pub fn normalize(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}

const ELLIPSIS: char = '\u{2026}';

/// Shortens `text` to fit `max_width`, ending it with an ellipsis when
/// anything was cut. Returns an empty string if not even the ellipsis fits.
///
/// The longest prefix that fits is found in one pass over the prefix widths
/// (each is the previous one plus a glyph and its kerning, added in the
/// order [`text_width`] adds them, so every width is the one `text_width`
/// gives): linear in the length of the text.
pub fn ellipsize(text: &str, size_px: f64, bold: bool, max_width: f64) -> String {
    if text_width(text, size_px, bold) <= max_width {
        return text.to_string();
    }
    let chars: Vec<char> = text.chars().collect();
    let picked = chars.clone();
    // the width of `chars[..m]` followed by an ellipsis
    let mut with_ellipsis: Box<dyn FnMut(usize) -> f64> =
        match if bold { bold_font() } else { regular() } {
            None => Box::new(|m: usize| (m + 1) as f64 * 0.62 * size_px),
            Some(font) => {
                let upem = f64::from(font.units_per_em().unwrap_or(2048.0));
                let mut glyphs = Glyphs::new(font);
                let prefix = glyphs.prefix_units(&chars);
                let (dots, dots_advance) = glyphs.glyph(ELLIPSIS);
                Box::new(move |m: usize| {
                    let mut u = prefix[m] + dots_advance;
                    if let Some(&c) = m.checked_sub(1).and_then(|k| chars.get(k)) {
                        let (p, _) = glyphs.glyph(c);
                        u += glyphs.kern(p, dots);
                    }
                    u / upem * size_px
                })
            }
        };
    let mut n = picked.len();
    while n > 0 {
        n -= 1;
        // `trim_end` of the prefix: drop its trailing whitespace
        let mut m = n;
        while m > 0 && picked[m - 1].is_whitespace() {
            m -= 1;
        }
        if with_ellipsis(m) <= max_width {
            let mut s: String = picked[..m].iter().collect();
            s.push(ELLIPSIS);
            return s;
        }
    }
    String::new()
}

/// Greedy word wrap into at most `max_lines` lines no wider than
/// `max_width`. Words that remain after the last line are folded into it and
/// ellipsized; a single word wider than the line is ellipsized.
pub fn wrap(text: &str, size_px: f64, bold: bool, max_width: f64, max_lines: usize) -> Vec<String> {
    let text = normalize(text);
    if text.is_empty() || max_lines == 0 {
        return Vec::new();
    }
    let words: Vec<&str> = text.split(' ').collect();
    let mut lines: Vec<String> = Vec::new();
    let mut current = String::new();
    let mut i = 0;
    while i < words.len() {
        let word = words[i];
        let candidate = if current.is_empty() {
            word.to_string()
        } else {
            format!("{current} {word}")
        };
        if text_width(&candidate, size_px, bold) <= max_width {
            current = candidate;
            i += 1;
            continue;
        }
        if current.is_empty() {
            // A single word wider than the line.
            current = ellipsize(word, size_px, bold, max_width);
            i += 1;
        }
        lines.push(std::mem::take(&mut current));
        if lines.len() == max_lines {
            break;
        }
    }
    if lines.len() == max_lines && i < words.len() {
        // Fold the rest into the last line and cut it with an ellipsis.
        let last = lines.pop().unwrap_or_default();
        let rest = words[i..].join(" ");
        let full = format!("{last} {rest}");
        lines.push(ellipsize(&full, size_px, bold, max_width));
    } else if !current.is_empty() {
        lines.push(current);
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn widths_scale_with_size_and_weight() {
        let a = text_width("Quarterly revenue", 16.0, false);
        let b = text_width("Quarterly revenue", 32.0, false);
        assert!(a > 50.0 && a < 200.0, "{a}");
        assert!((b - 2.0 * a).abs() < 1e-9);
        assert!(text_width("Quarterly revenue", 16.0, true) > a);
        assert_eq!(text_width("", 16.0, false), 0.0);
    }

    #[test]
    fn dejavu_reference_metrics() {
        // DejaVu Sans 2.37 (from the font file itself): units per em 2048,
        // advance of "M" 1767 units, hhea ascent 1901, descent -483.
        let m = text_width("M", 2048.0, false);
        assert!((m - 1767.0).abs() < 1e-6, "{m}");
        assert!((line_height(2048.0) - 2384.0).abs() < 1e-6);
        assert!((ascent(2048.0) - 1901.0).abs() < 1e-6);
    }

    /// The cut the former character-by-character search made.
    fn ellipsize_by_search(text: &str, size_px: f64, bold: bool, max_width: f64) -> String {
        if text_width(text, size_px, bold) <= max_width {
            return text.to_string();
        }
        let chars: Vec<char> = text.chars().collect();
        let mut n = chars.len();
        while n > 0 {
            n -= 1;
            let mut s: String = chars[..n].iter().collect();
            s = s.trim_end().to_string();
            s.push(ELLIPSIS);
            if text_width(&s, size_px, bold) <= max_width {
                return s;
            }
        }
        String::new()
    }

    #[test]
    fn ellipsize_cuts_where_the_search_did() {
        for text in [
            "AVAVAVAV To Ty Wa",
            "Westbrook   pulled away after evening swims began",
            "   ",
            "",
            "ff fi x\u{301}y",
            "Q",
            // long enough to be measured through `Glyphs`
            &"AVA To Wa, yes. ".repeat(20),
        ] {
            for width in [0.0, 5.0, 11.0, 30.0, 47.5, 80.0, 900.0, 1e4] {
                for bold in [false, true] {
                    assert_eq!(
                        ellipsize(text, 13.0, bold, width),
                        ellipsize_by_search(text, 13.0, bold, width),
                        "{text:?} {width} {bold}"
                    );
                }
            }
        }
    }

    #[test]
    fn a_very_long_word_is_cut_in_linear_time() {
        // a million characters took hours when each shorter prefix was
        // measured again from its start
        let word = "x".repeat(1_000_000);
        let start = std::time::Instant::now();
        let cut = ellipsize(&word, 12.0, false, 100.0);
        assert!(cut.ends_with(ELLIPSIS) && cut.chars().count() < 30, "{cut}");
        assert_eq!(wrap(&word, 12.0, false, 100.0, 2), vec![cut]);
        assert!(start.elapsed() < std::time::Duration::from_secs(20));
    }

    #[test]
    fn wrap_respects_width_and_line_count() {
        let text = "The north region grew faster than every other region for the third quarter in a row and now leads";
        let lines = wrap(text, 20.0, false, 300.0, 2);
        assert_eq!(lines.len(), 2);
        for l in &lines {
            assert!(text_width(l, 20.0, false) <= 300.0, "{l}");
        }
        assert!(lines[1].ends_with('\u{2026}'));
        let short = wrap("Short  \n text", 20.0, false, 300.0, 2);
        assert_eq!(short, vec!["Short text".to_string()]);
    }

    #[test]
    fn overlong_word_is_cut() {
        let lines = wrap("Supercalifragilisticexpialidocious", 30.0, true, 120.0, 2);
        assert_eq!(lines.len(), 1);
        assert!(text_width(&lines[0], 30.0, true) <= 120.0);
        assert!(lines[0].ends_with('\u{2026}'));
        assert_eq!(ellipsize("abc", 16.0, false, 1.0), "");
    }
}
