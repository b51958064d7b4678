//! Which way bars run: the one rule for plain, stacked and grouped bars
//! (and for the lint, which reads the planner's choice from the anchors).

use crate::model::Orientation;

/// Long names, or many of them, read better down the side than squeezed
/// under narrow bars (common practice); time keeps running left to right.
pub(crate) fn by_rule(labels: &[String], time_like: bool) -> Orientation {
    let longest = labels.iter().map(|l| l.chars().count()).max().unwrap_or(0);
    if !time_like && (longest * labels.len() > 110 || longest > 24 || labels.len() > 12) {
        Orientation::Horizontal
    } else {
        Orientation::Vertical
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn names(n: usize, len: usize) -> Vec<String> {
        (0..n).map(|i| format!("{i:0>len$}")).collect()
    }

    #[test]
    fn long_or_many_names_turn_bars_horizontal() {
        assert_eq!(by_rule(&names(5, 10), false), Orientation::Vertical);
        // 11 × 11 = 121 characters in all
        assert_eq!(by_rule(&names(11, 11), false), Orientation::Horizontal);
        assert_eq!(by_rule(&names(2, 25), false), Orientation::Horizontal);
        assert_eq!(by_rule(&names(13, 2), false), Orientation::Horizontal);
        assert_eq!(by_rule(&names(12, 2), false), Orientation::Vertical);
        // time runs left to right whatever its labels
        assert_eq!(by_rule(&names(40, 30), true), Orientation::Vertical);
    }
}
