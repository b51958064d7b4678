//! Writing a deck: render every frame, then write all files into a fresh
//! folder and swap it into place, so a failed build never leaves a
//! half-written or destroyed deck.

use std::collections::BTreeSet;
use std::fs;
use std::path::{Path, PathBuf};

use crescendo_diag::Diagnostic;
use crescendo_plan::DeckPlan;
use serde_json::json;
use sha2::{Digest, Sha256};

use crate::incremental::FrameCache;

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
    /// PNG frames without the painted page (`--transparent`).
    pub transparent: bool,
    /// The HTML deck opens with a frame of the title, byline and source and
    /// closes with the conclusion (off with `--frames-only`).
    pub bookends: bool,
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
            transparent: false,
            bookends: true,
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
    ) -> Result<crescendo_plugin::validate::Validated, String> {
        let p = self
            .0
            .get(plugin)
            .ok_or_else(|| format!("plugin `{plugin}` is not loaded"))?;
        p.render(request).map_err(|e| e.to_string())
    }
}

/// The error for frame `i` (`f`) that cannot be drawn, pointing at its
/// chart statement.
pub fn frame_error(
    f: &crescendo_plan::model::FramePlan,
    i: usize,
    e: &dyn std::fmt::Display,
    ctx: &Context,
) -> Diagnostic {
    let mut d = Diagnostic::error(
        "render",
        format!("cannot draw frame {} (\"{}\"): {e}", f.number, f.headline),
    );
    if let (Some(src), Some(a)) = (ctx.source, ctx.anchors.and_then(|a| a.frames.get(i))) {
        d = d.at(
            src,
            a.chart.clone(),
            format!("frame {} is drawn from here", f.number),
        );
    }
    d
}

/// File name of the PDF export.
pub const PDF: &str = "deck.pdf";

/// All files of a deck, in memory: (file name, contents).
pub fn render_files(
    plan: &DeckPlan,
    exports: &Exports,
    ctx: &Context,
    frames: &mut FrameCache,
) -> Result<Vec<(String, Vec<u8>)>, Diagnostic> {
    let mut files = Vec::new();
    let mut svgs = Vec::new();
    for (i, f) in plan.frames.iter().enumerate() {
        let svg = frames
            .render(plan, f, ctx.plugins)
            .map_err(|e| frame_error(f, i, &e, ctx))?;
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
            "content": crate::content::Content::of(f),
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
            let bytes =
                crate::export::png(svg, exports.scale, (!exports.transparent).then_some(page))
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
        "exact": plan.exact,
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
        let html = crescendo_render::render_deck_html_with(plan, &pairs, exports.bookends);
        files.push(("index.html".to_string(), html.into_bytes()));
    }
    files.push((MANIFEST.to_string(), manifest.into_bytes()));
    Ok(files)
}

fn io_err(what: &str, path: &Path, e: std::io::Error) -> Diagnostic {
    Diagnostic::error("output", format!("cannot {what} `{}`: {e}", path.display()))
}

/// Render and write the deck into `out`, replacing a previous deck only
/// when everything succeeded; frames come from `frames` where they are
/// unchanged. Returns the number of frames.
pub fn build(
    plan: &DeckPlan,
    out: &Path,
    exports: &Exports,
    ctx: &Context,
    frames: &mut FrameCache,
) -> Result<usize, Diagnostic> {
    let files = render_files(plan, exports, ctx, frames)?;
    write_atomically(out, &files)?;
    Ok(plan.frames.len())
}

/// Refuse to replace a folder that is not a deck (so `--out ~` cannot wipe
/// a home folder). A folder is a deck when it is empty or holds a
/// `deck.json` that reads as a manifest; a folder whose manifest is empty,
/// not JSON or unreadable is not one (its other files would otherwise be
/// taken for crescendo's and dropped). Returns the names the manifest says
/// crescendo wrote (see [`written_by_us`]); everything else in the folder
/// is carried over to the new deck.
fn check_replaceable(out: &Path) -> Result<BTreeSet<String>, Diagnostic> {
    if !out.exists() {
        return Ok(BTreeSet::new());
    }
    if !out.is_dir() {
        return Err(Diagnostic::error(
            "output",
            format!("`{}` exists and is not a folder", out.display()),
        ));
    }
    let mut entries = fs::read_dir(out).map_err(|e| io_err("read", out, e))?;
    if entries.next().is_none() {
        return Ok(BTreeSet::new());
    }
    if !out.join(MANIFEST).is_file() {
        return Err(Diagnostic::error(
            "output",
            format!(
                "`{}` is not empty and holds no {MANIFEST}, so it is not a deck crescendo may replace",
                out.display()
            ),
        )
        .help("choose an empty or new folder with --out"));
    }
    written_by_us(out).map_err(|why| {
        Diagnostic::error(
            "output",
            format!(
                "`{}` holds a {MANIFEST} that is not a deck manifest ({why}), so it is not a deck crescendo may replace; nothing was changed",
                out.display()
            ),
        )
        .help(format!(
            "choose another folder with --out, or, if it is a deck you no longer need, delete its {MANIFEST} after moving away the files you keep"
        ))
    })
}

/// The names of the files a deck's manifest says crescendo wrote (the
/// manifest itself included), or why the manifest cannot be read. Anything
/// else in a deck folder was put there by someone else and is carried over
/// to the next deck.
fn written_by_us(deck: &Path) -> Result<BTreeSet<String>, String> {
    let text = fs::read_to_string(deck.join(MANIFEST)).map_err(|e| e.to_string())?;
    let m: serde_json::Value = serde_json::from_str(&text).map_err(|e| e.to_string())?;
    if !m.is_object() {
        return Err("it is not a JSON object".into());
    }
    let mut names = BTreeSet::new();
    names.insert(MANIFEST.to_string());
    for key in ["html", "pdf"] {
        if let Some(s) = m.get(key).and_then(|v| v.as_str()) {
            names.insert(s.to_string());
        }
    }
    for f in m
        .get("frames")
        .and_then(|v| v.as_array())
        .into_iter()
        .flatten()
    {
        for key in ["file", "png"] {
            if let Some(s) = f.get(key).and_then(|v| v.as_str()) {
                names.insert(s.to_string());
            }
        }
    }
    Ok(names)
}

/// Copy a file or a folder tree (symbolic links are recreated, not followed).
fn copy_tree(from: &Path, to: &Path) -> std::io::Result<()> {
    let meta = fs::symlink_metadata(from)?;
    if meta.file_type().is_symlink() {
        #[cfg(unix)]
        {
            std::os::unix::fs::symlink(fs::read_link(from)?, to)?;
        }
        return Ok(());
    }
    if meta.is_dir() {
        fs::create_dir(to)?;
        for e in fs::read_dir(from)? {
            let e = e?;
            copy_tree(&e.path(), &to.join(e.file_name()))?;
        }
        return sync_dir(to);
    }
    fs::copy(from, to)?;
    fs::File::open(to)?.sync_all()
}

/// Flush a folder's entries to disk (a no-op where folders cannot be opened).
fn sync_dir(dir: &Path) -> std::io::Result<()> {
    #[cfg(unix)]
    {
        fs::File::open(dir)?.sync_all()?;
    }
    #[cfg(not(unix))]
    {
        let _ = dir;
    }
    Ok(())
}

/// Write one file and flush it to disk.
fn write_synced(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    use std::io::Write as _;
    let mut f = fs::File::create(path)?;
    f.write_all(bytes)?;
    f.sync_all()?;
    slow_down_for_tests();
    Ok(())
}

/// Debug builds only: `CRESCENDO_TEST_SLOW_WRITE_MS=N` sleeps N ms after
/// each file of a deck, so the crash test can kill a build mid-write.
fn slow_down_for_tests() {
    #[cfg(debug_assertions)]
    if let Some(ms) = std::env::var("CRESCENDO_TEST_SLOW_WRITE_MS")
        .ok()
        .and_then(|v| v.parse::<u64>().ok())
    {
        std::thread::sleep(std::time::Duration::from_millis(ms));
    }
}

/// Is process `pid` still running? (Unknown counts as running, so its
/// folders are left alone.)
fn alive(pid: u32) -> bool {
    #[cfg(unix)]
    {
        if pid == std::process::id() {
            return true;
        }
        let Ok(pid) = libc::pid_t::try_from(pid) else {
            return true;
        };
        // SAFETY: signal 0 only checks that the process exists.
        let r = unsafe { libc::kill(pid, 0) };
        r == 0 || std::io::Error::last_os_error().raw_os_error() != Some(libc::ESRCH)
    }
    #[cfg(not(unix))]
    {
        let _ = pid;
        true
    }
}

/// The temporary folders of deck `base` in `parent` left by builds that are
/// no longer running, as (path, kind) with kind `building` or `previous`.
fn leftovers(parent: &Path, base: &str) -> Vec<(PathBuf, &'static str)> {
    let mut found = Vec::new();
    let Ok(entries) = fs::read_dir(parent) else {
        return found;
    };
    for e in entries.flatten() {
        let name = e.file_name().to_string_lossy().into_owned();
        for kind in ["building", "previous"] {
            let prefix = format!(".{base}.{kind}-");
            let Some(pid) = name.strip_prefix(&prefix) else {
                continue;
            };
            let Ok(pid) = pid.parse::<u32>() else {
                continue;
            };
            let is_dir = e.file_type().is_ok_and(|t| t.is_dir());
            if is_dir && (pid == std::process::id() || !alive(pid)) {
                found.push((e.path(), kind));
            }
        }
    }
    found.sort();
    found
}

/// Clean up after builds that died: a `previous` folder with no deck at
/// `out` is the old deck of a build killed between its two renames (the
/// fallback swap), so it is put back; every other leftover is removed.
fn recover(parent: &Path, base: &str, out: &Path) {
    for (path, kind) in leftovers(parent, base) {
        if kind == "previous" && !out.exists() && fs::rename(&path, out).is_ok() {
            let _ = sync_dir(parent);
            continue;
        }
        let _ = fs::remove_dir_all(&path);
    }
}

/// Swap two folders in one atomic step (Linux `renameat2` with
/// `RENAME_EXCHANGE`). `Ok(false)` when the file system or the system
/// cannot do it.
fn exchange(a: &Path, b: &Path) -> std::io::Result<bool> {
    #[cfg(target_os = "linux")]
    {
        use std::ffi::CString;
        use std::os::unix::ffi::OsStrExt;
        let ca = CString::new(a.as_os_str().as_bytes())
            .map_err(|e| std::io::Error::new(std::io::ErrorKind::InvalidInput, e))?;
        let cb = CString::new(b.as_os_str().as_bytes())
            .map_err(|e| std::io::Error::new(std::io::ErrorKind::InvalidInput, e))?;
        // SAFETY: both are valid NUL-terminated paths; renameat2 has no
        // other preconditions.
        let r = unsafe {
            libc::syscall(
                libc::SYS_renameat2,
                libc::AT_FDCWD,
                ca.as_ptr(),
                libc::AT_FDCWD,
                cb.as_ptr(),
                libc::RENAME_EXCHANGE,
            )
        };
        if r == 0 {
            return Ok(true);
        }
        let e = std::io::Error::last_os_error();
        match e.raw_os_error() {
            Some(libc::EINVAL) | Some(libc::ENOSYS) | Some(libc::EOPNOTSUPP) => Ok(false),
            _ => Err(e),
        }
    }
    #[cfg(not(target_os = "linux"))]
    {
        let _ = (a, b);
        Ok(false)
    }
}

/// Write `files` into a sibling temporary folder, then swap it with `out`.
///
/// Crash safety: every file and folder is flushed before the swap; on Linux
/// the swap is one `renameat2(RENAME_EXCHANGE)`, so `out` is at every
/// instant either the whole previous deck or the whole new one. Elsewhere
/// (or on file systems without it) the previous deck is first moved aside
/// to `.NAME.previous-PID`; a build killed between the two renames leaves
/// it there, and the next build puts it back. Leftover temporary folders of
/// dead builds are removed by the next build. Files someone else added to
/// the deck folder (not listed in its manifest) are carried over.
pub fn write_atomically(out: &Path, files: &[(String, Vec<u8>)]) -> Result<(), Diagnostic> {
    let parent = match out.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let base = out
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "deck".into());
    if parent.is_dir() {
        recover(&parent, &base, out);
    }
    let ours = check_replaceable(out)?;
    fs::create_dir_all(&parent).map_err(|e| io_err("create", &parent, e))?;
    let tmp = parent.join(format!(".{base}.building-{}", std::process::id()));
    let old = parent.join(format!(".{base}.previous-{}", std::process::id()));
    let _ = fs::remove_dir_all(&tmp);
    let result = (|| {
        fs::create_dir(&tmp).map_err(|e| io_err("create", &tmp, e))?;
        for (name, bytes) in files {
            let p = tmp.join(name);
            write_synced(&p, bytes).map_err(|e| io_err("write", &p, e))?;
        }
        let had_old = out.exists();
        if had_old {
            // carry over what someone else put into the deck folder
            let entries = fs::read_dir(out).map_err(|e| io_err("read", out, e))?;
            for e in entries.flatten() {
                let name = e.file_name().to_string_lossy().into_owned();
                if ours.contains(&name) || files.iter().any(|(n, _)| *n == name) {
                    continue;
                }
                let to = tmp.join(e.file_name());
                copy_tree(&e.path(), &to).map_err(|err| io_err("keep", &e.path(), err))?;
            }
        }
        sync_dir(&tmp).map_err(|e| io_err("flush", &tmp, e))?;
        if had_old {
            if exchange(&tmp, out).map_err(|e| io_err("swap in", out, e))? {
                // `tmp` now holds the previous deck
                sync_dir(&parent).map_err(|e| io_err("flush", &parent, e))?;
                let _ = fs::remove_dir_all(&tmp);
                return Ok(());
            }
            fs::rename(out, &old).map_err(|e| io_err("move aside", out, e))?;
        }
        if let Err(e) = fs::rename(&tmp, out) {
            if had_old {
                let _ = fs::rename(&old, out);
            }
            return Err(io_err("move into place", out, e));
        }
        sync_dir(&parent).map_err(|e| io_err("flush", &parent, e))?;
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
                (
                    MANIFEST.into(),
                    br#"{"frames":[{"file":"a.svg"}]}"#.to_vec(),
                ),
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
    #[test]
    fn refuses_a_folder_whose_manifest_does_not_read() {
        for (case, manifest) in [
            ("empty", &b""[..]),
            ("text", b"not json\n"),
            ("array", b"[1, 2]"),
            ("half", b"{\"frames\": ["),
            ("binary", b"\xff\xfe\x00"),
        ] {
            let d = tempdir(&format!("bad-manifest-{case}"));
            fs::write(d.join(MANIFEST), manifest).unwrap();
            fs::write(d.join("important.txt"), b"keep me").unwrap();
            fs::create_dir(d.join("sub")).unwrap();
            fs::write(d.join("sub/x.txt"), b"x").unwrap();
            let err = write_atomically(&d, &[(MANIFEST.into(), b"{}".to_vec())]).unwrap_err();
            assert!(
                err.message.contains("not a deck"),
                "{case}: {}",
                err.message
            );
            assert_eq!(fs::read(d.join("important.txt")).unwrap(), b"keep me");
            assert_eq!(fs::read(d.join("sub/x.txt")).unwrap(), b"x");
            assert_eq!(fs::read(d.join(MANIFEST)).unwrap(), manifest, "{case}");
        }
    }

    /// The process id of a process that has ended.
    fn dead_pid() -> u32 {
        let mut c = std::process::Command::new("true").spawn().unwrap();
        let pid = c.id();
        c.wait().unwrap();
        pid
    }

    fn manifest(files: &[&str]) -> Vec<u8> {
        let frames: Vec<_> = files.iter().map(|f| json!({ "file": f })).collect();
        serde_json::to_vec(&json!({ "frames": frames })).unwrap()
    }

    #[test]
    fn keeps_files_someone_else_added() {
        let d = tempdir("keep");
        let out = d.join("deck");
        let v1 = [
            ("01-a.svg".to_string(), b"1".to_vec()),
            (MANIFEST.to_string(), manifest(&["01-a.svg"])),
        ];
        write_atomically(&out, &v1).unwrap();
        fs::write(out.join("README.txt"), b"mine").unwrap();
        fs::create_dir(out.join("extra")).unwrap();
        fs::write(out.join("extra/x.txt"), b"x").unwrap();
        let v2 = [
            ("01-b.svg".to_string(), b"2".to_vec()),
            (MANIFEST.to_string(), manifest(&["01-b.svg"])),
        ];
        write_atomically(&out, &v2).unwrap();
        assert!(!out.join("01-a.svg").exists(), "the old frame is gone");
        assert_eq!(fs::read(out.join("01-b.svg")).unwrap(), b"2");
        assert_eq!(fs::read(out.join("README.txt")).unwrap(), b"mine");
        assert_eq!(fs::read(out.join("extra/x.txt")).unwrap(), b"x");
    }

    #[test]
    fn puts_back_a_deck_left_aside_by_a_killed_build() {
        let d = tempdir("recover");
        let out = d.join("deck");
        // a build killed between "move aside" and "move into place"
        let pid = dead_pid();
        let aside = d.join(format!(".deck.previous-{pid}"));
        fs::create_dir(&aside).unwrap();
        fs::write(aside.join(MANIFEST), manifest(&["01-a.svg"])).unwrap();
        fs::write(aside.join("01-a.svg"), b"old").unwrap();
        let half = d.join(format!(".deck.building-{pid}"));
        fs::create_dir(&half).unwrap();
        fs::write(half.join("01-a.svg"), b"half").unwrap();
        recover(&d, "deck", &out);
        assert_eq!(fs::read(out.join("01-a.svg")).unwrap(), b"old");
        assert!(!aside.exists());
        assert!(!half.exists(), "the half-written folder is removed");
    }

    #[test]
    fn leaves_the_folders_of_running_builds_alone() {
        let d = tempdir("running");
        // pid 1 is always running
        let other = d.join(".deck.building-1");
        fs::create_dir(&other).unwrap();
        write_atomically(&d.join("deck"), &[(MANIFEST.into(), manifest(&[]))]).unwrap();
        assert!(other.exists());
    }
}
