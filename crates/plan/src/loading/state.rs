//! What a story's loads share: the facts learnt from the whole story, and
//! what the reads did (the load report and the SQL log).

use crescendo_data::load::ReadLimits;
use crescendo_lang::ast;

use crate::loading::facts::StoryFacts;

/// How the data items of one plan were read.
#[derive(Clone, Debug, Default, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct LoadReport {
    /// Data items read in one streaming pass.
    pub streamed: Vec<String>,
    /// Data items loaded whole (the used columns).
    pub loaded: Vec<String>,
    /// Views whose streamed prefix came from the cache.
    pub cached_views: Vec<String>,
    /// Views whose streamed prefix was computed by this build.
    pub computed_views: Vec<String>,
    /// The cache entries this build read or wrote (`views/KEY`,
    /// `data/KEY`); the command deletes the others after a good build, so
    /// the cache does not grow with every data refresh.
    #[serde(default)]
    pub cache_keys: Vec<String>,
    /// Parquet data items whose row groups were skipped by their
    /// statistics: `NAME: COUNT`.
    #[serde(default)]
    pub skipped_groups: Vec<String>,
}

/// Reads a story's data items: what the whole story says about them, and
/// what the reads did.
#[derive(Default)]
pub(crate) struct Loader {
    pub(crate) facts: StoryFacts,
    pub(crate) report: LoadReport,
    /// The queries database sources ran (for `check --explain-sql`).
    pub(crate) sql: Vec<crescendo_sql::Explained>,
    /// The text and row limits of every file read (see `limits.rs`).
    pub(crate) limits: ReadLimits,
}

impl Loader {
    /// A loader for `story` (see [`StoryFacts`]) that reads within
    /// `limits`.
    pub(crate) fn prepare(story: &ast::StoryAst, limits: ReadLimits) -> Loader {
        Loader {
            facts: StoryFacts::of(story),
            limits,
            ..Loader::default()
        }
    }
}
