//! `crescendo watch`: rebuild the deck whenever the story, its data files,
//! its house-style file or a plugin changes; and, with `--serve`, show the
//! deck on 127.0.0.1 and reload it in the browser after each rebuild.
//!
//! Changes are noticed with the `notify` crate (inotify on Linux) on the
//! folders that hold the watched files, so editors that save by writing a
//! new file and renaming it are seen too; events within [`QUIET`] of each
//! other make one rebuild. Only events that change a file count (see
//! [`changes`]): reading one, as every build does with the story and its
//! data, is no change, so one edit makes one rebuild. A failed build prints
//! its diagnostics and leaves the last good deck in place (the deck writer
//! only replaces a deck after a whole successful build); with `--serve`,
//! the served page shows them (see `serve.rs`).

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::{mpsc, Arc};
use std::time::Duration;

use crescendo_lang::ast::Item;
use notify::event::{AccessKind, AccessMode};
use notify::{EventKind, RecursiveMode, Watcher};

use crate::build::build;
use crate::cli::{DataArgs, LintArgs};
use crate::deck;
use crate::planning::default_out;
use crate::serve;

/// Events closer together than this make one rebuild.
const QUIET: Duration = Duration::from_millis(200);

/// What to watch: exact files, and folders whose whole content counts.
#[derive(Debug, Default, PartialEq)]
struct Targets {
    files: BTreeSet<PathBuf>,
    trees: BTreeSet<PathBuf>,
}

fn absolute(p: &Path) -> PathBuf {
    let p = if p.is_absolute() {
        p.to_path_buf()
    } else {
        std::env::current_dir().unwrap_or_default().join(p)
    };
    // `.` and `..` taken out, without requiring the file to exist
    crescendo_plan::paths::normalise(&p)
}

/// The story, its data files (or their `--data` replacements), its style
/// file, the plugin libraries it names and the plugins folder beside it.
fn targets(story: &Path, replacements: &[(String, PathBuf)]) -> Targets {
    let mut t = Targets::default();
    t.files.insert(absolute(story));
    let dir = story.parent().unwrap_or(Path::new("."));
    let plugins = dir.join("plugins");
    if plugins.is_dir() {
        t.trees.insert(absolute(&plugins));
    }
    let Ok(text) = std::fs::read_to_string(story) else {
        return t;
    };
    let src = crescendo_diag::Source::file(story.display().to_string(), text);
    let (ast, _) = crescendo_lang::parse(&src);
    for item in &ast.items {
        match item {
            Item::Data(d) => {
                let replaced = replacements.iter().find(|(n, _)| *n == d.name.name);
                // A database source has no file to watch (rebuild by
                // touching the story).
                if d.database.is_some() && replaced.is_none() {
                    continue;
                }
                let file = replaced.map_or_else(|| dir.join(&d.file.value), |(_, p)| p.clone());
                t.files.insert(absolute(&file));
            }
            Item::Style(s) => {
                t.files.insert(absolute(&dir.join(&s.text.value)));
            }
            // the plugin libraries the story names, wherever they are
            Item::Plugin(p) => {
                t.files.insert(absolute(&dir.join(&p.path.value)));
            }
            _ => {}
        }
    }
    t
}

impl Targets {
    fn matches(&self, path: &Path) -> bool {
        let p = absolute(path);
        self.files.contains(&p) || self.trees.iter().any(|t| p.starts_with(t))
    }

    /// (folder, recursive) pairs to hand to the watcher.
    fn folders(&self) -> BTreeSet<(PathBuf, bool)> {
        let mut out: BTreeSet<(PathBuf, bool)> = self
            .files
            .iter()
            .filter_map(|f| f.parent().map(|p| (p.to_path_buf(), false)))
            .filter(|(p, _)| p.is_dir())
            .collect();
        out.extend(self.trees.iter().map(|t| (t.clone(), true)));
        out
    }
}

/// `crescendo watch`: build, then rebuild on every change until interrupted.
#[allow(clippy::too_many_arguments)]
pub fn run(
    story: &Path,
    out: Option<PathBuf>,
    draft: bool,
    serve: bool,
    port: u16,
    data: &DataArgs,
    lint: &LintArgs,
    color: bool,
) -> ExitCode {
    let deck_dir = out.clone().unwrap_or_else(|| default_out(story));
    let exports = deck::Exports::default();
    rebuild_loop(story, &deck_dir, &data.data, serve.then_some(port), || {
        build(story, out.clone(), draft, &exports, data, lint, color) == ExitCode::SUCCESS
    })
}

/// Does an event of this kind change a file? Creating, writing (and
/// closing after writing), renaming, removing and changing metadata (`touch`)
/// do; opening, reading and closing after reading do not.
fn changes(kind: &EventKind) -> bool {
    match kind {
        EventKind::Access(AccessKind::Close(AccessMode::Write)) => true,
        EventKind::Access(_) => false,
        EventKind::Create(_) | EventKind::Modify(_) | EventKind::Remove(_) => true,
        EventKind::Any | EventKind::Other => true,
    }
}

/// Run the watch loop until interrupted. `build` builds once and says
/// whether it succeeded.
fn rebuild_loop(
    story: &Path,
    deck: &Path,
    replacements: &[(String, PathBuf)],
    serve: Option<u16>,
    build: impl Fn() -> bool,
) -> ExitCode {
    let state = Arc::new(serve::State::default());
    // a build, and what it printed when it failed
    let build_once = || {
        let (ok, printed) = crate::output::capture(&build);
        state.finished((!ok).then_some(printed));
    };
    build_once();
    if let Some(port) = serve {
        match serve::start(deck, port, Arc::clone(&state)) {
            Ok(addr) => tell!("serving {} at http://{addr}/", deck.display()),
            Err(e) => {
                tell!("error: cannot listen on 127.0.0.1:{port}: {e}");
                return ExitCode::from(2);
            }
        }
    }
    let (tx, rx) = mpsc::channel();
    let mut watcher = match notify::recommended_watcher(move |ev: notify::Result<notify::Event>| {
        if let Ok(ev) = ev {
            if changes(&ev.kind) {
                let _ = tx.send(ev.paths);
            }
        }
    }) {
        Ok(w) => w,
        Err(e) => {
            tell!("error: cannot watch files: {e}");
            return ExitCode::from(1);
        }
    };
    let mut watched: BTreeSet<(PathBuf, bool)> = BTreeSet::new();
    let mut t = targets(story, replacements);
    loop {
        let want = t.folders();
        for (dir, _) in watched.difference(&want) {
            let _ = watcher.unwatch(dir);
        }
        for (dir, recursive) in want.difference(&watched) {
            let mode = if *recursive {
                RecursiveMode::Recursive
            } else {
                RecursiveMode::NonRecursive
            };
            if let Err(e) = watcher.watch(dir, mode) {
                tell!("warning: cannot watch {}: {e}", dir.display());
            }
        }
        watched = want;
        tell!(
            "watching {} file{} for changes (Ctrl-C stops)",
            t.files.len(),
            if t.files.len() == 1 { "" } else { "s" }
        );
        // Wait for a change to a watched file, then for quiet.
        let mut changed: Option<PathBuf> = None;
        while changed.is_none() {
            let Ok(paths) = rx.recv() else {
                return ExitCode::SUCCESS;
            };
            changed = paths.into_iter().find(|p| t.matches(p));
        }
        while rx.recv_timeout(QUIET).is_ok() {}
        if let Some(p) = changed {
            tell!("changed: {}; rebuilding", p.display());
        }
        build_once();
        t = targets(story, replacements);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use notify::event::{CreateKind, DataChange, MetadataKind, ModifyKind, RemoveKind, RenameMode};

    /// Reads (what every build does to the story and its data) are no
    /// change; anything that alters a file is.
    #[test]
    fn only_events_that_alter_a_file_count() {
        for read in [
            EventKind::Access(AccessKind::Open(AccessMode::Any)),
            EventKind::Access(AccessKind::Read),
            EventKind::Access(AccessKind::Close(AccessMode::Read)),
            EventKind::Access(AccessKind::Any),
        ] {
            assert!(!changes(&read), "{read:?}");
        }
        for change in [
            EventKind::Access(AccessKind::Close(AccessMode::Write)),
            EventKind::Create(CreateKind::File),
            EventKind::Modify(ModifyKind::Data(DataChange::Any)),
            EventKind::Modify(ModifyKind::Name(RenameMode::To)),
            EventKind::Modify(ModifyKind::Metadata(MetadataKind::Any)),
            EventKind::Remove(RemoveKind::File),
        ] {
            assert!(changes(&change), "{change:?}");
        }
    }
}
