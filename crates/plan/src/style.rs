//! House styles: a small TOML file named by the story (`style "house.toml"`)
//! that sets fonts, sizes, colours and margins over the theme. Validated
//! here, so an unknown key, a wrong type or an invalid colour is a located
//! error in the style file.
//!
//! The format (every table and key optional; sizes and margins in px):
//!
//! ```toml
//! fonts = ["DejaVu Sans", "Verdana", "sans-serif"]   # the SVG's font stack
//!
//! [sizes]            # whole px, 10 to 72 (the lint warns below 16)
//! headline = 34
//! takeaway = 20
//! labels = 16
//! source = 14
//!
//! [colours]          # #RRGGBB
//! accent = "#0E6B50"
//! page = "#FBFAF7"      # painted behind every frame
//! headline = "#1A1A1A"
//! takeaway = "#333333"
//! small-text = "#505050"  # ticks, axis titles, the source note
//!
//! [greys]
//! context = "#8A8A8A"         # context lines and bars
//! context-labels = "#6A6A6A"  # their direct labels
//! baseline = "#C4C4C4"
//! grid = "#ECECEC"            # gridlines, when a frame asks for them
//!
//! [margins]
//! sides = 64
//! top = 40
//! bottom = 28
//! ```

use std::ops::Range;
use std::sync::Arc;

use crescendo_diag::{Diagnostic, Source};
use serde::Deserialize;
use toml::Spanned;

pub use crescendo_frame::style::{HouseStyle, MAX_TEXT_SIZE, MIN_TEXT_SIZE};

// The file as written: every key spanned, unknown keys refused.

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawStyle {
    fonts: Option<Spanned<Vec<Spanned<String>>>>,
    sizes: Option<RawSizes>,
    colours: Option<RawColours>,
    greys: Option<RawGreys>,
    margins: Option<RawMargins>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSizes {
    headline: Option<Spanned<f64>>,
    takeaway: Option<Spanned<f64>>,
    labels: Option<Spanned<f64>>,
    source: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields, rename_all = "kebab-case")]
struct RawColours {
    accent: Option<Spanned<String>>,
    page: Option<Spanned<String>>,
    headline: Option<Spanned<String>>,
    takeaway: Option<Spanned<String>>,
    small_text: Option<Spanned<String>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields, rename_all = "kebab-case")]
struct RawGreys {
    context: Option<Spanned<String>>,
    context_light: Option<Spanned<String>>,
    context_labels: Option<Spanned<String>>,
    baseline: Option<Spanned<String>>,
    grid: Option<Spanned<String>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawMargins {
    sides: Option<Spanned<f64>>,
    top: Option<Spanned<f64>>,
    bottom: Option<Spanned<f64>>,
}

/// Generic CSS font families, written without quotes.
const GENERIC_FAMILIES: &[&str] = &[
    "serif",
    "sans-serif",
    "monospace",
    "system-ui",
    "ui-sans-serif",
    "ui-serif",
];

struct Checker {
    src: Arc<Source>,
    diags: Vec<Diagnostic>,
}

impl Checker {
    fn error(&mut self, code: &'static str, message: String, span: Range<usize>, label: &str) {
        self.diags
            .push(Diagnostic::error(code, message).at(&self.src, span, label));
    }

    fn colour(&mut self, key: &str, value: Option<Spanned<String>>) -> Option<String> {
        let v = value?;
        let span = v.span();
        let text = v.into_inner();
        match parse_hex(&text) {
            Some(hex) => Some(hex),
            None => {
                let d = Diagnostic::error(
                    "style-colour",
                    format!("`{key}` must be a colour written #RRGGBB, not `{text}`"),
                )
                .at(&self.src, span, "not a #RRGGBB colour")
                .help("write six hexadecimal digits after `#`, e.g. \"#1B4F8A\"");
                self.diags.push(d);
                None
            }
        }
    }

    fn size(&mut self, key: &str, value: Option<Spanned<f64>>) -> Option<f64> {
        let v = value?;
        let span = v.span();
        let px = *v.get_ref();
        if !(MIN_TEXT_SIZE..=MAX_TEXT_SIZE).contains(&px) || px.fract() != 0.0 {
            let d = Diagnostic::error(
                "style-size",
                format!(
                    "the {key} size must be a whole number of px from {MIN_TEXT_SIZE} to {MAX_TEXT_SIZE}, not {px}"
                ),
            )
            .at(
                &self.src,
                span,
                if px < MIN_TEXT_SIZE {
                    "too small to read"
                } else {
                    "not allowed here"
                },
            )
            .note("text below 16 px is hard to read when projected; the lint warns below that");
            self.diags.push(d);
            return None;
        }
        Some(px)
    }

    fn margin(&mut self, key: &str, value: Option<Spanned<f64>>, range: [f64; 2]) -> Option<f64> {
        let v = value?;
        let span = v.span();
        let px = *v.get_ref();
        if !(range[0]..=range[1]).contains(&px) {
            self.error(
                "style-margin",
                format!(
                    "the {key} margin must be from {} to {} px, not {px}",
                    range[0], range[1]
                ),
                span,
                "out of range",
            );
            return None;
        }
        Some(px)
    }

    fn fonts(&mut self, value: Option<Spanned<Vec<Spanned<String>>>>) -> Option<String> {
        let list = value?;
        let list_span = list.span();
        let names = list.into_inner();
        if names.is_empty() {
            self.error(
                "style-fonts",
                "`fonts` names no font".into(),
                list_span,
                "empty list",
            );
            return None;
        }
        let mut out = Vec::new();
        let mut ok = true;
        for name in names {
            let span = name.span();
            let text = name.into_inner();
            let t = text.trim();
            let valid = !t.is_empty()
                && t.chars()
                    .all(|c| c.is_ascii_alphanumeric() || c == ' ' || c == '-');
            if !valid {
                self.diags.push(
                    Diagnostic::error(
                        "style-fonts",
                        format!("`{text}` is not a font family name crescendo accepts"),
                    )
                    .at(&self.src, span, "letters, digits, spaces and hyphens only")
                    .help("write the family name as the system knows it, e.g. \"DejaVu Sans\""),
                );
                ok = false;
            } else if GENERIC_FAMILIES.contains(&t) {
                out.push(t.to_string());
            } else {
                out.push(format!("'{t}'"));
            }
        }
        ok.then(|| out.join(", "))
    }
}

/// `#RRGGBB` (any case) in upper case, or `None`.
fn parse_hex(s: &str) -> Option<String> {
    let h = s.strip_prefix('#')?;
    (h.len() == 6 && h.chars().all(|c| c.is_ascii_hexdigit()))
        .then(|| format!("#{}", h.to_ascii_uppercase()))
}

/// Parse and validate the text of a style file. `src` is the style file;
/// `name` is how the story named it. All problems are reported at once
/// (after the first syntax or type error, which stops the reading).
pub fn parse(src: &Arc<Source>, name: &str) -> Result<HouseStyle, Vec<Diagnostic>> {
    let raw: RawStyle = match toml::from_str(&src.text) {
        Ok(r) => r,
        Err(e) => {
            let span = e.span().unwrap_or(0..0);
            let message = e.message().trim().to_string();
            // serde names an unknown key and the keys it expected:
            // "unknown field `colors`, expected one of `fonts`, `sizes`, …"
            let quoted: Vec<&str> = message.split('`').skip(1).step_by(2).collect();
            let unknown = message.starts_with("unknown field");
            let help = match quoted.split_first() {
                Some((name, known)) if unknown => {
                    crescendo_diag::closest(name, known.iter().copied())
                        .map(|s| format!("did you mean `{s}`?"))
                }
                _ => None,
            };
            let d = Diagnostic::error(
                "style-file",
                format!("the house style is not valid: {message}"),
            )
            .at(
                src,
                span,
                if unknown {
                    "not a key of the house style"
                } else {
                    "here"
                },
            )
            .help(help.unwrap_or_else(|| {
                "the house style knows `fonts` and the tables [sizes], [colours], [greys] and [margins] (see the README)".into()
            }));
            return Err(vec![d]);
        }
    };
    let mut c = Checker {
        src: src.clone(),
        diags: Vec::new(),
    };
    let mut style = HouseStyle {
        file: name.to_string(),
        font_family: c.fonts(raw.fonts),
        ..HouseStyle::default()
    };
    if let Some(s) = raw.sizes {
        style.headline_size = c.size("headline", s.headline);
        style.takeaway_size = c.size("takeaway", s.takeaway);
        style.label_size = c.size("labels", s.labels);
        style.source_size = c.size("source", s.source);
    }
    if let Some(s) = raw.colours {
        style.accent = c.colour("accent", s.accent);
        style.page = c.colour("page", s.page);
        style.headline = c.colour("headline", s.headline);
        style.takeaway = c.colour("takeaway", s.takeaway);
        style.small_text = c.colour("small-text", s.small_text);
    }
    if let Some(s) = raw.greys {
        style.context = c.colour("context", s.context);
        style.context_light = c.colour("context-light", s.context_light);
        style.context_labels = c.colour("context-labels", s.context_labels);
        style.baseline = c.colour("baseline", s.baseline);
        style.grid = c.colour("grid", s.grid);
    }
    if let Some(m) = raw.margins {
        style.margin_sides = c.margin("sides", m.sides, [16.0, 160.0]);
        style.margin_top = c.margin("top", m.top, [12.0, 120.0]);
        style.margin_bottom = c.margin("bottom", m.bottom, [12.0, 120.0]);
    }
    if c.diags.is_empty() {
        Ok(style)
    } else {
        Err(c.diags)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check(text: &str) -> Result<HouseStyle, Vec<Diagnostic>> {
        parse(&Source::file("house.toml", text), "house.toml")
    }

    fn located(text: &str) -> (String, usize, usize) {
        let d = check(text).unwrap_err();
        d[0].location().expect("located")
    }

    #[test]
    fn a_full_style_is_read() {
        let s = check(
            "fonts = [\"DejaVu Sans\", \"Source Sans 3\", \"sans-serif\"]\n\
             [sizes]\nheadline = 34\nlabels = 17.0\n\
             [colours]\naccent = \"#0e6b50\"\npage = \"#FBFAF7\"\nsmall-text = \"#505050\"\n\
             [greys]\ncontext-labels = \"#6A6A6A\"\ngrid = \"#e8e8e8\"\n\
             [margins]\nsides = 64\n",
        )
        .unwrap();
        assert_eq!(
            s.font_family.as_deref(),
            Some("'DejaVu Sans', 'Source Sans 3', sans-serif")
        );
        assert_eq!(s.headline_size, Some(34.0));
        assert_eq!(s.label_size, Some(17.0));
        assert_eq!(s.takeaway_size, None);
        assert_eq!(s.accent.as_deref(), Some("#0E6B50"));
        assert_eq!(s.small_text.as_deref(), Some("#505050"));
        assert_eq!(s.context_labels.as_deref(), Some("#6A6A6A"));
        assert_eq!(s.grid.as_deref(), Some("#E8E8E8"));
        assert_eq!(s.margin_sides, Some(64.0));
        assert_eq!(check("").unwrap().file, "house.toml");
    }

    #[test]
    fn unknown_keys_wrong_types_and_bad_colours_are_located() {
        // unknown key on line 2, column 1
        assert_eq!(
            located("[sizes]\nheadlines = 30\n"),
            ("house.toml".into(), 2, 1)
        );
        // unknown table, with a suggestion
        let d = check("[colors]\naccent = \"#000000\"\n").unwrap_err();
        assert!(d[0].message.contains("colors"), "{}", d[0].message);
        assert_eq!(d[0].help.as_deref(), Some("did you mean `colours`?"));
        // wrong type: a string where a size goes (line 2, column 12)
        assert_eq!(
            located("[sizes]\nheadline = \"big\"\n"),
            ("house.toml".into(), 2, 12)
        );
        // invalid colour: every one reported, each at its value
        let d = check("[colours]\naccent = \"#12345\"\npage = \"white\"\n").unwrap_err();
        assert_eq!(d.len(), 2);
        assert_eq!(d[0].location(), Some(("house.toml".into(), 2, 10)));
        assert_eq!(d[1].location(), Some(("house.toml".into(), 3, 8)));
        assert!(d[0].message.contains("#RRGGBB"));
        // the grid grey is checked like the others
        let d = check("[greys]\ngrid = \"light\"\n").unwrap_err();
        assert_eq!(d[0].code, "style-colour");
        assert_eq!(d[0].location(), Some(("house.toml".into(), 2, 8)));
        assert!(d[0].message.contains("`grid`"), "{}", d[0].message);
        // a TOML syntax error
        assert_eq!(located("[sizes\n").0, "house.toml");
    }

    #[test]
    fn sizes_below_10_px_are_refused() {
        // 10 to 13 px are accepted here and flagged by the lint (`text-small`)
        let d = check("[sizes]\nsource = 9\n").unwrap_err();
        assert_eq!(d[0].code, "style-size");
        assert_eq!(d[0].location(), Some(("house.toml".into(), 2, 10)));
        assert!(check("[sizes]\nsource = 12\n").is_ok());
        assert!(check("[sizes]\nsource = 14\n").is_ok());
        assert!(check("[sizes]\nlabels = 16.5\n").is_err());
        assert!(check("[margins]\nsides = 2\n").is_err());
        assert!(check("fonts = []\n").is_err());
        assert!(check("fonts = [\"Evil\\\"><script>\"]\n").is_err());
    }
}
