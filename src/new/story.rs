//! Writing the starter story: the data item, views, a value and its claim,
//! and four frames that build up to a placeholder conclusion.

use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use crescendo_data::{ColType, Table, Value};

use super::profile::{is_name, ColumnProfile, Profile};
use super::shape::Shape;

/// The CSV path as the story should name it (relative to the story's folder
/// when the CSV sits in it or below it).
pub(super) fn relative_data_path(data: &Path, story: &Path) -> String {
    let story_dir = story
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let abs = |p: &Path| std::fs::canonicalize(p).unwrap_or_else(|_| p.to_path_buf());
    let (d, s) = (abs(data), abs(story_dir));
    // up from the story's folder to the common ancestor, then down
    let common = d
        .components()
        .zip(s.components())
        .take_while(|(a, b)| a == b)
        .count();
    let mut rel = PathBuf::new();
    for _ in s.components().skip(common) {
        rel.push("..");
    }
    for c in d.components().skip(common) {
        rel.push(c);
    }
    rel.to_string_lossy().replace('\\', "/")
}

/// A story string literal.
pub(super) fn quote(s: &str) -> String {
    let mut out = String::from("\"");
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            '\n' => out.push_str("\\n"),
            '{' | '}' => out.push('\u{2009}'),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// A cell as the text a story writes for it (a name, a year, an ISO month
/// or date).
fn key_text(v: &Value) -> Option<String> {
    match v {
        Value::Text(t) => Some(t.clone()),
        Value::Year(y) => Some(y.to_string()),
        Value::Month(x) => Some(crescendo_data::time::month_iso(*x)),
        Value::Date(x) => Some(crescendo_data::time::date_iso(*x)),
        _ => None,
    }
}

/// `agg` (`sum` or `mean`) of `measure` per value of `key` (as text),
/// ignoring missing cells, over the rows where `only` (column, value as
/// text) holds. Keys sort as the story's times do (ISO texts, years).
pub(super) fn aggregates(
    table: &Table,
    key: &str,
    measure: &str,
    agg: &str,
    only: Option<(&str, &str)>,
) -> BTreeMap<String, f64> {
    let mut sums: BTreeMap<String, (f64, usize)> = BTreeMap::new();
    let col = |n: &str| table.columns.iter().find(|c| c.name == n);
    let (Some(k), Some(m)) = (col(key), col(measure)) else {
        return BTreeMap::new();
    };
    let filter = only.and_then(|(c, v)| col(c).map(|c| (c, v)));
    for (r, (kv, mv)) in k.values.iter().zip(m.values.iter()).enumerate() {
        if let Some((c, want)) = filter {
            if key_text(&c.values.value(r)).as_deref() != Some(want) {
                continue;
            }
        }
        let (Some(key), Value::Number(x)) = (key_text(&kv), mv) else {
            continue;
        };
        let e = sums.entry(key).or_insert((0.0, 0));
        e.0 += x;
        e.1 += 1;
    }
    sums.into_iter()
        .map(|(k, (t, n))| (k, if agg == "sum" { t } else { t / n as f64 }))
        .collect()
}

/// Totals of `measure` per value of `key`.
fn totals(table: &Table, key: &str, measure: &str) -> BTreeMap<String, f64> {
    aggregates(table, key, measure, "sum", None)
}

/// The key with the largest total.
pub(super) fn largest(t: &BTreeMap<String, f64>) -> Option<String> {
    t.iter()
        .max_by(|a, b| a.1.total_cmp(b.1))
        .map(|(k, _)| k.clone())
}

/// Words from a column name: `weekly_hours` → "weekly hours".
pub(super) fn words(name: &str) -> String {
    name.replace('_', " ")
}

pub(super) fn capital(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().collect::<String>() + c.as_str(),
        None => String::new(),
    }
}

/// The starter story.
pub fn write_story(table: &Table, p: &Profile, shape: &Shape, data_path: &str) -> String {
    let mut s = String::new();
    let stem = p.file.trim_end_matches(".csv").trim_end_matches(".CSV");
    let _ = writeln!(
        s,
        "# Starter story written by `crescendo new` from {}.",
        p.file
    );
    let _ = writeln!(
        s,
        "# Replace every TODO; `crescendo build` checks the claim and lints each frame."
    );
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "story {}",
        quote(&format!("TODO: the headline of {}", words(stem)))
    );
    let _ = writeln!(s, "byline \"TODO: your team\"");
    let _ = writeln!(
        s,
        "source {}",
        quote(&format!("{} (TODO: say where it comes from)", p.file))
    );
    let _ = writeln!(s);
    let years: Vec<&ColumnProfile> = p.columns.iter().filter(|c| c.ty == ColType::Year).collect();
    let data = data_name(stem);
    if years.is_empty() {
        let _ = writeln!(s, "data {data} from {}", quote(data_path));
    } else {
        let _ = writeln!(s, "# whole numbers named like a year are read as years");
        let decls: Vec<String> = years.iter().map(|c| format!("{}: year", c.name)).collect();
        let _ = writeln!(
            s,
            "data {data} from {} {{ {} }}",
            quote(data_path),
            decls.join(", ")
        );
    }
    let s_before = s.len();
    let _ = writeln!(s);
    match shape {
        Shape::Trend(t) => super::trend::trend(&mut s, table, &t.borrowed()),
        Shape::Periods {
            period,
            category,
            measure,
            agg,
        } => periods(&mut s, table, (period, category), measure, agg),
        Shape::Relationship { x, y, label, group } => {
            relationship(&mut s, table, (x, y), label.as_deref(), group.as_deref())
        }
        Shape::PartOfWhole {
            category,
            part,
            measure,
        } => part_of_whole(&mut s, table, category, part, measure),
        Shape::Distribution { name, measure } => distribution(&mut s, table, name, measure),
        Shape::Comparison {
            category,
            measure,
            agg,
            horizontal,
            top,
        } => comparison(&mut s, table, (category, measure, agg), *horizontal, *top),
    }
    // the forms write `= table`; the data item is named after the file
    let body = s
        .split_off(s_before)
        .replace(" = table\n", &format!(" = {data}\n"));
    s.push_str(&body);
    s
}

/// A name for the data item: the file's name as a story name (`hours`,
/// `followups_2024_11`), or `rows`.
fn data_name(stem: &str) -> String {
    let mut n: String = stem
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() {
                c.to_ascii_lowercase()
            } else {
                '_'
            }
        })
        .collect();
    if n.starts_with(|c: char| c.is_ascii_digit()) {
        n.insert(0, '_');
    }
    if is_name(&n) && !n.is_empty() {
        n
    } else {
        "rows".into()
    }
}

/// The highest and lowest values and the conclusion placeholder, shared
/// by every form. Each form then states one true fact in a headline,
/// computed as a value and protected by a claim ([`fact`]).
pub(super) fn value_and_claim(s: &mut String, view: &str, measure: &str) {
    let _ = writeln!(s, "value highest = max({view}.{measure})");
    let _ = writeln!(s, "value lowest = min({view}.{measure})");
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "conclusion \"TODO: the one sentence the story builds to\""
    );
    let _ = writeln!(s);
}

/// A claim that protects a headline: the comment saying so, the claim, and
/// a blank line.
pub(super) fn fact(s: &mut String, claim: &str, sentence: &str) {
    let _ = writeln!(
        s,
        "# The headline below states this; the build fails if the data stop saying it."
    );
    let _ = writeln!(s, "claim {claim} {}", quote(sentence));
    let _ = writeln!(s);
}

/// `s` as it may stand inside a story string (quotes and backslashes
/// escaped, braces of the data kept from opening a quoted value).
pub(super) fn escape(s: &str) -> String {
    let q = quote(s);
    q[1..q.len() - 1].to_string()
}

/// `"text"` for a text or time key, the bare number for a year.
pub(super) fn literal(key: &str) -> String {
    if !key.is_empty() && key.chars().all(|c| c.is_ascii_digit()) {
        key.to_string()
    } else {
        quote(key)
    }
}

/// One frame of a starter story: the comment that says what it is for, the
/// headline (already quoted), its statements, and a blank line after it.
pub(super) fn frame(s: &mut String, comment: &str, headline: &str, lines: &[String]) {
    let _ = writeln!(s, "# {comment}");
    let _ = writeln!(s, "frame {headline} {{");
    for l in lines {
        let _ = writeln!(s, "  {l}");
    }
    let _ = writeln!(s, "}}");
    let _ = writeln!(s);
}

/// The focus, the KEY with the largest `agg` of MEASURE in `table`, ranks
/// first among the KEYs of VIEW by MEASURE: the value `focus_rank`, the
/// fact `said(focus)` that holds it to 1, then `compare` and `focus`.
/// Returns the fact's sentence (the spotlight frame's headline).
pub(super) fn ranked_focus(
    s: &mut String,
    table: &Table,
    (view, key, measure, agg): (&str, &str, &str, &str),
    said: impl FnOnce(&str) -> String,
) -> String {
    let focus = largest(&aggregates(table, key, measure, agg, None)).unwrap_or_default();
    let said = said(&focus);
    let _ = writeln!(
        s,
        "value focus_rank = rank({view}.{measure} where {key} = {})",
        literal(&focus)
    );
    fact(s, "focus_rank = 1", &said);
    compare_focus(s, key, measure, &focus);
    said
}

/// `compare KEY by MEASURE` and `focus "NAME"`, then a blank line.
pub(super) fn compare_focus(s: &mut String, key: &str, measure: &str, focus: &str) {
    let _ = writeln!(s, "compare {key} by {measure}");
    let _ = writeln!(s, "focus {}", quote(focus));
    let _ = writeln!(s);
}

/// The view: a comment on the form, `view NAME = table`, its steps.
pub(super) fn view(s: &mut String, comment: &str, name: &str, steps: &[String]) {
    let _ = writeln!(s, "{comment}");
    let _ = writeln!(s, "view {name} = table");
    for st in steps {
        let _ = writeln!(s, "  {st}");
    }
    let _ = writeln!(s);
}

pub(super) fn conclusion_frame(s: &mut String) {
    let _ = writeln!(
        s,
        "# 4. Conclusion (placeholder): say what the audience should do."
    );
    let _ = writeln!(s, "frame \"TODO: what to do about it\" {{");
    let _ = writeln!(s, "  takeaway \"{{conclusion}}\"");
    let _ = writeln!(s, "}}");
}

/// The spotlight frame most forms end their build-up with.
pub(super) fn spotlight_frame(s: &mut String, comment: &str, headline: String, takeaway: &str) {
    frame(
        s,
        comment,
        &quote(&headline),
        &["spotlight focus".into(), format!("takeaway \"{takeaway}\"")],
    );
}

/// The last frames of a story over one value per name: 2, the values
/// from the `top` to the `bottom` (`comparison`); 3, a spotlight on the
/// focus (`spotlight`: its comment, headline and takeaway); the conclusion.
fn top_to_bottom(
    s: &mut String,
    (comparison, top, bottom): (&str, &str, &str),
    (spotlight, headline, takeaway): (&str, String, &str),
) {
    frame(
        s,
        &format!("2. Comparison: {comparison}."),
        &quote(&format!("From the {top} to the {bottom}")),
        &["takeaway \"From {highest} down to {lowest}.\"".into()],
    );
    let comment = format!("3. Spotlight: {spotlight}.");
    spotlight_frame(s, &comment, headline, takeaway);
    conclusion_frame(s);
}

fn periods(
    s: &mut String,
    table: &Table,
    (period, category): (&str, &str),
    measure: &str,
    agg: &str,
) {
    let m = words(measure);
    let how = if agg == "sum" {
        format!("{measure} is an amount: summed per {category} and {period}.")
    } else {
        format!("{measure} is a rate or level: averaged per {category} and {period}, never summed.")
    };
    view(
        s,
        &format!(
            "# Only two periods of {period}: bars grouped by {period} compare them\n\
             # honestly (a line through two points is one slope, not a trend).\n# {how}"
        ),
        "by_period",
        &[
            format!("| by {category}, {period}: {measure} = {agg}({measure})"),
            format!("| sort {measure} descending"),
        ],
    );
    value_and_claim(s, "by_period", measure);
    // the bars' colours are the periods: the latest one is the focus
    let focus = totals(table, period, measure)
        .keys()
        .next_back()
        .cloned()
        .unwrap_or_default();
    let latest = aggregates(table, category, measure, agg, Some((period, &focus)));
    let leader = largest(&latest).unwrap_or_default();
    let _ = writeln!(
        s,
        "value leader_latest = max(by_period.{measure} where {period} = {})",
        literal(&focus)
    );
    let _ = writeln!(
        s,
        "value leader_value = max(by_period.{measure} where {category} = {} and {period} = {})",
        literal(&leader),
        literal(&focus)
    );
    let headline = format!("{leader} has the highest {m} in {focus}");
    fact(s, "leader_value = leader_latest", &headline);
    compare_focus(s, period, measure, &focus);
    frame(
        s,
        &format!("1. Context: every {category} in both periods."),
        &quote(&headline),
        &[
            format!("bars by_period: category {category}, value {measure}, group {period}"),
            format!("y title {}", quote(&capital(&m))),
            // the headline names the leader: the chart marks its bar (and
            // keeps the mark through the frames that build on this one)
            format!(
                "callout {} on {} {}",
                quote(&leader),
                quote(&focus),
                quote(&format!("Highest in {focus}"))
            ),
            "takeaway \"TODO: what the bars show\"".into(),
        ],
    );
    frame(
        s,
        "2. Comparison: how each changed between the periods.",
        "\"TODO: which changed most\"",
        &["takeaway \"TODO: the change that matters\"".into()],
    );
    spotlight_frame(
        s,
        "3. Spotlight: the latest period in colour, the earlier one in grey.",
        format!("{focus}: {leader} leads"),
        "TODO: why it leads",
    );
    conclusion_frame(s);
}

/// The headline of a correlation `r` between `y` and `x`, and the claim
/// that protects it (on the value `fit`).
pub(super) fn direction(r: Option<f64>, y: &str, x: &str) -> (String, &'static str) {
    let (says, claim) = match r {
        Some(r) if r >= 0.3 => ("rise together", "fit >= 0.3"),
        Some(r) if r <= -0.3 => ("move in opposite directions", "fit <= -0.3"),
        _ => ("barely move together", "fit about 0 within 0.3"),
    };
    (
        format!("{} and {} {says}", capital(&words(y)), words(x)),
        claim,
    )
}

fn relationship(
    s: &mut String,
    table: &Table,
    (x, y): (&str, &str),
    label: Option<&str>,
    group: Option<&str>,
) {
    let column = |n: &str| -> Vec<Option<f64>> {
        table
            .columns
            .iter()
            .find(|c| c.name == n)
            .map(|c| {
                c.values
                    .iter()
                    .map(|v| match v {
                        Value::Number(x) => Some(x),
                        _ => None,
                    })
                    .collect()
            })
            .unwrap_or_default()
    };
    let (px, py): (Vec<f64>, Vec<f64>) = column(x)
        .into_iter()
        .zip(column(y))
        .filter_map(|(a, b)| a.zip(b))
        .unzip();
    let r = crescendo_data::stats::correlation(&px, &py).ok();
    let why = match group {
        Some(g) => format!(
            "# Two measures: their relationship, a scatter plot with a fitted line,\n\
             # never their sum. The rows fall in groups of {g}: one panel per group,\n\
             # all on one scale, each with its own line (totals per group would\n\
             # add the measures up and hide the shapes)."
        ),
        None => "# Two measures and no time: their relationship, a scatter plot with a\n\
                 # fitted line, never their sum (check the correlation before you claim one)."
            .to_string(),
    };
    // grouped: the panels in the groups' order; else the largest first
    let sort = match group {
        Some(g) => format!("| sort {g}"),
        None => format!("| sort {y} descending"),
    };
    view(s, &why, "points", &[sort]);
    let _ = writeln!(s, "value fit = correlation(points.{y} by {x})");
    value_and_claim(s, "points", y);
    let (headline, claim) = direction(r, y, x);
    fact(s, claim, &headline);
    let focus = label.and_then(|l| largest(&totals(table, l, y)));
    let mut chart = format!(
        "scatter points: x {x}, y {y}{}",
        label.map_or(String::new(), |l| format!(", label {l}"))
    );
    if let Some(g) = group {
        let _ = write!(chart, ", series {g}");
    }
    // the chart statement, split by the group, titled, and the takeaway
    let stmts = |chart: String, takeaway: &str| -> Vec<String> {
        let split = group.map(|g| format!("split {g}"));
        let titles = [
            format!("x title {}", quote(&capital(&words(x)))),
            format!("y title {}", quote(&capital(&words(y)))),
        ];
        let takeaway = format!("takeaway \"{takeaway}\"");
        let mut all = vec![chart];
        all.extend(split.into_iter().chain(titles).chain([takeaway]));
        all
    };
    frame(
        s,
        "1. Context: every row as a point.",
        &quote(&headline),
        &stmts(chart.clone(), "TODO: what the cloud of points shows"),
    );
    frame(
        s,
        "2. Comparison: the fitted line and its correlation.",
        "\"How closely they move together\"",
        &stmts(format!("{chart}, fit"), "Correlation r = {fit}."),
    );
    // without names to point at, the takeaway carries the point
    let mut lines: Vec<String> = focus
        .iter()
        .filter(|_| group.is_none())
        .map(|f| format!("spotlight {}", quote(f)))
        .collect();
    lines.push(format!(
        "takeaway \"The highest {}: {{highest}}.\"",
        words(y)
    ));
    frame(
        s,
        &format!("3. Spotlight: the point with the largest {y}."),
        "\"TODO: the point that matters\"",
        &lines,
    );
    conclusion_frame(s);
}

fn part_of_whole(s: &mut String, table: &Table, category: &str, part: &str, measure: &str) {
    let m = words(measure);
    view(
        s,
        &format!(
            "# Part of a whole with few parts: bars of {category} stacked by {part}\n\
             # (a handful of parts stays readable; more would need a chart per part)."
        ),
        "parts",
        &[format!(
            "| by {category}, {part}: {measure} = sum({measure})"
        )],
    );
    view(
        s,
        &format!("# The whole of each {part}, for the headline's claim."),
        "part_totals",
        &[format!("| by {part}: {measure} = sum({measure})")],
    );
    value_and_claim(s, "parts", measure);
    let said = ranked_focus(s, table, ("part_totals", part, measure, "sum"), |focus| {
        format!("{focus} is the largest {} in total", words(part))
    });
    let y_title = format!("y title {}", quote(&capital(&m)));
    frame(
        s,
        &format!("1. Context: the whole of each {category}, split into its parts."),
        &quote(&format!(
            "{} by {} and {}",
            capital(&m),
            words(category),
            words(part)
        )),
        &[
            format!("bars parts: category {category}, value {measure}, stack {part}"),
            y_title.clone(),
            "takeaway \"TODO: what the totals show\"".into(),
        ],
    );
    frame(
        s,
        "2. Comparison: the parts side by side instead of stacked.",
        "\"The parts side by side\"",
        &[
            format!("bars parts: category {category}, value {measure}, group {part}"),
            y_title,
            "takeaway \"TODO: which part leads where\"".into(),
        ],
    );
    spotlight_frame(
        s,
        "3. Spotlight: the largest part in colour.",
        said,
        "Its highest value: {highest}.",
    );
    conclusion_frame(s);
}

fn distribution(s: &mut String, table: &Table, name: &str, measure: &str) {
    let m = words(measure);
    view(
        s,
        &format!(
            "# One {measure} per {name}: how the values are spread, a dot plot\n\
             # sorted by value (dots keep every value visible; bars would not start\n\
             # anywhere meaningful for a spread)."
        ),
        "spread",
        &[format!("| sort {measure} descending")],
    );
    value_and_claim(s, "spread", measure);
    let said = ranked_focus(s, table, ("spread", name, measure, "sum"), |focus| {
        format!("{focus} has the highest {m}")
    });
    frame(
        s,
        "1. Context: every value as a dot.",
        &quote(&format!("How {m} is spread")),
        &[
            format!("dots spread: category {name}, value {measure}"),
            format!("y title {}", quote(&capital(&m))),
            "takeaway \"TODO: where most values lie\"".into(),
        ],
    );
    top_to_bottom(
        s,
        ("the highest against the rest", "highest", "lowest"),
        ("the highest value", said, "TODO: why it matters"),
    );
}

fn comparison(
    s: &mut String,
    table: &Table,
    (category, measure, agg): (&str, &str, &str),
    horizontal: bool,
    top: Option<usize>,
) {
    let m = words(measure);
    let mut steps = vec![format!("| by {category}: {measure} = {agg}({measure})")];
    if let Some(n) = top {
        steps.push(format!(
            "# many {category} values: the largest ones, the rest together"
        ));
        steps.push(format!("| top {n} {category} by {measure} rest \"Others\""));
    }
    steps.push(format!("| sort {measure} descending"));
    view(
        s,
        &format!(
            "# A comparison of {category} values: bars sorted by size, so the order\n\
             # reads at a glance{}.\n# {}",
            if horizontal {
                "; horizontal because the names are long"
            } else {
                ""
            },
            if agg == "sum" {
                format!("{measure} is an amount: summed per {category}.")
            } else {
                format!("{measure} is a rate or level: averaged per {category}, never summed.")
            }
        ),
        "ranked",
        &steps,
    );
    value_and_claim(s, "ranked", measure);
    let said = ranked_focus(s, table, ("ranked", category, measure, agg), |focus| {
        format!("{focus} has the highest {m}")
    });
    let orient = if horizontal { ", horizontal" } else { "" };
    frame(
        s,
        &format!("1. Context: every {category}, largest first."),
        &quote(&format!("{} by {}", capital(&m), words(category))),
        &[
            format!("bars ranked: category {category}, value {measure}{orient}"),
            format!("y title {}", quote(&capital(&m))),
            "takeaway \"TODO: what the ranking shows\"".into(),
        ],
    );
    top_to_bottom(
        s,
        ("the largest against the smallest", "largest", "smallest"),
        (
            "the focus in colour, the rest in grey",
            said,
            "TODO: why it leads",
        ),
    );
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quoting_escapes() {
        assert_eq!(quote("a \"b\" \\"), "\"a \\\"b\\\" \\\\\"");
    }
}
