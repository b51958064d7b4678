//! The directions the crates may depend on each other, read from every
//! crate's `Cargo.toml`, and the module graph of the renderer.
//!
//! - the renderer draws a frame plan: it depends on neither the planner, the
//!   data crate, the database crate nor the plugin loader;
//! - the lint reads plans, display lists and the look, never the renderer;
//! - the plan model (`crescendo-frame`) and the look (`crescendo-look`) are
//!   small: serde, the plugin messages, the font and colour crates, nothing
//!   heavier (no loader, no hashing, no database client, no TLS);
//! - no module of the renderer imports, through other modules, itself.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Every workspace package's name and its normal (not dev, not build)
/// dependencies.
fn packages() -> BTreeMap<String, BTreeSet<String>> {
    let mut manifests: Vec<PathBuf> = Vec::new();
    for dir in ["crates", "plugins", "plugins/faults"] {
        for entry in std::fs::read_dir(root().join(dir)).unwrap() {
            let path = entry.unwrap().path().join("Cargo.toml");
            if path.is_file() {
                manifests.push(path);
            }
        }
    }
    let mut out = BTreeMap::new();
    for path in manifests {
        let text = std::fs::read_to_string(&path).unwrap();
        let doc: toml::Table = toml::from_str(&text).unwrap();
        let name = doc["package"]["name"].as_str().unwrap().to_string();
        let deps = doc
            .get("dependencies")
            .and_then(|d| d.as_table())
            .map(|t| t.keys().cloned().collect())
            .unwrap_or_default();
        out.insert(name, deps);
    }
    out
}

/// `name` and everything it depends on, transitively, through workspace
/// packages (external crates are leaves).
fn closure(all: &BTreeMap<String, BTreeSet<String>>, name: &str) -> BTreeSet<String> {
    let mut seen = BTreeSet::new();
    let mut todo = vec![name.to_string()];
    while let Some(n) = todo.pop() {
        if !seen.insert(n.clone()) {
            continue;
        }
        if let Some(deps) = all.get(&n) {
            todo.extend(deps.iter().cloned());
        }
    }
    seen.remove(name);
    seen
}

#[test]
fn crates_depend_only_in_the_allowed_directions() {
    let all = packages();
    for needed in [
        "crescendo-render",
        "crescendo-lint",
        "crescendo-frame",
        "crescendo-look",
    ] {
        assert!(all.contains_key(needed), "{needed} not found: {all:?}");
    }
    let render = closure(&all, "crescendo-render");
    for banned in [
        "crescendo-plan",
        "crescendo-data",
        "crescendo-sql",
        "crescendo-plugin-host",
        "crescendo-lint",
    ] {
        assert!(
            !render.contains(banned),
            "crescendo-render depends on {banned}"
        );
    }
    let lint = closure(&all, "crescendo-lint");
    for banned in ["crescendo-render", "crescendo-plan", "crescendo-sql"] {
        assert!(!lint.contains(banned), "crescendo-lint depends on {banned}");
    }
    // The model and the look: serde, the plugin messages, the bundled font,
    // glyph metrics and colour conversions, nothing else.
    let light: BTreeSet<&str> = [
        "serde",
        "serde_json",
        "crescendo-plugin",
        "crescendo-frame",
        "ab_glyph",
        "dejavu",
        "palette",
    ]
    .into();
    for name in ["crescendo-frame", "crescendo-look", "crescendo-plugin"] {
        for dep in closure(&all, name) {
            assert!(
                light.contains(dep.as_str()),
                "{name} depends on {dep}, which is heavier than the model and the look may be"
            );
        }
    }
}

/// The modules of a crate's `src/` folder (one per file) and the modules
/// each names as `crate::module` or `super::module` outside its tests.
fn module_graph(src: &Path) -> BTreeMap<String, BTreeSet<String>> {
    let mut files = BTreeMap::new();
    for entry in std::fs::read_dir(src).unwrap() {
        let path = entry.unwrap().path();
        let Some(stem) = path.file_stem().and_then(|s| s.to_str()) else {
            continue;
        };
        if path.extension().is_some_and(|e| e == "rs") && !stem.ends_with("tests") {
            files.insert(stem.to_string(), std::fs::read_to_string(&path).unwrap());
        }
    }
    let names: BTreeSet<String> = files.keys().cloned().collect();
    let mut graph = BTreeMap::new();
    for (name, text) in &files {
        let code = text.split("#[cfg(test)]").next().unwrap_or("");
        let mut uses = BTreeSet::new();
        for other in &names {
            if other == name || other == "lib" {
                continue;
            }
            let inside_use = code.lines().any(|line| {
                let line = line.trim_start();
                !line.starts_with("//")
                    && (line.contains(&format!("crate::{other}::"))
                        || line.contains(&format!("crate::{other};"))
                        || line.contains(&format!("crate::{other}}}"))
                        || line.contains(&format!("crate::{{{other}"))
                        || line.contains(&format!("crate::{other},"))
                        || line.contains(&format!("crate::{other}::{{")))
            });
            let in_braces = code.contains("use crate::{")
                && code.split("use crate::{").skip(1).any(|rest| {
                    rest.split("};")
                        .next()
                        .is_some_and(|list| list_names(list, other))
                });
            if inside_use || in_braces {
                uses.insert(other.clone());
            }
        }
        graph.insert(name.clone(), uses);
    }
    graph
}

/// Whether a `use crate::{...}` list names module `m` at its top level.
fn list_names(list: &str, m: &str) -> bool {
    let mut depth = 0;
    let mut item = String::new();
    let mut items = Vec::new();
    for c in list.chars() {
        match c {
            '{' => depth += 1,
            '}' => depth -= 1,
            ',' if depth == 0 => items.push(std::mem::take(&mut item)),
            _ => {}
        }
        if !(c == ',' && depth == 0) {
            item.push(c);
        }
    }
    items.push(item);
    items.iter().any(|i| {
        let i = i.trim();
        i == m || i.starts_with(&format!("{m}::")) || i.starts_with(&format!("{m} "))
    })
}

/// A cycle in `graph`, if there is one, as the modules along it.
fn find_cycle(graph: &BTreeMap<String, BTreeSet<String>>) -> Option<Vec<String>> {
    fn visit(
        n: &str,
        graph: &BTreeMap<String, BTreeSet<String>>,
        state: &mut BTreeMap<String, u8>,
        path: &mut Vec<String>,
    ) -> Option<Vec<String>> {
        match state.get(n) {
            Some(2) => return None,
            Some(1) => {
                let from = path.iter().position(|p| p == n).unwrap_or(0);
                let mut cycle = path[from..].to_vec();
                cycle.push(n.to_string());
                return Some(cycle);
            }
            _ => {}
        }
        state.insert(n.to_string(), 1);
        path.push(n.to_string());
        for m in graph.get(n).into_iter().flatten() {
            if let Some(c) = visit(m, graph, state, path) {
                return Some(c);
            }
        }
        path.pop();
        state.insert(n.to_string(), 2);
        None
    }
    let mut state = BTreeMap::new();
    for n in graph.keys() {
        let mut path = Vec::new();
        if let Some(c) = visit(n, graph, &mut state, &mut path) {
            return Some(c);
        }
    }
    None
}

#[test]
fn the_renderer_has_no_module_cycles() {
    let graph = module_graph(&root().join("crates/render/src"));
    assert!(graph.len() > 10, "{graph:?}");
    assert!(
        graph["svg"].contains("canvas"),
        "the reader sees uses: {graph:?}"
    );
    if let Some(cycle) = find_cycle(&graph) {
        panic!("module cycle in crates/render: {}", cycle.join(" → "));
    }
}

#[test]
fn cycles_are_found() {
    let graph: BTreeMap<String, BTreeSet<String>> = [
        ("a", vec!["b"]),
        ("b", vec!["c"]),
        ("c", vec!["a"]),
        ("d", vec![]),
    ]
    .into_iter()
    .map(|(k, v)| (k.to_string(), v.into_iter().map(String::from).collect()))
    .collect();
    assert_eq!(find_cycle(&graph).unwrap().len(), 4);
    assert!(list_names("canvas::{Align, Label}, kit, theme::Rgb", "kit"));
    assert!(!list_names("canvas::{kit}, theme", "kit"));
}
