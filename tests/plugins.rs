//! Chart-form plugins end to end: a story loads the two plugins in
//! `plugins/` by path and draws with them; every way a plugin can fail is a
//! located error naming the plugin (and the frame), never a crash, and the
//! previous deck is kept.

mod common;

use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;

use common::{crescendo_with_plugins as crescendo, ensure_plugins, read_dir_files, root, scratch};

fn lib(name: &str) -> PathBuf {
    ensure_plugins().join(format!(
        "{}{name}{}",
        std::env::consts::DLL_PREFIX,
        std::env::consts::DLL_SUFFIX
    ))
}

const DATA: &str = "route,year,riders\nLoop,2019,100\nLoop,2024,250\nBay,2019,90\nBay,2024,95\n";

/// A story in a scratch folder using the library at `plugin` with `form`.
fn story_with(name: &str, plugin: &Path, form: &str, pin: Option<&str>) -> PathBuf {
    let dir = scratch(name);
    fs::write(dir.join("riders.csv"), DATA).unwrap();
    let pin = pin.map_or(String::new(), |p| format!(" sha256 \"{p}\""));
    fs::write(
        dir.join("s.cresc"),
        format!(
            "story \"Plugins\"\nsource \"Invented\"\nconclusion \"Act.\"\n\
             use plugin \"{}\" as p{pin}\n\
             data riders from \"riders.csv\" {{ year: year }}\n\
             frame \"Riders\" {{\n  draw p.{form} riders: category route, value riders, period year\n  takeaway \"Act.\"\n}}\n",
            plugin.display()
        ),
    )
    .unwrap();
    dir
}

fn sha256(path: &Path) -> String {
    use sha2::Digest;
    sha2::Sha256::digest(fs::read(path).unwrap())
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

#[test]
fn the_demo_story_draws_with_both_plugins() {
    ensure_plugins();
    let out = scratch("routes").join("deck");
    let run = crescendo(
        &root(),
        &[
            "build",
            "stories/routes/routes.cresc",
            "--out",
            out.to_str().unwrap(),
        ],
    );
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let files = read_dir_files(&out);
    let svg = String::from_utf8(
        files
            .iter()
            .find(|(n, _)| n.starts_with("02-"))
            .unwrap()
            .1
            .clone(),
    )
    .unwrap();
    // the slope chart's spotlighted line is drawn in the theme's accent
    assert!(svg.contains("#8E3005"), "focus role styled by the theme");
    assert!(svg.contains("Harbour Loop"));
    let listing = crescendo(
        &root(),
        &["plugins", "stories/routes/routes.cresc", "--load-plugins"],
    );
    let text = String::from_utf8_lossy(&listing.stdout);
    assert!(
        text.contains("slope: slope 0.1.0 (plugin ABI 1), forms: slope"),
        "{text}"
    );
    assert!(
        text.contains("bridge: waterfall 0.1.0 (plugin ABI 1), forms: waterfall"),
        "{text}"
    );
}

#[test]
fn a_plugin_frame_matches_its_svg_snapshot() {
    ensure_plugins();
    let dir = story_with("snapshot", &lib("crescendo_slope"), "slope", None);
    let run = crescendo(&dir, &["build", "s.cresc"]);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let svg = fs::read_to_string(dir.join("deck/01-riders.svg")).unwrap();
    insta::assert_snapshot!("plugin_slope_frame", svg);
}

#[test]
fn a_pinned_checksum_must_match() {
    let path = lib("crescendo_slope");
    let good = story_with("pin-good", &path, "slope", Some(&sha256(&path)));
    assert!(crescendo(&good, &["check", "s.cresc"]).status.success());
    let bad = story_with("pin-bad", &path, "slope", Some(&"0".repeat(64)));
    let run = crescendo(&bad, &["check", "s.cresc"]);
    let err = String::from_utf8_lossy(&run.stderr);
    assert_eq!(run.status.code(), Some(1), "{err}");
    assert!(err.contains("cannot use plugin `p`"), "{err}");
    assert!(err.contains("but the story pins 0000"), "{err}");
    assert!(err.contains("s.cresc:4:"), "{err}");
    // one error: the `draw` naming the plugin is not reported again as an
    // unknown plugin
    assert_eq!(err.matches("error[").count(), 1, "{err}");
    assert!(!err.contains("no plugin named"), "{err}");
    // a first build that fails says nothing of a previous deck
    let run = crescendo(&bad, &["build", "./s.cresc"]);
    let err = String::from_utf8_lossy(&run.stderr);
    assert!(!err.contains("previous deck"), "{err}");
}

/// Build a good deck, then break the plugin; the build fails with a located
/// message naming the plugin and keeps the previous deck.
fn fails_with(name: &str, plugin: &Path, form: &str, expected: &str, location: &str) {
    let dir = story_with(name, &lib("crescendo_slope"), "slope", None);
    let first = crescendo(&dir, &["build", "s.cresc"]);
    assert!(
        first.status.success(),
        "{}",
        String::from_utf8_lossy(&first.stderr)
    );
    let before = read_dir_files(&dir.join("deck"));
    let broken = story_with(&format!("{name}-b"), plugin, form, None);
    fs::copy(broken.join("s.cresc"), dir.join("s.cresc")).unwrap();
    let run = crescendo(&dir, &["build", "s.cresc"]);
    let err = String::from_utf8_lossy(&run.stderr);
    assert_eq!(run.status.code(), Some(1), "{err}");
    assert!(
        !err.contains("panicked at"),
        "the host must not crash:\n{err}"
    );
    assert!(err.contains(expected), "expected `{expected}` in:\n{err}");
    assert!(err.contains(location), "expected {location} in:\n{err}");
    assert_eq!(
        read_dir_files(&dir.join("deck")),
        before,
        "the previous deck changed"
    );
    // `check` draws plugin frames in memory: the same failure, found
    // before any build, and nothing written
    let checked = crescendo(&dir, &["check", "s.cresc"]);
    let err = String::from_utf8_lossy(&checked.stderr);
    assert_eq!(checked.status.code(), Some(1), "check: {err}");
    assert!(
        err.contains(expected),
        "check: expected `{expected}` in:\n{err}"
    );
    assert!(
        err.contains(location),
        "check: expected {location} in:\n{err}"
    );
    assert_eq!(read_dir_files(&dir.join("deck")), before, "check wrote");
}

/// A plugin form declares its options; `check` (without drawing) finds a
/// misspelt option, a column of the wrong kind and a missing option, each
/// with a caret where it was written.
#[test]
fn declared_options_are_checked_where_the_story_writes_them() {
    let dir = story_with("options", &lib("crescendo_slope"), "slope", None);
    let story = fs::read_to_string(dir.join("s.cresc")).unwrap();
    let run = |text: String| {
        fs::write(dir.join("s.cresc"), text).unwrap();
        let o = crescendo(&dir, &["check", "s.cresc"]);
        (
            o.status.code(),
            String::from_utf8_lossy(&o.stderr).to_string(),
        )
    };
    let (code, err) = run(story.replace("category route", "catgory route"));
    assert_eq!(code, Some(1), "{err}");
    assert!(err.contains("takes no option `catgory`"), "{err}");
    assert!(err.contains("did you mean `category`?"), "{err}");
    assert!(err.contains("s.cresc:7:24"), "{err}");
    // the required `category` is not reported again: the suggestion names it
    assert_eq!(err.matches("error[").count(), 1, "{err}");
    let (code, err) = run(story.replace("value riders", "value route"));
    assert_eq!(code, Some(1), "{err}");
    assert!(
        err.contains("option `value` takes a number column; `route` is a text column"),
        "{err}"
    );
    let (code, err) = run(story.replace(", period year", ""));
    assert_eq!(code, Some(1), "{err}");
    assert!(err.contains("needs the option `period`"), "{err}");
    let (code, err) = run(story);
    assert_eq!(code, Some(0), "{err}");
}

#[test]
fn a_plugin_built_for_another_abi_is_refused() {
    fails_with(
        "old-abi",
        &lib("crescendo_fault_oldabi"),
        "old",
        "plugin ABI version 0",
        "s.cresc:4:12",
    );
}

#[test]
fn a_library_without_the_entry_symbol_is_refused() {
    fails_with(
        "no-entry",
        &lib("crescendo_fault_noentry"),
        "x",
        "exports no crescendo plugin entry point",
        "s.cresc:4:12",
    );
}

#[test]
fn a_file_that_is_not_a_shared_library_is_refused() {
    // in the plugins' folder, which the tests allow (`--allow-path`)
    let fake = ensure_plugins().join(format!("libfake-{}.so", std::process::id()));
    fs::write(&fake, "this is not a library\n").unwrap();
    fails_with(
        "not-a-lib",
        &fake,
        "x",
        "not a shared library",
        "s.cresc:4:12",
    );
    let _ = fs::remove_file(&fake);
}

#[test]
fn a_plugin_outside_the_story_folder_needs_allow_path() {
    let dir = story_with("outside", &lib("crescendo_slope"), "slope", None);
    let run = common::crescendo(&dir, &["build", "s.cresc"]);
    let err = String::from_utf8_lossy(&run.stderr);
    assert_eq!(run.status.code(), Some(1), "{err}");
    assert!(
        err.contains("error[path-outside]: the plugin may not be read"),
        "{err}"
    );
    assert!(err.contains("s.cresc:4:12"), "{err}");
    assert!(err.contains("--allow-path DIR"), "{err}");
    assert!(!dir.join("deck").exists());
}

#[test]
fn a_missing_plugin_file_is_reported() {
    fails_with(
        "missing-lib",
        &ensure_plugins().join("libnothing-such.so"),
        "x",
        "cannot read the plugin file",
        "s.cresc:4:12",
    );
}

#[test]
fn a_plugin_that_panics_is_a_located_error() {
    fails_with(
        "panics",
        &lib("crescendo_fault_plugin"),
        "panic",
        "plugin `p`",
        "s.cresc:7:3",
    );
}

/// A label placed inside the plot that runs past the canvas is measured
/// with the bundled font, like built-in labels, and refused.
#[test]
fn plugin_text_past_the_canvas_is_refused() {
    fails_with(
        "longtext",
        &lib("crescendo_fault_plugin"),
        "longtext",
        "runs past the 1280×720 canvas",
        "s.cresc:7:3",
    );
}

#[test]
fn malformed_messages_are_refused() {
    fails_with(
        "garbage",
        &lib("crescendo_fault_plugin"),
        "garbage",
        "not a valid message",
        "s.cresc:7:3",
    );
}

#[test]
fn nan_coordinates_are_refused() {
    fails_with(
        "nan",
        &lib("crescendo_fault_plugin"),
        "nan",
        "finite",
        "s.cresc:7:3",
    );
}

#[test]
fn coordinates_outside_the_plot_are_refused() {
    fails_with(
        "outside",
        &lib("crescendo_fault_plugin"),
        "outside",
        "drawing is invalid",
        "s.cresc:7:3",
    );
}

#[test]
fn an_unknown_role_is_refused() {
    fails_with(
        "badrole",
        &lib("crescendo_fault_plugin"),
        "badrole",
        "not a valid message",
        "s.cresc:7:3",
    );
}

#[test]
fn no_plugins_refuses_every_plugin() {
    let dir = story_with("no-plugins", &lib("crescendo_slope"), "slope", None);
    let run = crescendo(&dir, &["build", "s.cresc", "--no-plugins"]);
    let err = String::from_utf8_lossy(&run.stderr);
    assert_eq!(run.status.code(), Some(1), "{err}");
    assert!(err.contains("plugins are refused (--no-plugins)"), "{err}");
    assert!(!dir.join("deck").exists());
}

/// Run crescendo in `dir` with extra environment variables (the marker
/// library's `CRESCENDO_FAULT_MARKER`, a library search path).
fn crescendo_env(dir: &Path, args: &[&str], env: &[(&str, &Path)]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_crescendo"))
        .args(args)
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .envs(env.iter().map(|(k, v)| (*k, v.as_os_str())))
        .output()
        .expect("run crescendo")
}

/// Issue 15, item 1: the pin was checked on the file's bytes, then the
/// library was loaded again by its path, so a library swapped in between
/// ran unverified (70 of 300 runs). Another thread keeps renaming a good
/// (pinned) and an evil library into place while `check` runs; the evil
/// one's initialiser writes a marker file. Every run must either load the
/// good library or refuse the evil one; the marker must never appear.
#[test]
fn a_pinned_plugin_swapped_while_it_loads_never_runs_other_code() {
    let good = lib("crescendo_slope");
    let evil = lib("crescendo_fault_marker");
    let dir = story_with(
        "pin-race",
        Path::new("libp.so"),
        "slope",
        Some(&sha256(&good)),
    );
    fs::copy(&good, dir.join("good.so")).unwrap();
    fs::copy(&evil, dir.join("evil.so")).unwrap();
    fs::copy(&good, dir.join("libp.so")).unwrap();
    let marker = dir.join("marker");
    let stop = Arc::new(AtomicBool::new(false));
    let swapper = {
        let (dir, stop) = (dir.clone(), Arc::clone(&stop));
        std::thread::spawn(move || {
            let mut swaps = 0u64;
            while !stop.load(Ordering::Relaxed) {
                for (from, tmp) in [("evil.so", "tmp-evil"), ("good.so", "tmp-good")] {
                    let _ = fs::remove_file(dir.join(tmp));
                    fs::hard_link(dir.join(from), dir.join(tmp)).unwrap();
                    fs::rename(dir.join(tmp), dir.join("libp.so")).unwrap();
                    swaps += 1;
                }
            }
            swaps
        })
    };
    // the story named by its absolute path: the plugin's path has a `/`, so
    // it is never searched for (item 4, below)
    let story = dir.join("s.cresc");
    let story = story.to_str().unwrap();
    let (mut loaded, mut refused, mut ran) = (0, 0, 0);
    for _ in 0..150 {
        let run = crescendo_env(
            &dir,
            &["check", story],
            &[("CRESCENDO_FAULT_MARKER", &marker)],
        );
        let err = String::from_utf8_lossy(&run.stderr);
        assert!(!err.contains("panicked"), "{err}");
        if err.contains("the plugin file's sha256 is") {
            refused += 1;
        } else {
            loaded += 1;
        }
        if fs::remove_file(&marker).is_ok() {
            ran += 1;
        }
    }
    stop.store(true, Ordering::Relaxed);
    let swaps = swapper.join().unwrap();
    assert_eq!(
        ran, 0,
        "the unverified library ran in {ran} of 150 runs ({loaded} loaded, {refused} refused, {swaps} swaps)"
    );
    // the race was real: both libraries were met
    assert!(
        loaded > 0 && refused > 0,
        "{loaded} loaded, {refused} refused"
    );
}

/// Issue 15, item 4: `use plugin "libp.so"` beside a story was looked up on
/// the system's library search path (the path had no `/`): it failed
/// without one, and with `LD_LIBRARY_PATH` pointing elsewhere another
/// library of that name ran while the pin, checked on the file beside the
/// story, passed.
#[test]
fn a_plain_plugin_name_is_the_file_beside_the_story_never_a_search_path() {
    let good = lib("crescendo_slope");
    let dir = story_with(
        "plain-name",
        Path::new("libp.so"),
        "slope",
        Some(&sha256(&good)),
    );
    fs::copy(&good, dir.join("libp.so")).unwrap();
    fs::create_dir(dir.join("elsewhere")).unwrap();
    fs::copy(lib("crescendo_fault_marker"), dir.join("elsewhere/libp.so")).unwrap();
    let marker = dir.join("marker");
    let elsewhere = dir.join("elsewhere");
    for args in [
        &["check", "s.cresc"][..],
        &["build", "s.cresc"],
        &["plugins", "s.cresc", "--load-plugins"],
    ] {
        let run = crescendo_env(
            &dir,
            args,
            &[
                ("CRESCENDO_FAULT_MARKER", &marker),
                ("LD_LIBRARY_PATH", &elsewhere),
            ],
        );
        let (out, err) = (
            String::from_utf8_lossy(&run.stdout),
            String::from_utf8_lossy(&run.stderr),
        );
        assert!(
            !marker.exists(),
            "{args:?}: the library on LD_LIBRARY_PATH ran"
        );
        assert!(run.status.success(), "{args:?}: {err}");
        if args[0] == "plugins" {
            assert!(
                out.contains("p: slope 0.1.0 (plugin ABI 1), forms: slope"),
                "{out}"
            );
        }
    }
    // and without a search path, the plain name is found all the same
    let run = crescendo(&dir, &["check", "s.cresc"]);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
}

/// `plugins` and `plan` only inspect a story: they check each plugin's
/// path, file and pin without loading it (no plugin code runs), unless
/// asked with `--load-plugins`; `check` loads (it validates the forms).
#[test]
fn listing_and_planning_run_no_plugin_code_unless_asked() {
    let evil = lib("crescendo_fault_marker");
    let dir = story_with("inspect", Path::new("evil.so"), "slope", None);
    fs::copy(&evil, dir.join("evil.so")).unwrap();
    let marker = dir.join("marker");
    let env = [("CRESCENDO_FAULT_MARKER", marker.as_path())];
    let story = dir.join("s.cresc");
    let story = story.to_str().unwrap();
    let run = crescendo_env(&dir, &["plugins", story], &env);
    let out = String::from_utf8_lossy(&run.stdout);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    assert!(!marker.exists(), "`plugins` ran the plugin's code");
    assert!(out.contains("p: not loaded"), "{out}");
    assert!(
        out.contains(&format!("sha256 {} (not pinned)", sha256(&evil))),
        "{out}"
    );
    let run = crescendo_env(&dir, &["plan", story], &env);
    let plan = String::from_utf8_lossy(&run.stdout);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    assert!(!marker.exists(), "`plan` ran the plugin's code");
    assert!(
        plan.contains("\"plugin_version\": \"(not loaded)\""),
        "{plan}"
    );
    assert!(plan.contains("\"form\": \"slope\""), "{plan}");
    for args in [
        &["plugins", "s.cresc", "--load-plugins"][..],
        &["plan", "s.cresc", "--load-plugins"],
        &["check", "s.cresc"],
    ] {
        let run = crescendo_env(&dir, args, &env);
        assert!(
            fs::remove_file(&marker).is_ok(),
            "{args:?} did not load the plugin"
        );
        // the marker library is no plugin: a located error, not a crash
        let err = String::from_utf8_lossy(&run.stderr);
        assert_eq!(run.status.code(), Some(1), "{args:?}: {err}");
        assert!(
            err.contains("no crescendo plugin entry point"),
            "{args:?}: {err}"
        );
    }
}

/// A waterfall category name that cannot fit under its bar, even wrapped,
/// stops the build with a located error that names it; nothing is cut
/// with an ellipsis, and no deck is written.
#[test]
fn a_waterfall_name_that_cannot_fit_is_reported() {
    let dir = scratch("waterfall-fit");
    fs::write(
        dir.join("budget.csv"),
        "item,amount\nStart,100\nRefurbishmentandrecommissioningworks,20\nEnd,120\n",
    )
    .unwrap();
    fs::write(
        dir.join("s.cresc"),
        format!(
            "story \"Plugins\"\nsource \"Invented\"\nconclusion \"Act.\"\n\
             use plugin \"{}\" as w\n\
             data budget from \"budget.csv\"\n\
             frame \"Budget\" {{\n  draw w.waterfall budget: category item, value amount\n  takeaway \"Act.\"\n}}\n",
            lib("crescendo_waterfall").display()
        ),
    )
    .unwrap();
    let run = crescendo(&dir, &["build", "s.cresc"]);
    let err = String::from_utf8_lossy(&run.stderr);
    assert_eq!(run.status.code(), Some(1), "{err}");
    assert!(
        err.contains("\"Refurbishmentandrecommissioningworks\" cannot fit under its bar"),
        "{err}"
    );
    assert!(err.contains("s.cresc:7:3"), "{err}");
    assert!(!dir.join("deck").exists());
}

/// Under `locale "de-DE"` a plugin's labels read like the deck's own
/// figures: the request carries the story's writing, and the SDK applies
/// it (`1.230`, as `deck.json` writes the quoted value).
#[test]
fn a_plugin_writes_numbers_and_periods_in_the_story_locale() {
    ensure_plugins();
    let dir = scratch("plugin-locale");
    fs::write(
        dir.join("riders.csv"),
        "route,month,riders\nLoop,2024-01,1000\nLoop,2024-03,1230\nBay,2024-01,2500.5\nBay,2024-03,-1200\n",
    )
    .unwrap();
    fs::write(
        dir.join("s.cresc"),
        format!(
            "story \"Plugins\"\nsource \"Invented\"\nlocale \"de-DE\"\n\
             use plugin \"{}\" as p\n\
             data riders from \"riders.csv\"\n\
             value loop = sum(riders.riders where route = \"Loop\" and month = \"2024-03\")\n\
             frame \"Loop {{loop}}\" {{\n  draw p.slope riders: category route, value riders, period month\n}}\n",
            lib("crescendo_slope").display()
        ),
    )
    .unwrap();
    let run = crescendo(&dir, &["build", "s.cresc"]);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let manifest = fs::read_to_string(dir.join("deck/deck.json")).unwrap();
    assert!(manifest.contains("\"loop\": \"1.230\""), "{manifest}");
    let svg = fs::read_to_string(dir.join("deck/01-loop.svg")).unwrap();
    // the plugin's own labels: German groups and decimal comma, the true
    // minus, the periods as the axis writes months in German
    // (month names: CLDR 49's German abbreviations, as the host's axis)
    for label in [
        "1.230",
        "Loop 1.000",
        "Bay 2.500,5",
        "\u{2212}1.200",
        "Jan 2024",
        "Mär 2024",
    ] {
        assert!(
            svg.contains(&format!(">\n{label}\n</text>")),
            "{label} in {svg}"
        );
    }
    assert!(!svg.contains("1,230"), "{svg}");
}
