//! Reference values for `crescendo_look::colour`, taken from
//! shared/refs/reference-values.md §1–§3. Each table names its source and the
//! provenance tag the file gives it. The colours are test inputs only.

use crescendo_look::colour::{
    contrast_ratio, delta_e_2000, distinguishable, machado_matrix, relative_luminance, simulate,
    to_lab, Deficiency, Rgb8,
};

fn hex(s: &str) -> Rgb8 {
    Rgb8::from_hex(s).unwrap_or_else(|| panic!("bad hex {s}"))
}

fn close(actual: f64, expected: f64, tol: f64, what: &str) {
    assert!(
        (actual - expected).abs() <= tol,
        "{what}: got {actual:.10}, expected {expected} (±{tol})"
    );
}

// ---------------------------------------------------------------- §1 WCAG --

/// Black on white is exactly 21 (published: WCAG 2.2 glossary "contrast
/// ratio", range 1 to 21; also chroma.js and palette test suites).
#[test]
fn black_on_white_is_exactly_21() {
    assert_eq!(contrast_ratio(hex("#000000"), hex("#FFFFFF")), 21.0);
    assert_eq!(contrast_ratio(hex("#FFFFFF"), hex("#000000")), 21.0);
    assert_eq!(relative_luminance(hex("#FFFFFF")), 1.0);
    assert_eq!(relative_luminance(hex("#000000")), 0.0);
}

/// Colour A, colour B, L(A), L(B), ratio, AA normal, AA large, AAA normal.
type WcagRow = (&'static str, &'static str, f64, f64, f64, bool, bool, bool);

/// §1.3 worked pairs: colour A, colour B, L(A), L(B), ratio (6 dp), and the
/// AA-normal (≥ 4.5), AA-large/non-text (≥ 3) and AAA-normal (≥ 7) verdicts.
/// Provenance: own computation (reference-values.md §1.3, threshold 0.04045);
/// the "also stated in" column notes published agreement where it exists.
#[rustfmt::skip]
const WCAG_PAIRS: [WcagRow; 20] = [
    ("#000000", "#FFFFFF", 0.000000, 1.000000, 21.000000, true,  true,  true ), // 1; also chroma.js, palette tests (21)
    ("#FFFFFF", "#FFFFFF", 1.000000, 1.000000,  1.000000, false, false, false), // 2; also chroma.js, palette (1)
    ("#FF0000", "#FFFFFF", 0.212600, 1.000000,  3.998477, false, true,  false), // 3; chroma.js "4.0" to 1 dp
    ("#FF0000", "#000000", 0.212600, 0.000000,  5.252000, true,  true,  false), // 4; chroma.js 5.25
    ("#222222", "#000000", 0.015996, 0.000000,  1.319926, false, false, false), // 5; chroma.js 1.32
    ("#767676", "#FFFFFF", 0.181164, 1.000000,  4.542225, true,  true,  false), // 6; ColorfulSwift wiki 4.54
    ("#777777", "#FFFFFF", 0.184475, 1.000000,  4.478089, false, true,  false), // 7; boundary case
    ("#660000", "#FFFFFF", 0.028248, 1.000000, 13.418907, true,  true,  true ), // 8; palette test 13.41 ± 0.01
    ("#660000", "#000000", 0.028248, 0.000000,  1.564956, false, false, false), // 9; palette test 1.56 ± 0.01
    ("#006666", "#FFFFFF", 0.104621, 1.000000,  6.790819, true,  true,  false), // 10; palette test 6.79 ± 0.01
    ("#006666", "#000000", 0.104621, 0.000000,  3.092410, false, true,  false), // 11; palette test 3.09 ± 0.01
    ("#99FF99", "#000000", 0.805922, 0.000000, 17.118442, true,  true,  true ), // 12; palette test 17.11 ± 0.01
    ("#99FF99", "#FFFFFF", 0.805922, 1.000000,  1.226747, false, false, false), // 13; palette test 1.22 ± 0.01
    ("#FFFF00", "#FFFFFF", 0.927800, 1.000000,  1.073839, false, false, false), // 14; ColorfulSwift wiki 1.07
    ("#0000FF", "#FFFFFF", 0.072200, 1.000000,  8.592471, true,  true,  true ), // 15
    ("#808080", "#FFFFFF", 0.215861, 1.000000,  3.949440, false, true,  false), // 16
    ("#1F77B4", "#FFFFFF", 0.167802, 1.000000,  4.820882, true,  true,  false), // 17
    ("#FF7F0E", "#FFFFFF", 0.364704, 1.000000,  2.531923, false, false, false), // 18; fails non-text 3:1
    ("#949494", "#FFFFFF", 0.296138, 1.000000,  3.033470, false, true,  false), // 19; boundary for 3:1
    ("#595959", "#FFFFFF", 0.099899, 1.000000,  7.004729, true,  true,  true ), // 20; boundary for 7:1
];

#[test]
fn wcag_worked_pairs() {
    for (i, &(a, b, la, lb, ratio, aa, aa_large, aaa)) in WCAG_PAIRS.iter().enumerate() {
        let row = format!("§1.3 row {} ({a} vs {b})", i + 1);
        let (ca, cb) = (hex(a), hex(b));
        close(relative_luminance(ca), la, 1e-6, &format!("{row} L(A)"));
        close(relative_luminance(cb), lb, 1e-6, &format!("{row} L(B)"));
        let r = contrast_ratio(ca, cb);
        // The table gives 6 decimals, so ±5e-7 of rounding plus float noise.
        close(r, ratio, 1e-6, &format!("{row} ratio"));
        close(
            contrast_ratio(cb, ca),
            ratio,
            1e-6,
            &format!("{row} ratio swapped"),
        );
        // WCAG: compare the unrounded ratio with >= (Understanding SC 1.4.3).
        assert_eq!(r >= 4.5, aa, "{row} AA normal");
        assert_eq!(r >= 3.0, aa_large, "{row} AA large / non-text");
        assert_eq!(r >= 7.0, aaa, "{row} AAA normal");
    }
}

/// §1.3 "Extra single-colour luminances" (own computation).
#[test]
fn wcag_extra_luminances() {
    close(
        relative_luminance(hex("#00FF00")),
        0.715200,
        1e-6,
        "#00FF00 L",
    );
    close(
        relative_luminance(hex("#008000")),
        0.154383,
        1e-6,
        "#008000 L",
    );
    let white = hex("#FFFFFF");
    close(
        contrast_ratio(hex("#008000"), white),
        5.137403,
        1e-6,
        "#008000 on white",
    );
    close(
        contrast_ratio(hex("#00FF00"), white),
        1.372190,
        1e-6,
        "#00FF00 on white",
    );
    close(
        contrast_ratio(hex("#757575"), white),
        4.607518,
        1e-6,
        "#757575 on white",
    );
}

// ----------------------------------------------------------- §2 CIEDE2000 --

/// Sharma, Wu & Dalal (2005), Color Res. Appl. 30(1):21–30, Table 1: all 34
/// pairs. Columns: L1 a1 b1 L2 a2 b2, ΔE00 (published: Sharma et al. 2005, via
/// colour-science's test suite; pair 14 from the older full copy and
/// independent tables), and ΔE00 to 10 dp (computed with colour-science
/// 0.4.7).
#[rustfmt::skip]
const SHARMA: [[f64; 8]; 34] = [
    [50.0000,   2.6772, -79.7751, 50.0000,   0.0000, -82.7485,  2.0425,  2.0424596802], // 1
    [50.0000,   3.1571, -77.2803, 50.0000,   0.0000, -82.7485,  2.8615,  2.8615101747], // 2
    [50.0000,   2.8361, -74.0200, 50.0000,   0.0000, -82.7485,  3.4412,  3.4411905987], // 3
    [50.0000,  -1.3802, -84.2814, 50.0000,   0.0000, -82.7485,  1.0000,  0.9999988648], // 4
    [50.0000,  -1.1848, -84.8006, 50.0000,   0.0000, -82.7485,  1.0000,  1.0000047011], // 5
    [50.0000,  -0.9009, -85.5211, 50.0000,   0.0000, -82.7485,  1.0000,  1.0000129676], // 6
    [50.0000,   0.0000,   0.0000, 50.0000,  -1.0000,   2.0000,  2.3669,  2.3668588192], // 7
    [50.0000,  -1.0000,   2.0000, 50.0000,   0.0000,   0.0000,  2.3669,  2.3668588192], // 8
    [50.0000,   2.4900,  -0.0010, 50.0000,  -2.4900,   0.0009,  7.1792,  7.1791720113], // 9
    [50.0000,   2.4900,  -0.0010, 50.0000,  -2.4900,   0.0010,  7.1792,  7.1791626400], // 10
    [50.0000,   2.4900,  -0.0010, 50.0000,  -2.4900,   0.0011,  7.2195,  7.2194721523], // 11
    [50.0000,   2.4900,  -0.0010, 50.0000,  -2.4900,   0.0012,  7.2195,  7.2194742125], // 12
    [50.0000,  -0.0010,   2.4900, 50.0000,   0.0009,  -2.4900,  4.8045,  4.8045216858], // 13
    [50.0000,  -0.0010,   2.4900, 50.0000,   0.0010,  -2.4900,  4.8045,  4.8045245082], // 14 (hue discontinuity)
    [50.0000,  -0.0010,   2.4900, 50.0000,   0.0011,  -2.4900,  4.7461,  4.7460711138], // 15
    [50.0000,   2.5000,   0.0000, 50.0000,   0.0000,  -2.5000,  4.3065,  4.3064820958], // 16
    [50.0000,   2.5000,   0.0000, 73.0000,  25.0000, -18.0000, 27.1492, 27.1492313007], // 17
    [50.0000,   2.5000,   0.0000, 61.0000,  -5.0000,  29.0000, 22.8977, 22.8976924698], // 18
    [50.0000,   2.5000,   0.0000, 56.0000, -27.0000,  -3.0000, 31.9030, 31.9030046469], // 19
    [50.0000,   2.5000,   0.0000, 58.0000,  24.0000,  15.0000, 19.4535, 19.4535214334], // 20
    [50.0000,   2.5000,   0.0000, 50.0000,   3.1736,   0.5854,  1.0000,  1.0000263434], // 21
    [50.0000,   2.5000,   0.0000, 50.0000,   3.2972,   0.0000,  1.0000,  0.9999728730], // 22
    [50.0000,   2.5000,   0.0000, 50.0000,   1.8634,   0.5757,  1.0000,  1.0000494990], // 23
    [50.0000,   2.5000,   0.0000, 50.0000,   3.2592,   0.3350,  1.0000,  1.0000347617], // 24
    [60.2574, -34.0099,  36.2677, 60.4626, -34.1751,  39.4387,  1.2644,  1.2644200136], // 25
    [63.0109, -31.0961,  -5.8663, 62.8187, -29.7946,  -4.0864,  1.2630,  1.2629592983], // 26
    [61.2901,   3.7196,  -5.3901, 61.4292,   2.2480,  -4.9620,  1.8731,  1.8730705001], // 27
    [35.0831, -44.1164,   3.7933, 35.0232, -40.0716,   1.5901,  1.8645,  1.8644952342], // 28
    [22.7233,  20.0904, -46.6940, 23.0331,  14.9730, -42.5619,  2.0373,  2.0372582697], // 29
    [36.4612,  47.8580,  18.3852, 36.2715,  50.5065,  21.2231,  1.4146,  1.4145779225], // 30
    [90.8027,  -2.0831,   1.4410, 91.1528,  -1.6435,   0.0447,  1.4441,  1.4441290781], // 31
    [90.9257,  -0.5406,  -0.9208, 88.6381,  -0.8985,  -0.7239,  1.5381,  1.5381170054], // 32
    [ 6.7747,  -0.2908,  -2.4247,  5.8714,  -0.0985,  -2.2286,  0.6377,  0.6377276719], // 33
    [ 2.0776,   0.0795,  -1.1350,  0.9033,  -0.0636,  -0.5514,  0.9082,  0.9082328396], // 34
];

#[test]
fn ciede2000_sharma_pairs_published_4dp() {
    for (i, p) in SHARMA.iter().enumerate() {
        let de = delta_e_2000([p[0], p[1], p[2]], [p[3], p[4], p[5]]);
        close(de, p[6], 1e-4, &format!("Sharma pair {}", i + 1));
    }
}

#[test]
fn ciede2000_sharma_pairs_colour_science_10dp() {
    for (i, p) in SHARMA.iter().enumerate() {
        let de = delta_e_2000([p[0], p[1], p[2]], [p[3], p[4], p[5]]);
        close(de, p[7], 1e-6, &format!("Sharma pair {} (10 dp)", i + 1));
    }
}

/// Pairs 9–15 straddle the h̄′ discontinuity; 14 is the one colour-science
/// drops from its CI. Sharma's rules give 4.8045 (published) for it.
#[test]
fn ciede2000_pair_14_takes_the_published_branch() {
    let p = SHARMA[13];
    let de = delta_e_2000([p[0], p[1], p[2]], [p[3], p[4], p[5]]);
    close(de, 4.8045, 1e-4, "Sharma pair 14");
    assert!(
        (de - 4.7461).abs() > 0.05,
        "pair 14 took the other h̄′ branch: {de}"
    );
}

#[test]
fn ciede2000_is_symmetric() {
    for (i, p) in SHARMA.iter().enumerate() {
        let (x, y) = ([p[0], p[1], p[2]], [p[3], p[4], p[5]]);
        let (xy, yx) = (delta_e_2000(x, y), delta_e_2000(y, x));
        close(yx, xy, 1e-12, &format!("Sharma pair {} swapped", i + 1));
        close(
            yx,
            p[6],
            1e-4,
            &format!("Sharma pair {} swapped vs published", i + 1),
        );
        assert_eq!(delta_e_2000(x, x), 0.0);
    }
}

// --------------------------------------------------------- §2.3 sRGB → Lab --

/// §2.3, main columns: L*, a*, b*, C*ab, h_ab (° or NaN when undefined).
/// Convention pinned by `to_lab`: 4-decimal IEC 61966-2-1 matrix, D65 white
/// from xy (0.3127, 0.3290). Provenance: computed with colour-science 0.4.7
/// (cross-checked there with colorspacious 1.1.2).
#[rustfmt::skip]
const LAB: [(&str, [f64; 5]); 8] = [
    ("#FF0000", [53.2329,  80.1112,   67.2237, 104.5793,  40.0010]),
    ("#00FF00", [87.7370, -86.1829,   83.1878, 119.7819, 136.0131]),
    ("#0000FF", [32.3026,  79.1981, -107.8504, 133.8060, 306.2911]),
    ("#FFFFFF", [100.0000,  0.0077,    0.0035,   0.0085, f64::NAN]),
    ("#000000", [0.0000,    0.0000,    0.0000,   0.0000, f64::NAN]),
    ("#808080", [53.5850,   0.0046,    0.0021,   0.0051, f64::NAN]),
    ("#1F77B4", [47.9819,  -3.2000,  -39.3183,  39.4483, 265.3471]),
    ("#FF7F0E", [66.8778,  43.4389,   71.8691,  83.9769,  58.8505]),
];

#[test]
fn srgb_to_lab_d65_iec_matrix() {
    for (c, [l, a, b, chroma, hue]) in LAB {
        let lab = to_lab(hex(c));
        // Values are given to 4 dp (±5e-5), so 1e-4 is the tightest fair bound.
        close(lab[0], l, 1e-4, &format!("{c} L*"));
        close(lab[1], a, 1e-4, &format!("{c} a*"));
        close(lab[2], b, 1e-4, &format!("{c} b*"));
        close(lab[1].hypot(lab[2]), chroma, 1e-4, &format!("{c} C*ab"));
        if !hue.is_nan() {
            let h = lab[2].atan2(lab[1]).to_degrees().rem_euclid(360.0);
            close(h, hue, 1e-4, &format!("{c} h_ab"));
        }
    }
}

/// §2.3 XYZ column, Y × 100: with the IEC matrix, Y is WCAG's luminance
/// (computed with colour-science 0.4.7).
#[test]
fn lab_luminance_row_is_wcag_luminance() {
    for (c, y100) in [
        ("#1F77B4", 16.7802),
        ("#FF7F0E", 36.4704),
        ("#808080", 21.5861),
    ] {
        close(
            relative_luminance(hex(c)) * 100.0,
            y100,
            1e-4,
            &format!("{c} Y"),
        );
    }
}

/// §2.3 note: ΔE00(#1F77B4, #FF7F0E) = 52.4298, D65, IEC matrix (computed
/// with colour-science 0.4.7).
#[test]
fn delta_e_of_two_srgb_colours() {
    let de = delta_e_2000(to_lab(hex("#1F77B4")), to_lab(hex("#FF7F0E")));
    close(de, 52.4298, 1e-4, "ΔE00(#1F77B4, #FF7F0E)");
}

// ----------------------------------------------------------- §3 Machado --

/// §3.1 matrices at severity 1.0, row-major. Provenance: published (library
/// data): colour-science 0.4.7 `CVD_MATRICES_MACHADO2010` and colorspacious
/// 1.1.2 `MACHADO_ET_AL_MATRICES`, bit-identical, both citing Machado,
/// Oliveira & Fernandes (2009), IEEE TVCG 15(6).
#[rustfmt::skip]
const MACHADO: [(Deficiency, [[f64; 3]; 3]); 3] = [
    (Deficiency::Protanopia, [
        [ 0.152286,  1.052583, -0.204868],
        [ 0.114503,  0.786281,  0.099216],
        [-0.003882, -0.048116,  1.051998],
    ]),
    (Deficiency::Deuteranopia, [
        [ 0.367322,  0.860646, -0.227968],
        [ 0.280085,  0.672501,  0.047413],
        [-0.011820,  0.042940,  0.968881],
    ]),
    (Deficiency::Tritanopia, [
        [ 1.255528, -0.076749, -0.178779],
        [-0.078411,  0.930809,  0.147602],
        [ 0.004733,  0.691367,  0.303900],
    ]),
];

#[test]
fn machado_matrices_match_published_values_and_rows_sum_to_one() {
    for (d, expected) in MACHADO {
        let m = machado_matrix(d);
        for (i, (row, exp_row)) in m.iter().zip(expected.iter()).enumerate() {
            for (j, (&v, &e)) in row.iter().zip(exp_row.iter()).enumerate() {
                close(v, e, 1e-6, &format!("{d:?} M[{i}][{j}]"));
            }
            // §3.1: every row sums to 1 (±1e-6; the entries are rounded to 6 dp).
            close(
                row.iter().sum::<f64>(),
                1.0,
                1e-6 + 1e-12,
                &format!("{d:?} row {i} sum"),
            );
        }
    }
}

/// §3.3 rows: deficiency, input, linear output before clipping, simulated
/// 8-bit hex, and the "naive" hex (matrix applied to gamma-encoded values).
/// Provenance: computed with colour-science 0.4.7; every 8-bit result
/// identical to colorspacious 1.1.2.
#[rustfmt::skip]
const SIMULATED: [(Deficiency, &str, [f64; 3], &str, &str); 18] = [
    (Deficiency::Protanopia,   "#FF0000", [ 0.152286, 0.114503, -0.003882], "#6D5F00", "#271D00"),
    (Deficiency::Protanopia,   "#00FF00", [ 1.052583, 0.786281, -0.048116], "#FFE500", "#FFC900"),
    (Deficiency::Protanopia,   "#FF7F0E", [ 0.374777, 0.281812, -0.009474], "#A59100", "#AA8208"),
    (Deficiency::Protanopia,   "#FFA500", [ 0.548333, 0.410351, -0.021986], "#C3AC00", "#D59F00"),
    (Deficiency::Protanopia,   "#1F77B4", [ 0.102758, 0.191901,  0.471214], "#5A79B7", "#5D73B8"),
    (Deficiency::Protanopia,   "#0000FF", [-0.204868, 0.099216,  1.051998], "#0059FF", "#0019FF"),
    (Deficiency::Deuteranopia, "#FF0000", [ 0.367322, 0.280085, -0.011820], "#A39000", "#5E4700"),
    (Deficiency::Deuteranopia, "#00FF00", [ 0.860646, 0.672501,  0.042940], "#EFD63A", "#DBAB0B"),
    (Deficiency::Deuteranopia, "#FF7F0E", [ 0.548976, 0.423019,  0.001548], "#C4AE05", "#C89D10"),
    (Deficiency::Deuteranopia, "#FFA500", [ 0.691150, 0.533122,  0.004337], "#D9C10E", "#ECB604"),
    (Deficiency::Deuteranopia, "#1F77B4", [ 0.059754, 0.149537,  0.449967], "#456CB3", "#4961B3"),
    (Deficiency::Deuteranopia, "#0000FF", [-0.227968, 0.047413,  0.968881], "#003DFB", "#000CF7"),
    (Deficiency::Tritanopia,   "#FF0000", [ 1.255528,-0.078411,  0.004733], "#FF000F", "#FF0001"),
    (Deficiency::Tritanopia,   "#00FF00", [-0.076749, 0.930809,  0.691367], "#00F7D9", "#00EDB0"),
    (Deficiency::Tritanopia,   "#FF7F0E", [ 1.238454, 0.119783,  0.152797], "#FF616D", "#FF645D"),
    (Deficiency::Tritanopia,   "#FFA500", [ 1.226650, 0.271817,  0.264868], "#FF8E8D", "#FF8673"),
    (Deficiency::Tritanopia,   "#1F77B4", [-0.078552, 0.238004,  0.266308], "#00868D", "#008789"),
    (Deficiency::Tritanopia,   "#0000FF", [-0.178779, 0.147602,  0.303900], "#006B96", "#00264D"),
];

fn channels(c: Rgb8) -> [u8; 3] {
    [c.r, c.g, c.b]
}

fn max_channel_gap(a: Rgb8, b: Rgb8) -> u8 {
    let (a, b) = (channels(a), channels(b));
    (0..3).map(|i| a[i].abs_diff(b[i])).max().unwrap_or(0)
}

/// IEC 61966-2-1 decode, written out here so the matrix step can be checked
/// on its own (§1.1 formula; published: WCAG 2.2 / IEC 61966-2-1).
fn decode(c8: u8) -> f64 {
    let c = f64::from(c8) / 255.0;
    if c <= 0.04045 {
        c / 12.92
    } else {
        ((c + 0.055) / 1.055).powf(2.4)
    }
}

fn apply(m: &[[f64; 3]; 3], v: [f64; 3]) -> [f64; 3] {
    m.map(|row| row[0] * v[0] + row[1] * v[1] + row[2] * v[2])
}

#[test]
fn machado_matrix_step_on_linear_rgb() {
    for (d, input, linear_out, _, _) in SIMULATED {
        let lin_in = channels(hex(input)).map(decode);
        let out = apply(&machado_matrix(d), lin_in);
        for k in 0..3 {
            close(
                out[k],
                linear_out[k],
                1e-6,
                &format!("{d:?} {input} linear[{k}]"),
            );
        }
    }
}

#[test]
fn simulated_colours_within_one_level() {
    for (d, input, _, expected, _) in SIMULATED {
        let got = simulate(hex(input), d);
        let gap = max_channel_gap(got, hex(expected));
        assert!(
            gap <= 1,
            "{d:?} {input}: got {}, expected {expected}",
            got.hex()
        );
    }
}

/// Applying the matrix to gamma-encoded values reproduces the file's "naive"
/// column, which is far (more than one 8-bit level) from the correct result:
/// `simulate` must linearise first.
#[test]
fn linearisation_matters() {
    for (d, input, _, expected, naive) in SIMULATED {
        let encoded = channels(hex(input)).map(|c| f64::from(c) / 255.0);
        let [r, g, b] = apply(&machado_matrix(d), encoded)
            .map(|v| (v.clamp(0.0, 1.0) * 255.0).round_ties_even() as u8);
        let naive_here = Rgb8 { r, g, b };
        assert!(
            max_channel_gap(naive_here, hex(naive)) <= 1,
            "{d:?} {input}: naive {} vs file {naive}",
            naive_here.hex()
        );
        let simulated = simulate(hex(input), d);
        assert!(
            max_channel_gap(simulated, naive_here) > 1,
            "{d:?} {input}: simulate() gave the naive result {}",
            simulated.hex()
        );
        assert!(max_channel_gap(hex(expected), hex(naive)) > 1);
    }
}

/// §3.4: ΔE00 before and after simulation (both colours simulated, rounded to
/// 8 bits, then Lab with the IEC matrix). Computed with colour-science 0.4.7;
/// given to 2 dp (±0.005). We pin the same conventions, so 0.01 holds; an
/// implementation with the other matrix convention would need about 0.05.
#[test]
fn distinguishable_pairs_before_and_after_simulation() {
    let cases = [
        (
            "#FF0000",
            "#00FF00",
            [86.61, 42.36, 19.51, 75.61],
            Some(Deficiency::Deuteranopia),
        ),
        ("#1F77B4", "#FF7F0E", [52.43, 52.47, 60.24, 65.69], None),
    ];
    for (a, b, [normal, protan, deutan, tritan], worst) in cases {
        let what = format!("{a} vs {b}");
        for d in [
            distinguishable(hex(a), hex(b)),
            distinguishable(hex(b), hex(a)),
        ] {
            close(d.normal, normal, 0.01, &format!("{what} normal"));
            close(d.protanopia, protan, 0.01, &format!("{what} protanopia"));
            close(
                d.deuteranopia,
                deutan,
                0.01,
                &format!("{what} deuteranopia"),
            );
            close(d.tritanopia, tritan, 0.01, &format!("{what} tritanopia"));
            assert_eq!(d.worst().0, worst, "{what} worst viewer");
        }
    }
}
