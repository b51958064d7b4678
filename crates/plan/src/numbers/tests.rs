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
