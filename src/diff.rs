//! Deck diff: which frames changed between two builds, and which quoted
//! numbers moved ("frame 4: multiple 2.3 → 1.9"). Like other diff tools it
//! exits with status 0 when nothing changed, 1 when something did, and 2
//! when a deck cannot be read.

use std::path::Path;
use std::process::ExitCode;

use crescendo_diag::Diagnostic;
use serde_json::Value;

use crate::deck::MANIFEST;
/// Exit status of `diff` when a deck cannot be read (1 means "changed").
const EXIT_TROUBLE: u8 = 2;

/// `crescendo diff OLD NEW`: print what changed between two decks and the
/// claims that fail in the newer one.
pub fn run(old: &Path, new: &Path, color: bool) -> ExitCode {
    let (old, new) = match (read_manifest(old), read_manifest(new)) {
        (Ok(o), Ok(n)) => (o, n),
        (Err(d), _) | (_, Err(d)) => {
            crate::output::diagnostics(&[d], color);
            return ExitCode::from(EXIT_TROUBLE);
        }
    };
    for l in diff(&old, &new) {
        say!("{l}");
    }
    for l in failed_claims(&new) {
        say!("{l}");
    }
    if changed(&old, &new) {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    }
}

/// Whether any frame of `new` differs from `old`'s, or came or went.
pub fn changed(old: &Value, new: &Value) -> bool {
    let (o, n) = (frames(old), frames(new));
    let same = |a: &Value, b: &Value| {
        [
            "number", "headline", "takeaway", "notes", "quoted", "sha256",
        ]
        .iter()
        .all(|k| a[k] == b[k])
    };
    o.len() != n.len() || o.iter().zip(&n).any(|(a, b)| !same(a, b))
}

/// A line for each claim that does not hold in the deck `m`.
pub fn failed_claims(m: &Value) -> Vec<String> {
    m["claims"]
        .as_array()
        .map(|cs| {
            cs.iter()
                .filter(|c| c["holds"] == Value::Bool(false))
                .map(|c| {
                    format!(
                        "claim fails: \"{}\" ({})",
                        text(&c["sentence"]),
                        text(&c["condition"])
                    )
                })
                .collect()
        })
        .unwrap_or_default()
}

/// Read a deck's manifest.
pub fn read_manifest(deck: &Path) -> Result<Value, Diagnostic> {
    let path = deck.join(MANIFEST);
    let text = std::fs::read_to_string(&path).map_err(|e| {
        Diagnostic::error("deck", format!("cannot read `{}`: {e}", path.display()))
            .help("give the folder of a deck built by `crescendo build`")
    })?;
    serde_json::from_str(&text).map_err(|e| {
        Diagnostic::error(
            "deck",
            format!("`{}` is not a deck manifest: {e}", path.display()),
        )
    })
}

fn frames(m: &Value) -> Vec<&Value> {
    m["frames"]
        .as_array()
        .map(|a| a.iter().collect())
        .unwrap_or_default()
}

fn text(v: &Value) -> String {
    v.as_str().unwrap_or("").to_string()
}

/// Lines describing how `new` differs from `old`, frame by frame.
pub fn diff(old: &Value, new: &Value) -> Vec<String> {
    let (old_frames, new_frames) = (frames(old), frames(new));
    let mut lines = Vec::new();
    let mut unchanged = Vec::new();
    for nf in &new_frames {
        let number = nf["number"].as_u64().unwrap_or(0);
        let headline = text(&nf["headline"]);
        let Some(of) = old_frames.iter().find(|f| f["number"] == nf["number"]) else {
            lines.push(format!("frame {number} \"{headline}\": new"));
            continue;
        };
        let mut details = Vec::new();
        if let Some(quoted) = nf["quoted"].as_object() {
            for (name, figure) in quoted {
                match of["quoted"].get(name) {
                    Some(old_fig) if old_fig == figure => {}
                    Some(old_fig) => {
                        details.push(format!("{name} {} → {}", text(old_fig), text(figure)))
                    }
                    None => details.push(format!("{name} now quoted: {}", text(figure))),
                }
            }
        }
        if let Some(old_quoted) = of["quoted"].as_object() {
            for name in old_quoted.keys() {
                if nf["quoted"].get(name).is_none() {
                    details.push(format!("{name} no longer quoted"));
                }
            }
        }
        for field in ["headline", "takeaway", "notes"] {
            if of[field] != nf[field] && details.is_empty() {
                details.push(format!("{field} changed"));
            }
        }
        if of["sha256"] == nf["sha256"] && of["notes"] == nf["notes"] && details.is_empty() {
            unchanged.push(number.to_string());
            continue;
        }
        if details.is_empty() {
            details.push("the chart changed".to_string());
        }
        lines.push(format!(
            "frame {number} \"{headline}\": {}",
            details.join(", ")
        ));
    }
    for of in &old_frames {
        if !new_frames.iter().any(|f| f["number"] == of["number"]) {
            lines.push(format!(
                "frame {} \"{}\": removed",
                of["number"].as_u64().unwrap_or(0),
                text(&of["headline"])
            ));
        }
    }
    match unchanged.len() {
        0 => {}
        1 => lines.push(format!("frame {} unchanged", unchanged[0])),
        _ => lines.push(format!("frames {} unchanged", unchanged.join(", "))),
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn names_moved_numbers_and_unchanged_frames() {
        let old = json!({"frames": [
            {"number": 1, "headline": "A", "sha256": "x", "quoted": {}},
            {"number": 2, "headline": "Now 2.3× as many", "sha256": "y", "quoted": {"multiple": "2.3"}},
            {"number": 3, "headline": "C", "sha256": "z", "quoted": {}},
        ]});
        let new = json!({"frames": [
            {"number": 1, "headline": "A", "sha256": "x", "quoted": {}},
            {"number": 2, "headline": "Now 1.9× as many", "sha256": "w", "quoted": {"multiple": "1.9"}},
            {"number": 3, "headline": "C", "sha256": "q", "quoted": {}},
            {"number": 4, "headline": "D", "sha256": "r", "quoted": {}},
        ]});
        assert_eq!(
            diff(&old, &new),
            vec![
                "frame 2 \"Now 1.9× as many\": multiple 2.3 → 1.9".to_string(),
                "frame 3 \"C\": the chart changed".to_string(),
                "frame 4 \"D\": new".to_string(),
                "frame 1 unchanged".to_string(),
            ]
        );
        assert_eq!(diff(&new, &old).last().unwrap(), "frame 1 unchanged");
        assert!(diff(&new, &old).contains(&"frame 4 \"D\": removed".to_string()));
        assert!(changed(&old, &new) && changed(&new, &old));
        assert!(!changed(&old, &old));
        let mut moved = old.clone();
        moved["frames"][1]["quoted"]["multiple"] = json!("2.4");
        assert!(changed(&old, &moved));
    }

    #[test]
    fn lists_the_claims_that_fail() {
        let m = json!({"claims": [
            {"sentence": "Most trips are short", "condition": "short > 0.5", "holds": true},
            {"sentence": "Visits doubled", "condition": "growth >= 2", "holds": false},
        ]});
        assert_eq!(
            failed_claims(&m),
            vec!["claim fails: \"Visits doubled\" (growth >= 2)".to_string()]
        );
        assert!(failed_claims(&json!({})).is_empty());
    }
}
