//! Text measurement with the bundled DejaVu Sans, so layout is identical on
//! every machine.
//!
//! All sizes are CSS pixels of the em box, i.e. exactly the `font-size` that
//! ends up in the SVG. The SVG names DejaVu Sans first in its font stack;
//! the fallbacks (Helvetica, Arial) are narrower, so measuring with DejaVu
//! errs on the safe side.

use ab_glyph::{Font, FontRef, GlyphId};
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

/// The kerning between two glyphs of the regular or bold font, in font
/// units. Lookups in the font's tables are slow and texts reuse few pairs,
/// so each thread remembers the pairs it has seen.
fn kerning(font: &FontRef<'static>, bold: bool, a: GlyphId, b: GlyphId) -> f64 {
    thread_local! {
        static PAIRS: std::cell::RefCell<std::collections::HashMap<(bool, u16, u16), f32>> =
            std::cell::RefCell::new(std::collections::HashMap::new());
    }
    let k = PAIRS.with(|pairs| {
        *pairs
            .borrow_mut()
            .entry((bold, a.0, b.0))
            .or_insert_with(|| font.kern_unscaled(a, b))
    });
    f64::from(k)
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
    let mut units = 0.0f64;
    let mut prev = None;
    for c in text.chars() {
        let id = font.glyph_id(c);
        units += f64::from(font.h_advance_unscaled(id));
        if let Some(p) = prev {
            units += kerning(font, bold, p, id);
        }
        prev = Some(id);
    }
    units / upem * size_px
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
/// The longest prefix (trailing whitespace trimmed) that fits with the
/// ellipsis wins. Prefix widths are summed once, in the order
/// [`text_width`] sums them, so each candidate costs one addition and the
/// result is the one measuring every candidate afresh would give, in time
/// linear in the length of `text`.
pub fn ellipsize(text: &str, size_px: f64, bold: bool, max_width: f64) -> String {
    let font = if bold { bold_font() } else { regular() };
    let Some(font) = font else {
        return ellipsize_measuring(text, size_px, bold, max_width);
    };
    let upem = f64::from(font.units_per_em().unwrap_or(2048.0));
    let chars: Vec<char> = text.chars().collect();
    let ids: Vec<_> = chars.iter().map(|&c| font.glyph_id(c)).collect();
    let kern = |a: GlyphId, b: GlyphId| kerning(font, bold, a, b);
    // units[k]: the advance of chars[..k] with kerning, as text_width sums it
    let mut units = Vec::with_capacity(chars.len() + 1);
    let mut acc = 0.0f64;
    units.push(acc);
    for (k, &id) in ids.iter().enumerate() {
        acc += f64::from(font.h_advance_unscaled(id));
        if k > 0 {
            acc += kern(ids[k - 1], id);
        }
        units.push(acc);
    }
    if acc / upem * size_px <= max_width {
        return text.to_string();
    }
    // trimmed[n]: the length of chars[..n] without its trailing whitespace
    let mut trimmed = Vec::with_capacity(chars.len() + 1);
    trimmed.push(0);
    for (k, c) in chars.iter().enumerate() {
        let previous = trimmed[k];
        trimmed.push(if c.is_whitespace() { previous } else { k + 1 });
    }
    let ellipsis = font.glyph_id(ELLIPSIS);
    let advance = f64::from(font.h_advance_unscaled(ellipsis));
    for n in (0..chars.len()).rev() {
        let m = trimmed[n];
        let mut w = units[m] + advance;
        if m > 0 {
            w += kern(ids[m - 1], ellipsis);
        }
        if w / upem * size_px <= max_width {
            let mut s: String = chars[..m].iter().collect();
            s.push(ELLIPSIS);
            return s;
        }
    }
    String::new()
}

/// [`ellipsize`] by measuring every candidate (only when the bundled font
/// cannot be read, where [`text_width`] estimates widths).
fn ellipsize_measuring(text: &str, size_px: f64, bold: bool, max_width: f64) -> String {
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
    fn ellipsize_gives_what_measuring_every_candidate_gives() {
        let long = "AVA To Wa, yes. ".repeat(20);
        let texts = [
            "Quarterly revenue grew in every region",
            "AV To Wa Ty  kerning   pairs  \u{2026} and   spaces",
            "AVAVAVAV To Ty Wa",
            "Westbrook   pulled away after evening swims began",
            "one",
            "Q",
            "",
            "   ",
            "ff fi x\u{301}y",
            "Ünïcödé wörds, çà et là: 12,345.6 — ok",
            // long, with kerning pairs repeated
            &long,
        ];
        for text in texts {
            for bold in [false, true] {
                for max in [
                    0.0, 5.0, 11.0, 20.0, 30.0, 33.3, 47.5, 60.0, 80.0, 100.0, 150.0, 400.0, 900.0,
                    1e4,
                ] {
                    for size in [13.0, 16.0] {
                        assert_eq!(
                            ellipsize(text, size, bold, max),
                            ellipsize_measuring(text, size, bold, max),
                            "{text:?} size={size} bold={bold} max={max}"
                        );
                    }
                }
            }
        }
    }

    #[test]
    fn a_very_long_word_is_cut_in_linear_time() {
        // a million characters took hours when each shorter prefix was
        // measured again from its start; a long run of spaces must not
        // make each candidate trim the run again
        let word = "x".repeat(1_000_000);
        let start = std::time::Instant::now();
        let cut = ellipsize(&word, 12.0, false, 100.0);
        assert!(cut.ends_with(ELLIPSIS) && cut.chars().count() < 30, "{cut}");
        assert_eq!(wrap(&word, 12.0, false, 100.0, 2), vec![cut]);
        let spaced = format!("abcdefghij{}k", " ".repeat(1_000_000));
        let short = ellipsize("abcdefghij", 12.0, false, 40.0);
        assert!(short.ends_with(ELLIPSIS) && short.len() > ELLIPSIS.len_utf8());
        assert_eq!(ellipsize(&spaced, 12.0, false, 40.0), short);
        assert!(start.elapsed() < std::time::Duration::from_secs(20));
    }

    #[test]
    fn long_texts_are_fitted_in_linear_time() {
        // Measuring every candidate afresh took seconds for one 8,000
        // character label; 400,000 characters would take hours that way.
        let word = "abcdefghij ";
        let long = word.repeat(40_000);
        let start = std::time::Instant::now();
        let cut = ellipsize(&long, 20.0, false, 1000.0);
        assert!(cut.ends_with('\u{2026}') && text_width(&cut, 20.0, false) <= 1000.0);
        let lines = wrap(&long, 20.0, false, 1000.0, 2);
        assert_eq!(lines.len(), 2);
        let all = wrap(&long[..80_000], 20.0, false, 1000.0, usize::MAX);
        assert!(all.len() > 100);
        let unbroken = "x".repeat(400_000);
        assert_eq!(wrap(&unbroken, 20.0, true, 300.0, 2).len(), 1);
        assert!(start.elapsed().as_secs() < 20, "{:?}", start.elapsed());
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
