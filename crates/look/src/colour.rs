//! Colour science for the themes and the clarity lint.
//!
//! * WCAG 2.x relative luminance and contrast ratio ([`relative_luminance`],
//!   [`contrast_ratio`]).
//! * sRGB → CIELAB under D65 ([`to_lab`]) and the CIEDE2000 colour difference
//!   ([`delta_e_2000`]).
//! * Colour-vision-deficiency (CVD) simulation after Machado, Oliveira &
//!   Fernandes (2009) ([`machado_matrix`], [`simulate`]), and a summary of how
//!   far apart two colours stay for each kind of viewer ([`distinguishable`]).
//!
//! The sRGB transfer functions, the RGB → XYZ → CIELAB plumbing and the
//! CIEDE2000 formula come from the `palette` crate; this module pins the
//! conventions (matrix, white point, rounding) and adds what `palette` does not
//! provide in the form needed here: the WCAG luminance weights and the Machado
//! matrices. Every function is total (no panics) and deterministic.

use palette::color_difference::Ciede2000;
use palette::convert::IntoColorUnclamped;
use palette::encoding::{FromLinear, IntoLinear, Srgb as SrgbTransfer};
use palette::rgb::{Rgb, RgbSpace, RgbStandard};
use palette::white_point::{Any, WhitePoint};
use palette::{Lab, Xyz};

/// An 8-bit-per-channel sRGB colour.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Rgb8 {
    /// Red channel, 0–255 (gamma-encoded sRGB).
    pub r: u8,
    /// Green channel, 0–255 (gamma-encoded sRGB).
    pub g: u8,
    /// Blue channel, 0–255 (gamma-encoded sRGB).
    pub b: u8,
}

impl Rgb8 {
    /// Build a colour from its three 8-bit channels.
    pub const fn new(r: u8, g: u8, b: u8) -> Rgb8 {
        Rgb8 { r, g, b }
    }

    /// Parse `#RRGGBB` or the shorthand `#RGB` (each digit doubled, so `#F80`
    /// is `#FF8800`). Hex digits may be upper or lower case; the leading `#`
    /// is required. Returns `None` for anything else.
    pub fn from_hex(s: &str) -> Option<Rgb8> {
        let digits = s.strip_prefix('#')?.as_bytes();
        if !digits.iter().all(u8::is_ascii_hexdigit) {
            return None;
        }
        let nibble = |i: usize| -> Option<u8> {
            (digits.get(i).copied()? as char)
                .to_digit(16)
                .map(|d| d as u8)
        };
        match digits.len() {
            6 => Some(Rgb8 {
                r: nibble(0)? << 4 | nibble(1)?,
                g: nibble(2)? << 4 | nibble(3)?,
                b: nibble(4)? << 4 | nibble(5)?,
            }),
            3 => Some(Rgb8 {
                r: nibble(0)? * 0x11,
                g: nibble(1)? * 0x11,
                b: nibble(2)? * 0x11,
            }),
            _ => None,
        }
    }

    /// The colour as `#RRGGBB` with upper-case hex digits.
    pub fn hex(&self) -> String {
        format!("#{:02X}{:02X}{:02X}", self.r, self.g, self.b)
    }

    fn channels(self) -> [u8; 3] {
        [self.r, self.g, self.b]
    }
}

/// Decode one 8-bit sRGB channel to linear light in `[0, 1]`.
///
/// `c = C8 / 255`; linear = `c / 12.92` if `c <= 0.04045`, else
/// `((c + 0.055) / 1.055)^2.4` (IEC 61966-2-1, as restated by WCAG 2.2).
fn decode(c8: u8) -> f64 {
    <SrgbTransfer as IntoLinear<f64, f64>>::into_linear(f64::from(c8) / 255.0)
}

/// Encode linear light in `[0, 1]` back to an 8-bit sRGB channel.
///
/// Inverse IEC 61966-2-1 curve in `f64`, then `× 255` and rounding half to
/// even (the convention of the reference computations, numpy's `round`).
/// The input is clipped to `[0, 1]` first, so the cast cannot truncate.
fn encode(linear: f64) -> u8 {
    let clipped = if linear.is_nan() {
        0.0
    } else {
        linear.clamp(0.0, 1.0)
    };
    let encoded = <SrgbTransfer as FromLinear<f64, f64>>::from_linear(clipped);
    (encoded * 255.0).clamp(0.0, 255.0).round_ties_even() as u8
}

fn linear_rgb(c: Rgb8) -> [f64; 3] {
    c.channels().map(decode)
}

/// WCAG 2.x relative luminance of an sRGB colour, in `[0, 1]`.
///
/// `L = 0.2126 R + 0.7152 G + 0.0722 B`, where each of R, G, B is the channel
/// decoded as `c = C8/255`, `c/12.92` if `c <= 0.04045`, else
/// `((c + 0.055)/1.055)^2.4` (WCAG 2.2, glossary "relative luminance").
///
/// WCAG 2.0 and 2.1 printed the threshold as 0.03928. No 8-bit value lies
/// between the two thresholds (10/255 ≈ 0.0392 is below both, 11/255 ≈ 0.0431
/// above both), so both versions give identical results for every 8-bit input.
///
/// The weights are the 4-decimal ones WCAG prints. `palette`'s own
/// `Wcag21RelativeContrast` uses the 7-decimal sRGB Y row (0.2126729, …) and
/// so does not reproduce WCAG's numbers exactly (pure red on white: 3.99737
/// instead of 3.99848); only the transfer function is taken from `palette`.
pub fn relative_luminance(c: Rgb8) -> f64 {
    let [r, g, b] = linear_rgb(c);
    0.2126 * r + 0.7152 * g + 0.0722 * b
}

/// WCAG 2.x contrast ratio `(L1 + 0.05) / (L2 + 0.05)`, where `L1` is the
/// relative luminance of the lighter colour and `L2` of the darker (WCAG 2.2,
/// glossary "contrast ratio"; the 0.05 is the viewing-flare term from
/// IEC 61966-2-1). Symmetric in its arguments, in `[1, 21]`.
///
/// Compare the unrounded value with the success-criterion thresholds
/// (4.5, 3, 7): WCAG says ratios must not be rounded, so 4.499 fails 4.5.
pub fn contrast_ratio(a: Rgb8, b: Rgb8) -> f64 {
    let (la, lb) = (relative_luminance(a), relative_luminance(b));
    let (lighter, darker) = if la >= lb { (la, lb) } else { (lb, la) };
    (lighter + 0.05) / (darker + 0.05)
}

/// D65 reference white for CIE 1931 2°, from the chromaticity
/// xy = (0.3127, 0.3290) with Y = 1: `Xn = x/y ≈ 0.9504559`,
/// `Zn = (1 − x − y)/y ≈ 1.0890578`.
///
/// `palette`'s built-in `D65` is (0.95047, 1, 1.08883), a different rounding;
/// this one matches the reference computations (colour-science defaults).
#[derive(Clone, Copy, Debug)]
struct D65Xy;

impl WhitePoint<f64> for D65Xy {
    fn get_xyz() -> Xyz<Any, f64> {
        let (x, y) = (0.3127, 0.3290);
        Xyz::new(x / y, 1.0, (1.0 - x - y) / y)
    }
}

/// sRGB with the 4-decimal IEC 61966-2-1 RGB → XYZ matrix and the xy-derived
/// D65 white above.
#[derive(Clone, Copy, Debug)]
struct IecSrgb;

/// The IEC 61966-2-1 sRGB → XYZ matrix, rounded to 4 decimals as printed in
/// the standard (row-major). Its middle row is WCAG's luminance weights.
const IEC_SRGB_TO_XYZ: [f64; 9] = [
    0.4124, 0.3576, 0.1805, //
    0.2126, 0.7152, 0.0722, //
    0.0193, 0.1192, 0.9505,
];

impl RgbSpace for IecSrgb {
    type Primaries = palette::encoding::Srgb;
    type WhitePoint = D65Xy;

    fn rgb_to_xyz_matrix() -> Option<[f64; 9]> {
        Some(IEC_SRGB_TO_XYZ)
    }
}

impl RgbStandard for IecSrgb {
    type Space = IecSrgb;
    type TransferFn = SrgbTransfer;
}

/// CIELAB `[L*, a*, b*]` of an 8-bit sRGB colour, D65, CIE 1931 2° observer.
///
/// Pinned convention (the default of colour-science, which produced the
/// reference table this is tested against):
/// 1. decode each channel with the IEC 61966-2-1 curve (as in
///    [`relative_luminance`]);
/// 2. XYZ = M · rgb_linear with the **4-decimal IEC 61966-2-1 matrix**
///    rows (0.4124, 0.3576, 0.1805), (0.2126, 0.7152, 0.0722),
///    (0.0193, 0.1192, 0.9505);
/// 3. white Xn, Yn, Zn = (0.9504559, 1, 1.0890578) from xy (0.3127, 0.3290),
///    no chromatic adaptation;
/// 4. `f(t) = t^(1/3)` if `t > (6/29)^3`, else `(841/108)·t + 4/29`;
///    `L* = 116 f(Y/Yn) − 16`, `a* = 500 (f(X/Xn) − f(Y/Yn))`,
///    `b* = 200 (f(Y/Yn) − f(Z/Zn))`.
///
/// Because the rounded matrix maps RGB (1, 1, 1) to XYZ (0.9505, 1, 1.0890)
/// rather than to the white exactly, greys are not perfectly neutral: white
/// is (100, 0.0077, 0.0035), a ΔE00 of about 0.01 from neutral, far below any
/// threshold a lint uses. Deriving the matrix from the primaries instead would
/// move results by at most about 0.02 ΔE.
pub fn to_lab(c: Rgb8) -> [f64; 3] {
    let [r, g, b] = c.channels().map(|v| f64::from(v) / 255.0);
    let rgb: Rgb<IecSrgb, f64> = Rgb::new(r, g, b);
    let xyz: Xyz<D65Xy, f64> = rgb.into_color_unclamped();
    let lab: Lab<D65Xy, f64> = xyz.into_color_unclamped();
    [lab.l, lab.a, lab.b]
}

/// CIEDE2000 colour difference ΔE00 between two CIELAB colours, with the
/// parametric factors kL = kC = kH = 1.
///
/// Formula (CIE 142-2001; implementation rules from G. Sharma, W. Wu and
/// E. N. Dalal, "The CIEDE2000 color-difference formula: Implementation notes,
/// supplementary test data, and mathematical observations", *Color Research &
/// Application* 30(1):21–30, 2005):
///
/// ```text
/// C̄ = (C*1 + C*2)/2,  G = 0.5 (1 − √(C̄⁷/(C̄⁷ + 25⁷)))
/// a′ = (1 + G) a*,  C′ = √(a′² + b*²),  h′ = atan2(b*, a′) in [0°, 360°)
/// ΔL′ = L2 − L1,  ΔC′ = C′2 − C′1
/// Δh′ = h′2 − h′1, −360° if > 180°, +360° if < −180° (0 if C′1 C′2 = 0)
/// ΔH′ = 2 √(C′1 C′2) sin(Δh′/2)
/// h̄′ = (h′1 + h′2)/2 if |h′1 − h′2| ≤ 180°, else shifted by 180°
/// T = 1 − 0.17 cos(h̄′ − 30°) + 0.24 cos 2h̄′ + 0.32 cos(3h̄′ + 6°) − 0.20 cos(4h̄′ − 63°)
/// S_L = 1 + 0.015 (L̄′ − 50)²/√(20 + (L̄′ − 50)²),  S_C = 1 + 0.045 C̄′,  S_H = 1 + 0.015 C̄′ T
/// R_T = −2 √(C̄′⁷/(C̄′⁷ + 25⁷)) sin(60° exp(−((h̄′ − 275°)/25°)²))
/// ΔE00 = √((ΔL′/S_L)² + (ΔC′/S_C)² + (ΔH′/S_H)² + R_T (ΔC′/S_C)(ΔH′/S_H))
/// ```
///
/// The computation is `palette`'s `Ciede2000`, which reproduces all 34 of
/// Sharma et al.'s test pairs to better than 1e-9 (see
/// `tests/colour_reference.rs`), including pairs 9–15 whose hues sit on the
/// h̄′ discontinuity (pair 14 → 4.8045). One difference from the notes:
/// when |h′1 − h′2| > 180° and h′1 + h′2 ≥ 360°, `palette` uses
/// h̄′ = (h′1 + h′2 + 360°)/2 where Sharma uses (h′1 + h′2 − 360°)/2. The two
/// differ by exactly 360°, which changes nothing in T and changes the R_T
/// Gaussian only in its far tail (h̄′ ∈ [0°, 90°) against [360°, 450°)). The
/// unit tests compare with a literal transcription of the notes: the results
/// agree to 1e-12 off that branch and to a relative 1e-5 on it (5e-6 seen),
/// far below any threshold a lint applies.
///
/// Symmetric in its arguments. Pairs 13–15 are sensitive to the last bit of
/// `atan2`; on a platform whose `atan2` rounds differently pair 14 may give
/// 4.7461 instead (as colour-science notes for numpy).
pub fn delta_e_2000(lab1: [f64; 3], lab2: [f64; 3]) -> f64 {
    let a: Lab<D65Xy, f64> = Lab::new(lab1[0], lab1[1], lab1[2]);
    let b: Lab<D65Xy, f64> = Lab::new(lab2[0], lab2[1], lab2[2]);
    a.difference(b)
}

/// The three dichromacies that Machado et al.'s model simulates at
/// severity 1.0.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Deficiency {
    /// No functioning L ("red") cones.
    Protanopia,
    /// No functioning M ("green") cones.
    Deuteranopia,
    /// No functioning S ("blue") cones.
    Tritanopia,
}

impl Deficiency {
    /// All three, in a fixed order.
    pub const ALL: [Deficiency; 3] = [
        Deficiency::Protanopia,
        Deficiency::Deuteranopia,
        Deficiency::Tritanopia,
    ];
}

/// Machado, Oliveira & Fernandes's CVD simulation matrix at severity 1.0
/// (dichromacy), row-major, to be applied to **linear** RGB as a column
/// vector: `[R′, G′, B′]ᵀ = M · [R, G, B]ᵀ`.
///
/// Source: G. M. Machado, M. M. Oliveira, L. A. F. Fernandes, "A
/// Physiologically-based Model for Simulation of Color Vision Deficiency",
/// *IEEE TVCG* 15(6):1291–1298, 2009, doi:10.1109/TVCG.2009.113; the
/// pre-computed matrices of the authors' supplementary material (the 6-decimal
/// values, identical in colour-science and colorspacious). Each row sums to 1
/// (±1e-6), so white and greys are unchanged.
pub fn machado_matrix(d: Deficiency) -> [[f64; 3]; 3] {
    match d {
        Deficiency::Protanopia => [
            [0.152286, 1.052583, -0.204868],
            [0.114503, 0.786281, 0.099216],
            [-0.003882, -0.048116, 1.051998],
        ],
        Deficiency::Deuteranopia => [
            [0.367322, 0.860646, -0.227968],
            [0.280085, 0.672501, 0.047413],
            [-0.011820, 0.042940, 0.968881],
        ],
        Deficiency::Tritanopia => [
            [1.255528, -0.076749, -0.178779],
            [-0.078411, 0.930809, 0.147602],
            [0.004733, 0.691367, 0.303900],
        ],
    }
}

fn mat_vec(m: &[[f64; 3]; 3], v: [f64; 3]) -> [f64; 3] {
    m.map(|row| row[0] * v[0] + row[1] * v[1] + row[2] * v[2])
}

/// How an sRGB colour looks to a viewer with the given dichromacy, per
/// Machado et al. (2009) at severity 1.0.
///
/// Pipeline: 8-bit sRGB → `/255` → IEC 61966-2-1 decode → `M · rgb_linear`
/// ([`machado_matrix`]) → clip each channel to `[0, 1]` → sRGB encode →
/// `×255` → round half to even. The matrices are defined on linear RGB;
/// applying them to gamma-encoded values gives visibly different (wrong)
/// colours.
pub fn simulate(c: Rgb8, d: Deficiency) -> Rgb8 {
    let [r, g, b] = mat_vec(&machado_matrix(d), linear_rgb(c)).map(encode);
    Rgb8 { r, g, b }
}

/// ΔE00 between two colours as seen with normal vision and with each
/// simulated dichromacy. See [`distinguishable`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Distinction {
    /// ΔE00 of the colours as given.
    pub normal: f64,
    /// ΔE00 after simulating protanopia on both colours.
    pub protanopia: f64,
    /// ΔE00 after simulating deuteranopia on both colours.
    pub deuteranopia: f64,
    /// ΔE00 after simulating tritanopia on both colours.
    pub tritanopia: f64,
}

impl Distinction {
    /// The viewer for whom the two colours are closest, and that ΔE00.
    /// `None` stands for normal vision. Ties go to the first in the order
    /// normal, protanopia, deuteranopia, tritanopia.
    pub fn worst(&self) -> (Option<Deficiency>, f64) {
        let candidates = [
            (Some(Deficiency::Protanopia), self.protanopia),
            (Some(Deficiency::Deuteranopia), self.deuteranopia),
            (Some(Deficiency::Tritanopia), self.tritanopia),
        ];
        candidates
            .into_iter()
            .fold((None, self.normal), |best, cand| {
                if cand.1 < best.1 {
                    cand
                } else {
                    best
                }
            })
    }
}

/// ΔE00 ([`delta_e_2000`] of [`to_lab`]) between two colours under normal
/// vision and after simulating each dichromacy on both ([`simulate`], which
/// rounds to 8 bits before the Lab conversion).
pub fn distinguishable(a: Rgb8, b: Rgb8) -> Distinction {
    let de = |x: Rgb8, y: Rgb8| delta_e_2000(to_lab(x), to_lab(y));
    let under = |d: Deficiency| de(simulate(a, d), simulate(b, d));
    Distinction {
        normal: de(a, b),
        protanopia: under(Deficiency::Protanopia),
        deuteranopia: under(Deficiency::Deuteranopia),
        tritanopia: under(Deficiency::Tritanopia),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn hex(s: &str) -> Rgb8 {
        Rgb8::from_hex(s).unwrap_or_else(|| panic!("bad hex {s}"))
    }

    #[test]
    fn hex_round_trip_and_shorthand() {
        assert_eq!(Rgb8::from_hex("#1F77B4"), Some(Rgb8::new(0x1F, 0x77, 0xB4)));
        assert_eq!(Rgb8::from_hex("#1f77b4"), Some(Rgb8::new(0x1F, 0x77, 0xB4)));
        assert_eq!(Rgb8::from_hex("#F80"), Some(Rgb8::new(0xFF, 0x88, 0x00)));
        assert_eq!(hex("#abcdef").hex(), "#ABCDEF");
        assert_eq!(hex("#000").hex(), "#000000");
        for v in 0..=255u8 {
            let c = Rgb8::new(v, 255 - v, v / 3);
            assert_eq!(Rgb8::from_hex(&c.hex()), Some(c));
        }
    }

    #[test]
    fn hex_rejects_malformed() {
        for bad in [
            "", "#", "1F77B4", "#1F77B", "#1F77B40", "#GG0000", "#12", "#1234", "# 12345",
            "#+1F77B", "#ÄÄÄ", "#1F77B4 ",
        ] {
            assert_eq!(Rgb8::from_hex(bad), None, "{bad:?}");
        }
    }

    /// The WCAG 2.0 text (threshold 0.03928) and WCAG 2.2 (0.04045) agree on
    /// every 8-bit input. Own computation over all 256 values, as in
    /// reference-values.md §1.1 (tag: own computation).
    #[test]
    fn wcag20_and_wcag22_thresholds_agree_on_all_8_bit_values() {
        let lin = |c: f64, threshold: f64| {
            if c <= threshold {
                c / 12.92
            } else {
                ((c + 0.055) / 1.055).powf(2.4)
            }
        };
        for v in 0..=255u8 {
            let c = f64::from(v) / 255.0;
            let old = lin(c, 0.03928);
            let new = lin(c, 0.04045);
            assert_eq!(old.to_bits(), new.to_bits(), "value {v}");
            // And our (palette-based) decode matches the formula.
            assert!((decode(v) - new).abs() < 1e-15, "value {v}");
            let grey = Rgb8::new(v, v, v);
            let wcag_grey = 0.2126 * old + 0.7152 * old + 0.0722 * old;
            assert!(
                (relative_luminance(grey) - wcag_grey).abs() < 1e-12,
                "value {v}"
            );
        }
        // No 8-bit value lies between the two thresholds.
        let between = (0..=255u8)
            .map(|v| f64::from(v) / 255.0)
            .filter(|&c| c > 0.03928 && c <= 0.04045)
            .count();
        assert_eq!(between, 0);
    }

    #[test]
    fn contrast_is_symmetric_and_bounded() {
        let colours = [
            "#000000", "#FFFFFF", "#767676", "#1F77B4", "#FF7F0E", "#00F", "#123456",
        ];
        for a in colours {
            for b in colours {
                let (a, b) = (hex(a), hex(b));
                let ab = contrast_ratio(a, b);
                assert_eq!(ab.to_bits(), contrast_ratio(b, a).to_bits());
                assert!((1.0..=21.0).contains(&ab), "{ab}");
            }
            assert_eq!(contrast_ratio(hex(a), hex(a)), 1.0);
        }
    }

    #[test]
    fn machado_rows_sum_to_one_and_greys_stay_grey() {
        for d in Deficiency::ALL {
            for row in machado_matrix(d) {
                assert!(
                    (row.iter().sum::<f64>() - 1.0).abs() <= 1e-6 + 1e-12,
                    "{d:?} {row:?}"
                );
            }
            for v in [0u8, 1, 17, 128, 200, 254, 255] {
                let grey = Rgb8::new(v, v, v);
                assert_eq!(simulate(grey, d), grey, "{d:?} {v}");
            }
        }
    }

    #[test]
    fn encode_clips_and_rounds_half_to_even() {
        assert_eq!(encode(-0.2), 0);
        assert_eq!(encode(1.05), 255);
        assert_eq!(encode(f64::NAN), 0);
        assert_eq!(encode(f64::INFINITY), 255);
        // 0.5/255 encoded is exactly 0.5 of an 8-bit step -> rounds to 0 (even).
        assert_eq!(encode((0.5 / 255.0) / 12.92), 0);
        assert_eq!(encode((1.5 / 255.0) / 12.92), 2);
        for v in 0..=255u8 {
            assert_eq!(encode(decode(v)), v);
        }
    }

    #[test]
    fn worst_picks_the_smallest_difference_and_breaks_ties_in_order() {
        // the differences for normal vision, then the three deficiencies
        let d = |[normal, protanopia, deuteranopia, tritanopia]: [f64; 4]| Distinction {
            normal,
            protanopia,
            deuteranopia,
            tritanopia,
        };
        let worst = d([50.0, 40.0, 19.5, 19.5]).worst();
        assert_eq!(worst, (Some(Deficiency::Deuteranopia), 19.5));
        assert_eq!(d([5.0, 5.0, 6.0, 7.0]).worst(), (None, 5.0));
        let worst = d([5.0, 6.0, 6.0, 4.0]).worst();
        assert_eq!(worst, (Some(Deficiency::Tritanopia), 4.0));
    }

    #[test]
    fn identical_colours_are_indistinguishable() {
        let c = hex("#1F77B4");
        let d = distinguishable(c, c);
        assert_eq!(
            d,
            Distinction {
                normal: 0.0,
                protanopia: 0.0,
                deuteranopia: 0.0,
                tritanopia: 0.0
            }
        );
        assert_eq!(d.worst(), (None, 0.0));
    }

    /// A literal transcription of Sharma, Wu & Dalal (2005), eqs. (1)–(22)
    /// and their implementation notes, used only to cross-check `palette`'s
    /// CIEDE2000 away from the 34 published pairs (own computation).
    ///
    /// Returns ΔE00 and whether h̄′ took the `(h′1 + h′2 − 360°)/2` branch.
    fn sharma_reference(lab1: [f64; 3], lab2: [f64; 3]) -> (f64, bool) {
        let [l1, a1, b1] = lab1;
        let [l2, a2, b2] = lab2;
        let p7 = |x: f64| x.powi(7);
        let c_bar = (a1.hypot(b1) + a2.hypot(b2)) / 2.0;
        let g = 0.5 * (1.0 - (p7(c_bar) / (p7(c_bar) + p7(25.0))).sqrt());
        let (a1p, a2p) = ((1.0 + g) * a1, (1.0 + g) * a2);
        let (c1p, c2p) = (a1p.hypot(b1), a2p.hypot(b2));
        let hue = |b: f64, ap: f64| {
            if b == 0.0 && ap == 0.0 {
                0.0
            } else {
                b.atan2(ap).to_degrees().rem_euclid(360.0)
            }
        };
        let (h1p, h2p) = (hue(b1, a1p), hue(b2, a2p));
        let dl = l2 - l1;
        let dc = c2p - c1p;
        let dh = if c1p * c2p == 0.0 {
            0.0
        } else {
            let d = h2p - h1p;
            if d > 180.0 {
                d - 360.0
            } else if d < -180.0 {
                d + 360.0
            } else {
                d
            }
        };
        let d_big_h = 2.0 * (c1p * c2p).sqrt() * (dh / 2.0).to_radians().sin();
        let l_bar = (l1 + l2) / 2.0;
        let c_bar_p = (c1p + c2p) / 2.0;
        let shifted_down = c1p * c2p != 0.0 && (h1p - h2p).abs() > 180.0 && h1p + h2p >= 360.0;
        let h_bar = if c1p * c2p == 0.0 {
            h1p + h2p
        } else if (h1p - h2p).abs() <= 180.0 {
            (h1p + h2p) / 2.0
        } else if h1p + h2p < 360.0 {
            (h1p + h2p + 360.0) / 2.0
        } else {
            (h1p + h2p - 360.0) / 2.0
        };
        let cosd = |x: f64| x.to_radians().cos();
        let t = 1.0 - 0.17 * cosd(h_bar - 30.0)
            + 0.24 * cosd(2.0 * h_bar)
            + 0.32 * cosd(3.0 * h_bar + 6.0)
            - 0.20 * cosd(4.0 * h_bar - 63.0);
        let d_theta = 30.0 * (-((h_bar - 275.0) / 25.0).powi(2)).exp();
        let r_c = 2.0 * (p7(c_bar_p) / (p7(c_bar_p) + p7(25.0))).sqrt();
        let s_l = 1.0 + 0.015 * (l_bar - 50.0).powi(2) / (20.0 + (l_bar - 50.0).powi(2)).sqrt();
        let s_c = 1.0 + 0.045 * c_bar_p;
        let s_h = 1.0 + 0.015 * c_bar_p * t;
        let r_t = -(2.0 * d_theta).to_radians().sin() * r_c;
        let de = ((dl / s_l).powi(2)
            + (dc / s_c).powi(2)
            + (d_big_h / s_h).powi(2)
            + r_t * (dc / s_c) * (d_big_h / s_h))
            .sqrt();
        (de, shifted_down)
    }

    /// `palette`'s CIEDE2000 agrees with a literal transcription of Sharma et
    /// al. over a grid of colour pairs: to 1e-9 wherever the notes' h̄′ rule
    /// and `palette`'s coincide, and to a relative 1e-5 on the branch where
    /// `palette` places h̄′ 360° higher (|h′1 − h′2| > 180°,
    /// h′1 + h′2 ≥ 360°). Also checks symmetry. (Own computation.)
    #[test]
    fn palette_ciede2000_matches_sharma_transcription_on_a_grid() {
        let (mut worst_same, mut worst_shifted_rel, mut shifted) = (0.0f64, 0.0f64, 0);
        for (l1, l2) in [(50.0, 50.0), (30.0, 70.0), (90.0, 85.0)] {
            for c1 in [0.0, 5.0, 40.0, 90.0] {
                for c2 in [3.0, 30.0, 110.0] {
                    for i in 0..36 {
                        for j in 0..36 {
                            let (h1, h2) = (f64::from(i) * 10.0 + 3.0, f64::from(j) * 10.0 + 7.0);
                            let lab1 = [l1, c1 * h1.to_radians().cos(), c1 * h1.to_radians().sin()];
                            let lab2 = [l2, c2 * h2.to_radians().cos(), c2 * h2.to_radians().sin()];
                            let ours = delta_e_2000(lab1, lab2);
                            assert_eq!(ours.to_bits(), delta_e_2000(lab2, lab1).to_bits());
                            let (reference, shifted_branch) = sharma_reference(lab1, lab2);
                            if shifted_branch {
                                shifted += 1;
                                worst_shifted_rel =
                                    worst_shifted_rel.max((ours - reference).abs() / reference);
                            } else {
                                worst_same = worst_same.max((ours - reference).abs());
                            }
                        }
                    }
                }
            }
        }
        assert!(
            shifted > 100,
            "grid must exercise the shifted branch ({shifted})"
        );
        assert!(worst_same < 1e-12, "largest disagreement {worst_same}");
        assert!(
            worst_shifted_rel < 1e-5,
            "largest relative disagreement {worst_shifted_rel}"
        );
    }
}
