//! No module of the planner imports, directly or through others, a module
//! that imports it: the phases depend one way. The graph is read from the
//! source: every `crate::a::b` path (in `use` lines and in code, grouped
//! imports `crate::a::{b, c}` included), every `super::` path, and every
//! path a `mod.rs` (or `lib.rs`) starts with one of its own submodules.
//! Comments and test modules are left out. Both the graph of files and the
//! graph of the crate's top-level modules must be free of cycles.

use std::collections::{BTreeMap, BTreeSet};
use std::fs;
use std::path::Path;

/// Module path (`""` for the crate root, `forms::spec`) → source text.
fn modules(src: &Path) -> BTreeMap<String, String> {
    let mut out = BTreeMap::new();
    let mut stack = vec![src.to_path_buf()];
    while let Some(dir) = stack.pop() {
        for entry in fs::read_dir(&dir).expect("readable source folder") {
            let path = entry.expect("a directory entry").path();
            if path.is_dir() {
                stack.push(path);
                continue;
            }
            if path.extension().is_none_or(|e| e != "rs") {
                continue;
            }
            let rel = path.strip_prefix(src).expect("inside src");
            let mut parts: Vec<String> = rel
                .iter()
                .map(|p| p.to_string_lossy().trim_end_matches(".rs").to_string())
                .collect();
            if matches!(parts.last().map(String::as_str), Some("mod" | "lib")) {
                parts.pop();
            }
            let text = fs::read_to_string(&path).expect("readable source file");
            out.insert(parts.join("::"), code_of(&text));
        }
    }
    out
}

/// The code of a file: without comments and without `#[cfg(test)]`
/// modules (which sit at the end of a file here).
fn code_of(text: &str) -> String {
    let text = match text.find("#[cfg(test)]") {
        Some(i) => &text[..i],
        None => text,
    };
    text.lines()
        .map(|l| match l.find("//") {
            Some(i) => &l[..i],
            None => l,
        })
        .collect::<Vec<_>>()
        .join("\n")
}

fn is_ident(c: char) -> bool {
    c.is_ascii_alphanumeric() || c == '_'
}

/// The paths that follow `prefix` in `code` (a grouped import gives one
/// path per member), each as its segments.
fn paths_after(code: &str, prefix: &str) -> Vec<Vec<String>> {
    let mut out = Vec::new();
    for (i, _) in code.match_indices(prefix) {
        let before = code[..i].chars().next_back();
        if before.is_some_and(|c| is_ident(c) || c == ':') {
            continue;
        }
        read_path(&code[i + prefix.len()..], Vec::new(), &mut out);
    }
    out
}

/// Read one path (maybe ending in a `{...}` group) from the start of `s`.
fn read_path(s: &str, mut head: Vec<String>, out: &mut Vec<Vec<String>>) {
    let mut s = s;
    loop {
        let name: String = s.chars().take_while(|c| is_ident(*c)).collect();
        if name.is_empty() {
            if let Some(group) = s.strip_prefix('{') {
                // a trailing comma leaves an empty member: not a path
                for member in split_group(group).iter().map(|m| m.trim()) {
                    if !member.is_empty() {
                        read_path(member, head.clone(), out);
                    }
                }
                return;
            }
            break;
        }
        s = &s[name.len()..];
        head.push(name);
        match s.strip_prefix("::") {
            Some(r) => s = r,
            None => break,
        }
    }
    if !head.is_empty() {
        out.push(head);
    }
}

/// The members of a `{...}` group, up to its closing brace.
fn split_group(s: &str) -> Vec<&str> {
    let mut members = Vec::new();
    let (mut depth, mut start) = (0, 0);
    for (i, c) in s.char_indices() {
        match c {
            '{' => depth += 1,
            '}' if depth == 0 => {
                members.push(&s[start..i]);
                return members;
            }
            '}' => depth -= 1,
            ',' if depth == 0 => {
                members.push(&s[start..i]);
                start = i + 1;
            }
            _ => {}
        }
    }
    members
}

/// The longest prefix of `path` that names a module.
fn module_of(path: &[String], known: &BTreeMap<String, String>) -> Option<String> {
    (1..=path.len())
        .rev()
        .map(|n| path[..n].join("::"))
        .find(|m| known.contains_key(m))
}

/// Module → the modules it refers to.
fn graph(known: &BTreeMap<String, String>) -> BTreeMap<String, BTreeSet<String>> {
    let mut edges: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    for (module, code) in known {
        let mut targets = BTreeSet::new();
        for p in paths_after(code, "crate::") {
            targets.extend(module_of(&p, known));
        }
        let parent: Vec<String> = match module.rsplit_once("::") {
            Some((p, _)) => p.split("::").map(str::to_string).collect(),
            None => Vec::new(),
        };
        for p in paths_after(code, "super::") {
            let mut base = parent.clone();
            let mut rest = p.as_slice();
            while rest.first().is_some_and(|s| s == "super") {
                base.pop();
                rest = &rest[1..];
            }
            let full: Vec<String> = base.into_iter().chain(rest.iter().cloned()).collect();
            // `super::X` of a top-level module names the crate root
            targets.insert(module_of(&full, known).unwrap_or_default());
        }
        // a parent's own paths into its submodules (`mod child;` declares)
        let own: Vec<String> = if module.is_empty() {
            Vec::new()
        } else {
            module.split("::").map(str::to_string).collect()
        };
        for child in known.keys() {
            let Some(name) = child
                .strip_prefix(&format!("{module}::"))
                .or_else(|| (module.is_empty()).then_some(child.as_str()))
                .filter(|n| !n.is_empty() && !n.contains("::"))
            else {
                continue;
            };
            for p in paths_after(code, &format!("{name}::")) {
                let full: Vec<String> = own
                    .iter()
                    .cloned()
                    .chain([name.to_string()])
                    .chain(p)
                    .collect();
                targets.extend(module_of(&full, known));
            }
        }
        targets.remove(module);
        edges.insert(module.clone(), targets);
    }
    edges
}

/// A cycle in `edges`, if there is one, as the modules along it.
fn cycle(edges: &BTreeMap<String, BTreeSet<String>>) -> Option<Vec<String>> {
    // 0: not seen, 1: on the current path, 2: done
    fn visit(
        n: &str,
        edges: &BTreeMap<String, BTreeSet<String>>,
        state: &mut BTreeMap<String, u8>,
        path: &mut Vec<String>,
    ) -> Option<Vec<String>> {
        state.insert(n.to_string(), 1);
        path.push(n.to_string());
        for m in edges.get(n).into_iter().flatten() {
            match state.get(m.as_str()).copied().unwrap_or(0) {
                1 => {
                    let start = path.iter().position(|p| p == m).unwrap_or(0);
                    let mut c = path[start..].to_vec();
                    c.push(m.clone());
                    return Some(c);
                }
                0 => {
                    if let Some(c) = visit(m, edges, state, path) {
                        return Some(c);
                    }
                }
                _ => {}
            }
        }
        path.pop();
        state.insert(n.to_string(), 2);
        None
    }
    let mut state = BTreeMap::new();
    for n in edges.keys() {
        if state.get(n.as_str()).copied().unwrap_or(0) == 0 {
            if let Some(c) = visit(n, edges, &mut state, &mut Vec::new()) {
                return Some(c);
            }
        }
    }
    None
}

/// The graph of top-level modules (the crate root left out: it only
/// declares and re-exports).
fn top_level(edges: &BTreeMap<String, BTreeSet<String>>) -> BTreeMap<String, BTreeSet<String>> {
    let top = |m: &str| m.split("::").next().unwrap_or("").to_string();
    let mut out: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    for (from, tos) in edges.iter().filter(|(f, _)| !f.is_empty()) {
        let entry = out.entry(top(from)).or_default();
        for to in tos.iter().filter(|t| !t.is_empty()) {
            if top(to) != top(from) {
                entry.insert(top(to));
            }
        }
    }
    out
}

fn show(c: &[String]) -> String {
    c.iter()
        .map(|m| if m.is_empty() { "crate" } else { m.as_str() })
        .collect::<Vec<_>>()
        .join(" → ")
}

#[test]
fn the_planner_has_no_module_cycles() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let known = modules(&src);
    assert!(known.contains_key("forms::spec"), "{:?}", known.keys());
    let edges = graph(&known);
    // the reading itself works: these dependencies exist
    assert!(edges["driver"].contains("frames"), "{:?}", edges["driver"]);
    assert!(
        edges["forms"].contains("forms::line"),
        "{:?}",
        edges["forms"]
    );
    assert!(edges["frames::frame"].contains("forms"));
    if let Some(c) = cycle(&edges) {
        panic!("module cycle: {}", show(&c));
    }
    if let Some(c) = cycle(&top_level(&edges)) {
        panic!("cycle between top-level modules: {}", show(&c));
    }
}

#[test]
fn cycles_are_found() {
    let known: BTreeMap<String, String> = [
        ("", "mod a; mod b; pub use a::f;"),
        ("a", "use crate::b::{g, h::{self}};\nfn f() {}"),
        ("b", "// use crate::a;\nmod h;\npub fn g() { h::x(); }"),
        ("b::h", "pub fn x() { super::super::a::f() }"),
    ]
    .into_iter()
    .map(|(k, v)| (k.to_string(), code_of(v)))
    .collect();
    let edges = graph(&known);
    assert_eq!(
        edges["a"],
        BTreeSet::from(["b".to_string(), "b::h".to_string()])
    );
    assert_eq!(edges["b"], BTreeSet::from(["b::h".to_string()]));
    assert_eq!(edges["b::h"], BTreeSet::from(["a".to_string()]));
    assert_eq!(
        cycle(&edges).map(|c| show(&c)),
        Some("a → b → b::h → a".to_string())
    );
    // a group written over several lines with a trailing comma (as
    // rustfmt writes a long one) names its members, not its parent
    let mut paths = Vec::new();
    read_path("b::{\n    g,\n    h,\n};", Vec::new(), &mut paths);
    assert_eq!(paths, vec![vec!["b", "g"], vec!["b", "h"]]);
    // without the path back from `b::h`, no cycle
    let mut fixed = edges.clone();
    fixed.insert("b::h".into(), BTreeSet::new());
    assert_eq!(cycle(&fixed), None);
    assert_eq!(cycle(&top_level(&fixed)), None);
}
