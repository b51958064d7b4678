//! The analyst's daily loop, end to end: `crescendo new` on every demo CSV
//! and on synthetic CSVs of each shape, `crescendo fmt` over every demo
//! story, a story with a locale and a fiscal year, completions and the
//! manual page.

mod common;

use std::fs;
use std::path::Path;

use common::{crescendo, crescendo_with_plugins, read_dir_files, root, scratch, stories};

fn text(out: &std::process::Output) -> (String, String) {
    (
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// `crescendo new` writes a story for `csv` (in `dir`) that builds; its only
/// lint findings are its placeholders (`text-unfinished`), and once they
/// are written it builds with no finding at all under `--strict`; returns
/// the story text and the profile summary.
fn new_story_builds_clean(dir: &Path, csv: &str) -> (String, String) {
    let out = crescendo(dir, &["new", csv]);
    let (stdout, stderr) = text(&out);
    assert!(out.status.success(), "new {csv}: {stdout}\n{stderr}");
    let story = csv.trim_end_matches(".csv").to_string() + ".cresc";
    let deck = format!("deck-{story}");
    let built = crescendo(dir, &["build", &story, "--out", &deck]);
    let (bout, berr) = text(&built);
    assert!(
        built.status.success(),
        "{story} does not build:\n{bout}\n{berr}"
    );
    let findings: Vec<&str> = berr
        .lines()
        .filter(|l| l.starts_with("warning") || l.starts_with("advice") || l.starts_with("error"))
        .collect();
    let placeholders = findings
        .iter()
        .filter(|l| l.contains("[text-unfinished]"))
        .count();
    assert!(
        placeholders > 0 && placeholders == findings.len(),
        "{story}: the only findings must be its placeholders:\n{berr}"
    );
    // the author writes the texts: now nothing is left to flag
    let written = fs::read_to_string(dir.join(&story))
        .expect("story")
        .replace("TODO", "Written");
    let finished = format!("finished-{story}");
    fs::write(dir.join(&finished), written).expect("write");
    let built = crescendo(
        dir,
        &[
            "build",
            &finished,
            "--strict",
            "--out",
            &format!("deck-{finished}"),
        ],
    );
    let (bout, berr) = text(&built);
    assert!(
        built.status.success()
            && !berr.contains("warning")
            && !berr.contains("advice")
            && !berr.contains("error"),
        "{finished} has lint findings:\n{bout}\n{berr}"
    );
    // the starter story is already in the canonical layout
    let check = crescendo(dir, &["fmt", "--check", &story]);
    assert!(check.status.success(), "{story}: {:?}", text(&check));
    (fs::read_to_string(dir.join(&story)).expect("story"), stdout)
}

#[test]
fn new_writes_a_clean_story_for_every_demo_csv() {
    let dir = scratch("new-demo");
    let mut csvs = Vec::new();
    for (_, story) in stories() {
        let data = story.parent().expect("folder").join("data");
        for e in fs::read_dir(&data).expect("data folder") {
            let p = e.expect("entry").path();
            if p.extension().is_some_and(|x| x == "csv") {
                let name = p.file_name().expect("name").to_string_lossy().into_owned();
                fs::copy(&p, dir.join(&name)).expect("copy");
                csvs.push(name);
            }
        }
    }
    csvs.sort();
    csvs.dedup();
    assert!(csvs.len() >= 6, "{csvs:?}");
    for csv in &csvs {
        new_story_builds_clean(&dir, csv);
    }
}

/// Synthetic CSVs of each shape, with the form `new` must choose.
fn synthetic() -> Vec<(&'static str, String, &'static str)> {
    let mut series = String::from("month,region,sales\n");
    for m in 1..=12 {
        for (i, r) in ["North", "South", "East"].iter().enumerate() {
            series += &format!("2024-{m:02},{r},{}\n", 100 + 10 * m + 7 * i);
        }
    }
    let mut long = String::from("department,spend\n");
    for (i, d) in [
        "Parks and open spaces maintenance",
        "Street lighting and signals",
        "Libraries and community learning",
        "Waste collection and recycling",
        "Youth services and play schemes",
    ]
    .iter()
    .enumerate()
    {
        long += &format!("{d},{}\n", 300 + 45 * i);
    }
    let mut parts = String::from("site,fuel,energy\n");
    for (i, s) in ["Depot", "Town hall", "Pool", "Library"].iter().enumerate() {
        for (j, f) in ["Gas", "Electric", "Solar"].iter().enumerate() {
            parts += &format!("{s},{f},{}\n", 50 + 13 * i + 21 * j);
        }
    }
    let mut spread = String::from("household,minutes\n");
    for i in 0..40 {
        spread += &format!("H{i:03},{}\n", 20 + (i * 37) % 61);
    }
    let mut pairs = String::from("shop,floor_area,turnover\n");
    for i in 0..12 {
        pairs += &format!(
            "Shop {i},{},{}\n",
            80 + 15 * i,
            1000 + 140 * i + (i * 53) % 90
        );
    }
    let mut missing = String::from("week,visits\n");
    for d in 1..=20 {
        let v = if d % 6 == 0 {
            "NA".to_string()
        } else {
            (40 + d * 3).to_string()
        };
        missing += &format!("2024-03-{d:02},{v}\n");
    }
    // A long file of rates: one row per year and indicator, with a decade
    // column beside; the indicators are different measures.
    let mut rates = String::from("year,decade,indicator,rate\n");
    let mut many = String::from("year,indicator,value\n");
    for y in 1971..=2020 {
        for (i, ind) in ["unemployment", "inflation", "interest"].iter().enumerate() {
            let r = 2.0 + i as f64 * 1.5 + ((y * 7 + i * 3) % 11) as f64 / 4.0;
            rates += &format!("{y},{}0s,{ind},{r}\n", y / 10);
        }
        for i in 0..8 {
            let v = 10.0 + i as f64 + ((y * 5 + i) % 9) as f64 / 2.0;
            many += &format!("{y},series_{i},{v}\n");
        }
    }
    vec![
        (
            "long_rates.csv",
            rates,
            "line of rate over year, one line per indicator (change over time; a rate or level",
        ),
        (
            "many_indicators.csv",
            many,
            "only indicator = series_0 (each indicator is its own series, never averaged together)",
        ),
        (
            "time_series.csv",
            series,
            "line of sales over month, one line per region",
        ),
        (
            "long_names.csv",
            long,
            "horizontal bars of spend by department",
        ),
        ("few_parts.csv", parts, "stacked by fuel (part of a whole"),
        ("distribution.csv", spread, "dot plot of minutes"),
        (
            "two_measures.csv",
            pairs,
            "scatter of turnover against floor_area",
        ),
        ("with_gaps.csv", missing, "line of visits over week"),
    ]
}

#[test]
fn new_chooses_the_form_from_the_shape_and_the_story_builds_clean() {
    let dir = scratch("new-shapes");
    for (name, csv, form) in synthetic() {
        fs::write(dir.join(name), csv).expect("write csv");
        let (story, summary) = new_story_builds_clean(&dir, name);
        assert!(
            summary.contains(form),
            "{name}: expected `{form}` in\n{summary}"
        );
        // a value, a claim, and four frames that build up
        assert!(story.contains("\nvalue highest = "), "{story}");
        assert!(story.contains("\nclaim "), "{story}");
        assert_eq!(story.matches("\nframe ").count(), 4, "{story}");
        assert!(story.contains("# 1. Context") && story.contains("# 4. Conclusion"));
    }
}

/// `crescendo new` on three real open data sets shipped inside the
/// statsmodels package (public domain; `tests/starters/README.md`, exported
/// by `tests/starters/export_datasets.py`) and on Anscombe's quartet
/// (`tests/anscombe/`): each starter builds clean under `--strict`,
/// proposes the expected forms, sums no code or rate column and adds no two
/// measures together.
#[test]
fn new_makes_sense_of_real_data() {
    let dir = scratch("new-real");
    // (file, folder, forms the profile must propose, columns never summed)
    let cases: [(&str, &str, &[&str], &[&str]); 4] = [
        (
            "macrodata.csv",
            "tests/starters",
            &[
                "line of realgdp over period (year and quarter made one quarterly time)",
                "averaged per period, never summed",
                "scatter of cpi against realgdp (two measures, never added)",
                "codes and identifiers (not measures): none",
                "parts of a time (never measures): quarter",
                "rates and levels (averaged, never summed): realgdp, cpi, unemp, infl, realint",
            ],
            &[
                "quarter", "realgdp", "cpi", "unemp", "infl", "realint", "year",
            ],
        ),
        (
            "grunfeld.csv",
            "tests/starters",
            &[
                "line of invest over year (change over time; a rate or level, averaged",
                "scatter of value against invest",
            ],
            &["invest", "value", "capital", "year"],
        ),
        (
            "longley.csv",
            "tests/starters",
            &[
                "line of TOTEMP over YEAR",
                "codes and identifiers (not measures): Obs",
                "scatter of GNPDEFL against TOTEMP",
            ],
            &["Obs", "GNPDEFL", "UNEMP", "YEAR"],
        ),
        (
            "anscombe.csv",
            "tests/anscombe",
            &[
                "scatter of y against x, one panel per set on one scale",
                "codes and identifiers (not measures): observation",
            ],
            &["x", "y", "observation"],
        ),
    ];
    for (csv, folder, forms, never_summed) in cases {
        fs::copy(root().join(folder).join(csv), dir.join(csv)).expect("copy");
        let (story, summary) = new_story_builds_clean(&dir, csv);
        for form in forms {
            assert!(summary.contains(form), "{csv}: no `{form}` in\n{summary}");
        }
        for col in never_summed {
            assert!(
                !story.contains(&format!("sum({col})")),
                "{csv}: sums {col}:\n{story}"
            );
        }
        // No two measures added: no computed column but a time made of
        // its parts, no `+` outside texts.
        for line in story.lines().filter(|l| !l.trim_start().starts_with('#')) {
            let code: String = line.split('"').step_by(2).collect();
            let made_time = code.contains("= year_quarter(");
            assert!(
                (!code.contains("| add ") || made_time) && !code.contains('+'),
                "{csv}: {line}"
            );
        }
        // a year and a quarter column: one quarterly time
        assert_eq!(
            story.contains("| add period = year_quarter(year, quarter)"),
            csv == "macrodata.csv",
            "{csv}:\n{story}"
        );
        // The first frame's headline states a fact protected by a claim.
        assert!(
            story.contains("# The headline below states this"),
            "{story}"
        );
        assert!(!summary.contains("sum of"), "{summary}");
    }
}

/// 540 days of 3 branches (1,620 rows): the starter story sums the days
/// per month before drawing, so it builds clean (no `line-crowded`);
/// 120 days: per week.
#[test]
fn new_on_daily_rows_proposes_months_or_weeks() {
    let dir = scratch("new-daily");
    for (name, days, step) in [
        ("ledger.csv", 540, "month(day)"),
        ("spring.csv", 150, "week_start(day)"),
    ] {
        let mut csv = String::from("day,branch,takings\n");
        for i in 0..days {
            let d = crescendo_data::time::date_iso(
                crescendo_data::time::days_from_civil(2023, 1, 1) + i,
            );
            for (j, b) in ["North", "Harbour", "Old Town"].iter().enumerate() {
                csv.push_str(&format!(
                    "{d},{b},{}\n",
                    100 + (i as usize * 37 + j * 53) % 90 + j * 20
                ));
            }
        }
        fs::write(dir.join(name), csv).expect("write");
        let (story, _) = new_story_builds_clean(&dir, name);
        assert!(story.contains(step), "{name}: {story}");
    }
    let _ = fs::remove_dir_all(&dir);
}

#[test]
fn new_snapshots_one_story_and_one_profile() {
    let dir = scratch("new-snapshot");
    let (name, csv, _) = synthetic().remove(2);
    fs::write(dir.join(name), csv).expect("write csv");
    let (story, summary) = new_story_builds_clean(&dir, name);
    insta::assert_snapshot!("new_time_series_story", story);
    insta::assert_snapshot!("new_time_series_profile", summary);
}

#[test]
fn new_refuses_to_replace_a_story_unless_forced() {
    let dir = scratch("new-exists");
    let (name, csv, _) = synthetic().remove(3);
    fs::write(dir.join(name), csv).expect("write csv");
    fs::write(dir.join("long_names.cresc"), "# mine\n").expect("write story");
    let out = crescendo(&dir, &["new", name]);
    assert_eq!(out.status.code(), Some(1));
    assert!(text(&out).1.contains("exists"), "{:?}", text(&out));
    assert_eq!(
        fs::read_to_string(dir.join("long_names.cresc")).unwrap(),
        "# mine\n"
    );
    let forced = crescendo(&dir, &["new", name, "--force"]);
    assert!(forced.status.success());
    // --out writes elsewhere, with the data path relative to the story
    fs::create_dir_all(dir.join("stories")).unwrap();
    let out = crescendo(&dir, &["new", name, "--out", "stories/spend.cresc"]);
    assert!(out.status.success(), "{:?}", text(&out));
    let story = fs::read_to_string(dir.join("stories/spend.cresc")).unwrap();
    assert!(story.contains("from \"../long_names.csv\""), "{story}");
    // the data sits outside the story's folder: `new` says how to build it
    assert!(
        text(&out)
            .0
            .contains("next: crescendo build stories/spend.cresc --allow-path ."),
        "{:?}",
        text(&out)
    );
    let built = crescendo(&dir, &["build", "stories/spend.cresc", "--allow-path", "."]);
    assert!(built.status.success(), "{:?}", text(&built));
}

#[test]
fn new_reports_a_file_it_cannot_start_from() {
    let dir = scratch("new-bad");
    fs::write(dir.join("words.csv"), "a,b\nx,y\nz,w\n").unwrap();
    let out = crescendo(&dir, &["new", "words.csv"]);
    assert_eq!(out.status.code(), Some(1));
    assert!(
        text(&out).1.contains("no column of numbers"),
        "{:?}",
        text(&out)
    );
    assert!(!dir.join("words.cresc").exists());
    let out = crescendo(&dir, &["new", "missing.csv"]);
    assert_eq!(out.status.code(), Some(1));
    assert!(!dir.join("missing.cresc").exists());
}

// ------------------------------------------------------------------ fmt

#[test]
fn formatting_a_demo_story_gives_a_byte_identical_deck() {
    for (name, path) in stories() {
        let folder = path.parent().expect("folder");
        let original = fs::read_to_string(&path).expect("story");
        let formatted = crescendo_lang::format_story(&original).expect("formats");
        // beside the original, so data, style and plugin paths still resolve
        let copy = folder.join(format!(".{name}.{}.fmt-test", std::process::id()));
        fs::write(&copy, &formatted).expect("write copy");
        let out = scratch(&format!("fmt-deck-{name}"));
        let (a, b) = (out.join("a"), out.join("b"));
        let one = crescendo_with_plugins(
            &root(),
            &[
                "build",
                path.to_str().unwrap(),
                "--no-cache",
                "--out",
                a.to_str().unwrap(),
            ],
        );
        let two = crescendo_with_plugins(
            &root(),
            &[
                "build",
                copy.to_str().unwrap(),
                "--no-cache",
                "--out",
                b.to_str().unwrap(),
            ],
        );
        let _ = fs::remove_file(&copy);
        assert!(one.status.success(), "{name}: {:?}", text(&one));
        assert!(two.status.success(), "{name}: {:?}", text(&two));
        assert_eq!(
            read_dir_files(&a),
            read_dir_files(&b),
            "{name}: decks differ"
        );
    }
}

#[test]
fn fmt_check_lists_files_and_fmt_rewrites_them_once() {
    let dir = scratch("fmt-cli");
    fs::write(
        dir.join("a.cresc"),
        "story   \"A\"\nframe \"F\" { show all;hide all }\n",
    )
    .unwrap();
    fs::write(dir.join("b.cresc"), "story \"B\"\n").unwrap();
    let check = crescendo(&dir, &["fmt", "--check", "a.cresc", "b.cresc"]);
    assert_eq!(check.status.code(), Some(1));
    let (out, _) = text(&check);
    assert!(out.contains("a.cresc") && !out.contains("b.cresc"), "{out}");
    // --check changed nothing
    assert!(fs::read_to_string(dir.join("a.cresc"))
        .unwrap()
        .contains(";hide"));
    let run = crescendo(&dir, &["fmt", "a.cresc", "b.cresc"]);
    assert!(run.status.success(), "{:?}", text(&run));
    assert_eq!(
        fs::read_to_string(dir.join("a.cresc")).unwrap(),
        "story \"A\"\nframe \"F\" {\n  show all\n  hide all\n}\n"
    );
    let again = crescendo(&dir, &["fmt", "--check", "a.cresc", "b.cresc"]);
    assert!(again.status.success(), "{:?}", text(&again));
    // no temporary file is left behind
    let names: Vec<String> = read_dir_files(&dir).into_iter().map(|(n, _)| n).collect();
    assert_eq!(names, ["a.cresc", "b.cresc"]);
    // a folder stands for the stories in it
    fs::create_dir_all(dir.join("more")).unwrap();
    fs::write(dir.join("more/c.cresc"), "story  \"C\"\n").unwrap();
    let folder = crescendo(&dir, &["fmt", "--check", "."]);
    assert_eq!(folder.status.code(), Some(1));
    assert!(text(&folder).0.contains("c.cresc"), "{:?}", text(&folder));
    assert!(crescendo(&dir, &["fmt", "."]).status.success());
    assert_eq!(
        fs::read_to_string(dir.join("more/c.cresc")).unwrap(),
        "story \"C\"\n"
    );
}

#[test]
fn fmt_leaves_a_story_with_syntax_errors_untouched_and_says_where() {
    let dir = scratch("fmt-broken");
    let broken = "story \"A\"\nframe \"F\" {\n  show all,\n}\nframe \"G\" {}\n";
    fs::write(dir.join("bad.cresc"), broken).unwrap();
    fs::write(dir.join("good.cresc"), "story  \"B\"\n").unwrap();
    let out = crescendo(&dir, &["fmt", "bad.cresc", "good.cresc"]);
    assert_eq!(out.status.code(), Some(2));
    let (_, err) = text(&out);
    assert!(err.contains("bad.cresc:"), "{err}");
    assert!(err.contains("bad.cresc was not formatted"), "{err}");
    assert_eq!(fs::read_to_string(dir.join("bad.cresc")).unwrap(), broken);
    // the other file was still formatted
    assert_eq!(
        fs::read_to_string(dir.join("good.cresc")).unwrap(),
        "story \"B\"\n"
    );
}

// ------------------------------------------------------------------ shell

#[test]
fn completions_and_manual_mention_every_subcommand() {
    let subcommands = [
        "build",
        "watch",
        "check",
        "plugins",
        "explain",
        "plan",
        "diff",
        "review",
        "new",
        "fmt",
        "completions",
        "manual",
    ];
    // how each shell's script names a subcommand (clap_complete's forms)
    let marker = |shell: &str, sub: &str| match shell {
        "bash" => format!("crescendo,{sub})"),
        "zsh" => format!("'{sub}:"),
        _ => format!("-f -a \"{sub}\""),
    };
    for shell in ["bash", "zsh", "fish"] {
        let out = crescendo(&root(), &["completions", shell]);
        assert!(out.status.success(), "{shell}");
        let (script, _) = text(&out);
        for sub in subcommands {
            assert!(
                script.contains(&marker(shell, sub)),
                "{shell} completion lacks `{sub}`"
            );
        }
        assert!(script.contains("strict"), "{shell}: options too");
        assert!(
            !script.contains("deny"),
            "{shell}: no hidden option offered"
        );
    }
    let out = crescendo(&root(), &["manual"]);
    assert!(out.status.success());
    let (page, _) = text(&out);
    assert!(
        page.starts_with(".ie") || page.contains(".TH crescendo"),
        "{}",
        &page[..200.min(page.len())]
    );
    for sub in subcommands {
        assert!(
            page.contains(&format!("COMMAND: {}", sub.to_uppercase())),
            "manual lacks a section for `{sub}`"
        );
    }
    assert!(page.contains("\\-\\-check"), "the fmt options are listed");
    assert!(page.contains("\\-\\-strict"), "the lint options are listed");
    assert!(!page.contains("deny"), "no hidden option is listed");
}

// ------------------------------------------------------------------ locale and fiscal year

/// A story over monthly data in a locale and a fiscal year starting in July.
fn conventions_story(dir: &Path, header: &str) -> String {
    let mut csv = String::from("month,sales\n");
    for i in 0..24 {
        let (y, m) = (2023 + (6 + i) / 12, (6 + i) % 12 + 1);
        csv += &format!("{y}-{m:02},{}\n", 1200.5 + 37.25 * f64::from(i));
    }
    fs::write(dir.join("sales.csv"), csv).unwrap();
    let story = format!(
        "story \"Sales\"\nsource \"Invented\"\n{header}\ndata sales from \"sales.csv\"\n\
         value total = sum(sales.sales)\nvalue latest = last(sales.month)\n\
         conclusion \"Keep going.\"\n\
         frame \"Total {{total to 2 decimals}} up to {{latest}} ({{latest as quarter}})\" {{\n  line sales: x month, y sales\n  y title \"Sales\"\n}}\n"
    );
    fs::write(dir.join("sales.cresc"), story).unwrap();
    let out = crescendo(dir, &["plan", "sales.cresc"]);
    assert!(out.status.success(), "{:?}", text(&out));
    text(&out).0
}

#[test]
fn a_locale_and_a_fiscal_year_change_numbers_dates_and_ticks() {
    let dir = scratch("conventions");
    let plain = conventions_story(&dir, "");
    // default: today's conventions
    assert!(
        plain.contains("Total 39,093.00 up to Jun 2025 (2025 Q2)"),
        "{plain}"
    );
    assert!(plain.contains("\"label\": \"Jul 2023\""), "{plain}");
    assert!(plain.contains("\"label\": \"1,200\""), "{plain}");
    // CLDR 49 (ICU4X 2.4 compiled data): German groups with `.` and uses a
    // decimal comma.
    let de = conventions_story(&dir, "locale \"de-DE\"");
    assert!(de.contains("Total 39.093,00 up to "), "{de}");
    assert!(de.contains("\"label\": \"1.200\""), "tick labels: {de}");
    // French: decimal comma, U+202F NARROW NO-BREAK SPACE between groups,
    // abbreviated month names with a full stop ("juil." for July).
    let fr = conventions_story(&dir, "locale \"fr-FR\"");
    assert!(
        fr.contains("Total 39\u{202f}093,00 up to juin 2025"),
        "{fr}"
    );
    assert!(fr.contains("\"label\": \"juil. 2023\""), "{fr}");
    // A fiscal year from July: July 2023 to June 2024 is FY2024 (named by
    // the calendar year it ends in), so the quarter ticks read FY2024 Q1
    // (Jul 2023), Q2 (Oct), Q3 (Jan 2024), Q4 (Apr), FY2025 Q1 (Jul 2024).
    let fy = conventions_story(&dir, "fiscal year starts July");
    // June 2025 is the last month of FY2025 (July 2024 to June 2025)
    assert!(fy.contains("up to Jun 2025 (FY2025 Q4)"), "{fy}");
    assert!(fy.contains("\"label\": \"FY2024 Q1\""), "{fy}");
    assert!(fy.contains("\"label\": \"Q3\""), "{fy}");
    assert!(fy.contains("\"label\": \"FY2025 Q1\""), "{fy}");
    // both at once, and the deck builds
    conventions_story(&dir, "locale \"fr-FR\"\nfiscal year starts Jul");
    let built = crescendo(&dir, &["build", "sales.cresc"]);
    assert!(built.status.success(), "{:?}", text(&built));
    let html = fs::read_to_string(dir.join("deck/index.html")).expect("deck");
    assert!(
        html.contains("<html lang=\"fr-FR\">"),
        "the deck's language"
    );
    // and its own words are French too
    assert!(
        html.contains("aria-roledescription=\"diapositive\""),
        "{html}"
    );
    assert!(html.contains(">Pupitre</button>"), "{html}");
    let (_, svg) = read_dir_files(&dir.join("deck"))
        .into_iter()
        .find(|(n, _)| n.ends_with(".svg"))
        .expect("the one frame");
    let svg = String::from_utf8_lossy(&svg);
    // the frame draws French figures and fiscal quarters with the French
    // fiscal names (exercice, trimestre)
    assert!(svg.contains("39\u{202f}093,00"), "{svg}");
    // (the plan's no-break space is drawn as a space, as every drawn text)
    assert!(svg.contains("Ex. 2024 T1"), "{svg}");
    assert!(!svg.contains("FY2024"), "{svg}");
}

/// A story names its own fiscal periods: ticks, the fiscal buckets of a
/// view and quoted periods all read them; a part it leaves out keeps the
/// locale's name; a wrong name is a located error.
#[test]
fn a_story_names_its_fiscal_periods() {
    let dir = scratch("fiscal-names");
    let plan = conventions_story(
        &dir,
        "locale \"de-DE\"\nfiscal year starts July\nfiscal names year \"GJ \", quarter \"Quartal \"",
    );
    assert!(
        plan.contains("up to Jun 2025 (GJ 2025 Quartal 4)"),
        "{plan}"
    );
    assert!(plan.contains("\"label\": \"GJ 2024 Quartal 1\""), "{plan}");
    assert!(plan.contains("\"label\": \"Quartal 2\""), "{plan}");
    // German default names where the story names none
    let plan = conventions_story(&dir, "locale \"de-DE\"\nfiscal year starts July");
    assert!(plan.contains("(GJ\u{a0}2025 Q4)"), "{plan}");
    // a view grouped by fiscal year and quarter, with the story's names
    fs::write(
        dir.join("views.cresc"),
        "story \"Sales\"\nsource \"Invented\"\nfiscal year starts July\nfiscal names year \"Budget \", quarter \"P\"\n\
         data sales from \"sales.csv\"\n\
         view by_year = sales | add year = fiscal_year(month) | by year: sales = sum(sales)\n\
         view by_quarter = sales | add quarter = fiscal_quarter(month) | by quarter: sales = sum(sales)\n\
         frame \"Years\" {\n  bars by_year: category year, value sales\n}\n\
         frame \"Quarters\" {\n  bars by_quarter: category quarter, value sales\n}\n",
    )
    .unwrap();
    let out = crescendo(&dir, &["plan", "views.cresc"]);
    let (plan, err) = text(&out);
    assert!(out.status.success(), "{err}");
    // the data run July 2023 to June 2025: two fiscal years, eight quarters
    for label in [
        "Budget 2024",
        "Budget 2025",
        "Budget 2024 P1",
        "Budget 2025 P4",
    ] {
        assert!(
            plan.contains(&format!("\"label\": \"{label}\"")),
            "{label}: {plan}"
        );
    }
    assert!(!plan.contains("FY20"), "{plan}");
    // a quote inside a name: an error with a caret on the name
    fs::write(
        dir.join("bad.cresc"),
        "story \"S\"\nfiscal year starts July\nfiscal names half \"H\\\\\"\n",
    )
    .unwrap();
    let out = crescendo(&dir, &["check", "bad.cresc"]);
    let (_, err) = text(&out);
    assert!(!out.status.success());
    assert!(err.contains("error[bad-fiscal-name]"), "{err}");
    assert!(err.contains("bad.cresc:3:19"), "{err}");
}

#[test]
fn unknown_locales_and_months_are_located_errors() {
    let dir = scratch("conventions-bad");
    fs::write(dir.join("s.csv"), "k,v\na,1\nb,2\n").unwrap();
    for (line, expect) in [
        ("locale \"xx-QQ\"", "bad-locale"),
        ("locale \"de_DE!\"", "bad-locale"),
        ("fiscal year starts Juli", "bad-month"),
    ] {
        fs::write(
            dir.join("s.cresc"),
            format!("story \"S\"\n{line}\ndata s from \"s.csv\"\nframe \"F\" {{\n  bars s: category k, value v\n}}\n"),
        )
        .unwrap();
        let out = crescendo(&dir, &["check", "s.cresc"]);
        assert_eq!(out.status.code(), Some(1), "{line}");
        let (_, err) = text(&out);
        assert!(
            err.contains(expect) && err.contains("s.cresc:2:"),
            "{line}: {err}"
        );
    }
}
