//! How to plan a story: the command-line choices planning depends on.

use std::collections::BTreeMap;
use std::path::PathBuf;
use std::time::Duration;

/// How to plan a story.
#[derive(Clone, Debug, Default)]
pub struct Options {
    /// `--data NAME=FILE`: read data item NAME from FILE instead of the file
    /// the story names (this month's export, without editing the story).
    pub data: BTreeMap<String, PathBuf>,
    /// `--no-plugins`: refuse every `use plugin`.
    pub no_plugins: bool,
    /// `--claims-footnote`: every frame prints the claims its texts rest on
    /// (as if each said `footnote claims`).
    pub claims_footnote: bool,
    /// Check each plugin's path, file and pin, but load none, so no plugin
    /// code runs (`plan` and `plugins` without `--load-plugins`). A frame a
    /// plugin draws is planned with the form the story names (if any), the
    /// story's name for the plugin and the version `(not loaded)`.
    pub inspect_plugins: bool,
    /// How database sources are reached (`--connection`, the statement
    /// timeout).
    pub database: DbOptions,
    /// `--allow-path DIR`: folders outside the story's own folder tree that
    /// the story may read data, house styles and plugins from.
    pub allow_paths: Vec<PathBuf>,
    /// Input, row, frame and text limits (see `limits.rs`).
    pub limits: crate::limits::Limits,
}

/// How database sources are reached.
#[derive(Clone, Debug)]
pub struct DbOptions {
    /// `--connection NAME=ENVVAR`: data item → the environment variable that
    /// holds its connection string (over the one the story names).
    pub connections: BTreeMap<String, String>,
    /// The statement timeout of every query.
    pub timeout: Duration,
    /// Ask the database for each query's plan too (`EXPLAIN (VERBOSE)`,
    /// for `check --explain-sql`): where each step ran, and the SQL a
    /// coordinator sent on to its remote servers.
    pub explain: bool,
}

impl Default for DbOptions {
    fn default() -> Self {
        DbOptions {
            connections: Default::default(),
            timeout: Duration::from_secs(60),
            explain: false,
        }
    }
}
