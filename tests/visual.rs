//! Visual snapshots: one PNG per chart form, drawn from the demo stories at
//! scale 1 and compared byte for byte with `tests/visual/<form>.png`, so any
//! change of look shows up as a changed picture to review. After an
//! intended change: `UPDATE_VISUAL=1 cargo test --test visual`, then look
//! at every changed picture before committing it.

mod common;

use std::fs;
use std::path::Path;

use common::{crescendo_with_plugins, root, scratch};

/// Chart forms and the demo frames that show them: (form, story, frame).
const FORMS: &[(&str, &str, usize)] = &[
    ("figures", "libraries", 1),
    ("line", "libraries", 2),
    ("panels", "libraries", 4),
    ("dots", "libraries", 5),
    ("stacked-bars", "libraries", 6),
    ("grouped-bars", "libraries", 8),
    ("pie", "libraries", 9),
    ("scatter", "libraries", 10),
    ("table", "libraries", 11),
    ("horizontal-bars", "volunteers", 1),
    ("vertical-bars", "volunteers", 3),
    ("plugin-slope", "routes", 2),
    ("plugin-waterfall", "routes", 3),
];

fn build(story: &str, out: &Path) -> serde_json::Value {
    let file = root().join(format!("stories/{story}/{story}.cresc"));
    let o = crescendo_with_plugins(
        &root(),
        &[
            "build",
            file.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "--format",
            "png",
            "--scale",
            "1",
        ],
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    serde_json::from_slice(&fs::read(out.join("deck.json")).unwrap()).unwrap()
}

#[test]
fn every_chart_form_matches_its_picture() {
    let dir = scratch("visual");
    let update = std::env::var("UPDATE_VISUAL").as_deref() == Ok("1");
    let folder = root().join("tests/visual");
    let mut changed = Vec::new();
    for story in ["libraries", "volunteers", "routes"] {
        let out = dir.join(story);
        let m = build(story, &out);
        for (form, _, number) in FORMS.iter().filter(|(_, s, _)| *s == story) {
            let frame = &m["frames"][number - 1];
            let png = fs::read(out.join(frame["png"].as_str().unwrap())).unwrap();
            let kept = folder.join(format!("{form}.png"));
            if update {
                fs::create_dir_all(&folder).unwrap();
                fs::write(&kept, &png).unwrap();
            } else if fs::read(&kept).ok().as_deref() != Some(png.as_slice()) {
                changed.push(format!("{form} ({story} frame {number})"));
            }
        }
    }
    assert!(
        changed.is_empty(),
        "pictures changed: {changed:?}; look at them and run UPDATE_VISUAL=1 cargo test --test visual"
    );
}
