//! The strings a frame draws that the planner writes after the frames are
//! planned: the values at the ends of lines (`label ends`) and the fit's
//! label. Everything the renderer draws is in the plan, already written in
//! the story's locale; the renderer formats nothing.

use crescendo_lang::ast::FormatSpec;

use crate::model::{Axis, Chart, DeckPlan, Fit, LineChart, Role};

/// Fills in the drawn strings of every frame. Must run inside the story's
/// locale scope (`crescendo_data::locale::scoped`).
pub(crate) fn write_drawn_strings(mut plan: DeckPlan) -> DeckPlan {
    for frame in &mut plan.frames {
        drawn_strings(&mut frame.chart);
    }
    plan
}

fn drawn_strings(chart: &mut Chart) {
    match chart {
        Chart::Line(chart) if chart.end_labels => end_values(chart),
        Chart::Scatter(chart) => {
            if let Some(fit) = &mut chart.fit {
                fit.label = fit_label(fit);
            }
        }
        // A scatter's panels each have their own fit (line panels draw no
        // end values, so they are left as they are).
        Chart::Panels(p) => {
            for panel in &mut p.panels {
                if let Chart::Scatter(_) = panel.chart {
                    drawn_strings(&mut panel.chart);
                }
            }
        }
        _ => {}
    }
}

/// The values at the first and last point with a value of every series
/// that gets end labels (the focus series; every visible series when none
/// is in focus), formatted like the y ticks.
fn end_values(chart: &mut LineChart) {
    let any_focus = chart.series.iter().any(|s| s.role == Role::Focus);
    let (decimals, commas) = tick_style(&chart.y);
    for s in &mut chart.series {
        let wanted = match s.role {
            Role::Focus => true,
            Role::Context => !any_focus,
            Role::Hidden => false,
        };
        if !wanted {
            continue;
        }
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
            values.push(number(y, decimals, commas));
        }
        s.end_values = values;
    }
}

/// The fit's label: `fit: r = 0.82`, r written as a story's text writes
/// `{r to 2 decimals}` (the same figure, digits and signs as a headline
/// that quotes the correlation).
fn fit_label(fit: &Fit) -> String {
    let spec = FormatSpec {
        decimals: Some(2),
        ..FormatSpec::default()
    };
    match fit.r.filter(|r| r.is_finite()) {
        Some(r) => format!(
            "fit: r = {}",
            crate::values::format_quantity(&crate::values::Quantity::Number(r), &spec)
        ),
        None => "fit".to_string(),
    }
}

/// Digits after the decimal point in the axis' tick labels (the most of
/// any tick), and whether they group thousands with commas.
fn tick_style(axis: &Axis) -> (usize, bool) {
    // With a story locale the labels use its symbols; read the style from
    // the same labels written the crescendo way.
    let ascii: Vec<String> = if crescendo_data::locale::current().locale.is_some() {
        let values: Vec<f64> = axis.ticks.iter().map(|t| t.value).collect();
        let step = match values.as_slice() {
            [a, b, ..] => b - a,
            _ => 0.0,
        };
        crescendo_data::format::tick_labels_ascii(&values, step)
    } else {
        axis.ticks.iter().map(|t| t.label.clone()).collect()
    };
    let decimals = ascii
        .iter()
        .map(|label| {
            label
                .split_once('.')
                .map(|(_, f)| f.chars().take_while(char::is_ascii_digit).count())
                .unwrap_or(0)
        })
        .max()
        .unwrap_or(0);
    let commas = ascii.iter().any(|label| label.contains(','));
    (decimals, commas)
}

/// `v` with `decimals` digits, trailing zeros (and a bare point) removed,
/// thousands grouped when `commas`, in the story's locale.
fn number(v: f64, decimals: usize, commas: bool) -> String {
    crescendo_data::locale::localize_number(number_ascii(v, decimals, commas))
}

/// [`number`] in the crescendo convention whatever the story's locale.
fn number_ascii(v: f64, decimals: usize, commas: bool) -> String {
    if !v.is_finite() {
        return String::new();
    }
    let mut s = format!("{:.*}", decimals, v.abs());
    if s.contains('.') {
        s = s.trim_end_matches('0').trim_end_matches('.').to_string();
    }
    let (int, frac) = match s.split_once('.') {
        Some((i, f)) => (i.to_string(), format!(".{f}")),
        None => (s.clone(), String::new()),
    };
    let int = if commas && int.len() > 3 {
        let digits: Vec<char> = int.chars().collect();
        let mut out = String::new();
        for (i, c) in digits.iter().enumerate() {
            if i > 0 && (digits.len() - i).is_multiple_of(3) {
                out.push(',');
            }
            out.push(*c);
        }
        out
    } else {
        int
    };
    let body = format!("{int}{frac}");
    let zero = body.chars().all(|c| c == '0' || c == '.' || c == ',');
    if v < 0.0 && !zero {
        format!("-{body}")
    } else {
        body
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_trim_and_group() {
        assert_eq!(number(34.0, 0, false), "34");
        assert_eq!(number(0.8200, 2, false), "0.82");
        assert_eq!(number(0.80, 2, false), "0.8");
        assert_eq!(number(1.0, 2, false), "1");
        assert_eq!(number(-0.004, 2, false), "0");
        assert_eq!(number(-12.5, 1, false), "-12.5");
        assert_eq!(number(1234567.0, 0, true), "1,234,567");
        assert_eq!(number(f64::NAN, 0, true), "");
    }

    #[test]
    /// r as a story's text writes `{r to 2 decimals}`: trailing zeros kept,
    /// so the label and a takeaway that quotes r print the same figure.
    fn fit_labels_round_r_to_two_decimals() {
        let fit = |r| Fit {
            slope: 1.0,
            intercept: 0.0,
            r,
            label: String::new(),
        };
        assert_eq!(fit_label(&fit(Some(0.8234))), "fit: r = 0.82");
        assert_eq!(fit_label(&fit(Some(0.8))), "fit: r = 0.80");
        assert_eq!(fit_label(&fit(Some(-0.456))), "fit: r = -0.46");
        assert_eq!(fit_label(&fit(Some(1.0))), "fit: r = 1.00");
        assert_eq!(fit_label(&fit(None)), "fit");
    }
}
