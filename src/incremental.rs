//! Incremental frames: a frame is drawn again only when something it is
//! drawn from changed.
//!
//! A frame's key is a hash (xxh3-128) of: this cache's format, the renderer's
//! identity (the running executable's path, size and modification time, so
//! a new build of crescendo never reuses pictures an older one drew), the deck-level fields of the
//! plan (everything but the frames, the values and the claims: title,
//! byline, source, theme, accent, house style, conclusion), the frame's own
//! plan, and the plans of the other frames of its build-up sequence (the
//! layout reserves room for all their headlines, takeaways and source notes).
//! Speaker notes are left out everywhere: they are not drawn. The SVG is
//! stored in the cache folder under that key; an unchanged key reuses it.
//!
//! Which frames were drawn again is printed and written to
//! `<cache>/last-build.json`, never into the deck: `deck.json` stays
//! byte-identical between a cached and an uncached build.
//!
//! The store is process-wide (set up by [`configure`] before a build and
//! closed by [`finish`]), so the deck writer only swaps one call.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::sync::{Mutex, OnceLock};

use crescendo_plan::cache::{hash_hex, Cache};
use crescendo_plan::{DeckPlan, FramePlan};
use crescendo_render::RenderError;

const FORMAT: u32 = 1;

struct Store {
    cache: Option<Cache>,
    /// The digests of the plan being drawn, with the plan's address.
    digests: Option<(usize, Digests)>,
    used: BTreeSet<String>,
    /// (frame number, drawn again)
    frames: Vec<(usize, bool)>,
}

static STORE: Mutex<Option<Store>> = Mutex::new(None);

/// `--no-cache`: build everything, read and write no cache.
static DISABLED: std::sync::atomic::AtomicBool = std::sync::atomic::AtomicBool::new(false);

/// Turn caching off for this process (`--no-cache`).
pub fn disable(off: bool) {
    DISABLED.store(off, std::sync::atomic::Ordering::SeqCst);
}

/// Start a build of the deck in `out`: its caches are beside it (none with
/// `--no-cache`).
pub fn configure_for(out: &Path) {
    if DISABLED.load(std::sync::atomic::Ordering::SeqCst) {
        configure(None);
    } else {
        configure(Some(&cache_dir(out)));
    }
}

/// The planner's view-cache folder for the build being set up, if any.
pub fn planner_cache() -> Option<PathBuf> {
    STORE.lock().ok().and_then(|s| {
        s.as_ref()
            .and_then(|s| s.cache.as_ref().map(|c| c.dir().to_path_buf()))
    })
}

/// What the planner's loads did in the current build (from the cache
/// folder), as one line: "views: 2 computed, 3 from cache".
pub fn views_line() -> Option<String> {
    let dir = planner_cache()?;
    let r: crescendo_plan::LoadReport = Cache::new(dir).get("report", "last")?;
    if r.computed_views.is_empty() && r.cached_views.is_empty() {
        return None;
    }
    Some(format!(
        "streamed views: {} computed, {} from cache",
        r.computed_views.len(),
        r.cached_views.len()
    ))
}

/// Where a deck's caches live: a sibling of the deck folder, which is
/// replaced whole on every build (`<parent>/.crescendo-cache/<deck name>`).
pub fn cache_dir(out: &Path) -> PathBuf {
    let parent = match out.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let name = out
        .file_name()
        .map_or_else(|| "deck".to_string(), |n| n.to_string_lossy().into_owned());
    parent.join(".crescendo-cache").join(name)
}

/// Start a build; `cache`: the folder to reuse frames from (none: draw all).
pub fn configure(cache: Option<&Path>) {
    if let Ok(mut s) = STORE.lock() {
        *s = Some(Store {
            cache: cache.map(Cache::new),
            digests: None,
            used: BTreeSet::new(),
            frames: Vec::new(),
        });
    }
}

/// Delete the view and data entries of the planner's cache that the build
/// just finished did not use (stale after a data refresh or an edited
/// view). Runs only after a good build; an unreadable report prunes
/// nothing.
fn prune_planner_cache() {
    let Some(dir) = planner_cache() else { return };
    let Some(r) = Cache::new(&dir).get::<crescendo_plan::LoadReport>("report", "last") else {
        return;
    };
    let used: BTreeSet<&str> = r.cache_keys.iter().map(String::as_str).collect();
    for kind in ["views", "data"] {
        let Ok(entries) = std::fs::read_dir(dir.join(kind)) else {
            continue;
        };
        for e in entries.flatten() {
            let name = e.file_name().to_string_lossy().into_owned();
            let Some(key) = name.strip_suffix(".json") else {
                continue;
            };
            if !used.contains(format!("{kind}/{key}").as_str()) {
                let _ = std::fs::remove_file(e.path());
            }
        }
    }
}

/// End a build: lines saying what was recomputed and redrawn.
pub fn summary() -> Vec<String> {
    prune_planner_cache();
    let views = views_line();
    let frames = finish();
    let mut out = Vec::new();
    if !frames.is_empty() {
        let drawn: Vec<String> = frames
            .iter()
            .filter(|f| f.1)
            .map(|f| f.0.to_string())
            .collect();
        out.push(match drawn.len() {
            0 => format!("frames: all {} reused from the cache", frames.len()),
            n if n == frames.len() => format!("frames: all {n} drawn"),
            n => format!(
                "frames: {n} of {} drawn again ({}), the others reused",
                frames.len(),
                drawn.join(", ")
            ),
        });
    }
    out.extend(views);
    out
}

/// The frames of the build so far: (number, drawn again). Forgets unused
/// stored frames and records the list in the cache folder.
pub fn finish() -> Vec<(usize, bool)> {
    let Some(store) = STORE.lock().ok().and_then(|mut s| s.take()) else {
        return Vec::new();
    };
    if let Some(c) = &store.cache {
        if let Ok(entries) = std::fs::read_dir(c.dir().join("frames")) {
            for e in entries.flatten() {
                let name = e.file_name().to_string_lossy().into_owned();
                let key = name.trim_end_matches(".json");
                if !store.used.contains(key) {
                    let _ = std::fs::remove_file(e.path());
                }
            }
        }
        let list: Vec<serde_json::Value> = store
            .frames
            .iter()
            .map(|&(number, rebuilt)| serde_json::json!({ "number": number, "rebuilt": rebuilt }))
            .collect();
        if let Ok(mut text) = serde_json::to_string_pretty(&serde_json::json!({ "frames": list })) {
            text.push('\n');
            let _ = std::fs::create_dir_all(c.dir());
            let _ = std::fs::write(c.dir().join("last-build.json"), text);
        }
    }
    store.frames
}

/// The running executable's identity: its path, size and modification
/// time (read once per process; a rebuilt crescendo has a new time).
fn renderer_identity() -> &'static str {
    static ID: OnceLock<String> = OnceLock::new();
    ID.get_or_init(|| {
        let exe = std::env::current_exe().unwrap_or_default();
        let meta = std::fs::metadata(&exe).ok();
        let len = meta.as_ref().map_or(0, |m| m.len());
        let modified = meta
            .and_then(|m| m.modified().ok())
            .and_then(|t| t.duration_since(std::time::UNIX_EPOCH).ok())
            .map_or(0, |d| d.as_nanos());
        crescendo_plan::cache::hash_hex(&[
            env!("CARGO_PKG_VERSION").as_bytes(),
            exe.to_string_lossy().as_bytes(),
            &len.to_le_bytes(),
            &modified.to_le_bytes(),
        ])
    })
}

fn without_notes(f: &FramePlan) -> FramePlan {
    let mut f = f.clone();
    f.notes = None;
    f
}

/// Digests of a plan's parts: the deck-level fields, then each frame
/// (without its notes), in deck order.
type Digests = (String, Vec<(usize, usize, String)>);

/// The digests of `plan`, computed once per deck (not once per frame: a
/// frame's key names its siblings, and serialising them for every frame
/// would make a deck's keys quadratic in its length).
fn digests(plan: &DeckPlan) -> Digests {
    let address = plan as *const DeckPlan as usize;
    if let Ok(s) = STORE.lock() {
        if let Some((a, d)) = s.as_ref().and_then(|s| s.digests.as_ref()) {
            if *a == address {
                return d.clone();
            }
        }
    }
    let mut header = serde_json::to_value(plan).unwrap_or_default();
    if let Some(o) = header.as_object_mut() {
        for k in ["frames", "values", "claims"] {
            o.remove(k);
        }
    }
    let header = hash_hex(&[&serde_json::to_vec(&header).unwrap_or_default()]);
    let frames = plan
        .frames
        .iter()
        .map(|f| {
            let bytes = serde_json::to_vec(&without_notes(f)).unwrap_or_default();
            (f.number, f.sequence, hash_hex(&[&bytes]))
        })
        .collect();
    let d = (header, frames);
    if let Ok(mut s) = STORE.lock() {
        if let Some(s) = s.as_mut() {
            s.digests = Some((address, d.clone()));
        }
    }
    d
}

/// The key of a frame (see the module docs).
fn frame_key(plan: &DeckPlan, frame: &FramePlan) -> String {
    let (header, frames) = digests(plan);
    let own = serde_json::to_vec(&without_notes(frame)).unwrap_or_default();
    let mut parts: Vec<Vec<u8>> = vec![
        FORMAT.to_le_bytes().to_vec(),
        renderer_identity().as_bytes().to_vec(),
        header.into_bytes(),
        hash_hex(&[&own]).into_bytes(),
    ];
    for (number, sequence, digest) in frames {
        if sequence == frame.sequence && number != frame.number {
            parts.push(digest.into_bytes());
        }
    }
    let refs: Vec<&[u8]> = parts.iter().map(Vec::as_slice).collect();
    hash_hex(&refs)
}

/// Draw a frame, or reuse its picture from the cache.
pub fn render_frame(
    plan: &DeckPlan,
    frame: &FramePlan,
    plugins: Option<&dyn crescendo_render::plugin::PluginDrawer>,
) -> Result<String, RenderError> {
    // A plugin frame depends on the plugin's library too, which the plan
    // does not capture: draw it every time.
    let cache = STORE
        .lock()
        .ok()
        .and_then(|s| s.as_ref().and_then(|s| s.cache.clone()))
        .filter(|_| !matches!(frame.chart, crescendo_plan::Chart::Plugin(_)));
    let key = cache.as_ref().map(|_| frame_key(plan, frame));
    let reused = match (&cache, &key) {
        (Some(c), Some(k)) => c.get::<String>("frames", k),
        _ => None,
    };
    let rebuilt = reused.is_none();
    let svg = match reused {
        Some(svg) => svg,
        None => {
            let svg = crescendo_render::render_frame_with(plan, frame, plugins)?;
            if let (Some(c), Some(k)) = (&cache, &key) {
                c.put("frames", k, &svg);
            }
            svg
        }
    };
    if let Ok(mut s) = STORE.lock() {
        if let Some(s) = s.as_mut() {
            if let Some(k) = key {
                s.used.insert(k);
            }
            s.frames.push((frame.number, rebuilt));
        }
    }
    Ok(svg)
}
