//! `footnote claims`: the claims a frame's texts rest on, one line each,
//! with the figures of their operands and whether they hold, for decks
//! that are reviewed before they are shown.

use std::collections::BTreeSet;

use crate::model::ClaimPlan;

/// One line per claim that rests on a value the frame's texts use
/// (`depends`, transitive), in story order: "Holds: “SENTENCE” — a > b:
/// 0.374 > 0.3", or "Fails: …".
pub(crate) fn lines(claims: &[ClaimPlan], depends: &BTreeSet<String>) -> Vec<String> {
    claims
        .iter()
        .filter(|c| c.rests_on.iter().any(|n| depends.contains(n)))
        .map(|c| {
            let verdict = if c.holds { "Holds" } else { "Fails" };
            let detail: Vec<&str> = (c.detail.iter())
                .map(|d| {
                    d.strip_suffix(" is true")
                        .or_else(|| d.strip_suffix(" is false"))
                        .unwrap_or(d)
                })
                .collect();
            let detail = if detail.is_empty() {
                c.condition.clone()
            } else {
                detail.join("; ")
            };
            let detail = drawn_minus(&detail);
            format!(
                "{verdict}: \u{201c}{}\u{201d} \u{2014} {detail}",
                c.sentence
            )
        })
        .collect()
}

/// The figures' signs as drawn text writes them: a hyphen before a digit,
/// at the start or after a space, becomes the true minus sign.
fn drawn_minus(s: &str) -> String {
    let chars: Vec<char> = s.chars().collect();
    (chars.iter().enumerate())
        .map(|(i, &c)| {
            let starts = i == 0 || chars[i - 1] == ' ';
            let digit = chars
                .get(i + 1)
                .is_some_and(|n| n.is_ascii_digit() || *n == '.');
            if c == '-' && starts && digit {
                crate::numbers::MINUS
            } else {
                c
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn claim(sentence: &str, holds: bool, on: &[&str], detail: &[&str]) -> ClaimPlan {
        ClaimPlan {
            sentence: sentence.into(),
            condition: "a > b".into(),
            holds,
            detail: detail.iter().map(|d| d.to_string()).collect(),
            margin: None,
            rests_on: on.iter().map(|n| n.to_string()).collect(),
        }
    }

    #[test]
    fn only_the_claims_the_frame_rests_on_with_their_figures() {
        let claims = [
            claim(
                "A leads",
                true,
                &["lead", "a"],
                &["lead > 1.5: 1.62 > 1.5 is true"],
            ),
            claim(
                "B grew",
                false,
                &["growth"],
                &["growth > 0: -0.1 > 0 is false"],
            ),
            claim("C", true, &["other"], &[]),
        ];
        let depends: BTreeSet<String> = ["a", "growth"].map(String::from).into();
        assert_eq!(
            lines(&claims, &depends),
            vec![
                "Holds: \u{201c}A leads\u{201d} \u{2014} lead > 1.5: 1.62 > 1.5",
                "Fails: \u{201c}B grew\u{201d} \u{2014} growth > 0: \u{2212}0.1 > 0",
            ]
        );
        assert!(lines(&claims, &BTreeSet::new()).is_empty());
    }
}
