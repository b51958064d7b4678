//! PostgreSQL data sources for crescendo.
//!
//! A `data` item may read a table or a read-only query of a PostgreSQL
//! database (or any engine that speaks its protocol) instead of a CSV file.
//! The views over it are split as the streaming reader splits them (see
//! `crates/plan/src/loading/`): each view's leading `keep` and `add`
//! steps and at most one `by` step, then its `keep`, `add`, `sort` and
//! `columns` steps, form its *prefix*, a small relational plan (scan,
//! filter, derive, group/aggregate, sort, project, ordered by first
//! appearance) that has two executors: the local engine
//! (`crescendo_data::stream`/`view`) and [`print::pipeline`], which prints
//! it as one SQL query. Only the prefix's result crosses the network; the
//! view's later steps (`top`, a second `by` and what follows them) run
//! locally on it, as they do for a streamed CSV file.
//!
//! * [`types`]: database column types → the story's types.
//! * [`print`]: the SQL printer. Values from the story are bound parameters
//!   (`$1`, `$2`, …, sent as text and cast in SQL), identifiers are quoted
//!   with doubled quotes; nothing from the story or the data is spliced
//!   into the SQL text (the text of a `query` source is the one exception:
//!   it is the user's own SQL, run read-only).
//! * [`client`]: connecting (TLS when the connection string says
//!   `sslmode=require`), one read-only transaction with a statement
//!   timeout, redaction of the connection string and password from every
//!   message.
//! * [`decode`]: the query's text cells back into typed values, exactly as
//!   the local engine would compute them.

pub mod client;
pub mod decode;
pub mod print;
pub mod types;

pub use client::{redact, Session, SessionError};
pub use print::{Output, Query};
pub use types::{Read, SrcColumn};

/// What one query sent and received, for `crescendo check --explain-sql`.
#[derive(Clone, Debug, Default, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct Explained {
    /// The data item.
    pub data: String,
    /// The view whose prefix ran in the database, or `None` when the data
    /// item's rows were fetched whole.
    pub view: Option<String>,
    /// The SQL text, with `$1`, `$2`, … placeholders.
    pub sql: String,
    /// The values bound to the placeholders, in order.
    pub params: Vec<String>,
    /// Rows received.
    pub rows: u64,
    /// Bytes of cell text received (a debug figure: the payload, without
    /// the protocol's framing).
    pub bytes: u64,
    /// The database's plan of the query (`EXPLAIN (VERBOSE, COSTS OFF)`),
    /// one line an entry, when asked for (`check --explain-sql`); a
    /// coordinator's plan names the SQL it sent to each remote server
    /// (`Remote SQL:` lines of postgres_fdw).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub plan: Vec<String>,
}

impl Explained {
    /// The SQL the database sent on to remote servers (postgres_fdw's
    /// `Remote SQL:` lines of the plan), in plan order.
    pub fn remote_sql(&self) -> Vec<&str> {
        self.plan
            .iter()
            .filter_map(|l| l.trim_start().strip_prefix("Remote SQL:"))
            .map(str::trim)
            .collect()
    }
}

/// Where a database `data` item reads from.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum From {
    Table {
        schema: Option<String>,
        name: String,
    },
    Query(String),
}
