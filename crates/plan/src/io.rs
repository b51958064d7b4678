//! Everything planning reads from outside the story text goes through one
//! interface, [`Io`], passed into [`crate::plan_story_with`]: the files a
//! story names (confined to its folder tree), plugin libraries, database
//! sessions and the view cache. Planning itself writes no file; what it
//! learnt about its loads comes back with the plan ([`crate::Planned`]).
//!
//! A file the story names is opened once, by [`Io::open`], and the *opened*
//! file is checked to lie where the story may read (its real path, as the
//! kernel names the descriptor: see `crescendo_data::files`), so a file
//! swapped for a link after its path was checked is still refused. Every
//! read of that file (the type probe, the cache's content hash, each
//! streaming thread, the whole load, the house style's text) goes through
//! the one open file, never through the path again.
//!
//! What differs between implementations is where files come from (the
//! required methods: confine, size, open); parsing an opened file, loading
//! a plugin through [`Io::confine`], reading the environment and connecting
//! to a database are provided methods that the implementations inherit.
//! [`Disk`] is the plain implementation: today's files, no cache. The
//! command wraps it with the cache folder beside the deck; `review` reads a
//! git revision instead; tests read from memory.

use std::fs::File;
use std::io::Read;
use std::path::{Path, PathBuf};
use std::time::Duration;

use crescendo_data::files::{OpenError, Within};
use crescendo_data::load::{load_file, probe_file, ReadLimits};
use crescendo_data::stream::{Chunks, ScanFailure, ScanInput, ScanOutput};
use crescendo_data::{Columns, CsvSpec, LoadError, Probe, Table};
use crescendo_plugin_host::{Plugin, PluginError, Verified};
use crescendo_sql::client::Row;
use crescendo_sql::{Session, SessionError};

use crate::options::Options;

/// Where planning reads from.
// `LoadError` is the data crate's, returned as it comes.
#[allow(clippy::result_large_err)]
pub trait Io {
    /// The file the story wrote as `written`, relative to the story's
    /// folder `dir`, or why the story may not read it (it lies outside the
    /// folders it may read; see `paths.rs`).
    fn confine(&self, dir: &Path, written: &str) -> Result<PathBuf, String>;

    /// The size of a file in bytes; `None` when it cannot be read (its
    /// reader then reports why).
    fn file_len(&self, path: &Path) -> Option<u64>;

    /// Open the file at `path` for reading, once, and check where the
    /// opened file really is: inside the folder tree of the story's folder
    /// `dir` or a folder the story may read (see `paths::within`). `dir`
    /// `None`: a file the user named on the command line (`--data`), which
    /// may be anywhere.
    fn open(&self, dir: Option<&Path>, path: &Path) -> Result<File, OpenError>;

    /// A whole text file (a house style) of the story in `dir`, read
    /// through [`Io::open`].
    fn read_text(&self, dir: &Path, path: &Path) -> Result<String, OpenError> {
        let mut text = String::new();
        self.open(Some(dir), path)?
            .read_to_string(&mut text)
            .map_err(OpenError::Io)?;
        Ok(text)
    }

    /// The columns `columns` of a CSV file, whole, read through `file`
    /// (opened by [`Io::open`] for `spec.path`) within `limits`. Parsing an
    /// opened file is the same everywhere, so this is rarely overridden.
    fn load_csv(
        &self,
        spec: &CsvSpec,
        file: &File,
        columns: &Columns,
        limits: &ReadLimits,
    ) -> Result<Table, LoadError> {
        load_file(spec, file, columns, limits)
    }

    /// The header and the first `sample` records of a CSV file, read
    /// through `file`.
    fn probe_csv(
        &self,
        (spec, file): (&CsvSpec, &File),
        columns: &Columns,
        sample: usize,
        limits: &ReadLimits,
    ) -> Result<Probe, LoadError> {
        probe_file(spec, file, columns, sample, limits)
    }

    /// One streaming pass over a CSV file (see `crescendo_data::stream`),
    /// every thread reading the open file `input.file`.
    fn scan_csv(&self, input: &ScanInput) -> Result<ScanOutput, ScanFailure> {
        crescendo_data::stream::scan(input, &Chunks::Auto)
    }

    /// A plugin library the story names: opened once, the opened file's
    /// real path confined like the story's other files (by
    /// [`Io::confine`]), its bytes hashed and checked against the pin; then
    /// exactly those bytes are loaded, or (when only inspecting) nothing
    /// is, so no plugin code runs.
    fn load_plugin(&mut self, file: &PluginFile) -> Result<Plugin, PluginError> {
        let inside = |real: &Path| self.confine(file.dir, &real.to_string_lossy()).is_ok();
        let verified = Verified::read(file.path, file.pin, &inside)?;
        if file.inspect {
            Ok(Plugin::inspected(verified))
        } else {
            Plugin::load_verified(verified)
        }
    }

    /// An environment variable (a database connection string).
    fn env_var(&self, name: &str) -> Option<String> {
        std::env::var(name).ok()
    }

    /// Open a read-only database session.
    fn connect(
        &mut self,
        connection: &str,
        timeout: Duration,
    ) -> Result<Box<dyn Database>, SessionError> {
        Ok(Box::new(Session::open(connection, timeout)?))
    }

    /// The view cache, when the build keeps one.
    fn cache(&mut self) -> Option<&mut dyn ViewCache> {
        None
    }
}

/// A plugin library a story names, and how far to go with it.
#[derive(Clone, Copy, Debug)]
pub struct PluginFile<'a> {
    /// The story's folder: the opened file must really lie where a story
    /// there may read (see `paths.rs`).
    pub dir: &'a Path,
    /// The path the story wrote, joined to its folder.
    pub path: &'a Path,
    /// The story's pin (SHA-256, hex), if any.
    pub pin: Option<&'a str>,
    /// Check the file and its pin but load nothing
    /// (`Options::inspect_plugins`).
    pub inspect: bool,
}

/// A read-only database session (see `crescendo_sql::Session`).
pub trait Database {
    /// The columns of `sql` (prepared, not run): names and type names.
    fn columns(
        &mut self,
        sql: &str,
        timeout: Duration,
    ) -> Result<Vec<(String, String)>, SessionError>;

    /// Run `sql`; the rows and the bytes of cell text received.
    fn rows(
        &mut self,
        sql: &str,
        params: &[String],
        timeout: Duration,
    ) -> Result<(Vec<Row>, u64), SessionError>;

    /// The plan of `sql` (not run), one line an entry; none where the
    /// session cannot say.
    fn explain(
        &mut self,
        _sql: &str,
        _params: &[String],
        _timeout: Duration,
    ) -> Result<Vec<String>, SessionError> {
        Ok(Vec::new())
    }

    /// End the session (nothing was written).
    fn close(self: Box<Self>);
}

impl Database for Session {
    fn columns(
        &mut self,
        sql: &str,
        timeout: Duration,
    ) -> Result<Vec<(String, String)>, SessionError> {
        Session::columns(self, sql, timeout)
    }

    fn rows(
        &mut self,
        sql: &str,
        params: &[String],
        timeout: Duration,
    ) -> Result<(Vec<Row>, u64), SessionError> {
        Session::rows(self, sql, params, timeout)
    }

    fn explain(
        &mut self,
        sql: &str,
        params: &[String],
        timeout: Duration,
    ) -> Result<Vec<String>, SessionError> {
        Session::explain(self, sql, params, timeout)
    }

    fn close(self: Box<Self>) {
        Session::close(*self)
    }
}

/// Entries kept between builds, by kind and key (see `loading/stream.rs`). Values
/// are JSON; an entry that does not parse is treated as missing.
pub trait ViewCache {
    /// The content hash (xxh3-128, hex) of a data file: the bytes of the
    /// open `file`; `path` only names it.
    fn content_hash(&mut self, path: &Path, file: &File) -> std::io::Result<String>;
    fn get(&self, kind: &str, key: &str) -> Option<Vec<u8>>;
    fn put(&mut self, kind: &str, key: &str, json: Vec<u8>);
}

/// Reads the story's files, plugins and databases; keeps no cache.
#[derive(Clone, Debug, Default)]
pub struct Disk {
    /// Folders outside the story's own that it may read (`--allow-path`).
    allowed: Vec<PathBuf>,
}

impl Disk {
    pub fn new(options: &Options) -> Disk {
        Disk {
            allowed: options.allow_paths.clone(),
        }
    }
}

#[allow(clippy::result_large_err)]
impl Io for Disk {
    fn confine(&self, dir: &Path, written: &str) -> Result<PathBuf, String> {
        crate::paths::confine(dir, written, &self.allowed)
    }

    fn file_len(&self, path: &Path) -> Option<u64> {
        std::fs::metadata(path).ok().map(|m| m.len())
    }

    fn open(&self, dir: Option<&Path>, path: &Path) -> Result<File, OpenError> {
        match dir {
            Some(dir) => crate::paths::within(dir, &self.allowed).open(path),
            None => Within::anywhere().open(path),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A story folder with its own style file, a private folder beside
    /// it, and `house.toml` in the story folder linking to the private
    /// style file.
    fn linked_tree(name: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("crescendo-io-{}-{name}", std::process::id()));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(d.join("story")).unwrap();
        std::fs::create_dir_all(d.join("private")).unwrap();
        std::fs::write(d.join("private/secret.toml"), "fonts = [\"Secret\"]\n").unwrap();
        std::fs::write(d.join("story/own.toml"), "[sizes]\nheadline = 30\n").unwrap();
        std::os::unix::fs::symlink(d.join("private/secret.toml"), d.join("story/house.toml"))
            .unwrap();
        d
    }

    #[test]
    fn the_opened_file_is_checked_not_its_path() {
        // a file that is (or became, after its path was checked) a link
        // out of the story's folder is not read
        let d = linked_tree("disk");
        let (story, io) = (d.join("story"), Disk::default());
        match io.read_text(&story, &story.join("house.toml")) {
            Err(OpenError::Outside { real }) => assert!(real.ends_with("private/secret.toml")),
            other => panic!("{other:?}"),
        }
        assert!(matches!(
            io.open(Some(&story), &story.join("house.toml")),
            Err(OpenError::Outside { .. })
        ));
        let own = io.read_text(&story, &story.join("own.toml")).unwrap();
        assert_eq!(own, "[sizes]\nheadline = 30\n");
        // a folder the user allowed, and a file named on the command line
        let allowed = Disk {
            allowed: vec![d.join("private")],
        };
        assert!(allowed.read_text(&story, &story.join("house.toml")).is_ok());
        assert!(io.open(None, &story.join("house.toml")).is_ok());
        assert!(matches!(
            io.open(Some(&story), &story.join("none.toml")),
            Err(OpenError::Io(_))
        ));
        let _ = std::fs::remove_dir_all(&d);
    }
}
