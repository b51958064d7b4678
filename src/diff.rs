//! Deck diff: which frames changed between two builds and how (quoted
//! figures, texts, and through `crate::content` chart data, roles,
//! annotations and titles), and every named value that moved ("frame 4:
//! multiple 2.3 → 1.9", "value total 60 → 66 (quoted nowhere)"). Like other diff tools it
//! exits with status 0 when nothing changed, 1 when something did, and 2
//! when a deck cannot be read.

use std::path::Path;
use std::process::ExitCode;

use crescendo_diag::Diagnostic;
use serde_json::Value;

use crate::content::{compare, Content};
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

/// Whether any frame of `new` differs from `old`'s, or came or went, or a
/// named value moved.
pub fn changed(old: &Value, new: &Value) -> bool {
    let (o, n) = (frames(old), frames(new));
    let same = |a: &Value, b: &Value| {
        [
            "number", "headline", "takeaway", "notes", "quoted", "sha256", "content",
        ]
        .iter()
        .all(|k| a[k] == b[k])
    };
    o.len() != n.len()
        || o.iter().zip(&n).any(|(a, b)| !same(a, b))
        || old["values"] != new["values"]
        || old["exact"] != new["exact"]
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

/// A frame's chart content, when its deck was built with one (decks
/// built before `content` was written have none).
fn content(f: &Value) -> Option<Content> {
    serde_json::from_value(f.get("content")?.clone()).ok()
}

/// `“old” → “new”`, `(none)` for a text that is not there.
fn texts(old: &Value, new: &Value) -> String {
    let show = |v: &Value| match v.as_str() {
        Some(t) => format!("“{t}”"),
        None => "(none)".to_string(),
    };
    format!("{} → {}", show(old), show(new))
}

/// What changed in one frame, as the line naming the frame says it (the
/// quoted figures that moved) and one indented line per other change.
fn frame_changes(of: &Value, nf: &Value) -> (Vec<String>, Vec<String>) {
    let mut figures = Vec::new();
    if let Some(quoted) = nf["quoted"].as_object() {
        for (name, figure) in quoted {
            match of["quoted"].get(name) {
                Some(old_fig) if old_fig == figure => {}
                Some(old_fig) => {
                    figures.push(format!("{name} {} → {}", text(old_fig), text(figure)))
                }
                None => figures.push(format!("{name} now quoted: {}", text(figure))),
            }
        }
    }
    if let Some(old_quoted) = of["quoted"].as_object() {
        for name in old_quoted.keys() {
            if nf["quoted"].get(name).is_none() {
                figures.push(format!("{name} no longer quoted"));
            }
        }
    }
    let mut details = Vec::new();
    for field in ["headline", "takeaway", "notes"] {
        // a text whose words stayed and only its quoted figures moved
        // says no more than the figures do
        let template = |f: &Value| f["templates"].get(field).cloned();
        let only_figures =
            !figures.is_empty() && template(of).is_some() && template(of) == template(nf);
        if of[field] != nf[field] && !only_figures {
            details.push(format!("  {field}: {}", texts(&of[field], &nf[field])));
        }
    }
    let chart = match (content(of), content(nf)) {
        (Some(o), Some(n)) => compare(&o, &n),
        _ => Vec::new(),
    };
    details.extend(chart.iter().map(|c| format!("  {}", c.summary())));
    if of["sha256"] != nf["sha256"] && chart.is_empty() && details.is_empty() && figures.is_empty()
    {
        details.push("  the chart changed".to_string());
    }
    (figures, details)
}

/// Lines describing how `new` differs from `old`: frame by frame every
/// kind of change (texts, quoted figures, chart data, roles, annotations,
/// titles), then every named value that moved, quoted or not.
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
        let (figures, details) = frame_changes(of, nf);
        if figures.is_empty() && details.is_empty() {
            unchanged.push(number.to_string());
            continue;
        }
        let head = match figures.is_empty() {
            true => "changed".to_string(),
            false => figures.join(", "),
        };
        lines.push(format!("frame {number} \"{headline}\": {head}"));
        lines.extend(details);
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
    lines.extend(values(old, new));
    lines
}

/// Named values whose figure moved, came or went, each with the frames
/// that quote it (or "quoted nowhere").
pub fn values(old: &Value, new: &Value) -> Vec<String> {
    let empty = serde_json::Map::new();
    let (o, n) = (
        old["values"].as_object().unwrap_or(&empty),
        new["values"].as_object().unwrap_or(&empty),
    );
    let mut names: Vec<&String> = o.keys().chain(n.keys()).collect();
    names.sort();
    names.dedup();
    let quoting = |name: &str| {
        let at: Vec<String> = frames(new)
            .iter()
            .chain(frames(old).iter())
            .filter(|f| f["quoted"].get(name).is_some())
            .filter_map(|f| f["number"].as_u64())
            .collect::<std::collections::BTreeSet<_>>()
            .into_iter()
            .map(|n| n.to_string())
            .collect();
        match at.len() {
            0 => "quoted nowhere".to_string(),
            1 => format!("quoted in frame {}", at[0]),
            _ => format!("quoted in frames {}", at.join(", ")),
        }
    };
    // the exact number beside each figure: a value may move by less than
    // its figure shows
    let exact = |m: &Value, k: &str| m["exact"].get(k).and_then(Value::as_f64);
    names
        .into_iter()
        .filter(|k| o.get(*k) != n.get(*k) || exact(old, k) != exact(new, k))
        .map(|k| {
            let show = |v: Option<&Value>| v.map_or("—".to_string(), text);
            let (a, b) = (show(o.get(k)), show(n.get(k)));
            match (exact(old, k), exact(new, k)) {
                (Some(x), Some(y)) if a == b => format!(
                    "value {k} {a} (exact {x} → {y}, the same when rounded; {})",
                    quoting(k)
                ),
                _ => format!("value {k} {a} → {b} ({})", quoting(k)),
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn names_moved_numbers_and_unchanged_frames() {
        let old = json!({"frames": [
            {"number": 1, "headline": "A", "sha256": "x", "quoted": {}},
            {"number": 2, "headline": "Now 2.3× as many", "sha256": "y", "quoted": {"multiple": "2.3"},
             "templates": {"headline": "Now {multiple}× as many"}},
            {"number": 3, "headline": "C", "sha256": "z", "quoted": {}},
        ]});
        let new = json!({"frames": [
            {"number": 1, "headline": "A", "sha256": "x", "quoted": {}},
            {"number": 2, "headline": "Now 1.9× as many", "sha256": "w", "quoted": {"multiple": "1.9"},
             "templates": {"headline": "Now {multiple}× as many"}},
            {"number": 3, "headline": "C", "sha256": "q", "quoted": {}},
            {"number": 4, "headline": "D", "sha256": "r", "quoted": {}},
        ]});
        assert_eq!(
            diff(&old, &new),
            vec![
                "frame 2 \"Now 1.9× as many\": multiple 2.3 → 1.9".to_string(),
                "frame 3 \"C\": changed".to_string(),
                "  the chart changed".to_string(),
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
    fn a_frame_whose_text_and_chart_changed_names_both_and_every_moved_value() {
        let content = |v: &str, role: &str| json!({"data": {"Westbrook 2024-03": v}, "roles": {"Westbrook": role}});
        let old = json!({"values": {"lead": "1.57", "alder": "73,188"}, "frames": [
            {"number": 1, "headline": "H", "takeaway": "Grew a few percent.", "sha256": "x",
             "quoted": {}, "content": content("4210", "focus")},
        ]});
        let new = json!({"values": {"lead": "1.57", "alder": "73,688"}, "frames": [
            {"number": 1, "headline": "H", "takeaway": "Grew slowly.", "sha256": "y",
             "quoted": {}, "content": content("4710", "context")},
        ]});
        assert_eq!(
            diff(&old, &new),
            [
                "frame 1 \"H\": changed",
                "  takeaway: “Grew a few percent.” → “Grew slowly.”",
                "  chart data: Westbrook 2024-03: 4210 → 4710",
                "  roles: Westbrook focus → context",
                "value alder 73,188 → 73,688 (quoted nowhere)",
            ]
        );
        // a value that moved with nothing drawn changing is still a change
        let mut quiet = old.clone();
        quiet["values"]["alder"] = json!("1");
        assert!(changed(&old, &quiet));
        assert_eq!(
            diff(&old, &quiet),
            [
                "frame 1 unchanged",
                "value alder 73,188 → 1 (quoted nowhere)"
            ]
        );
        // a value that moved by less than its figure shows
        let mut exact = old.clone();
        exact["exact"] = json!({"lead": 1.5705});
        let mut moved = old.clone();
        moved["exact"] = json!({"lead": 1.5667});
        assert!(changed(&exact, &moved));
        assert_eq!(
            values(&exact, &moved),
            ["value lead 1.57 (exact 1.5705 → 1.5667, the same when rounded; quoted nowhere)"]
        );
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
