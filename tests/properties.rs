//! The same inputs always give the same deck: for random data (and random
//! names, with markup and non-ASCII text), two builds into two folders
//! write byte-identical files.

mod common;

use std::fs;

use common::{crescendo, read_dir_files, scratch};
use proptest::prelude::*;

const STORY: &str = "story \"Same in, same out\"\nsource \"Random test data\"\n\
conclusion \"Done.\"\ndata t from \"t.csv\" { month: month }\n\
view monthly = t\n  | by month, name: n = sum(n)\n\
view total = t\n  | by name: n = sum(n)\n  | top 4 name by n rest \"Others\"\n\
value big = max(total.n)\n\
frame \"Over time\" {\n  line monthly: x month, y n, series name\n  y title \"Count\"\n}\n\
frame \"The largest is {big}\" {\n  bars total: category name, value n\n  y title \"Count\"\n}\n";

fn data() -> impl Strategy<Value = String> {
    let name = prop::sample::select(vec![
        "North",
        "South",
        "<b>East</b>",
        "Wést & co",
        "\"Q\"",
        "الغرب",
        "Z",
    ]);
    prop::collection::vec((name, 1u32..13, -1000i32..100000), 1..60).prop_map(|rows| {
        let mut csv = String::from("month,name,n\n");
        for (name, m, n) in rows {
            let quoted = name.replace('"', "\"\"");
            csv.push_str(&format!("2024-{m:02},\"{quoted}\",{n}\n"));
        }
        csv
    })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(8))]

    #[test]
    fn two_builds_of_the_same_inputs_are_byte_identical(csv in data()) {
        let dir = scratch("same-in-same-out");
        fs::write(dir.join("story.cresc"), STORY).unwrap();
        fs::write(dir.join("t.csv"), &csv).unwrap();
        let mut decks = Vec::new();
        for out in ["a", "b"] {
            let run = crescendo(&dir, &["build", "story.cresc", "--out", out]);
            prop_assert!(run.status.success(), "{}", String::from_utf8_lossy(&run.stderr));
            decks.push(read_dir_files(&dir.join(out)));
        }
        prop_assert!(decks[0].len() >= 4, "{} files", decks[0].len());
        prop_assert_eq!(&decks[0], &decks[1]);
    }
}
