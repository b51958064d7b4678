//! The CSV loader with type inference (and with declared types): any bytes
//! give a table or a located error, never a panic; errors render.
#![no_main]

use crescendo_data::{load_csv, ColType, CsvSpec};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let path = std::env::temp_dir().join(format!("crescendo-fuzz-{}.csv", std::process::id()));
    if std::fs::write(&path, data).is_err() {
        return;
    }
    let mut spec = CsvSpec {
        path: path.clone(),
        display_name: "fuzz.csv".into(),
        declared: Vec::new(),
        missing: vec![String::new(), "NA".into()],
        numbers: Default::default(),
    };
    let _ = load_csv(&spec);
    spec.declared = vec![
        ("a".into(), ColType::Number),
        ("b".into(), ColType::Date),
        ("c".into(), ColType::Month),
        ("d".into(), ColType::Year),
    ];
    let _ = load_csv(&spec);
});
