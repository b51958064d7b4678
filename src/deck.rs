//! Writing a deck: render every frame, then write all files into a fresh
//! folder and swap it into place, so a failed build never leaves a
//! half-written or destroyed deck.

use std::fs;
use std::path::{Path, PathBuf};

use crescendo_diag::Diagnostic;
use crescendo_plan::DeckPlan;
use serde_json::json;
use sha2::{Digest, Sha256};

/// Name of the manifest; its presence marks a folder as a crescendo deck.
pub const MANIFEST: &str = "deck.json";

/// File name of a frame: `01-<slug>.svg`.
pub fn frame_file(number: usize, slug: &str, count: usize) -> String {
    let width = count.to_string().len().max(2);
    format!("{number:0width$}-{slug}.svg")
}

fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// What a build writes besides `deck.json`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Exports {
    /// `01-<slug>.svg`, … (one per frame).
    pub svg: bool,
    /// `index.html`, the self-contained deck.
    pub html: bool,
    /// `deck.pdf`, one page per frame.
    pub pdf: bool,
    /// `01-<slug>.png`, … (one per frame).
    pub png: bool,
    /// PNG pixels per SVG px (1280·scale × 720·scale).
    pub scale: u32,
}

impl Default for Exports {
    /// SVG frames and the HTML deck.
    fn default() -> Self {
        Self {
            svg: true,
            html: true,
            pdf: false,
            png: false,
            scale: 2,
        }
    }
}

/// What drawing a deck may need besides the plan: the plugins the story
/// loaded, and where frames were written in the story (to locate errors).
#[derive(Default)]
pub struct Context<'a> {
    pub plugins: Option<&'a dyn crescendo_render::plugin::PluginDrawer>,
    pub source: Option<&'a std::sync::Arc<crescendo_diag::Source>>,
    pub anchors: Option<&'a crescendo_plan::anchors::Anchors>,
}

/// The plugins a story loaded, as the renderer's drawer.
pub struct Host<'a>(pub &'a crescendo_plan::plugins::Plugins);

impl crescendo_render::plugin::PluginDrawer for Host<'_> {
    fn draw(
        &self,
        plugin: &str,
        request: &crescendo_plugin::Request,
    ) -> Result<crescendo_plugin::host::Validated, String> {
        let p = self
            .0
            .get(plugin)
            .ok_or_else(|| format!("plugin `{plugin}` is not loaded"))?;
        p.render(request).map_err(|e| e.to_string())
    }
}

/// File name of the PDF export.
pub const PDF: &str = "deck.pdf";

/// All files of a deck, in memory: (file name, contents).
pub fn render_files(
    plan: &DeckPlan,
    exports: &Exports,
    ctx: &Context,
) -> Result<Vec<(String, Vec<u8>)>, Diagnostic> {
    let mut files = Vec::new();
    let mut svgs = Vec::new();
    for (i, f) in plan.frames.iter().enumerate() {
        let svg = crate::incremental::render_frame(plan, f, ctx.plugins).map_err(|e| {
            let mut d = Diagnostic::error(
                "render",
                format!("cannot draw frame {} (\"{}\"): {e}", f.number, f.headline),
            );
            // point at the chart statement of the frame that failed
            if let (Some(src), Some(a)) = (ctx.source, ctx.anchors.and_then(|a| a.frames.get(i))) {
                d = d.at(
                    src,
                    a.chart.clone(),
                    format!("frame {} is drawn from here", f.number),
                );
            }
            d
        })?;
        svgs.push(svg);
    }
    let export_err = |what: &str, e: String| {
        Diagnostic::error("export", format!("cannot write the {what}: {e}"))
    };
    let page = crescendo_render::theme::effective(plan)
        .map_err(|e| export_err("deck", e.message))?
        .page;
    let mut entries = Vec::new();
    for (f, svg) in plan.frames.iter().zip(&svgs) {
        let name = frame_file(f.number, &f.slug, plan.frames.len());
        let png_name = name.trim_end_matches(".svg").to_string() + ".png";
        let mut entry = json!({
            "number": f.number,
            "file": exports.svg.then_some(&name),
            "headline": f.headline,
            "takeaway": f.takeaway,
            "notes": f.notes,
            "sequence": f.sequence,
            "quoted": f.quoted,
            "templates": f.templates,
            "notices": f.notices,
            "sha256": hex(&Sha256::digest(svg.as_bytes())),
        });
        if exports.png {
            entry["png"] = json!(png_name);
        }
        entries.push(entry);
        if exports.svg {
            files.push((name, svg.clone().into_bytes()));
        }
        if exports.png {
            let bytes = crate::export::png(svg, exports.scale, page)
                .map_err(|e| export_err(&format!("PNG of frame {}", f.number), e))?;
            files.push((png_name, bytes));
        }
    }
    if exports.pdf {
        let pages: Vec<&str> = svgs.iter().map(String::as_str).collect();
        let bytes = crate::export::pdf(&plan.title, &pages).map_err(|e| export_err("PDF", e))?;
        files.push((PDF.to_string(), bytes));
    }
    let mut manifest = json!({
        "title": plan.title,
        "byline": plan.byline,
        "source": plan.source,
        "conclusion": plan.conclusion,
        "theme": plan.theme,
        "values": plan.values,
        "claims": plan.claims,
        "frames": entries,
        "html": exports.html.then_some("index.html"),
    });
    if exports.pdf {
        manifest["pdf"] = json!(PDF);
    }
    let mut manifest = serde_json::to_string_pretty(&manifest)
        .map_err(|e| Diagnostic::error("output", format!("cannot write the manifest: {e}")))?;
    manifest.push('\n');
    if exports.html {
        let pairs: Vec<(&crescendo_plan::FramePlan, &str)> = plan
            .frames
            .iter()
            .zip(svgs.iter().map(String::as_str))
            .collect();
        let html = crescendo_render::render_deck_html(plan, &pairs);
        files.push(("index.html".to_string(), html.into_bytes()));
    }
    files.push((MANIFEST.to_string(), manifest.into_bytes()));
    Ok(files)
}

fn io_err(what: &str, path: &Path, e: std::io::Error) -> Diagnostic {
    Diagnostic::error("output", format!("cannot {what} `{}`: {e}", path.display()))
}

/// Render and write the deck into `out`, replacing a previous deck only
/// when everything succeeded. Returns the number of frames.
pub fn build(
    plan: &DeckPlan,
    out: &Path,
    exports: &Exports,
    ctx: &Context,
) -> Result<usize, Diagnostic> {
    let files = render_files(plan, exports, ctx)?;
    write_atomically(out, &files)?;
    Ok(plan.frames.len())
}

/// Refuse to replace a folder that is not a deck (so `--out ~` cannot wipe
/// a home folder).
fn check_replaceable(out: &Path) -> Result<(), Diagnostic> {
    if !out.exists() {
        return Ok(());
    }
    if !out.is_dir() {
        return Err(Diagnostic::error(
            "output",
            format!("`{}` exists and is not a folder", out.display()),
        ));
    }
    let mut entries = fs::read_dir(out).map_err(|e| io_err("read", out, e))?;
    let empty = entries.next().is_none();
    if !empty && !out.join(MANIFEST).is_file() {
        return Err(Diagnostic::error(
            "output",
            format!(
                "`{}` is not empty and holds no {MANIFEST}, so it is not a deck crescendo may replace",
                out.display()
            ),
        )
        .help("choose an empty or new folder with --out"));
    }
    Ok(())
}

/// Write `files` into a sibling temporary folder, then swap it with `out`.
pub fn write_atomically(out: &Path, files: &[(String, Vec<u8>)]) -> Result<(), Diagnostic> {
    check_replaceable(out)?;
    let parent = match out.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    fs::create_dir_all(&parent).map_err(|e| io_err("create", &parent, e))?;
    let base = out
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "deck".into());
    let tmp = parent.join(format!(".{base}.building-{}", std::process::id()));
    let old = parent.join(format!(".{base}.previous-{}", std::process::id()));
    let _ = fs::remove_dir_all(&tmp);
    let result = (|| {
        fs::create_dir(&tmp).map_err(|e| io_err("create", &tmp, e))?;
        for (name, bytes) in files {
            let p = tmp.join(name);
            fs::write(&p, bytes).map_err(|e| io_err("write", &p, e))?;
        }
        let had_old = out.exists();
        if had_old {
            fs::rename(out, &old).map_err(|e| io_err("move aside", out, e))?;
        }
        if let Err(e) = fs::rename(&tmp, out) {
            if had_old {
                let _ = fs::rename(&old, out);
            }
            return Err(io_err("move into place", out, e));
        }
        if had_old {
            let _ = fs::remove_dir_all(&old);
        }
        Ok(())
    })();
    if result.is_err() {
        let _ = fs::remove_dir_all(&tmp);
    }
    result
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tempdir(name: &str) -> PathBuf {
        let d =
            std::env::temp_dir().join(format!("crescendo-deck-test-{}-{name}", std::process::id()));
        let _ = fs::remove_dir_all(&d);
        fs::create_dir_all(&d).unwrap();
        d
    }

    #[test]
    fn frame_files_are_numbered_in_order() {
        assert_eq!(frame_file(3, "a-b", 7), "03-a-b.svg");
        assert_eq!(frame_file(3, "a", 120), "003-a.svg");
    }

    #[test]
    fn replaces_a_previous_deck_whole() {
        let d = tempdir("replace");
        let out = d.join("deck");
        write_atomically(
            &out,
            &[
                ("a.svg".into(), b"1".to_vec()),
                (MANIFEST.into(), b"{}".to_vec()),
            ],
        )
        .unwrap();
        write_atomically(
            &out,
            &[
                ("b.svg".into(), b"2".to_vec()),
                (MANIFEST.into(), b"{}".to_vec()),
            ],
        )
        .unwrap();
        assert!(!out.join("a.svg").exists());
        assert_eq!(fs::read(out.join("b.svg")).unwrap(), b"2");
        // no temporary folders left behind
        let names: Vec<_> = fs::read_dir(&d)
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(names.len(), 1, "{names:?}");
    }

    #[test]
    fn refuses_to_replace_a_folder_that_is_not_a_deck() {
        let d = tempdir("refuse");
        fs::write(d.join("precious.txt"), b"keep me").unwrap();
        let err = write_atomically(&d, &[(MANIFEST.into(), b"{}".to_vec())]).unwrap_err();
        assert!(err.message.contains("not a deck"), "{}", err.message);
        assert_eq!(fs::read(d.join("precious.txt")).unwrap(), b"keep me");
    }
}
