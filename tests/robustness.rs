//! Mutation test: random edits to every demo story and its CSV data must
//! give located error diagnostics (or a sound plan), never a panic.
//!
//! The edits come from a fixed-seed xorshift generator, so every run tries
//! the same inputs; a failure names the story, the case number and the
//! mutated text, which is enough to reproduce it.

mod common;

use std::fs;
use std::panic::{self, AssertUnwindSafe};
use std::path::{Path, PathBuf};

use crescendo_diag::{Diagnostic, Located, Source};
use crescendo_plan::{plan_story, Chart, DeckPlan, PlanResult, Planned};

/// Story mutations in all, shared among the stories (so the test's time
/// stays bounded as stories are added), but at least [`MIN_STORY_CASES`] each.
const STORY_CASES: usize = 2400;
const MIN_STORY_CASES: usize = 200;
/// CSV mutations in all (each writes a temporary copy of the data), and at
/// least per story.
const CSV_CASES: usize = 480;
const MIN_CSV_CASES: usize = 40;

/// xorshift64 (G. Marsaglia, "Xorshift RNGs", Journal of Statistical
/// Software 8(14), 2003; shifts 13, 7, 17).
struct Rng(u64);

impl Rng {
    fn new(seed: u64) -> Self {
        Rng(seed.max(1))
    }

    fn next(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x << 13;
        x ^= x >> 7;
        x ^= x << 17;
        self.0 = x;
        x
    }

    /// Uniform-enough in `0..n` (`n > 0`).
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }

    fn pick<'a, T>(&mut self, items: &'a [T]) -> &'a T {
        &items[self.below(items.len())]
    }
}

/// Words of the story language and near-misses of them.
const WORDS: &[&str] = &[
    "story",
    "byline",
    "source",
    "theme",
    "data",
    "from",
    "missing",
    "view",
    "keep",
    "by",
    "add",
    "sort",
    "ascending",
    "descending",
    "top",
    "rest",
    "and",
    "or",
    "not",
    "in",
    "compare",
    "focus",
    "conclusion",
    "frame",
    "line",
    "bars",
    "x",
    "y",
    "series",
    "category",
    "value",
    "ordered",
    "title",
    "show",
    "hide",
    "spotlight",
    "all",
    "none",
    "takeaway",
    "notes",
    "claim",
    "about",
    "within",
    "where",
    "5%",
    "{",
    "}",
    "count()",
    "sum(",
    "clear",
    "month",
    "number",
    "text",
    "date",
    "year",
    "0",
    "-1",
    "99999999999999999999",
    "1e308",
    "\"\"",
    "\"2024-13\"",
    "\"x\"",
];

const PUNCT: &[&str] = &[
    "{", "}", "(", ")", ":", ",", "|", "=", "==", "<", ">=", "\"", "#", ";", "\\", "-", "*", "/",
    "\n", "\r\n", "\r", "\t", "é", "→", "\u{feff}", "\0",
];

/// A story of our own that uses every feature of the language the demo
/// stories leave out (dates, years, `missing`, `add`, `in`, `not`, `or`,
/// `sort`, `top ... rest`, single-series lines, ordered bars, `;`), so
/// that mutations reach those paths of the planner too.
const RICH_STORY: &str = r#"# Invented test data: grants paid by region.
story "Grants to the north grew fastest"
byline "Test team"
source "Invented test data"
theme clear

data grants from "data/grants.csv" missing "NA", "-" {
  day: date
  year: year, region: text
  amount: number
}

view per_year = grants
  | keep year >= 2020 and not (region in ("West", "Test"))
  | add thousands = amount / 1000 + 0 * -1
  | by year, region: total = sum(thousands), n = count(), first_day = first(day),
      top_amount = max(amount), low = min(amount), last_day = last(day)

view per_year_north = per_year
  | keep region = "North" or total > 100000

view per_day = grants
  | keep day >= "2020-01-01" and region != "Test"
  | by day: amount = sum(amount)
  | sort day ascending

view regions = grants
  | by region: amount = sum(amount), median_amount = median(amount), mean_amount = mean(amount)
  | top 3 region by amount rest "Other regions"
  | sort amount descending, region

compare region by total
focus "North", "East"
conclusion "Fund more work in the north."

frame "Spending per year" {
  line per_year: x year, y total, series region
  x title "Year"
  y title "Thousand per year"
  hide all; show "North"
}

frame "All regions" { show all; spotlight focus }

frame "Day by day" {
  line per_day: x day, y amount
  takeaway "Payments come in bursts."
  notes "Mention the audit."
}

frame "The three largest regions" {
  bars regions: category region, value amount
  spotlight "North"
  hide "Other regions"
}

frame "North year by year" {
  bars per_year_north: category year, value total, ordered
  y title "Thousand"
  spotlight none
}
"#;

/// The data of [`RICH_STORY`], generated from a fixed seed.
fn rich_csv() -> String {
    let mut rng = Rng::new(0x6A_4A17);
    let regions = ["North", "East", "South", "West", "Central", "Test"];
    let mut out = String::from("day,year,region,amount,note\n");
    for year in 2019..2025 {
        for month in [2, 7, 11] {
            for r in regions {
                if rng.below(7) == 0 {
                    continue;
                }
                let amount = if rng.below(20) == 0 {
                    "NA".to_string()
                } else {
                    // North leads, so the story's spotlight stays valid
                    let lead = if r == "North" { 1000 } else { 5 };
                    format!("{}.{}", lead + rng.below(900), rng.below(10))
                };
                let day = 1 + rng.below(28);
                out.push_str(&format!(
                    "{year}-{month:02}-{day:02},{year},{r},{amount},\"{}, {year}\"\n",
                    r.to_lowercase()
                ));
            }
        }
    }
    out
}

/// Every story to mutate, as (name, text, folder): the demo stories, and
/// [`RICH_STORY`] written with its data into a scratch folder of its own
/// for each `test` (the tests run in parallel).
fn corpus(test: &str) -> Vec<(String, String, PathBuf)> {
    let mut out: Vec<(String, String, PathBuf)> = common::stories()
        .into_iter()
        .map(|(name, path)| {
            let text = fs::read_to_string(&path).expect("read story");
            let dir = path.parent().expect("story folder").to_path_buf();
            (name, text, dir)
        })
        .collect();
    assert!(!out.is_empty(), "no demo stories found");
    let dir = common::scratch(&format!("robustness-{test}-rich"));
    fs::create_dir_all(dir.join("data")).expect("create data folder");
    fs::write(dir.join("data/grants.csv"), rich_csv()).expect("write rich data");
    fs::write(dir.join("rich.cresc"), RICH_STORY).expect("write rich story");
    out.push(("rich".to_string(), RICH_STORY.to_string(), dir));
    out
}

/// Byte offset of a random char boundary of `s` (0..=len).
fn boundary(rng: &mut Rng, s: &str) -> usize {
    let mut i = rng.below(s.len() + 1);
    while !s.is_char_boundary(i) {
        i -= 1;
    }
    i
}

/// The spans of whitespace-separated tokens.
fn tokens(s: &str) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut start = None;
    for (i, c) in s.char_indices() {
        match (c.is_whitespace(), start) {
            (true, Some(st)) => {
                out.push((st, i));
                start = None;
            }
            (false, None) => start = Some(i),
            _ => {}
        }
    }
    if let Some(st) = start {
        out.push((st, s.len()));
    }
    out
}

/// The spans of the contents of `"..."` strings on one line.
fn quoted(s: &str) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut open = None;
    for (i, c) in s.char_indices() {
        match (c, open) {
            ('"', None) => open = Some(i + 1),
            ('"', Some(o)) => {
                out.push((o, i));
                open = None;
            }
            ('\n', Some(_)) => open = None,
            _ => {}
        }
    }
    out
}

/// A near-miss of `name`: one character dropped, doubled, changed or
/// recased, or the name emptied.
fn near_miss(rng: &mut Rng, name: &str) -> String {
    let chars: Vec<char> = name.chars().collect();
    if chars.is_empty() {
        return "Westbrok".to_string();
    }
    let i = rng.below(chars.len());
    let mut out = chars.clone();
    match rng.below(5) {
        0 => {
            out.remove(i);
        }
        1 => out.insert(i, chars[i]),
        2 => out[i] = *rng.pick(&['a', 'Z', ' ', '-', 'ß', '"']),
        3 => return name.to_uppercase(),
        _ => return String::new(),
    }
    out.into_iter().collect()
}

/// One random edit of a story text.
fn mutate_story(rng: &mut Rng, text: &str) -> String {
    let mut s = text.to_string();
    match rng.below(12) {
        // delete a character range
        0 => {
            let a = boundary(rng, &s);
            let mut b = (a + 1 + rng.below(24)).min(s.len());
            while !s.is_char_boundary(b) {
                b += 1;
            }
            s.replace_range(a..b, "");
        }
        // duplicate a line
        1 => {
            let lines: Vec<&str> = s.split_inclusive('\n').collect();
            let i = rng.below(lines.len());
            let mut out = String::new();
            for (k, l) in lines.iter().enumerate() {
                out.push_str(l);
                if k == i {
                    out.push_str(l);
                    if !l.ends_with('\n') {
                        out.push('\n');
                    }
                }
            }
            s = out;
        }
        // swap two tokens
        2 => {
            let t = tokens(&s);
            if t.len() >= 2 {
                let (mut i, mut j) = (rng.below(t.len()), rng.below(t.len()));
                if i > j {
                    std::mem::swap(&mut i, &mut j);
                }
                if i != j {
                    let (a, b) = (t[i], t[j]);
                    let first = s[a.0..a.1].to_string();
                    let second = s[b.0..b.1].to_string();
                    s.replace_range(b.0..b.1, &first);
                    s.replace_range(a.0..a.1, &second);
                }
            }
        }
        // replace a quoted name with a near-miss
        3 => {
            let q = quoted(&s);
            if !q.is_empty() {
                let (a, b) = *rng.pick(&q);
                let nm = near_miss(rng, &s[a..b]);
                s.replace_range(a..b, &nm);
            }
        }
        // insert a keyword
        4 => {
            let at = boundary(rng, &s);
            let w = rng.pick(WORDS);
            let padded = match rng.below(3) {
                0 => format!(" {w} "),
                1 => format!("\n{w} "),
                _ => (*w).to_string(),
            };
            s.insert_str(at, &padded);
        }
        // insert punctuation
        5 => {
            let at = boundary(rng, &s);
            let p = *rng.pick(PUNCT);
            s.insert_str(at, p);
        }
        // truncate
        6 => {
            let at = boundary(rng, &s);
            s.truncate(at);
        }
        // delete, move or swap whole lines (keeps most of the syntax valid)
        7 | 8 => {
            let mut lines: Vec<String> = s.split_inclusive('\n').map(str::to_string).collect();
            if lines.is_empty() {
                return s;
            }
            let i = rng.below(lines.len());
            let j = rng.below(lines.len());
            match rng.below(3) {
                0 => {
                    lines.remove(i);
                }
                1 => {
                    let l = lines.remove(i);
                    lines.insert(j.min(lines.len()), l);
                }
                _ => lines.swap(i, j),
            }
            s = lines.concat();
            if !s.ends_with('\n') {
                s.push('\n');
            }
        }
        // replace a name with another word of the story or the language
        9 | 10 => {
            let w = words(&s);
            if !w.is_empty() {
                let (a, b) = *rng.pick(&w);
                let by = if rng.below(3) == 0 {
                    rng.pick(WORDS).to_string()
                } else {
                    let (c, d) = *rng.pick(&w);
                    s[c..d].to_string()
                };
                s.replace_range(a..b, &by);
            }
        }
        // replace a quoted text with another one of the story
        _ => {
            let q = quoted(&s);
            if q.len() >= 2 {
                let (a, b) = *rng.pick(&q);
                let (c, d) = *rng.pick(&q);
                let by = s[c..d].to_string();
                s.replace_range(a..b, &by);
            }
        }
    }
    s
}

/// The spans of names (`[A-Za-z_][A-Za-z0-9_]*`) outside strings and comments.
fn words(s: &str) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let b = s.as_bytes();
    let (mut i, mut in_str) = (0, false);
    while i < b.len() {
        let c = b[i];
        if in_str {
            match c {
                b'\\' => i += 1,
                b'"' | b'\n' => in_str = false,
                _ => {}
            }
            i += 1;
        } else if c == b'"' {
            in_str = true;
            i += 1;
        } else if c == b'#' {
            while i < b.len() && b[i] != b'\n' {
                i += 1;
            }
        } else if c.is_ascii_alphabetic() || c == b'_' {
            let start = i;
            while i < b.len() && (b[i].is_ascii_alphanumeric() || b[i] == b'_') {
                i += 1;
            }
            out.push((start, i));
        } else {
            i += 1;
        }
    }
    out
}

/// One random edit of a CSV file's bytes.
fn mutate_csv(rng: &mut Rng, csv: &[u8]) -> Vec<u8> {
    let text = String::from_utf8_lossy(csv).into_owned();
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    // a data row when there is one, else the header
    let row = if lines.len() > 1 {
        1 + rng.below(lines.len() - 1)
    } else {
        0
    };
    let cells = |l: &str| -> Vec<String> { l.split(',').map(str::to_string).collect() };
    let edit_cell = |lines: &mut Vec<String>, rng: &mut Rng, f: &dyn Fn(&str) -> String| {
        if let Some(l) = lines.get(row) {
            let mut c = cells(l);
            let j = rng.below(c.len());
            c[j] = f(&c[j]);
            lines[row] = c.join(",");
        }
    };
    let join = |lines: &[String], eol: &str| -> Vec<u8> {
        let mut s = lines.join(eol);
        s.push_str(eol);
        s.into_bytes()
    };
    match rng.below(16) {
        // drop a field
        0 => {
            if let Some(l) = lines.get(row) {
                let mut c = cells(l);
                c.remove(rng.below(c.len()));
                lines[row] = c.join(",");
            }
        }
        // add a field
        1 => {
            if let Some(l) = lines.get_mut(row) {
                l.push_str(",extra");
            }
        }
        // a stray quote somewhere in a line
        2 => {
            if let Some(l) = lines.get_mut(row) {
                let at = boundary(rng, l);
                l.insert(at, '"');
            }
        }
        // blank a cell
        3 => edit_cell(&mut lines, rng, &|_| String::new()),
        // text where a number or month is expected
        4 => {
            let junk = *rng.pick(&["n/a", "12abc", "1,5", " 42", "—", "NaN", "inf", "2024-13"]);
            edit_cell(&mut lines, rng, &|_| junk.to_string())
        }
        // extreme numbers (sums can overflow)
        5 => {
            let big = *rng.pick(&["1e308", "-1e308", "1.7976931348623157e308", "1e-320", "0"]);
            for _ in 0..1 + rng.below(8) {
                let r = 1 + rng.below(lines.len().saturating_sub(1).max(1));
                if let Some(l) = lines.get(r) {
                    let mut c = cells(l);
                    if let Some(last) = c.last_mut() {
                        *last = big.to_string();
                    }
                    lines[r] = c.join(",");
                }
            }
        }
        // a byte order mark
        6 => {
            let mut out = b"\xEF\xBB\xBF".to_vec();
            out.extend(join(&lines, "\n"));
            return out;
        }
        // CRLF or CR line endings
        7 => return join(&lines, if rng.below(2) == 0 { "\r\n" } else { "\r" }),
        // rename or duplicate a header field
        8 => {
            if let Some(h) = lines.first() {
                let mut c = cells(h);
                let j = rng.below(c.len());
                c[j] = match rng.below(3) {
                    0 => c[(j + 1) % c.len()].clone(),
                    1 => String::new(),
                    _ => near_miss(rng, &c[j]),
                };
                lines[0] = c.join(",");
            }
        }
        // delete or duplicate a row
        9 => {
            if row < lines.len() && row > 0 {
                if rng.below(2) == 0 {
                    lines.remove(row);
                } else {
                    let l = lines[row].clone();
                    lines.insert(row, l);
                }
            }
        }
        // truncate the file anywhere
        10 => {
            let at = rng.below(csv.len() + 1);
            return csv[..at].to_vec();
        }
        // invalid UTF-8 inside a cell
        11 => {
            let mut out = join(&lines, "\n");
            let at = rng.below(out.len() + 1);
            out.insert(at, 0xFF);
            return out;
        }
        // blank lines, or only the header
        12 => {
            if rng.below(2) == 0 {
                lines.insert(row, String::new());
            } else {
                lines.truncate(1);
            }
        }
        // an empty file
        13 => return Vec::new(),
        // a quoted field with an embedded comma or doubled quote
        14 => edit_cell(&mut lines, rng, &|c| {
            format!("\"{}, \"\"{}\"\"\"", c.replace('"', ""), c.replace('"', ""))
        }),
        // negative and missing values in the measure
        _ => {
            let v = *rng.pick(&["-5", "NA", "-0", "0.0000001"]);
            edit_cell(&mut lines, rng, &|_| v.to_string())
        }
    }
    join(&lines, "\n")
}

/// Why a span does not fit its source, if it does not.
fn bad_span(l: &Located) -> Option<String> {
    let t = &l.source.text;
    let ok = l.span.start <= l.span.end
        && l.span.end <= t.len()
        && t.is_char_boundary(l.span.start)
        && t.is_char_boundary(l.span.end);
    (!ok).then(|| {
        format!(
            "span {:?} does not fit `{}` ({} bytes)",
            l.span,
            l.source.name,
            t.len()
        )
    })
}

/// Problems with one diagnostic: errors need a primary location, and every
/// location must lie within its source text.
fn check_diag(d: &Diagnostic) -> Vec<String> {
    let mut out = Vec::new();
    match &d.primary {
        None if d.is_error() => out.push(format!("error without a location: {}", d.message)),
        None => {}
        Some(p) => {
            if let Some(e) = bad_span(p) {
                out.push(format!("{e}: {}", d.message));
            }
            if d.location().is_none() {
                out.push(format!("no line and column: {}", d.message));
            }
        }
    }
    for s in &d.secondary {
        if let Some(e) = bad_span(s) {
            out.push(format!("secondary {e}: {}", d.message));
        }
    }
    out
}

/// Is every number a chart draws finite, and every axis well formed?
fn chart_ok(c: &Chart) -> bool {
    let axis_ok = |a: &crescendo_plan::Axis| {
        a.domain.iter().all(|v| v.is_finite())
            && a.domain[0] <= a.domain[1]
            && a.ticks.iter().all(|t| t.value.is_finite())
    };
    let fin = |v: &Option<f64>| v.is_none_or(f64::is_finite);
    match c {
        Chart::Line(l) => {
            axis_ok(&l.x)
                && axis_ok(&l.y)
                && l.series.iter().all(|s| {
                    s.points
                        .iter()
                        .all(|pt| pt.x.is_finite() && pt.y.is_none_or(f64::is_finite))
                })
        }
        Chart::Bars(b) => axis_ok(&b.value) && b.bars.iter().all(|b| fin(&b.value)),
        Chart::Parts(p) => {
            axis_ok(&p.value) && p.categories.iter().all(|c| c.values.iter().all(fin))
        }
        Chart::Dots(d) => axis_ok(&d.value) && d.rows.iter().all(|r| r.values.iter().all(fin)),
        Chart::Scatter(s) => {
            axis_ok(&s.x)
                && axis_ok(&s.y)
                && s.points.iter().all(|p| p.x.is_finite() && p.y.is_finite())
        }
        Chart::Pie(p) => p
            .slices
            .iter()
            .all(|s| s.value.is_finite() && s.share.is_finite()),
        Chart::Panels(p) => p.panels.iter().all(|x| chart_ok(&x.chart)),
        Chart::Figures(_) | Chart::Table(_) | Chart::Plugin(_) => true,
    }
}

/// Problems with a plan that was accepted: every number drawn is finite.
fn check_plan(p: &DeckPlan) -> Vec<String> {
    let mut out = Vec::new();
    for f in &p.frames {
        if !chart_ok(&f.chart) {
            out.push(format!("frame {} draws a non-finite number", f.number));
        }
    }
    out
}

/// Plan `text` against `dir`; returns the problems found (empty when fine).
fn plan_problems(name: &str, text: &str, dir: &Path) -> Vec<String> {
    let src = Source::file(name, text);
    problems_of(|| plan_story(&src, dir, &common::plan_options()))
}

/// Run a planning step, catching panics; returns the problems found.
fn problems_of(run: impl FnOnce() -> PlanResult) -> Vec<String> {
    match panic::catch_unwind(AssertUnwindSafe(run)) {
        Err(e) => {
            let msg = e
                .downcast_ref::<String>()
                .cloned()
                .or_else(|| e.downcast_ref::<&str>().map(|s| s.to_string()))
                .unwrap_or_default();
            vec![format!("panic: {msg}")]
        }
        Ok(Err(diags)) => {
            let mut out: Vec<String> = diags.iter().flat_map(check_diag).collect();
            if !diags.iter().any(Diagnostic::is_error) {
                out.push("failed without an error".into());
            }
            out
        }
        Ok(Ok(Planned {
            plan,
            warnings,
            failed_claims,
            ..
        })) => {
            let mut out: Vec<String> = warnings
                .iter()
                .chain(&failed_claims)
                .flat_map(check_diag)
                .collect();
            out.extend(check_plan(&plan));
            out
        }
    }
}

/// Shorten a failing input for the report.
fn excerpt(s: &str) -> String {
    const MAX: usize = 4000;
    if s.len() <= MAX {
        s.to_string()
    } else {
        let mut i = MAX;
        while !s.is_char_boundary(i) {
            i -= 1;
        }
        format!("{}\n[... {} more bytes]", &s[..i], s.len() - i)
    }
}

fn fail_report(failures: &[String]) {
    assert!(
        failures.is_empty(),
        "{} failing case(s); the first:\n{}",
        failures.len(),
        failures
            .iter()
            .take(3)
            .cloned()
            .collect::<Vec<_>>()
            .join("\n\n")
    );
}

/// Every file of `dir` and its subfolders, relative to `dir`.
fn files_under(dir: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    let mut todo = vec![dir.to_path_buf()];
    while let Some(d) = todo.pop() {
        for e in fs::read_dir(&d).expect("read story folder") {
            let p = e.expect("entry").path();
            if p.is_dir() {
                if p.file_name().is_some_and(|n| n != "deck") {
                    todo.push(p);
                }
            } else {
                out.push(p.strip_prefix(dir).expect("under dir").to_path_buf());
            }
        }
    }
    out.sort();
    out
}

#[test]
fn unmutated_stories_plan_cleanly() {
    // The baseline: every story of the corpus plans, so the mutations below
    // start from valid input and test something.
    for (name, text, dir) in corpus("plain") {
        let src = Source::file(format!("{name}.cresc"), text);
        let result = plan_story(&src, &dir, &common::plan_options());
        match result {
            Ok(p) => assert!(p.failed_claims.is_empty(), "{name}: {:?}", p.failed_claims),
            Err(d) => panic!("{name} does not plan: {d:?}"),
        }
    }
}

#[test]
fn mutated_stories_never_panic_and_errors_are_located() {
    let mut failures = Vec::new();
    let stories = corpus("story");
    let cases = (STORY_CASES / stories.len()).max(MIN_STORY_CASES);
    for (si, (name, text, dir)) in stories.iter().enumerate() {
        let mut rng = Rng::new(0x5EED_0001 + si as u64);
        for case in 0..cases {
            let mut mutated = mutate_story(&mut rng, text);
            // Now and then stack a second and third edit.
            for _ in 0..rng.below(3) {
                mutated = mutate_story(&mut rng, &mutated);
            }
            let problems = plan_problems(&format!("{name}.cresc"), &mutated, dir);
            if !problems.is_empty() {
                failures.push(format!(
                    "story `{name}`, case {case}: {}\n--- input ---\n{}",
                    problems.join("; "),
                    excerpt(&mutated)
                ));
            }
        }
    }
    fail_report(&failures);
}

#[test]
fn mutated_data_never_panics_and_errors_are_located() {
    let mut failures = Vec::new();
    let stories = corpus("data");
    let cases = (CSV_CASES / stories.len()).max(MIN_CSV_CASES);
    for (si, (name, text, dir)) in stories.iter().enumerate() {
        let dir = dir.as_path();
        let csvs: Vec<PathBuf> = files_under(dir)
            .into_iter()
            .filter(|p| p.extension().is_some_and(|x| x == "csv"))
            .collect();
        assert!(!csvs.is_empty(), "story `{name}` has no CSV data");
        let scratch = common::scratch(&format!("robustness-{name}"));
        for rel in files_under(dir) {
            let to = scratch.join(&rel);
            fs::create_dir_all(to.parent().expect("parent")).expect("create folder");
            fs::copy(dir.join(&rel), &to).expect("copy story file");
        }
        let mut rng = Rng::new(0xC5F_0001 + si as u64);
        for case in 0..cases {
            let rel = rng.pick(&csvs).clone();
            let original = fs::read(dir.join(&rel)).expect("read csv");
            let mut mutated = mutate_csv(&mut rng, &original);
            if rng.below(4) == 0 {
                mutated = mutate_csv(&mut rng, &mutated);
            }
            fs::write(scratch.join(&rel), &mutated).expect("write csv");
            let problems = plan_problems(&format!("{name}.cresc"), text, &scratch);
            if !problems.is_empty() {
                failures.push(format!(
                    "story `{name}`, data `{}`, case {case}: {}\n--- data ---\n{}",
                    rel.display(),
                    problems.join("; "),
                    excerpt(&String::from_utf8_lossy(&mutated))
                ));
            }
            fs::write(scratch.join(&rel), &original).expect("restore csv");
        }
        let _ = fs::remove_dir_all(&scratch);
    }
    fail_report(&failures);
}

#[test]
fn the_checks_can_fail() {
    // A diagnostic without a location, or with a span past the end of its
    // source, is caught by the same checks the mutation tests use.
    let src = Source::file("t.cresc", "abc");
    let unlocated = Diagnostic::error("x", "no place");
    assert!(!check_diag(&unlocated).is_empty());
    let past_end = Diagnostic::error("x", "too far").at(&src, 2..9, "here");
    assert!(!check_diag(&past_end).is_empty());
    let split_char = Diagnostic::error("x", "mid-char").at(&Source::file("u", "é"), 1..2, "");
    assert!(!check_diag(&split_char).is_empty());
    let fine = Diagnostic::error("x", "ok").at(&src, 1..3, "here");
    assert!(check_diag(&fine).is_empty());
    // A panic is caught and reported, and so is a failure without an error.
    let panicked = problems_of(|| panic!("boom"));
    assert_eq!(panicked, ["panic: boom"]);
    let silent = problems_of(|| Err(vec![Diagnostic::warning("x", "only a warning")]));
    assert!(!silent.is_empty());
    // and a missing story folder is an error, not a panic
    assert!(
        plan_problems("t.cresc", "story \"x\"\n", Path::new("/nonexistent")).is_empty(),
        "a story with no frames must fail with a located error"
    );
}
