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
//! `<cache>/last-build.json`, and what the planner's loads did to
//! `<cache>/report/last.json`, never into the deck: `deck.json` stays
//! byte-identical between a cached and an uncached build.
//!
//! The cache is a value: the build command makes a [`FrameCache`] for the
//! plan it draws (its digests are computed once, from the plan's content)
//! and hands it to the deck writer.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;

use crescendo_plan::cache::hash_hex;
use crescendo_plan::{DeckPlan, FramePlan, LoadReport};
use crescendo_render::RenderError;

use crate::store::Cache;

const FORMAT: u32 = 1;

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

/// Digests of a plan's parts: the deck-level fields, then each frame
/// (without its notes) with its number and sequence, in deck order.
struct Digests {
    header: String,
    frames: Vec<(usize, usize, String)>,
}

impl Digests {
    /// Computed once per deck (not once per frame: a frame's key names its
    /// siblings, and hashing them for every frame would make a deck's keys
    /// quadratic in its length).
    fn of(plan: &DeckPlan) -> Digests {
        let mut header = serde_json::to_value(plan).unwrap_or_default();
        if let Some(o) = header.as_object_mut() {
            for k in ["frames", "values", "exact", "claims"] {
                o.remove(k);
            }
        }
        let header = hash_hex(&[&serde_json::to_vec(&header).unwrap_or_default()]);
        let frames = plan
            .frames
            .iter()
            .map(|f| (f.number, f.sequence, frame_digest(f)))
            .collect();
        Digests { header, frames }
    }
}

fn frame_digest(f: &FramePlan) -> String {
    let mut f = f.clone();
    f.notes = None;
    hash_hex(&[&serde_json::to_vec(&f).unwrap_or_default()])
}

/// The frames of one deck being drawn, reused from a cache folder where
/// their keys are unchanged.
pub struct FrameCache {
    store: Option<Cache>,
    digests: Digests,
    /// Keys of the frames of this build.
    used: BTreeSet<String>,
    /// (frame number, drawn again)
    frames: Vec<(usize, bool)>,
}

impl FrameCache {
    /// The frames of `plan`, reused from the cache folder `dir` (none: every
    /// frame is drawn, nothing is stored).
    pub fn new(dir: Option<&Path>, plan: &DeckPlan) -> FrameCache {
        FrameCache {
            store: dir.map(Cache::new),
            digests: Digests::of(plan),
            used: BTreeSet::new(),
            frames: Vec::new(),
        }
    }

    /// The key of a frame (see the module docs).
    fn key(&self, frame: &FramePlan) -> String {
        let own = frame_digest(frame);
        let format = FORMAT.to_le_bytes();
        let mut parts: Vec<&[u8]> = vec![
            &format,
            renderer_identity().as_bytes(),
            self.digests.header.as_bytes(),
            own.as_bytes(),
        ];
        for (number, sequence, digest) in &self.digests.frames {
            if *sequence == frame.sequence && *number != frame.number {
                parts.push(digest.as_bytes());
            }
        }
        hash_hex(&parts)
    }

    /// Draw a frame, or reuse its picture.
    pub fn render(
        &mut self,
        plan: &DeckPlan,
        frame: &FramePlan,
        plugins: Option<&dyn crescendo_render::plugin::PluginDrawer>,
    ) -> Result<String, RenderError> {
        // A plugin frame depends on the plugin's library too, which the plan
        // does not capture: draw it every time.
        let plugin = matches!(frame.chart, crescendo_plan::Chart::Plugin(_));
        let key = self
            .store
            .as_ref()
            .filter(|_| !plugin)
            .map(|_| self.key(frame));
        let reused = match (&self.store, &key) {
            (Some(c), Some(k)) => c.get::<String>("frames", k),
            _ => None,
        };
        let rebuilt = reused.is_none();
        let svg = match reused {
            Some(svg) => svg,
            None => {
                let svg = crescendo_render::render_frame_with(plan, frame, plugins)?;
                if let (Some(c), Some(k)) = (&self.store, &key) {
                    c.put("frames", k, &svg);
                }
                svg
            }
        };
        self.used.extend(key);
        self.frames.push((frame.number, rebuilt));
        Ok(svg)
    }

    /// End a good build: forget the stored frames and the planner's cache
    /// entries it did not use (so the cache does not grow with every data
    /// refresh), record which frames were drawn, and say so in lines for
    /// the terminal.
    pub fn finish(self, report: &LoadReport) -> Vec<String> {
        let mut out = Vec::new();
        if !self.frames.is_empty() {
            out.push(self.frames_line());
        }
        if let Some(c) = &self.store {
            prune(c.dir(), report);
            self.record(c);
            c.put("report", "last", report);
            out.extend(views_line(report));
            if !report.skipped_groups.is_empty() {
                out.push(format!(
                    "row groups skipped by their statistics: {}",
                    report.skipped_groups.join(", ")
                ));
            }
        }
        out
    }

    /// Delete unused stored frames and write `last-build.json`.
    fn record(&self, c: &Cache) {
        if let Ok(entries) = std::fs::read_dir(c.dir().join("frames")) {
            for e in entries.flatten() {
                let name = e.file_name().to_string_lossy().into_owned();
                let key = name.trim_end_matches(".json");
                if !self.used.contains(key) {
                    let _ = std::fs::remove_file(e.path());
                }
            }
        }
        let list: Vec<serde_json::Value> = self
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

    /// "frames: 2 of 5 drawn again (1, 4), the others reused".
    fn frames_line(&self) -> String {
        let frames = &self.frames;
        let drawn: Vec<String> = frames
            .iter()
            .filter(|f| f.1)
            .map(|f| f.0.to_string())
            .collect();
        match drawn.len() {
            0 => format!("frames: all {} reused from the cache", frames.len()),
            n if n == frames.len() => format!("frames: all {n} drawn"),
            n => format!(
                "frames: {n} of {} drawn again ({}), the others reused",
                frames.len(),
                drawn.join(", ")
            ),
        }
    }
}

/// What the planner's loads did, as one line: "streamed views: 2
/// computed, 3 from cache".
fn views_line(r: &LoadReport) -> Option<String> {
    if r.computed_views.is_empty() && r.cached_views.is_empty() {
        return None;
    }
    Some(format!(
        "streamed views: {} computed, {} from cache",
        r.computed_views.len(),
        r.cached_views.len()
    ))
}

/// Delete the view and data entries of the planner's cache in `dir` that
/// the build (whose loads `report` describes) did not use: stale after a
/// data refresh or an edited view.
pub(crate) fn prune(dir: &Path, report: &LoadReport) {
    let used: BTreeSet<&str> = report.cache_keys.iter().map(String::as_str).collect();
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
        hash_hex(&[
            env!("CARGO_PKG_VERSION").as_bytes(),
            exe.to_string_lossy().as_bytes(),
            &len.to_le_bytes(),
            &modified.to_le_bytes(),
        ])
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crescendo_plan::{Chart, FigureChart};

    fn frame(number: usize, sequence: usize, headline: &str) -> FramePlan {
        FramePlan {
            number,
            slug: "f".into(),
            sequence,
            headline: headline.into(),
            takeaway: None,
            notes: None,
            source: None,
            description: String::new(),
            quoted: Default::default(),
            templates: Default::default(),
            notices: Vec::new(),
            cites: Vec::new(),
            claim_notes: Vec::new(),
            mark_notes: Vec::new(),
            chart: Chart::Figures(FigureChart {
                figures: Vec::new(),
            }),
        }
    }

    fn deck(frames: Vec<FramePlan>) -> DeckPlan {
        DeckPlan {
            title: "t".into(),
            theme: "clear".into(),
            frames,
            ..Default::default()
        }
    }

    #[test]
    fn keys_come_from_the_content_of_the_frame_and_its_sequence() {
        let a = deck(vec![frame(1, 1, "a"), frame(2, 1, "b"), frame(3, 2, "c")]);
        let key = |plan: &DeckPlan, i: usize| FrameCache::new(None, plan).key(&plan.frames[i]);
        // the same content elsewhere in memory: the same keys
        let copy = Box::new(a.clone());
        for i in 0..3 {
            assert_eq!(key(&a, i), key(&copy, i));
        }
        // a sibling in the same sequence changes the key; one in another
        // sequence, or speaker notes, do not
        let mut b = a.clone();
        b.frames[1].headline = "B".into();
        assert_ne!(key(&a, 0), key(&b, 0));
        assert_eq!(key(&a, 2), key(&b, 2));
        let mut c = a.clone();
        c.frames[0].notes = Some("say this".into());
        assert_eq!(key(&a, 0), key(&c, 0));
        // a deck-level field changes every key
        let mut d = a.clone();
        d.title = "T".into();
        assert_ne!(key(&a, 2), key(&d, 2));
    }
}
