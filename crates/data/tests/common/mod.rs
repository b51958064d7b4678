//! Helpers shared by the integration tests: temp CSV files and load shortcuts.
#![allow(dead_code)]

use std::path::PathBuf;
use std::sync::atomic::{AtomicUsize, Ordering};

use crescendo_data::{load_csv, ColType, CsvSpec, LoadError, Table, Value};

static COUNTER: AtomicUsize = AtomicUsize::new(0);

/// A fresh, unique directory under the system temp dir.
pub fn temp_dir(tag: &str) -> PathBuf {
    let n = COUNTER.fetch_add(1, Ordering::SeqCst);
    let dir = std::env::temp_dir().join(format!(
        "crescendo-data-tests-{}-{tag}-{n}",
        std::process::id()
    ));
    std::fs::create_dir_all(&dir).expect("create temp dir");
    dir
}

/// Write `bytes` to `<unique temp dir>/<name>` and return the spec to load it
/// with the default missing tokens `""` and `NA`.
pub fn spec_for(name: &str, bytes: &[u8]) -> CsvSpec {
    let path = temp_dir(name.trim_end_matches(".csv")).join(name);
    std::fs::write(&path, bytes).expect("write temp csv");
    CsvSpec {
        path,
        display_name: name.to_owned(),
        declared: Vec::new(),
        missing: vec![String::new(), "NA".to_owned()],
        numbers: Default::default(),
    }
}

/// Load `bytes` as a CSV, expecting success.
pub fn load_ok(bytes: &[u8]) -> Table {
    match load_csv(&spec_for("ok.csv", bytes)) {
        Ok(t) => t,
        Err(e) => panic!("expected a table, got {}", describe(&e)),
    }
}

/// Load with declared types, expecting a failure.
pub fn load_err(name: &str, bytes: &[u8], declared: &[(&str, ColType)]) -> LoadError {
    let mut spec = spec_for(name, bytes);
    spec.declared = declared
        .iter()
        .map(|(n, t)| ((*n).to_owned(), *t))
        .collect();
    match load_csv(&spec) {
        Ok(t) => panic!("expected an error, got {t:?}"),
        Err(e) => e,
    }
}

/// The rendered diagnostic (no colour) of a located error, or the message.
pub fn describe(e: &LoadError) -> String {
    match e {
        LoadError::Csv(d) => crescendo_diag::render(std::slice::from_ref(d), false),
        LoadError::Many(ds) => crescendo_diag::render(ds, false),
        LoadError::Story {
            code,
            message,
            help,
            ..
        } => {
            format!("[{code}] {message} (help: {help:?})")
        }
    }
}

/// The cells of each row of a table, row by row.
pub fn rows(t: &Table) -> Vec<Vec<Value>> {
    let n = t.columns.first().map_or(0, |c| c.values.len());
    (0..n)
        .map(|r| t.columns.iter().map(|c| c.values.value(r)).collect())
        .collect()
}

pub fn text(s: &str) -> Value {
    Value::Text(s.to_owned())
}
