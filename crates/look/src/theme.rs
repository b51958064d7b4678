//! Themes: the palette and stroke weights that map semantic roles to ink.
//!
//! A theme says which colour and weight each role gets, which type sizes and
//! margins the page uses and which font stack the SVG names. Three themes are
//! built in ([`THEMES`]): `clear` (light, the default), `evening` (dark, for
//! projection in dark rooms) and `print` (for paper). A story's house style
//! (`style "house.toml"`) and its `accent` are applied over the theme by
//! [`effective`].

use std::borrow::Cow;
use std::fmt;

use crescendo_frame::style::MIN_TEXT_SIZE;
use crescendo_frame::DeckPlan;

use crate::colour::{self, Rgb8};

/// Canvas width in px.
pub const WIDTH: u32 = 1280;
/// Canvas height in px.
pub const HEIGHT: u32 = 720;

/// The font family string written into the SVG; the bundled DejaVu Sans is
/// registered with plotters under this same name.
pub const FONT_FAMILY: &str = "DejaVu Sans, Helvetica, Arial, sans-serif";

/// Headline size in px (bold). Type for a room (common practice for
/// projected slides, from memory): on the 1280 × 720 frame a headline of
/// 36 px or more, a takeaway of 24, labels and ticks of 20 and a source
/// note of 16 stay readable from the back row.
pub const HEADLINE_SIZE: f64 = 36.0;
/// Takeaway size in px.
pub const TAKEAWAY_SIZE: f64 = 24.0;
/// Tick labels, axis titles, category labels and direct labels, in px.
pub const LABEL_SIZE: f64 = 20.0;
/// Source note size in px; the smallest text drawn, and the smallest the
/// lint's `text-small` accepts.
pub const SOURCE_SIZE: f64 = 16.0;
/// The label size the forms' fixed lengths were chosen at
/// ([`Theme::label_scaled`]).
pub const LENGTHS_AT: f64 = 16.0;

/// The smallest CIELAB L* difference between the accent and a context
/// grey, so emphasis reads by lightness alone (in greyscale too): 20 L*
/// (common practice; a value of our own choosing, not a standard's).
pub const LIGHTNESS_STEP: f64 = 20.0;

/// Left and right page margin.
pub const MARGIN_X: f64 = 56.0;
/// Top page margin (to the top of the headline box).
pub const MARGIN_TOP: f64 = 36.0;
/// Bottom page margin (below the source note box).
pub const MARGIN_BOTTOM: f64 = 26.0;

/// Why a deck's look cannot be made: an unknown theme or a colour that is
/// not `#RRGGBB` (the planner refuses both first, so this is a plan that
/// did not come from it).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ThemeError {
    /// Human-readable explanation.
    pub message: String,
}

impl fmt::Display for ThemeError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for ThemeError {}

fn theme_error(message: String) -> ThemeError {
    ThemeError { message }
}

/// An sRGB colour without alpha.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Rgb(pub u8, pub u8, pub u8);

impl Rgb {
    /// `#RRGGBB`, upper-case hex, as plotters writes colours.
    pub fn hex(self) -> String {
        format!("#{:02X}{:02X}{:02X}", self.0, self.1, self.2)
    }

    /// WCAG 2.x relative luminance ([`colour::relative_luminance`]).
    pub fn relative_luminance(self) -> f64 {
        colour::relative_luminance(self.into())
    }

    /// WCAG 2.x contrast ratio between two colours
    /// ([`colour::contrast_ratio`]).
    pub fn contrast(self, other: Rgb) -> f64 {
        colour::contrast_ratio(self.into(), other.into())
    }
}

impl From<Rgb> for Rgb8 {
    fn from(c: Rgb) -> Rgb8 {
        Rgb8::new(c.0, c.1, c.2)
    }
}

/// Palette and weights of one theme.
#[derive(Clone, Debug, PartialEq)]
pub struct Theme {
    /// Name as written in the story (`theme clear`).
    pub name: &'static str,
    /// Page colour the contrast checks assume. Painted only when
    /// [`Theme::background`] says so.
    pub page: Rgb,
    /// A full-canvas background painted under everything, or `None` for a
    /// transparent page (the light theme: the SVG has no background fill).
    pub background: Option<Rgb>,
    /// Headline text.
    pub headline: Rgb,
    /// Takeaway text.
    pub takeaway: Rgb,
    /// Tick labels, axis titles, category labels and the source note.
    pub muted: Rgb,
    /// Context marks (lines and bars): the one context grey. At least
    /// [`LIGHTNESS_STEP`] CIELAB L* from the accent (lighter on a light page,
    /// dimmer on a dark one) and at least 3:1 against the page.
    pub context: Rgb,
    /// The second context grey, for forms that must tell two context shades
    /// apart (alternate stack segments and slices, range lines, the start
    /// and total bars of a plugin): lighter than [`Theme::context`], under
    /// the same two rules.
    pub context_light: Rgb,
    /// Direct labels of context series: close to [`Theme::context`] but dark
    /// enough to pass the 4.5:1 text contrast.
    pub context_text: Rgb,
    /// Baselines.
    pub baseline: Rgb,
    /// Gridlines (`gridlines`): lighter than the baseline and far lighter
    /// than the context grey, so they recede behind the data.
    pub grid: Rgb,
    /// The one emphasis colour: focus marks and their labels.
    pub accent: Rgb,
    /// Stroke width of context lines, in px.
    pub context_stroke: u32,
    /// Stroke width of focus lines, in px.
    pub focus_stroke: u32,
    /// Stroke width of baselines, in px.
    pub baseline_stroke: u32,
    /// The font stack written into the SVG (`font-family`). Text is always
    /// measured with the bundled DejaVu Sans.
    pub font_family: Cow<'static, str>,
    /// Headline size in px (bold).
    pub headline_size: f64,
    /// Takeaway size in px.
    pub takeaway_size: f64,
    /// Tick labels, axis titles, category and direct labels, in px.
    pub label_size: f64,
    /// Source note size in px.
    pub source_size: f64,
    /// Left and right page margin, in px.
    pub margin_x: f64,
    /// Top page margin, in px.
    pub margin_top: f64,
    /// Bottom page margin, in px.
    pub margin_bottom: f64,
}

impl Theme {
    /// Width available to full-width text.
    pub fn text_column(&self) -> f64 {
        f64::from(WIDTH) - 2.0 * self.margin_x
    }

    /// Vertical distance between two rows of labels.
    pub fn label_step(&self) -> f64 {
        crate::metrics::line_height(self.label_size) + 2.0
    }

    /// True when the page is light (CIELAB L* of 50 or more): there the
    /// context greys must be lighter than the accent, on a dark page dimmer.
    pub fn light_page(&self) -> bool {
        lightness(self.page) >= 50.0
    }

    /// How far `grey` recedes behind the accent, in CIELAB L*: how much
    /// lighter it is on a light page, how much dimmer on a dark one.
    /// Negative when it stands out more than the accent; the rule asks for
    /// [`LIGHTNESS_STEP`] or more.
    pub fn recession(&self, grey: Rgb) -> f64 {
        let d = lightness(grey) - lightness(self.accent);
        if self.light_page() {
            d
        } else {
            -d
        }
    }

    /// A length chosen for 16 px labels ([`LENGTHS_AT`]: the widest a label
    /// may be, the room kept for a column of labels), scaled to the theme's
    /// label size so a label keeps about as many characters.
    pub fn label_scaled(&self, px: f64) -> f64 {
        px * (self.label_size / LENGTHS_AT)
    }
}

/// The `clear` theme: white page, near-black text, grey context and a deep
/// rust accent (#8E3005, 8.2:1 on white, CIELAB L* 33.7), dark enough that
/// both context greys (L* 55.1 and 60.6) sit more than 20 L* above it and
/// still reach 3:1 on white.
pub const CLEAR: Theme = Theme {
    name: "clear",
    page: Rgb(0xFF, 0xFF, 0xFF),
    background: None,
    headline: Rgb(0x1F, 0x1F, 0x1F),
    takeaway: Rgb(0x3D, 0x3D, 0x3D),
    muted: Rgb(0x5A, 0x5A, 0x5A),
    context: Rgb(0x84, 0x84, 0x84),
    context_light: Rgb(0x92, 0x92, 0x92),
    context_text: Rgb(0x70, 0x70, 0x70),
    baseline: Rgb(0xC8, 0xC8, 0xC8),
    grid: Rgb(0xEC, 0xEC, 0xEC),
    accent: Rgb(0x8E, 0x30, 0x05),
    context_stroke: 2,
    focus_stroke: 4,
    baseline_stroke: 1,
    font_family: Cow::Borrowed(FONT_FAMILY),
    headline_size: HEADLINE_SIZE,
    takeaway_size: TAKEAWAY_SIZE,
    label_size: LABEL_SIZE,
    source_size: SOURCE_SIZE,
    margin_x: MARGIN_X,
    margin_top: MARGIN_TOP,
    margin_bottom: MARGIN_BOTTOM,
};

/// The `evening` theme, for projection in a dark room: a near-black blue-grey
/// page (painted), light text, dim greys (L* 44.8 and 51.2, both over 3:1
/// on the page) and an amber accent (#F0A04B, 8.2:1 on the page, L* 72.3)
/// that outshines them. Light text on a dark page glares less in a
/// darkened room (common practice for projection).
pub const EVENING: Theme = Theme {
    name: "evening",
    page: Rgb(0x17, 0x1A, 0x1F),
    background: Some(Rgb(0x17, 0x1A, 0x1F)),
    headline: Rgb(0xF2, 0xF2, 0xF2),
    takeaway: Rgb(0xD9, 0xD9, 0xD9),
    muted: Rgb(0xB0, 0xB0, 0xB0),
    context: Rgb(0x6A, 0x6A, 0x6A),
    context_light: Rgb(0x7A, 0x7A, 0x7A),
    context_text: Rgb(0x9E, 0x9E, 0x9E),
    baseline: Rgb(0x4A, 0x4D, 0x52),
    grid: Rgb(0x2B, 0x2F, 0x35),
    accent: Rgb(0xF0, 0xA0, 0x4B),
    ..CLEAR
};

/// The `print` theme, for paper: black text, greys dark enough to survive
/// toner and a deep blue accent (#1B4F8A, L* 33.3) that stays more than
/// 20 L* darker than both greys (L* 55.1 and 60.6) when printed in black
/// and white; context lines are a little heavier
/// because printers lighten thin lines (common practice).
pub const PRINT: Theme = Theme {
    name: "print",
    page: Rgb(0xFF, 0xFF, 0xFF),
    background: None,
    headline: Rgb(0x00, 0x00, 0x00),
    takeaway: Rgb(0x26, 0x26, 0x26),
    muted: Rgb(0x4A, 0x4A, 0x4A),
    context: Rgb(0x84, 0x84, 0x84),
    context_light: Rgb(0x92, 0x92, 0x92),
    context_text: Rgb(0x66, 0x66, 0x66),
    baseline: Rgb(0x9A, 0x9A, 0x9A),
    grid: Rgb(0xDD, 0xDD, 0xDD),
    accent: Rgb(0x1B, 0x4F, 0x8A),
    context_stroke: 3,
    focus_stroke: 5,
    ..CLEAR
};

/// Every built-in theme, in the order of [`THEMES`].
pub const ALL: &[&Theme] = &[&CLEAR, &EVENING, &PRINT];

/// The names of the built-in themes, the one list the planner checks
/// `theme NAME` against: `clear` (light, the default), `evening` (dark, for
/// projection in dark rooms) and `print`.
pub const THEMES: &[&str] = &[CLEAR.name, EVENING.name, PRINT.name];

/// The theme a deck is drawn with: its named theme, then the house style
/// (`style "house.toml"`: fonts, sizes, colours, margins), then the story's
/// own accent colour (`accent "#RRGGBB"`), each replacing what it sets.
/// A house style that sets the page colour paints it behind every frame.
pub fn effective(deck: &DeckPlan) -> Result<Theme, ThemeError> {
    let mut t = theme(&deck.theme)?.clone();
    let colour = |hex: &str| {
        Rgb::from_hex(hex).ok_or_else(|| theme_error(format!("`{hex}` is not a colour")))
    };
    if let Some(style) = &deck.style {
        let set = |slot: &mut Rgb, value: &Option<String>| -> Result<(), ThemeError> {
            if let Some(hex) = value {
                *slot = colour(hex)?;
            }
            Ok(())
        };
        set(&mut t.accent, &style.accent)?;
        set(&mut t.headline, &style.headline)?;
        set(&mut t.takeaway, &style.takeaway)?;
        set(&mut t.muted, &style.small_text)?;
        set(&mut t.context, &style.context)?;
        set(&mut t.context_light, &style.context_light)?;
        set(&mut t.context_text, &style.context_labels)?;
        set(&mut t.baseline, &style.baseline)?;
        set(&mut t.grid, &style.grid)?;
        if let Some(hex) = &style.page {
            t.page = colour(hex)?;
            t.background = Some(t.page);
        }
        if let Some(f) = &style.font_family {
            t.font_family = Cow::Owned(f.clone());
        }
        let size = |slot: &mut f64, value: Option<f64>| {
            if let Some(v) = value.filter(|v| v.is_finite() && *v >= MIN_TEXT_SIZE) {
                *slot = v;
            }
        };
        size(&mut t.headline_size, style.headline_size);
        size(&mut t.takeaway_size, style.takeaway_size);
        size(&mut t.label_size, style.label_size);
        size(&mut t.source_size, style.source_size);
        let margin = |slot: &mut f64, value: Option<f64>| {
            if let Some(v) = value.filter(|v| v.is_finite() && *v >= 0.0 && *v <= 200.0) {
                *slot = v;
            }
        };
        margin(&mut t.margin_x, style.margin_sides);
        margin(&mut t.margin_top, style.margin_top);
        margin(&mut t.margin_bottom, style.margin_bottom);
    }
    if let Some(hex) = &deck.accent {
        t.accent = colour(hex)?;
    }
    Ok(t)
}

/// CIELAB L* of a colour (CIE 15, D65; [`colour::to_lab`]).
pub fn lightness(c: Rgb) -> f64 {
    colour::to_lab(c.into())[0]
}

impl Rgb {
    /// Parse `#RRGGBB`.
    pub fn from_hex(s: &str) -> Option<Rgb> {
        let h = s.strip_prefix('#')?;
        if h.len() != 6 || !h.chars().all(|c| c.is_ascii_hexdigit()) {
            return None;
        }
        let byte = |i: usize| u8::from_str_radix(&h[i..i + 2], 16).ok();
        Some(Rgb(byte(0)?, byte(2)?, byte(4)?))
    }
}

/// Looks a theme up by name.
pub fn theme(name: &str) -> Result<&'static Theme, ThemeError> {
    ALL.iter().copied().find(|t| t.name == name).ok_or_else(|| {
        theme_error(format!(
            "unknown theme `{name}` (known themes: {})",
            THEMES.join(", ")
        ))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_planned_theme_exists() {
        for name in THEMES {
            assert!(theme(name).is_ok(), "{name}");
        }
        assert!(theme("neon").is_err());
    }

    // Contrast thresholds: WCAG 2.1 SC 1.4.3 (text, 4.5:1) and SC 1.4.11
    // (graphical objects, 3:1); formula from the WCAG 2.1 definitions of
    // "relative luminance" and "contrast ratio".
    #[test]
    fn clear_contrast_meets_wcag() {
        let t = &CLEAR;
        for (what, c) in [
            ("headline", t.headline),
            ("takeaway", t.takeaway),
            ("muted", t.muted),
            ("context_text", t.context_text),
            ("accent", t.accent),
        ] {
            assert!(t.page.contrast(c) >= 4.5, "{what}: {}", t.page.contrast(c));
        }
        assert!(t.page.contrast(t.context) >= 3.0);
        assert!(
            t.accent.contrast(t.context) > 1.5,
            "accent must differ from grey in lightness too"
        );
    }

    // Emphasis by lightness: both context greys at least LIGHTNESS_STEP
    // CIELAB L* (CIE 15: L* = 116 f(Y/Yn) − 16) from the accent, lighter on
    // the light pages and dimmer on the dark one, and both at 3:1 or more
    // on the page (WCAG 2.1 SC 1.4.11, contrast ratio as WCAG 2.1 defines
    // it), the second grey lighter than the first.
    #[test]
    fn every_theme_keeps_its_greys_behind_the_accent() {
        for t in ALL {
            for (what, grey) in [("context", t.context), ("context_light", t.context_light)] {
                let step = t.recession(grey);
                assert!(
                    step >= LIGHTNESS_STEP,
                    "{}: {what} only {step:.1} L*",
                    t.name
                );
                let r = t.page.contrast(grey);
                assert!(r >= 3.0, "{}: {what} {r:.2}:1 on the page", t.name);
            }
            assert!(
                lightness(t.context_light) > lightness(t.context) + 4.0,
                "{}",
                t.name
            );
        }
        assert!(CLEAR.light_page() && PRINT.light_page() && !EVENING.light_page());
    }

    // L* of reference greys by the CIE 15 formula, worked by hand from the
    // WCAG 2.1 luminance: #777777 has Y = 0.18447 (the sRGB value 0x77
    // linearised), so L* = 116 × 0.18447^(1/3) − 16 = 50.03; white is 100
    // and black 0 by definition.
    #[test]
    fn lightness_reference_values() {
        assert!((lightness(Rgb(255, 255, 255)) - 100.0).abs() < 0.01);
        assert!(lightness(Rgb(0, 0, 0)).abs() < 0.01);
        assert!((lightness(Rgb(0x77, 0x77, 0x77)) - 50.03).abs() < 0.02);
    }

    // The same thresholds for every built-in theme; the lint
    // (crates/lint, `text-faint`, `marks-faint`, `focus-confusable`)
    // checks the effective theme of every demo story too.
    #[test]
    fn every_theme_meets_wcag_contrast() {
        for t in ALL {
            for (what, c, min) in [
                ("headline", t.headline, 3.0),
                ("takeaway", t.takeaway, 4.5),
                ("muted", t.muted, 4.5),
                ("context_text", t.context_text, 4.5),
                ("accent", t.accent, 4.5),
                ("context", t.context, 3.0),
            ] {
                let r = t.page.contrast(c);
                assert!(r >= min, "{}: {what} {r:.2}", t.name);
            }
            assert!(t.accent.contrast(t.context) > 1.5, "{}", t.name);
            if let Some(bg) = t.background {
                assert_eq!(
                    bg, t.page,
                    "{}: the painted page is the checked page",
                    t.name
                );
            }
        }
        // gridlines recede: lighter against the page than the baseline,
        // which is lighter than the context grey
        for t in ALL {
            let grid = t.page.contrast(t.grid);
            let baseline = t.page.contrast(t.baseline);
            assert!(
                grid > 1.05,
                "{}: gridlines must still show ({grid:.2})",
                t.name
            );
            assert!(
                grid < baseline,
                "{}: grid {grid:.2} vs baseline {baseline:.2}",
                t.name
            );
            assert!(baseline < t.page.contrast(t.context), "{}", t.name);
        }
        // the dark theme paints its page; the light ones stay transparent
        assert!(EVENING.background.is_some());
        assert!(CLEAR.background.is_none() && PRINT.background.is_none());
        assert!(EVENING.page.relative_luminance() < 0.05);
    }

    fn deck_with(style: Option<crescendo_frame::style::HouseStyle>) -> DeckPlan {
        DeckPlan {
            title: "t".into(),
            theme: "clear".into(),
            style,
            ..Default::default()
        }
    }

    #[test]
    fn a_house_style_applies_over_the_theme_and_the_accent_over_both() {
        assert_eq!(effective(&deck_with(None)).unwrap(), CLEAR);
        let style = crescendo_frame::style::HouseStyle {
            font_family: Some("'Atkinson Hyperlegible', sans-serif".into()),
            headline_size: Some(36.0),
            label_size: Some(18.0),
            accent: Some("#0E6B50".into()),
            page: Some("#FBFAF7".into()),
            context: Some("#858585".into()),
            grid: Some("#E4E4E4".into()),
            margin_sides: Some(64.0),
            ..Default::default()
        };
        let mut deck = deck_with(Some(style));
        let t = effective(&deck).unwrap();
        assert_eq!(t.accent, Rgb(0x0E, 0x6B, 0x50));
        assert_eq!(t.background, Some(Rgb(0xFB, 0xFA, 0xF7)));
        assert_eq!(t.page, Rgb(0xFB, 0xFA, 0xF7));
        assert_eq!(t.context, Rgb(0x85, 0x85, 0x85));
        assert_eq!(t.context_text, CLEAR.context_text);
        assert_eq!(t.grid, Rgb(0xE4, 0xE4, 0xE4));
        assert_eq!(t.baseline, CLEAR.baseline);
        assert_eq!(
            (t.headline_size, t.label_size, t.source_size),
            (36.0, 18.0, 16.0)
        );
        assert_eq!(t.text_column(), 1280.0 - 128.0);
        assert_eq!(t.font_family, "'Atkinson Hyperlegible', sans-serif");
        deck.accent = Some("#7A1F5C".into());
        assert_eq!(effective(&deck).unwrap().accent, Rgb(0x7A, 0x1F, 0x5C));
    }

    #[test]
    fn contrast_reference_values() {
        // Black on white is 21:1 by definition (WCAG 2.1).
        let black = Rgb(0, 0, 0);
        let white = Rgb(255, 255, 255);
        assert!((black.contrast(white) - 21.0).abs() < 1e-9);
        assert!((white.contrast(white) - 1.0).abs() < 1e-9);
        assert_eq!(CLEAR.accent.hex(), "#8E3005");
    }

    #[test]
    fn accent_is_not_a_common_library_default() {
        for taken in [
            "#1F77B4", "#4C72B0", "#FF7F0E", "#636EFA", "#3366CC", "#4E79A7",
        ] {
            assert_ne!(CLEAR.accent.hex(), taken);
        }
    }
}
