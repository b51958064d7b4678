//! `figure-echoes-headline`: a big figure that only repeats a number the
//! headline already states.

use crescendo_diag::Severity;
use crescendo_frame::Chart;

use super::util::frames;
use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("figure-echoes-headline", Severity::Warning, check);

/// Whether `headline` holds `figure` as a whole number (not inside a
/// longer one: "12%" does not echo "2%").
pub(super) fn echoes(headline: &str, figure: &str) -> bool {
    let figure = figure.trim();
    if figure.is_empty() || !figure.chars().any(|c| c.is_ascii_digit()) {
        return false;
    }
    headline.match_indices(figure).any(|(at, _)| {
        let before = headline[..at].chars().next_back();
        let mut rest = headline[at + figure.len()..].chars();
        let (next, then) = (rest.next(), rest.next());
        let digit = |c: Option<char>| c.is_some_and(|c| c.is_ascii_digit());
        let mark = |c: Option<char>| c.is_some_and(|c| c == '.' || c == ',');
        let joined_before = digit(before) || mark(before);
        let joined_after = digit(next) || (mark(next) && digit(then));
        !joined_before && !joined_after
    })
}

fn check(input: &Input, out: &mut Vec<Finding>) {
    for (i, f, a) in frames(input) {
        let Chart::Figures(figures) = &f.chart else {
            continue;
        };
        for fig in &figures.figures {
            if echoes(&f.headline, &fig.text) {
                out.push(Finding {
                    frame: Some(i),
                    span: a.headline.clone(),
                    label: format!("the headline already prints {}", fig.text),
                    message: format!("the big figure \"{}\" repeats the headline", fig.text),
                    fix: "let the headline say what the number means, and the figure show it"
                        .into(),
                });
            }
        }
    }
}
