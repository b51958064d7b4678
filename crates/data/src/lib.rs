//! Data for crescendo: CSV loading into typed columns, the view engine that
//! runs resolved view steps, and number/date formatting.

pub mod bucket;
mod chunk;
mod codes;
mod colfold;
pub mod column;
mod dict;
pub mod digits;
pub mod files;
mod flat;
pub mod fold;
pub mod format;
mod groups;
mod hash;
mod keys;
pub mod load;
mod loader;
pub mod locale;
pub mod model;
mod order;
pub mod parquet;
mod pieces;
pub mod probe;
pub mod progress;
mod quicknum;
mod record;
mod split;
pub mod stats;
pub mod store;
pub mod stream;
mod sum;
pub mod time;
pub mod typed;
pub mod view;
pub mod workbook;

pub use bucket::bad_quarters;
pub use load::{load_csv, load_csv_columns, probe, Columns, CsvSpec, LoadError, Probe};
pub use model::*;
pub use view::run_view;
