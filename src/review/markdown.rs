//! The review as Markdown, short enough for a pull-request comment.

use std::fmt::Write;

use super::compare::{ClaimReview, FrameReview, Review, Status, ValueChange};

/// Markdown table cells: no line breaks, no column bars.
fn cell(s: &str) -> String {
    s.replace('|', "\\|").replace(['\n', '\r'], " ")
}

fn numbers(f: &FrameReview) -> String {
    match (f.old, f.new) {
        (Some(o), Some(n)) if o != n => format!("{o} → {n}"),
        (_, Some(n)) => n.to_string(),
        (Some(o), None) => o.to_string(),
        (None, None) => String::new(),
    }
}

/// What changed in a frame, in a few words.
pub fn what_changed(f: &FrameReview) -> Vec<String> {
    let mut parts = Vec::new();
    match f.status {
        Status::Added => parts.push("new frame".to_string()),
        Status::Removed => parts.push("removed".to_string()),
        _ => {}
    }
    if f.moved {
        parts.push("moved".to_string());
    }
    for q in &f.figures {
        let show = |v: &Option<String>| v.clone().unwrap_or_else(|| "—".into());
        let mut s = format!("`{}` {} → {}", q.name, show(&q.old), show(&q.new));
        if let Some(c) = &q.change {
            let _ = write!(s, " ({c})");
        }
        parts.push(s);
    }
    for t in &f.texts {
        // a headline that differs only by its quoted figures says no more
        if t.part != "headline" || f.figures.is_empty() {
            let show = |v: &Option<String>| match v {
                Some(v) => format!("“{v}”"),
                None => "(none)".to_string(),
            };
            parts.push(format!("{} {} → {}", t.part, show(&t.old), show(&t.new)));
        }
    }
    parts.extend(f.chart.iter().map(|c| c.summary()));
    for sentence in &f.claims {
        parts.push(format!("rests on “{sentence}”"));
    }
    for l in &f.lint_added {
        parts.push(format!("new lint finding: {l}"));
    }
    for l in &f.lint_removed {
        parts.push(format!("lint finding gone: {l}"));
    }
    if f.status == Status::Changed
        && f.picture_changed
        && f.figures.is_empty()
        && f.texts.is_empty()
        && f.chart.is_empty()
    {
        parts.push("the chart changed".to_string());
    }
    parts
}

/// `` `total` 60 → 66 (+6), quoted nowhere ``.
pub fn value_line(v: &ValueChange) -> String {
    let f = &v.figure;
    let show = |v: &Option<String>| v.clone().unwrap_or_else(|| "—".into());
    let mut s = match v.exact {
        Some([x, y]) => format!(
            "`{}` {} (exact {x} → {y}, the same when rounded)",
            f.name,
            show(&f.new)
        ),
        None => format!("`{}` {} → {}", f.name, show(&f.old), show(&f.new)),
    };
    if let Some(c) = &f.change {
        let _ = write!(s, " ({c})");
    }
    let frames: Vec<String> = v.quoted_in.iter().map(usize::to_string).collect();
    let _ = match frames.len() {
        0 => write!(s, ", quoted nowhere"),
        1 => write!(s, ", quoted in frame {}", frames[0]),
        _ => write!(s, ", quoted in frames {}", frames.join(", ")),
    };
    s
}

/// A claim's room as a percentage, with a true minus sign.
pub fn room(m: Option<f64>) -> String {
    match m {
        Some(m) => format!("{:.1}%", m * 100.0).replace('-', "−"),
        None => "—".to_string(),
    }
}

fn claim_line(c: &ClaimReview) -> String {
    let rooms = match (&c.old, &c.new) {
        (Some(o), Some(n)) => format!("room {} → {}", room(o.room), room(n.room)),
        (None, Some(n)) => format!("room {}", room(n.room)),
        (Some(o), None) => format!("room was {}", room(o.room)),
        (None, None) => String::new(),
    };
    format!(
        "- **{}**: \"{}\" (`{}`; {rooms})",
        c.verdict,
        cell(&c.sentence),
        cell(&c.condition)
    )
}

/// The summary: counts, claims, changed frames, lint.
pub fn write(r: &Review) -> String {
    let mut out = String::new();
    let c = &r.counts;
    let _ = writeln!(out, "## Deck review: {}\n", cell(&r.title));
    let _ = writeln!(
        out,
        "Against `{}` ({}): {} changed, {} added, {} removed, {} moved, {} unchanged.",
        r.against, r.commit, c.changed, c.added, c.removed, c.moved, c.unchanged
    );
    if c.failing_claims > 0 {
        let _ = writeln!(
            out,
            "\n**{} claim{} fail{} in the new deck.**",
            c.failing_claims,
            if c.failing_claims == 1 { "" } else { "s" },
            if c.failing_claims == 1 { "s" } else { "" }
        );
    }
    if !r.claims.is_empty() {
        out.push_str("\n### Claims\n\n");
        for cl in &r.claims {
            let _ = writeln!(out, "{}", claim_line(cl));
        }
    }
    let changed: Vec<&FrameReview> = r
        .frames
        .iter()
        .filter(|f| {
            f.status != Status::Unchanged || !f.lint_added.is_empty() || !f.lint_removed.is_empty()
        })
        .collect();
    if !changed.is_empty() {
        out.push_str("\n### Frames\n\n| frame | headline | what changed |\n| --- | --- | --- |\n");
        for f in changed {
            let _ = writeln!(
                out,
                "| {} | {} | {} |",
                numbers(f),
                cell(&f.headline),
                cell(&what_changed(f).join("; "))
            );
        }
    }
    if !r.values.is_empty() {
        out.push_str("\n### Values\n\n");
        for v in &r.values {
            let _ = writeln!(out, "- {}", cell(&value_line(v)));
        }
    }
    if !r.lint.added.is_empty() || !r.lint.removed.is_empty() {
        out.push_str("\n### Lint\n\n");
        for (what, l) in r.lint.changes() {
            let _ = writeln!(out, "- {what}: {}", cell(l));
        }
    }
    out
}
