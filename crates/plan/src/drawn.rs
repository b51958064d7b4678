//! The strings a frame draws that the planner writes after the frames are
//! planned: the fit's label. (The values at line ends are written with the
//! frame's other labels, `numbers::write_labels`.) Everything the renderer
//! draws is in the plan, already written in the story's locale; the
//! renderer formats nothing.

use crate::model::{Chart, DeckPlan, Fit};

/// Fills in the drawn strings of every frame. Must run inside the story's
/// locale scope (`crescendo_data::locale::scoped`).
pub(crate) fn write_drawn_strings(mut plan: DeckPlan) -> DeckPlan {
    for frame in &mut plan.frames {
        if let Chart::Scatter(chart) = &mut frame.chart {
            if let Some(fit) = &mut chart.fit {
                fit.label = fit_label(fit);
            }
        }
    }
    plan
}

/// The fit's label: `fit: r = 0.823` (r as every label: three significant
/// digits, the true minus sign).
fn fit_label(fit: &Fit) -> String {
    match fit.r.filter(|r| r.is_finite()) {
        Some(r) => format!("fit: r = {}", crate::numbers::label(r)),
        None => "fit".to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fit_labels_show_three_significant_digits() {
        let fit = |r| Fit {
            slope: 1.0,
            intercept: 0.0,
            r,
            label: String::new(),
        };
        // the number policy: three significant digits, half away from zero
        assert_eq!(fit_label(&fit(Some(0.8234))), "fit: r = 0.823");
        assert_eq!(fit_label(&fit(Some(0.8))), "fit: r = 0.8");
        // the true minus sign in drawn text
        assert_eq!(fit_label(&fit(Some(-0.4565))), "fit: r = \u{2212}0.457");
        assert_eq!(fit_label(&fit(Some(1.0))), "fit: r = 1");
        assert_eq!(fit_label(&fit(None)), "fit");
    }
}
