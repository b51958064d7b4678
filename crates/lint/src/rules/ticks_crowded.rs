//! `ticks-crowded`: tick labels too many or too long for their axis.

use crescendo_diag::Severity;
use crescendo_frame::Chart;
use crescendo_look::Part;

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("ticks-crowded", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    // The room a plot has at most: the text column less a tick-label column.
    let room = input.theme.text_column() * 0.8;
    let gap = input.theme.label_size;
    for (i, f, a) in frames(input) {
        let Chart::Line(_) = &f.chart else { continue };
        // The x tick labels the layout was asked to place, measured.
        let Some(list) = input.displays.get(i) else {
            continue;
        };
        let ticks = list.groups(|p| matches!(p, Part::XTicks { .. }));
        let Some((Part::XTicks { wanted }, _)) = ticks.first() else {
            continue;
        };
        let width: f64 = wanted.iter().map(|w| w + gap).sum();
        if width > room {
            out.push(Finding {
                frame: Some(i),
                span: a.chart.clone(),
                label: format!("{} labels along x", wanted.len()),
                message: format!(
                    "{} x labels need about {:.0}px side by side, more than the plot's {:.0}px",
                    wanted.len(),
                    width,
                    room
                ),
                fix: "use horizontal bars for many categories, or show fewer of them".into(),
            });
        }
    }
}
