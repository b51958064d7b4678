//! The host against real shared libraries: the two plugins in `plugins/` and
//! the misbehaving fixtures in `plugins/faults/`. The libraries are built
//! once per test binary with the same cargo and profile as this test.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::OnceLock;

use crescendo_plugin::{
    Area, Cell, Column, Primitive, Pt, Request, Role, Space, Texts, ABI_VERSION,
};
use crescendo_plugin_host::{Plugin, PluginError, Validated};

const PACKAGES: [&str; 5] = [
    "crescendo-slope",
    "crescendo-waterfall",
    "crescendo-fault-plugin",
    "crescendo-fault-oldabi",
    "crescendo-fault-noentry",
];

/// The folder holding this test's profile output (e.g. `target/debug`),
/// after building the plugin crates into it.
fn built() -> &'static Path {
    static DIR: OnceLock<Result<PathBuf, String>> = OnceLock::new();
    let dir = DIR.get_or_init(|| {
        let workspace = Path::new(env!("CARGO_MANIFEST_DIR")).join("../..");
        let target = std::env::var_os("CARGO_TARGET_DIR")
            .map(PathBuf::from)
            .unwrap_or_else(|| workspace.join("target"));
        // The profile folder this test binary lives in: `<target>/<profile>/deps/host-…`.
        let profile = std::env::current_exe()
            .ok()
            .and_then(|exe| {
                Some(
                    exe.parent()?
                        .parent()?
                        .file_name()?
                        .to_string_lossy()
                        .into_owned(),
                )
            })
            .unwrap_or_else(|| "debug".into());
        let mut cmd = Command::new(env!("CARGO"));
        cmd.current_dir(&workspace)
            .arg("build")
            .arg("--quiet")
            .arg("--target-dir")
            .arg(&target);
        match profile.as_str() {
            "debug" => {}
            "release" => {
                cmd.arg("--release");
            }
            other => {
                cmd.args(["--profile", other]);
            }
        }
        for p in PACKAGES {
            cmd.args(["-p", p]);
        }
        let out = cmd.output().map_err(|e| format!("cannot run cargo: {e}"))?;
        if !out.status.success() {
            return Err(format!(
                "building the plugins failed:\n{}",
                String::from_utf8_lossy(&out.stderr)
            ));
        }
        Ok(target.join(profile))
    });
    match dir {
        Ok(d) => d,
        Err(e) => panic!("{e}"),
    }
}

fn lib(crate_name: &str) -> PathBuf {
    let file = format!(
        "{}{}{}",
        std::env::consts::DLL_PREFIX,
        crate_name.replace('-', "_"),
        std::env::consts::DLL_SUFFIX
    );
    let path = built().join(file);
    assert!(path.is_file(), "{} was not built", path.display());
    path
}

fn load(crate_name: &str) -> Plugin {
    match Plugin::load(&lib(crate_name), None) {
        Ok(p) => p,
        Err(e) => panic!("{crate_name} does not load: {e}"),
    }
}

fn load_err(path: &Path, pin: Option<&str>) -> PluginError {
    match Plugin::load(path, pin) {
        Ok(p) => panic!("{} loaded, as {:?}", path.display(), p.info()),
        Err(e) => e,
    }
}

fn sha256_hex(path: &Path) -> String {
    use sha2::{Digest, Sha256};
    let bytes = std::fs::read(path).unwrap();
    Sha256::digest(&bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

fn text(cells: &[&str]) -> Vec<Cell> {
    cells.iter().map(|c| Cell::Text(c.to_string())).collect()
}

fn request(form: &str, options: &[(&str, &str)], columns: Vec<Column>) -> Request {
    Request {
        abi_version: ABI_VERSION,
        form: form.into(),
        options: options
            .iter()
            .map(|(k, v)| (k.to_string(), v.to_string()))
            .collect(),
        columns,
        roles: BTreeMap::new(),
        hidden: vec![],
        texts: Texts {
            headline: "A headline".into(),
            x_title: None,
            y_title: None,
        },
        area: Area {
            width: 640.0,
            height: 360.0,
        },
        label_size: 16.0,
        writing: Default::default(),
    }
}

fn slope_request() -> Request {
    let mut r = request(
        "slope",
        &[
            ("category", "route"),
            ("value", "riders"),
            ("period", "year"),
        ],
        vec![
            Column {
                name: "route".into(),
                kind: "text".into(),
                cells: text(&[
                    "Harbour Loop",
                    "Harbour Loop",
                    "Mill Road",
                    "Mill Road",
                    "Quayside",
                    "Quayside",
                ]),
            },
            Column {
                name: "riders".into(),
                kind: "number".into(),
                cells: [4100.0, 9350.0, 5200.0, 4800.0, 3000.0, 3300.0]
                    .map(Cell::Number)
                    .to_vec(),
            },
            Column {
                name: "year".into(),
                kind: "year".into(),
                cells: text(&["2019", "2024", "2019", "2024", "2019", "2024"]),
            },
        ],
    );
    r.roles.insert("Harbour Loop".into(), Role::Focus);
    r
}

fn waterfall_request(names: &[&str], values: &[f64]) -> Request {
    request(
        "waterfall",
        &[("category", "item"), ("value", "amount")],
        vec![
            Column {
                name: "item".into(),
                kind: "text".into(),
                cells: text(names),
            },
            Column {
                name: "amount".into(),
                kind: "number".into(),
                cells: values.iter().map(|v| Cell::Number(*v)).collect(),
            },
        ],
    )
}

fn points(p: &Primitive) -> Vec<Pt> {
    match p {
        Primitive::Line { from, to, .. } | Primitive::Rect { from, to, .. } => vec![*from, *to],
        Primitive::Polyline { points, .. } | Primitive::Area { points, .. } => points.clone(),
        Primitive::Circle { center, .. } => vec![*center],
        Primitive::Text { at, .. } => vec![*at],
    }
}

fn assert_inside(v: &Validated, area: Area) {
    for p in &v.primitives {
        for q in points(p) {
            assert_eq!(q.space, Space::Plot);
            assert!(
                (0.0..=area.width).contains(&q.x) && (0.0..=area.height).contains(&q.y),
                "{q:?} in {p:?}"
            );
        }
    }
}

fn texts(v: &Validated) -> Vec<(String, Role)> {
    v.primitives
        .iter()
        .filter_map(|p| match p {
            Primitive::Text { text, role, .. } => Some((text.clone(), *role)),
            _ => None,
        })
        .collect()
}

#[test]
fn plugins_can_be_shared_between_threads() {
    fn send_sync<T: Send + Sync>() {}
    send_sync::<Plugin>();
}

#[test]
fn slope_loads_and_draws() {
    let path = lib("crescendo-slope");
    let p = load("crescendo-slope");
    let info = p.info();
    assert_eq!(
        (info.name.as_str(), info.version.as_str()),
        ("slope", "0.1.0")
    );
    assert_eq!(info.abi_version, ABI_VERSION);
    assert_eq!(info.forms, vec!["slope".to_string()]);
    assert_eq!(info.path, path);
    assert_eq!(info.sha256, sha256_hex(&path));

    let req = slope_request();
    let v = p.render(&req).unwrap();
    assert_inside(&v, req.area);
    let t = texts(&v);
    for want in [
        ("2019", Role::Axis),
        ("2024", Role::Axis),
        ("Harbour Loop 4,100", Role::Focus),
        ("9,350", Role::Focus),
        ("Mill Road 5,200", Role::Context),
        ("4,800", Role::Context),
    ] {
        assert!(
            t.contains(&(want.0.to_string(), want.1)),
            "{want:?} not in {t:?}"
        );
    }
    let lines: Vec<Role> = v
        .primitives
        .iter()
        .filter_map(|p| match p {
            Primitive::Line { role, .. } if *role != Role::Axis => Some(*role),
            _ => None,
        })
        .collect();
    assert_eq!(lines, vec![Role::Context, Role::Context, Role::Focus]);
    let d = v.description.unwrap();
    assert!(d.starts_with("Slope chart of route from 2019 to 2024, 3 items: Harbour Loop rose from 4,100 to 9,350."), "{d}");

    // The same request gives the same drawing.
    assert_eq!(p.render(&req).unwrap().primitives, v.primitives);

    // A third period is refused with what was found.
    let mut three = slope_request();
    three.columns[2].cells[5] = Cell::Text("2021".into());
    match p.render(&three) {
        Err(PluginError::Failed(m)) => assert!(
            m.contains("exactly two periods") && m.contains("2019, 2021, 2024"),
            "{m}"
        ),
        other => panic!("{other:?}"),
    }
}

#[test]
fn waterfall_loads_draws_and_checks_its_total() {
    let p = load("crescendo-waterfall");
    assert_eq!(
        (p.info().name.as_str(), p.info().forms.as_slice()),
        ("waterfall", ["waterfall".to_string()].as_slice())
    );
    let mut req = waterfall_request(
        &["Opening", "Sales", "Refunds", "Grants", "Total"],
        &[1000.0, 120.0, -45.0, 5.5, 1080.5],
    );
    req.roles.insert("Refunds".into(), Role::Focus);
    let v = p.render(&req).unwrap();
    assert_inside(&v, req.area);
    let t = texts(&v);
    for want in [
        // negative labels with the true minus, as the host draws its own
        "1,000",
        "+120",
        "\u{2212}45",
        "+5.5",
        "1,080.5",
        "Total",
        "Opening",
    ] {
        assert!(t.iter().any(|(s, _)| s == want), "{want} not in {t:?}");
    }
    let bars: Vec<Role> = v
        .primitives
        .iter()
        .filter_map(|p| match p {
            Primitive::Rect { role, .. } => Some(*role),
            _ => None,
        })
        .collect();
    assert_eq!(
        bars,
        vec![
            Role::Axis,
            Role::Context,
            Role::Focus,
            Role::Context,
            Role::Axis
        ]
    );
    assert!(v.primitives.iter().any(|p| matches!(
        p,
        Primitive::Line {
            role: Role::Annotation,
            ..
        }
    )));

    let bad = waterfall_request(
        &["Opening", "Sales", "Refunds", "End"],
        &[1000.0, 120.0, -45.0, 1070.0],
    );
    assert_eq!(
        p.render(&bad),
        Err(PluginError::Failed(
            "the `End` row says 1,070, but the start and the steps add up to 1,075".into()
        ))
    );
}

#[test]
fn a_pin_is_checked_before_loading() {
    let path = lib("crescendo-slope");
    let sha = sha256_hex(&path);
    assert!(Plugin::load(&path, Some(&sha.to_uppercase())).is_ok());
    let wrong = "0".repeat(64);
    assert_eq!(
        load_err(&path, Some(&wrong)),
        PluginError::ChecksumMismatch {
            expected: wrong,
            actual: sha
        }
    );
    // Checked before loading: a pinned file that is not a library is refused
    // for its checksum, not by the loader.
    let dir = scratch("pin");
    let fake = dir.join("libfake.so");
    std::fs::write(&fake, "not a library").unwrap();
    assert!(matches!(
        load_err(&fake, Some("abc")),
        PluginError::ChecksumMismatch { .. }
    ));
}

#[test]
fn wrong_abi_and_missing_entry_are_refused() {
    assert_eq!(
        load_err(&lib("crescendo-fault-oldabi"), None),
        PluginError::WrongAbi {
            found: 0,
            expected: ABI_VERSION
        }
    );
    assert_eq!(
        load_err(&lib("crescendo-fault-noentry"), None),
        PluginError::NoEntry
    );
}

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!(
        "crescendo-plugin-host-{}-{name}",
        std::process::id()
    ));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

#[test]
fn files_that_are_not_libraries_are_refused() {
    let dir = scratch("notlib");
    let text_file = dir.join("libx.so");
    std::fs::write(&text_file, "this is a text file, not a shared library\n").unwrap();
    assert!(matches!(
        load_err(&text_file, None),
        PluginError::NotALibrary(_)
    ));

    let empty = dir.join("libempty.so");
    std::fs::write(&empty, b"").unwrap();
    assert!(matches!(
        load_err(&empty, None),
        PluginError::NotALibrary(_)
    ));

    // Truncated copies of a real plugin (the system loader would crash on
    // most of these; the host refuses them first).
    let whole = std::fs::read(lib("crescendo-slope")).unwrap();
    for cut in [
        16,
        64,
        200,
        whole.len() / 100,
        whole.len() / 10,
        whole.len() / 2,
        whole.len() - 1,
    ] {
        let path = dir.join(format!("libcut{cut}.so"));
        std::fs::write(&path, &whole[..cut]).unwrap();
        match load_err(&path, None) {
            PluginError::NotALibrary(m) => assert!(!m.is_empty()),
            other => panic!("cut at {cut}: {other:?}"),
        }
    }

    let missing = dir.join("libmissing.so");
    assert!(
        matches!(load_err(&missing, None), PluginError::Unreadable(m) if m.contains("libmissing.so"))
    );
    let _ = std::fs::remove_dir_all(&dir);
}

/// Render form `form` of the fault fixture.
fn fault(p: &Plugin, form: &str) -> Result<Validated, PluginError> {
    p.render(&request(form, &[], vec![]))
}

#[test]
fn misbehaving_plugins_give_errors_not_crashes() {
    let p = load("crescendo-fault-plugin");
    assert_eq!(p.info().name, "faults");
    assert_eq!(p.info().forms.len(), 12);
    // it declares no options (no options symbol): nothing is checked
    assert!(p.info().options.is_empty());
    // The fixture itself works.
    assert_eq!(
        fault(&p, "fine").unwrap().description.as_deref(),
        Some("One line.")
    );

    let failed = |form: &str| match fault(&p, form) {
        Err(PluginError::Failed(m)) => m,
        other => panic!("{form}: expected Failed, got {other:?}"),
    };
    let invalid = |form: &str| match fault(&p, form) {
        Err(PluginError::Invalid(m)) => m,
        other => panic!("{form}: expected Invalid, got {other:?}"),
    };
    let malformed = |form: &str| match fault(&p, form) {
        Err(PluginError::Malformed(m)) => m,
        other => panic!("{form}: expected Malformed, got {other:?}"),
    };

    let m = failed("panic");
    assert!(
        m.contains("form `panic` panicked") && m.contains("index out of bounds"),
        "{m}"
    );
    assert!(failed("nan").contains("not a finite number"));
    assert_eq!(failed("error"), "the fixture refuses on purpose");
    assert!(invalid("outside").contains("outside the plot area"));
    assert!(invalid("huge").contains("50001 primitives"));
    assert!(invalid("flood").contains("bytes"));
    assert!(malformed("garbage").contains("not UTF-8"));
    assert!(malformed("badrole").contains("sparkle"));
    assert!(malformed("nullnum").contains("null"));
    assert!(matches!(fault(&p, "code"), Err(PluginError::Panicked(m)) if m.contains("code 7")));
    // A form the plugin did not declare never reaches it.
    assert!(
        matches!(fault(&p, "sparkle"), Err(PluginError::Failed(m)) if m.contains("no form `sparkle`"))
    );

    // The host is still fine, and so is the plugin.
    for _ in 0..3 {
        assert!(fault(&p, "panic").is_err());
        assert!(fault(&p, "garbage").is_err());
    }
    assert!(fault(&p, "fine").is_ok());
}

#[test]
fn a_library_stays_loaded_while_any_plugin_uses_it() {
    let a = load("crescendo-waterfall");
    let b = load("crescendo-waterfall");
    drop(a);
    let req = waterfall_request(&["Start", "Step"], &[10.0, 5.0]);
    assert!(b.render(&req).is_ok());
    // Two threads render with the same plugin at once.
    let results: Vec<bool> = std::thread::scope(|s| {
        let handles: Vec<_> = (0..2).map(|_| s.spawn(|| b.render(&req).is_ok())).collect();
        handles.into_iter().map(|h| h.join().unwrap()).collect()
    });
    assert_eq!(results, vec![true, true]);
}

/// Each load maps a private copy named `/proc/self/fd/N`; the system loader
/// takes a name it has seen for the library already loaded. So after a
/// plugin is dropped (as `watch` does on every rebuild), another library
/// loaded under a reused descriptor number must still be that library, and
/// the one dropped must still draw if it stayed mapped.
#[test]
fn plugins_loaded_one_after_another_are_each_their_own_library() {
    for _ in 0..4 {
        let a = load("crescendo-slope");
        assert_eq!(a.info().name, "slope");
        drop(a);
        let b = load("crescendo-waterfall");
        assert_eq!(b.info().name, "waterfall");
        let req = waterfall_request(&["Start", "Step"], &[10.0, 5.0]);
        assert!(b.render(&req).is_ok());
        drop(b);
        let c = load("crescendo-fault-plugin");
        assert_eq!(c.info().name, "faults");
    }
}

/// The slope plugin declares its options through the optional symbol; the
/// host reads and keeps them per form.
#[test]
fn declared_options_are_read() {
    let p = load("crescendo-slope");
    let slope = p
        .info()
        .options
        .get("slope")
        .expect("slope declares options");
    let names: Vec<&str> = slope.iter().map(|o| o.name.as_str()).collect();
    assert_eq!(names, ["category", "value", "period"]);
    assert!(slope.iter().all(|o| o.required));
    assert_eq!(slope[1].kinds, ["number"]);
}
