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
mod tests;
