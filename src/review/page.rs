//! The review page: one self-contained HTML file. Each frame shows the
//! picture it had at the revision beside the one it has now, with what
//! changed listed under them; runs of unchanged frames fold into one
//! closed `<details>`. Pictures are `data:` images (each SVG is its own
//! document, so two versions of one frame cannot clash), and the page
//! carries the deck's Content-Security-Policy without any script: nothing
//! is loaded from anywhere, only its own stylesheet applies.

use std::fmt::Write;
use std::path::Path;

use base64::Engine as _;
use crescendo_diag::Diagnostic;

use super::compare::{ClaimReview, FrameReview, Review, Status};
use super::markdown::room;

const STYLE: &str = "
body{margin:0 auto;max-width:1500px;padding:24px;font:15px/1.45 'DejaVu Sans',system-ui,sans-serif;color:#1d232b;background:#f6f7f8}
h1{font-size:22px;margin:0 0 4px}
.tally{color:#4a5560;margin:0 0 18px}
.box{background:#fff;border:1px solid #d5dae0;border-radius:6px;padding:12px 16px;margin:0 0 16px}
.box h2{font-size:17px;margin:0 0 8px}
.claim{margin:4px 0}
.verdict{display:inline-block;min-width:8.5em;font-weight:bold}
.bad .verdict{color:#a4161a}.close .verdict{color:#8a5a00}.good .verdict{color:#1f6f3f}
code{background:#eef0f3;padding:0 3px;border-radius:3px}
.frame{background:#fff;border:1px solid #d5dae0;border-left:6px solid #8c96a1;border-radius:6px;padding:12px 16px;margin:0 0 16px}
.frame.changed{border-left-color:#2f6db5}.frame.added{border-left-color:#1f6f3f}.frame.removed{border-left-color:#a4161a}
.frame h2{font-size:17px;margin:0 0 8px}
.tag{font-size:12px;font-weight:normal;border:1px solid #8c96a1;border-radius:10px;padding:0 7px;margin-left:6px;color:#4a5560}
.pair{display:grid;grid-template-columns:1fr 1fr;gap:14px}
figure{margin:0}
figure img{width:100%;height:auto;border:1px solid #d5dae0;background:#fff}
figcaption{font-size:13px;color:#4a5560}
.empty{display:flex;align-items:center;justify-content:center;aspect-ratio:16/9;border:1px dashed #b8c0c8;color:#6b7580}
ul.changes{margin:10px 0 0;padding-left:20px}
del{color:#a4161a}ins{color:#1f6f3f;text-decoration:none}
details.same{margin:0 0 16px}
details.same>summary{cursor:pointer;color:#4a5560}
";

use crescendo_render::html_escape as escape;

fn picture(svg: Option<&String>, caption: &str, alt: &str) -> String {
    match svg {
        Some(svg) => format!(
            "<figure><img alt=\"{}\" src=\"data:image/svg+xml;base64,{}\"><figcaption>{}</figcaption></figure>",
            escape(alt),
            base64::engine::general_purpose::STANDARD.encode(svg.as_bytes()),
            escape(caption)
        ),
        None => format!(
            "<figure><div class=\"empty\">not in this version</div><figcaption>{}</figcaption></figure>",
            escape(caption)
        ),
    }
}

fn frame_title(f: &FrameReview) -> String {
    let number = match (f.old, f.new) {
        (Some(o), Some(n)) if o != n => format!("Frame {o} → {n}"),
        (_, Some(n)) => format!("Frame {n}"),
        (Some(o), None) => format!("Frame {o}"),
        _ => String::new(),
    };
    format!("{number}: {}", escape(&f.headline))
}

fn frame(out: &mut String, f: &FrameReview, r: &Review) {
    let class = match f.status {
        Status::Unchanged => "same",
        Status::Changed => "changed",
        Status::Added => "added",
        Status::Removed => "removed",
    };
    let _ = write!(
        out,
        "<section class=\"frame {class}\" id=\"frame-{}-{}\"><h2>{}",
        f.old.unwrap_or(0),
        f.new.unwrap_or(0),
        frame_title(f)
    );
    let tag = match f.status {
        Status::Added => Some("new"),
        Status::Removed => Some("removed"),
        Status::Changed if f.moved => Some("moved"),
        Status::Changed => Some("changed"),
        Status::Unchanged => None,
    };
    if let Some(t) = tag {
        let _ = write!(out, "<span class=\"tag\">{t}</span>");
    }
    out.push_str("</h2>\n<div class=\"pair\">");
    let then = format!("at {} ({})", r.against, r.commit);
    out.push_str(&picture(
        f.old_svg.as_ref(),
        &then,
        &format!("{} {then}", f.headline),
    ));
    out.push_str(&picture(
        f.new_svg.as_ref(),
        "now",
        &format!("{} now", f.headline),
    ));
    out.push_str("</div>\n");
    let lint_changed = !f.lint_added.is_empty() || !f.lint_removed.is_empty();
    if f.status == Status::Changed || lint_changed {
        out.push_str("<ul class=\"changes\">");
        for q in &f.figures {
            let change = q.change.as_ref().map(|c| format!(" ({})", escape(c)));
            let _ = write!(
                out,
                "<li><code>{}</code>: {}{}</li>",
                escape(&q.name),
                replaced(&q.old, &q.new, "—"),
                change.unwrap_or_default()
            );
        }
        for t in &f.texts {
            let was = replaced(&t.old, &t.new, "(none)");
            let _ = write!(out, "<li>{}: {was}</li>", t.part);
        }
        if f.moved {
            out.push_str("<li>moved to another place in the deck</li>");
        }
        for c in r.claims.iter().filter(|c| f.claims.contains(&c.sentence)) {
            let _ = write!(
                out,
                "<li>rests on the claim “{}”: {}</li>",
                escape(&c.sentence),
                c.verdict
            );
        }
        for c in &f.chart {
            let _ = write!(out, "<li>{}</li>", escape(&c.summary()));
        }
        if f.picture_changed && f.figures.is_empty() && f.texts.is_empty() && f.chart.is_empty() {
            out.push_str("<li>the chart changed</li>");
        }
        for l in &f.lint_added {
            let _ = write!(out, "<li>new lint finding: {}</li>", escape(l));
        }
        for l in &f.lint_removed {
            let _ = write!(out, "<li>lint finding gone: {}</li>", escape(l));
        }
        out.push_str("</ul>\n");
    }
    out.push_str("</section>\n");
}

fn claim(out: &mut String, c: &ClaimReview) {
    let class = match c.verdict {
        "fails now" | "still fails" => "bad",
        "near miss" | "room changed" | "gone" => "close",
        _ => "good",
    };
    let room = |s: &Option<super::compare::ClaimState>| room(s.as_ref().and_then(|s| s.room));
    let _ = write!(
        out,
        "<p class=\"claim {class}\"><span class=\"verdict\">{}</span> “{}” <code>{}</code> room {} → {}",
        c.verdict,
        escape(&c.sentence),
        escape(&c.condition),
        room(&c.old),
        room(&c.new)
    );
    if let Some(n) = &c.new {
        for d in &n.detail {
            let _ = write!(out, "<br><small>{}</small>", escape(d));
        }
    }
    out.push_str("</p>\n");
}

/// `old` struck out, then `new` (`none` stands for a missing one).
fn replaced(old: &Option<String>, new: &Option<String>, none: &str) -> String {
    let show = |v: &Option<String>| escape(v.as_deref().unwrap_or(none));
    format!("<del>{}</del> → <ins>{}</ins>", show(old), show(new))
}

/// The page's HTML.
pub fn html(r: &Review) -> String {
    let css = STYLE;
    let mut out = String::new();
    let _ = write!(
        out,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n<meta http-equiv=\"Content-Security-Policy\" content=\"{}\">\n<title>Review: {}</title>\n<style>{css}</style>\n</head>\n<body>\n",
        crescendo_render::policy_without_scripts(css),
        escape(&r.title)
    );
    let c = &r.counts;
    let _ = writeln!(
        out,
        "<h1>Review: {}</h1>\n<p class=\"tally\">Compared with <code>{}</code> ({}): {} changed, {} added, {} removed, {} moved, {} unchanged; {} claim(s) failing, {} near miss(es).</p>",
        escape(&r.title),
        escape(&r.against),
        escape(&r.commit),
        c.changed,
        c.added,
        c.removed,
        c.moved,
        c.unchanged,
        c.failing_claims,
        c.near_misses
    );
    if !r.claims.is_empty() {
        out.push_str("<div class=\"box\" id=\"claims\"><h2>Claims</h2>\n");
        for cl in &r.claims {
            claim(&mut out, cl);
        }
        out.push_str("</div>\n");
    }
    if !r.values.is_empty() {
        out.push_str("<div class=\"box\" id=\"values\"><h2>Values</h2><ul>\n");
        for v in &r.values {
            let line = super::markdown::value_line(v).replace('`', "");
            let _ = writeln!(out, "<li>{}</li>", escape(&line));
        }
        out.push_str("</ul></div>\n");
    }
    if !r.lint.added.is_empty() || !r.lint.removed.is_empty() {
        out.push_str("<div class=\"box\" id=\"lint\"><h2>Lint</h2><ul>\n");
        for (what, l) in r.lint.changes() {
            let _ = writeln!(out, "<li>{what}: {}</li>", escape(l));
        }
        out.push_str("</ul></div>\n");
    }
    let mut i = 0;
    while i < r.frames.len() {
        let f = &r.frames[i];
        let lint_changed = !f.lint_added.is_empty() || !f.lint_removed.is_empty();
        if f.status != Status::Unchanged || lint_changed {
            frame(&mut out, f, r);
            i += 1;
            continue;
        }
        let run: Vec<&FrameReview> = r.frames[i..]
            .iter()
            .take_while(|f| {
                f.status == Status::Unchanged
                    && f.lint_added.is_empty()
                    && f.lint_removed.is_empty()
            })
            .collect();
        let numbers: Vec<String> = run
            .iter()
            .filter_map(|f| f.new)
            .map(|n| n.to_string())
            .collect();
        let _ = writeln!(
            out,
            "<details class=\"same\"><summary>{} unchanged frame{} ({})</summary>",
            run.len(),
            if run.len() == 1 { "" } else { "s" },
            numbers.join(", ")
        );
        for f in &run {
            frame(&mut out, f, r);
        }
        out.push_str("</details>\n");
        i += run.len();
    }
    out.push_str("</body>\n</html>\n");
    out
}

/// Write the page to `out` through a temporary file beside it, so a
/// failed write leaves no half page.
pub fn write_file(out: &Path, r: &Review) -> Result<(), Diagnostic> {
    let err = |e: std::io::Error| {
        Diagnostic::error(
            "output",
            format!("cannot write the review page `{}`: {e}", out.display()),
        )
    };
    let name = out
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .unwrap_or_default();
    let tmp = out.with_file_name(format!(".{name}.tmp-{}", std::process::id()));
    std::fs::write(&tmp, html(r)).map_err(err)?;
    std::fs::rename(&tmp, out).map_err(|e| {
        let _ = std::fs::remove_file(&tmp);
        err(e)
    })
}

#[cfg(test)]
mod tests {
    use super::replaced;

    #[test]
    fn a_replaced_value_is_escaped_and_a_missing_one_named() {
        let old = Some("a<b".to_string());
        assert_eq!(
            replaced(&old, &None, "(none)"),
            "<del>a&lt;b</del> → <ins>(none)</ins>"
        );
        assert_eq!(
            replaced(&None, &old, "—"),
            "<del>—</del> → <ins>a&lt;b</ins>"
        );
    }
}
