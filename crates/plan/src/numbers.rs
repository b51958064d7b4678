//! The number policy: how every number a deck shows is written, in one
//! place. Headlines and every other text, data labels, line-end labels,
//! stack totals, tick labels, table cells, pie shares and descriptions all
//! come through here, so the same quantity prints the same way everywhere.
//!
//! The rules (each checked in `tests`, by hand-worked tables, and against
//! Python's `decimal` module in `tests/numbers_decimal.rs`):
//! - **three significant digits by default**, never fewer than a number's
//!   whole digits (`5.42`, `0.00123`, `12,346`), no trailing zeros, and a
//!   non-zero value never prints as `0` (`0.004`, `0.0000001`);
//! - **half away from zero on the decimal representation** (the shortest
//!   digits that read back to the same double): `2.25` → `2.3`, and a
//!   percentage moves the decimal point instead of multiplying in binary
//!   (`0.145` to 0 decimals is `15%`, though `0.145 * 100` is
//!   `14.499999999999998`); compact carries to the next suffix (`999,950`
//!   to one decimal is `1.0M`) and ends at `T`;
//! - **a label never shows fewer significant digits than a quoted text of
//!   the same frame shows for the same quantity** ([`write_labels`]), and
//!   a quote in any frame of a build-up sequence counts for every frame of
//!   it (`frames::sequence_labels`), descriptions included;
//! - **the true minus sign** U+2212 in drawn text ([`drawn`]); machine
//!   outputs (`check`, `check --format json`, `deck.json`'s values) keep the
//!   hyphen-minus and carry the exact number beside the display string.

use crescendo_data::format::{self, DEFAULT_SIGNIFICANT};
use crescendo_data::locale::localize_number;
use crescendo_lang::ast::{FormatSpec, NumberStyle};

/// The minus sign of drawn text (U+2212 MINUS SIGN; common practice of
/// typesetting: a hyphen is shorter and sits lower than a minus).
pub const MINUS: char = '\u{2212}';

/// A drawn string: a leading hyphen-minus of a figure becomes the true
/// minus sign. Only the sign of a number is touched (`-64` → `−64`);
/// anything else is returned as it is.
pub fn drawn(figure: String) -> String {
    match figure.strip_prefix('-') {
        Some(rest) if rest.starts_with(|c: char| c.is_ascii_digit() || c == '.') => {
            format!("{MINUS}{rest}")
        }
        _ => figure,
    }
}

/// A quoted number as its format prints it, in the story's locale, with a
/// hyphen-minus (the machine form; [`drawn`] makes it the drawn one). A
/// locale brings its percent and compact patterns (`52,7\u{a0}%`,
/// `1,2\u{a0}Mio.`; see `crescendo_data::locale::Forms`).
pub fn figure(v: f64, spec: &FormatSpec) -> String {
    let conventions = crescendo_data::locale::current();
    let locale = conventions.locale.as_ref();
    let steps = locale.map_or(format::COMPACT_STEPS, |l| l.compact_steps());
    let (shift, suffix) = match spec.style {
        NumberStyle::Percent => (2, locale.map_or("%", |l| l.percent_suffix())),
        _ => (0, ""),
    };
    let a = v.abs();
    let body = match (spec.style, spec.decimals) {
        (NumberStyle::Compact, None) => format::compact_with(a, steps),
        (NumberStyle::Compact, Some(d)) => format::compact_fixed_with(a, d, steps),
        (_, Some(d)) => format::fixed_ascii(a, shift, d),
        (_, None) => format::significant_ascii(a, shift, DEFAULT_SIGNIFICANT),
    };
    if !v.is_finite() {
        return body;
    }
    let is_zero = format::shown_significant(&body) == 0;
    let body = localize_number(body);
    let sign = if v < 0.0 && !is_zero {
        "-"
    } else if spec.sign && v > 0.0 && !is_zero {
        "+"
    } else {
        ""
    };
    format!("{sign}{body}{suffix}")
}

/// A value for a machine output (`check`, claims, `deck.json`'s display
/// strings): the default figure with a hyphen-minus, in the crescendo
/// convention whatever the locale.
pub fn plain_ascii(v: f64) -> String {
    format::significant_ascii(v, 0, DEFAULT_SIGNIFICANT)
}

/// Two numbers for a claim's message: the fewest significant digits (at
/// least three) that show them apart, so a message never reads "0.82 is
/// not within 0.0005 of 0.82". Equal numbers print the default.
pub fn apart(a: f64, b: f64) -> (String, String) {
    let mut sig = DEFAULT_SIGNIFICANT;
    loop {
        let x = format::significant_ascii(a, 0, sig);
        let y = format::significant_ascii(b, 0, sig);
        if x != y || a == b || sig >= format::MAX_SIGNIFICANT {
            return (x, y);
        }
        sig += 1;
    }
}

/// A claim's tolerance as written: `0.005` stays `0.005` (up to twelve
/// significant digits), a relative one is a percentage (`5%`), the point
/// moved exactly.
pub fn tolerance(amount: f64, relative: bool) -> String {
    if relative {
        format!(
            "{}%",
            format::significant_ascii(amount, 2, format::MAX_SIGNIFICANT)
        )
    } else {
        format::number_ascii(amount, None)
    }
}

/// A data label, a line-end label, a stack total, a split's label or a
/// figure of a description: at least `sig` significant digits (the
/// default is [`DEFAULT_SIGNIFICANT`]), in the locale, drawn.
pub fn label_with(v: f64, sig: usize) -> String {
    drawn(localize_number(format::significant_ascii(v, 0, sig)))
}

/// A label raised to the `sig` significant digits a quoted figure of the
/// same quantity shows, its zeros kept (`{x to 3 decimals}` prints
/// `8.600`, so its bar reads `8.600`, not `8.6`).
pub fn label_raised(v: f64, sig: usize) -> String {
    let decimals = (sig as i64 - format::decimal_point(v)).max(0) as usize;
    drawn(localize_number(format::fixed_ascii(v, 0, decimals)))
}

/// [`label_with`] the default three significant digits.
pub fn label(v: f64) -> String {
    label_with(v, DEFAULT_SIGNIFICANT)
}

/// A share as a percentage label (a pie's slices): three significant
/// digits of the percentage, the point moved exactly.
pub fn share_label(share: f64) -> String {
    let spec = FormatSpec {
        style: NumberStyle::Percent,
        ..FormatSpec::default()
    };
    drawn(figure(share, &spec))
}

/// A table column's cell with `decimals` decimals (the column's figures
/// line up), in the locale, drawn.
pub fn cell(v: f64, decimals: usize) -> String {
    drawn(localize_number(format::fixed_ascii(v, 0, decimals)))
}

/// The decimals a table column needs so that each of its figures shows at
/// least three significant digits (whole digits never dropped) and none
/// prints as 0; at most [`MAX_CELL_DECIMALS`].
pub fn column_decimals(values: impl Iterator<Item = f64>) -> usize {
    values
        .filter(|v| v.is_finite())
        .map(|v| {
            let s = format::significant_ascii(v, 0, DEFAULT_SIGNIFICANT);
            s.split_once('.').map_or(0, |(_, f)| f.len())
        })
        .max()
        .unwrap_or(0)
        .min(MAX_CELL_DECIMALS)
}

/// Most decimals a table column is given by default.
pub const MAX_CELL_DECIMALS: usize = 6;

/// Tick labels of a number axis (the step's decimals), drawn.
pub fn ticks(values: &[f64], step: f64) -> Vec<String> {
    format::tick_labels(values, step)
        .into_iter()
        .map(drawn)
        .collect()
}

/// Significant digits a number figure shows (`"5.40%"` → 3).
pub fn significant_of(figure: &str) -> usize {
    format::shown_significant(figure)
}

/// A number a text of the frame quotes, with its figure as drawn.
#[derive(Clone, Debug)]
pub struct Quoted {
    pub value: f64,
    pub figure: String,
    pub style: NumberStyle,
    pub sign: bool,
}

/// Whether `a` and `b` are the same quantity (equal, or apart by float
/// noise only).
pub fn same_quantity(a: f64, b: f64) -> bool {
    a == b || (a - b).abs() <= 1e-12 * a.abs().max(b.abs())
}

/// The label of `v` when a text of the frame quotes the same quantity:
/// the quoted figure itself when it is a plain number (the same quantity
/// prints the same way); else, when a quoted percentage or compact figure
/// shows more significant digits than the default, `v` with as many
/// (a label never shows fewer). `None`: the default label.
pub fn label_for(v: f64, quoted: &[Quoted]) -> Option<String> {
    let same = || {
        quoted
            .iter()
            .filter(move |q| same_quantity(q.value, v) && significant_of(&q.figure) > 0)
    };
    if let Some(q) = same()
        .filter(|q| q.style == NumberStyle::Plain && !q.sign)
        .max_by_key(|q| significant_of(&q.figure))
    {
        return Some(q.figure.clone());
    }
    let sig = same().map(|q| significant_of(&q.figure)).max()?;
    (sig > DEFAULT_SIGNIFICANT).then(|| label_raised(v, sig))
}

/// Writes the values at line ends (`label ends`), and rewrites the labels
/// of a chart that show a quantity the frame's texts quote (`quoted`), so
/// the two agree ([`label_for`]).
pub fn write_labels(chart: &mut crate::model::Chart, quoted: &[Quoted]) {
    use crate::model::Chart;
    match chart {
        Chart::Line(l) if l.end_labels => end_values(l, quoted),
        Chart::Scatter(s) => {
            if let Some(fit) = &mut s.fit {
                fit.label = fit_label(fit.r, quoted);
            }
        }
        // a scatter's panels each have their own fit (line panels draw no
        // end values)
        Chart::Panels(p) => {
            for panel in &mut p.panels {
                if let Chart::Scatter(_) = panel.chart {
                    write_labels(&mut panel.chart, quoted);
                }
            }
        }
        _ => {}
    }
    if quoted.is_empty() {
        return;
    }
    let relabel = |v: f64, label: &mut String| {
        if let Some(l) = label_for(v, quoted) {
            *label = l;
        }
    };
    match chart {
        Chart::Bars(b) => {
            for bar in &mut b.bars {
                if let Some(v) = bar.value {
                    relabel(v, &mut bar.value_label);
                }
            }
        }
        Chart::Parts(p) => {
            for c in &mut p.categories {
                let parts: Vec<f64> = c.values.iter().flatten().copied().collect();
                if !parts.is_empty() {
                    relabel(crescendo_data::stats::total(parts), &mut c.total_label);
                }
            }
        }
        Chart::Pie(p) => {
            // a share quoted as a percentage prints as quoted
            for slice in &mut p.slices {
                let q = quoted.iter().find(|q| {
                    q.style == NumberStyle::Percent
                        && !q.sign
                        && same_quantity(q.value, slice.share)
                        && significant_of(&q.figure) > 0
                });
                if let Some(q) = q {
                    slice.share_label = q.figure.clone();
                }
            }
        }
        _ => {}
    }
}

/// The fit's label: `fit: r = 0.823`, r as every label (the quoted figure
/// when a text of the frame quotes it).
fn fit_label(r: Option<f64>, quoted: &[Quoted]) -> String {
    match r.filter(|r| r.is_finite()) {
        Some(r) => format!(
            "fit: r = {}",
            label_for(r, quoted).unwrap_or_else(|| label(r))
        ),
        None => "fit".to_string(),
    }
}

/// The values at the first and last point with a value of every series
/// that gets end labels (the focus series; every visible series when none
/// is in focus), written like every other label.
fn end_values(chart: &mut crate::model::LineChart, quoted: &[Quoted]) {
    use crate::model::Role;
    let any_focus = chart.series.iter().any(|s| s.role == Role::Focus);
    for s in &mut chart.series {
        let wanted = match s.role {
            Role::Focus => true,
            Role::Context => !any_focus,
            Role::Hidden => false,
        };
        if wanted {
            s.end_values = end_points(s)
                .into_iter()
                .map(|v| label_for(v, quoted).unwrap_or_else(|| label(v)))
                .collect();
        }
    }
}

/// The values at the first and the last point with a value of a series
/// (one when both are the same point), as `label ends` shows them.
pub fn end_points(s: &crate::model::Series) -> Vec<f64> {
    let finite = || {
        s.points.iter().filter_map(|p| {
            p.y.filter(|y| y.is_finite() && p.x.is_finite())
                .map(|y| (p.x, y))
        })
    };
    let ends = [finite().next(), finite().next_back()];
    let mut values = Vec::new();
    for (k, end) in ends.iter().enumerate() {
        let Some((_, y)) = *end else { continue };
        if k == 1 && ends[0] == ends[1] {
            continue;
        }
        values.push(y);
    }
    values
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{
        Axis, Bar, BarChart, Chart, LineChart, Orientation, Point, Role, ScaleKind, Series,
    };
    use proptest::prelude::*;

    fn spec(sign: bool, decimals: Option<usize>, style: NumberStyle) -> FormatSpec {
        FormatSpec {
            sign,
            decimals,
            style,
        }
    }

    /// What a quoted text draws: the figure with the true minus sign.
    fn headline(v: f64, s: FormatSpec) -> String {
        drawn(figure(v, &s))
    }

    /// Every surface, each expected string worked by hand, the rule beside
    /// it. D = the default (three significant digits, never fewer than the
    /// whole digits, no trailing zeros, a non-zero value never 0); H = half
    /// away from zero on the decimal digits; P = percent moves the point;
    /// C = compact carries to the next suffix; M = the true minus sign.
    #[test]
    fn every_surface_table() {
        use NumberStyle::*;
        // headlines and all quoted texts
        let plain = spec(false, None, Plain);
        let plain1 = spec(false, Some(1), Plain);
        let plain2 = spec(false, Some(2), Plain);
        let pct1 = spec(false, Some(1), Percent);
        let pct0 = spec(false, Some(0), Percent);
        let pct = spec(false, None, Percent);
        let signed_pct0 = spec(true, Some(0), Percent);
        let cpt1 = spec(false, Some(1), Compact);
        let cpt = spec(false, None, Compact);
        let cpt2 = spec(false, Some(2), Compact);
        let texts: &[(f64, FormatSpec, &str, &str)] = &[
            (0.1234, plain, "0.123", "D"),
            (12345.6, plain, "12,346", "D: whole digits kept"),
            (0.001234, plain, "0.00123", "D"),
            (0.004, plain, "0.004", "D: never 0"),
            (1e-7, plain, "0.0000001", "D: never 0"),
            (-0.0001, plain, "\u{2212}0.0001", "D, M"),
            (2.25, plain1, "2.3", "H (2.25 is exact in binary)"),
            (2.675, plain2, "2.68", "H on the decimal 2.675"),
            (5.42, pct1, "542.0%", "P"),
            (0.145, pct0, "15%", "P, H: not 14"),
            (0.285, pct0, "29%", "P, H: not 28"),
            (1.005, pct0, "101%", "P, H: not 100"),
            (1.005, pct, "101%", "D of 100.5, H"),
            (0.1234, pct, "12.3%", "D, P"),
            (-0.031, signed_pct0, "\u{2212}3%", "M"),
            (0.125, signed_pct0, "+13%", "H, P"),
            (-0.001, signed_pct0, "0%", "no -0"),
            (999_950.0, cpt1, "1.0M", "C: not 1,000.0k"),
            (2e12, cpt1, "2.0T", "C: T, not 2,000.0B"),
            (999_950.0, cpt, "1M", "C, D"),
            (4_560_000.0, cpt1, "4.6M", "C"),
            (999.96, cpt1, "1.0k", "C from units"),
            (12_345.0, cpt2, "12.35k", "H"),
        ];
        for (v, s, want, rule) in texts {
            assert_eq!(headline(*v, *s), *want, "text: rule {rule}");
        }
        let cases: &[(&str, String, &str, &str)] = &[
            // data labels (bars), stack totals, split labels
            ("label", label(5.42), "5.42", "D: not the ticks' \"5\""),
            ("label", label(4.78), "4.78", "D"),
            ("label", label(1.5), "1.5", "D: a stack total, not \"2\""),
            ("label", label(2.25), "2.25", "D"),
            ("label", label(2.255), "2.26", "D, H"),
            ("label", label(-64.0), "\u{2212}64", "M"),
            ("label", label(0.0), "0", "zero is 0"),
            ("label", label(0.0004), "0.0004", "D: never 0"),
            ("label", label(1234.5), "1,235", "D, H"),
            (
                "label",
                label_with(5.4200001, 5),
                "5.42",
                "D at five digits: no trailing zeros",
            ),
            (
                "label",
                label_raised(8.6, 4),
                "8.600",
                "raised to a quoted 8.600",
            ),
            (
                "label",
                label_raised(-8.6, 2),
                "\u{2212}8.6",
                "M, as many as asked",
            ),
            // tick labels: the step's decimals (values are tick multiples)
            (
                "ticks",
                ticks(&[-5.0, 0.0, 5.0], 5.0).join(" "),
                "\u{2212}5 0 5",
                "M",
            ),
            (
                "ticks",
                ticks(&[0.0, 0.25, 0.5], 0.25).join(" "),
                "0 0.25 0.5",
                "step",
            ),
            // table cells: one number of decimals per column
            (
                "cell",
                cell(3.0, column_decimals([3.0, 0.125].into_iter())),
                "3.000",
                "D of 0.125",
            ),
            ("cell", cell(-1.5, 1), "\u{2212}1.5", "M"),
            ("cell", cell(0.125, 2), "0.13", "H"),
            // pie shares
            ("share", share_label(1.0 / 3.0), "33.3%", "D, P"),
            ("share", share_label(0.004), "0.4%", "D: never 0%"),
            // machine outputs keep the hyphen-minus
            ("machine", plain_ascii(-0.816521), "-0.817", "D, hyphen"),
        ];
        for (surface, got, want, rule) in cases {
            assert_eq!(got, want, "{surface}: rule {rule}");
        }
    }

    /// Percent and compact forms in four locales, each expected string
    /// from CLDR's patterns: `percentFormats` "standard" and
    /// `decimalFormats` "short" (checked against cldr-json 44.1
    /// `numbers.json` for de and fr, es and en and the kind of each space
    /// from memory of the same data; CLDR 49 as shipped in ICU4X 2.4 for
    /// the digits, groups and decimal separators). Our rounding chooses the
    /// digits (three significant, half away from zero).
    #[test]
    fn percent_and_compact_follow_the_locale() {
        use crescendo_data::locale::{scoped, Conventions};
        use NumberStyle::*;
        let pct = spec(false, None, Percent);
        let cpt = spec(false, None, Compact);
        let cpt1 = spec(false, Some(1), Compact);
        let cases: &[(&str, f64, FormatSpec, &str)] = &[
            ("de-DE", 0.527, pct, "52,7\u{a0}%"),
            ("de-DE", 548_123.0, cpt, "548.000"),
            ("de-DE", 1_040_000.0, cpt, "1,04\u{a0}Mio."),
            ("de-DE", 2.5e9, cpt, "2,5\u{a0}Mrd."),
            ("de-DE", 3e12, cpt, "3\u{a0}Bio."),
            ("de-DE", 999_950.0, cpt1, "999.950,0"),
            ("de-DE", 999_999.96, cpt1, "1,0\u{a0}Mio."),
            ("fr-FR", 0.527, pct, "52,7\u{202f}%"),
            ("fr-FR", 548_123.0, cpt, "548\u{a0}k"),
            ("fr-FR", 2.5e9, cpt, "2,5\u{a0}Md"),
            ("fr-FR", 3e12, cpt, "3\u{a0}Bn"),
            ("es-ES", 0.527, pct, "52,7\u{a0}%"),
            ("es-ES", 548_123.0, cpt, "548\u{a0}mil"),
            ("es-ES", 1_040_000.0, cpt, "1,04\u{a0}M"),
            ("es-ES", 2.5e9, cpt, "2500\u{a0}M"),
            ("es-ES", 25e9, cpt, "25\u{a0}mil\u{a0}M"),
            ("es-ES", 3e12, cpt, "3\u{a0}B"),
            ("es-ES", 999_950.0, cpt1, "1,0\u{a0}M"),
            ("en-US", 0.527, pct, "52.7%"),
            ("en-US", 548_123.0, cpt, "548K"),
            ("en-US", 1_040_000.0, cpt, "1.04M"),
        ];
        for (tag, v, s, want) in cases {
            let c = Conventions::of(Some(tag), None);
            let got = scoped(c, || figure(*v, s));
            assert_eq!(&got, want, "{tag} {v} {s:?}");
        }
        // without a locale: the crescendo forms
        assert_eq!(figure(0.527, &pct), "52.7%");
        assert_eq!(figure(548_123.0, &cpt), "548k");
    }

    #[test]
    fn fit_labels_show_three_significant_digits_or_the_quoted_figure() {
        // the number policy: three significant digits, half away from zero
        assert_eq!(fit_label(Some(0.8234), &[]), "fit: r = 0.823");
        assert_eq!(fit_label(Some(0.8), &[]), "fit: r = 0.8");
        // the true minus sign in drawn text
        assert_eq!(fit_label(Some(-0.4565), &[]), "fit: r = \u{2212}0.457");
        assert_eq!(fit_label(Some(1.0), &[]), "fit: r = 1");
        assert_eq!(fit_label(None, &[]), "fit");
        // quoted "r = 0.99" in the takeaway: the fit reads the same
        let q = Quoted {
            value: 0.9935,
            figure: "0.99".into(),
            style: NumberStyle::Plain,
            sign: false,
        };
        assert_eq!(fit_label(Some(0.9935), &[q]), "fit: r = 0.99");
    }

    fn axis() -> Axis {
        Axis {
            title: None,
            scale: ScaleKind::Linear,
            domain: [0.0, 10.0],
            ticks: Vec::new(),
            grid: false,
        }
    }

    #[test]
    fn line_ends_use_the_policy_and_rise_to_the_quoted_digits() {
        // 5.8 and 9.6 were drawn "6" and "10" beside a callout "9.6%".
        let series = Series {
            name: "a".into(),
            label: "a".into(),
            role: Role::Focus,
            points: vec![
                Point {
                    x: 0.0,
                    y: Some(5.8),
                },
                Point { x: 1.0, y: None },
                Point {
                    x: 2.0,
                    y: Some(9.6123),
                },
            ],
            end_values: Vec::new(),
        };
        let mut chart = Chart::Line(LineChart {
            x: axis(),
            y: axis(),
            series: vec![series],
            annotations: Vec::new(),
            end_labels: true,
        });
        let quoted = |figure: &str, style| Quoted {
            value: 9.6123,
            figure: figure.to_string(),
            style,
            sign: false,
        };
        let ends = |chart: &Chart| match chart {
            Chart::Line(l) => l.series[0].end_values.clone(),
            _ => Vec::new(),
        };
        // 5.8: the default; 9.6123 quoted as "9.6": printed the same way
        write_labels(&mut chart, &[quoted("9.6", NumberStyle::Plain)]);
        assert_eq!(ends(&chart), ["5.8", "9.6"]);
        // quoted as a percentage with five digits: the label shows five
        write_labels(&mut chart, &[quoted("961.23%", NumberStyle::Percent)]);
        assert_eq!(ends(&chart), ["5.8", "9.6123"]);
        // quoted compact with fewer digits: the default stays
        write_labels(&mut chart, &[quoted("9.6", NumberStyle::Compact)]);
        assert_eq!(ends(&chart), ["5.8", "9.61"]);
    }

    fn bars(values: &[f64]) -> Chart {
        Chart::Bars(BarChart {
            orientation: Orientation::Vertical,
            category_title: None,
            value: axis(),
            bars: values
                .iter()
                .map(|&v| Bar {
                    label: String::new(),
                    value: Some(v),
                    value_label: label(v),
                    role: Role::Context,
                })
                .collect(),
        })
    }

    /// The number of a drawn figure (minus, groups and suffix read back).
    fn read(s: &str) -> f64 {
        s.replace(MINUS, "-")
            .replace([',', '%', '\u{a0}', '\u{202f}'], "")
            .parse()
            .unwrap_or(f64::NAN)
    }

    fn decimals_of(s: &str) -> i32 {
        s.split_once('.').map_or(0, |(_, f)| {
            f.chars().filter(char::is_ascii_digit).count() as i32
        })
    }

    proptest! {
        /// For random values and frames (bars quoting one of their values
        /// in the headline with random decimals, or as a percentage), the
        /// label of the quoted bar agrees with the headline: the same
        /// string for a plain figure; for a percentage, no fewer
        /// significant digits, and the two differ by no more than their
        /// rounding (half a unit of the last place of each).
        #[test]
        fn label_and_headline_agree(
            raw in proptest::collection::vec(-1e7f64..1e7, 1..6),
            pick in 0usize..6,
            places in 0usize..6,
            digits in 0u32..6,
            percent in proptest::bool::ANY,
        ) {
            // values as typed, with `digits` decimals
            let scale = 10f64.powi(digits as i32);
            let values: Vec<f64> = raw.iter().map(|v| (v * scale).round() / scale).collect();
            let v = values[pick % values.len()];
            let style = if percent { NumberStyle::Percent } else { NumberStyle::Plain };
            let fig = headline(v, spec(false, Some(places), style));
            let mut chart = bars(&values);
            let q = Quoted { value: v, figure: fig.clone(), style, sign: false };
            write_labels(&mut chart, &[q]);
            let Chart::Bars(b) = &chart else { unreachable!() };
            let lab = &b.bars[pick % values.len()].value_label;
            if significant_of(&fig) == 0 {
                // "0.00": nothing to agree with; the label is the default
                prop_assert_eq!(lab, &label(v));
            } else if !percent {
                prop_assert_eq!(lab, &fig);
            } else {
                prop_assert!(significant_of(lab) >= significant_of(&fig), "{lab} vs {fig}");
                let half = |s: &str| 0.5 * 10f64.powi(-decimals_of(s));
                let (l, f) = (read(lab), read(&fig) / 100.0);
                let gap = (l - f).abs();
                let allowed = half(lab) + half(&fig) / 100.0;
                prop_assert!(gap <= allowed * (1.0 + 1e-9) + 1e-12 * l.abs(), "{lab} vs {fig}");
            }
        }
    }
}
