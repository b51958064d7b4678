//! `ticks-crowded`: tick labels too many or too long for their axis.

use crescendo_diag::Severity;
use crescendo_frame::Chart;
use crescendo_look::Part;

use super::util::frames;
use crate::{Doc, Finding, Input, Rule};

pub static RULE: Rule = Rule {
    name: "ticks-crowded",
    severity: Severity::Warning,
    summary: "an axis has more tick labels than fit side by side",
    doc: Doc {
        before: "line t: x team, y tickets   # six long team names along x",
        after: "bars t: category team, value tickets   # each name on a line of its own",
        why: "When an x axis's labels, laid side by side, are wider than the plot, some would\n\
              overlap and are dropped (crescendo never rotates them). Overlapping or rotated\n\
              labels are slow to read and easy to misread; silently dropped labels hide\n\
              categories. Few ticks at nice values read best (common practice; Talbot, Lin &\n\
              Hanrahan 2010 weigh legibility and density). Use horizontal bars for many named\n\
              categories, fewer categories (`top N`), or shorter names.",
    },
    check,
};

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
