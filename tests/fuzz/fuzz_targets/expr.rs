//! The expression evaluator and number formats: the first line of the input
//! is a view expression, the second a text with quoted values. They are put
//! into a small story over a fixed CSV and planned; besides, the input's
//! first bytes are formatted as a number at every precision. Never a panic.
#![no_main]

use std::sync::OnceLock;

use crescendo_data::format;
use crescendo_diag::Source;
use libfuzzer_sys::fuzz_target;

const CSV: &str = "c,m,a,b\nNorth,2024-01,12.5,3\nSouth,2024-01,-4,\nNorth,2024-02,1e6,0\nEast,2024-03,NA,7\n";

fn dir() -> &'static std::path::Path {
    static DIR: OnceLock<std::path::PathBuf> = OnceLock::new();
    DIR.get_or_init(|| {
        let d = std::env::temp_dir().join(format!("crescendo-fuzz-expr-{}", std::process::id()));
        let _ = std::fs::create_dir_all(&d);
        let _ = std::fs::write(d.join("t.csv"), CSV);
        d
    })
}

fuzz_target!(|data: &[u8]| {
    if data.len() >= 9 {
        let mut b = [0u8; 8];
        b.copy_from_slice(&data[..8]);
        let v = f64::from_le_bytes(b);
        let _ = format::number(v, None);
        let _ = format::number(v, Some(usize::from(data[8])));
        let _ = format::compact(v);
        let _ = format::tick_labels(&[v, v / 3.0, -v], v / 7.0);
    }
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let mut lines = text.splitn(2, '\n');
    let expr = lines.next().unwrap_or("");
    let quote = lines.next().unwrap_or("").replace(['"', '\n'], "");
    let story = format!(
        "story \"t\"\nsource \"s\"\ndata t from \"t.csv\" {{ m: month }}\n\
         view v = t\n  | keep {expr}\n  | add z = {expr}\n\
         view w = t\n  | by c: a = sum(a)\n\
         value q = {expr}\nvalue r = sum(w.a where c = \"North\")\n\
         frame \"{quote}\" {{\n  bars w: category c, value a\n  takeaway \"{{r as percent to 1 decimal}} {quote}\"\n}}\n"
    );
    let src = Source::file("fuzz.cresc", story);
    let options = crescendo_plan::Options::default();
    match crescendo_plan::plan_story(&src, dir(), &options) {
        Ok(p) => {
            let _ = serde_json::to_string(&p.plan);
        }
        Err(d) => {
            let _ = crescendo_diag::render(&d, false);
        }
    }
});
