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
fn quote(s: &str) -> String {
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

/// Totals of `measure` per value of `key` (as text), ignoring missing cells.
fn totals(table: &Table, key: &str, measure: &str) -> BTreeMap<String, f64> {
    let mut out = BTreeMap::new();
    let (Some(k), Some(m)) = (
        table.columns.iter().find(|c| c.name == key),
        table.columns.iter().find(|c| c.name == measure),
    ) else {
        return out;
    };
    for (kv, mv) in k.values.iter().zip(&m.values) {
        let key = match kv {
            Value::Text(t) => t.clone(),
            Value::Year(y) => y.to_string(),
            Value::Month(x) => crescendo_data::time::month_iso(x),
            Value::Date(x) => crescendo_data::time::date_iso(x),
            _ => continue,
        };
        if let Value::Number(x) = mv {
            *out.entry(key).or_insert(0.0) += x;
        }
    }
    out
}

/// The key with the largest total.
fn largest(t: &BTreeMap<String, f64>) -> Option<String> {
    t.iter()
        .max_by(|a, b| a.1.total_cmp(b.1))
        .map(|(k, _)| k.clone())
}

/// Words from a column name: `weekly_hours` → "weekly hours".
fn words(name: &str) -> String {
    name.replace('_', " ")
}

fn capital(s: &str) -> String {
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
        Shape::Trend {
            time,
            measure,
            series,
        } => trend(&mut s, table, time, measure, series.as_deref()),
        Shape::Periods {
            period,
            category,
            measure,
        } => periods(&mut s, table, period, category, measure),
        Shape::Relationship { x, y, label } => relationship(&mut s, table, x, y, label.as_deref()),
        Shape::PartOfWhole {
            category,
            part,
            measure,
        } => part_of_whole(&mut s, table, category, part, measure),
        Shape::Distribution { name, measure } => distribution(&mut s, table, name, measure),
        Shape::Comparison {
            category,
            measure,
            horizontal,
            top,
        } => comparison(&mut s, table, category, measure, *horizontal, *top),
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

/// The value, the claim placeholder and the conclusion, shared by every form.
fn value_and_claim(s: &mut String, view: &str, measure: &str) {
    let _ = writeln!(s, "value highest = max({view}.{measure})");
    let _ = writeln!(s, "value lowest = min({view}.{measure})");
    let _ = writeln!(
        s,
        "# A placeholder claim that holds by construction: replace it with the\n\
         # comparison your headline states, e.g. `claim highest > 2 * lowest \"...\"`."
    );
    let _ = writeln!(
        s,
        "claim highest >= lowest \"TODO: the sentence this claim protects\""
    );
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "conclusion \"TODO: the one sentence the story builds to\""
    );
    let _ = writeln!(s);
}

/// One frame of a starter story: the comment that says what it is for, the
/// headline (already quoted), its statements, and a blank line after it.
fn frame(s: &mut String, comment: &str, headline: &str, lines: &[String]) {
    let _ = writeln!(s, "# {comment}");
    let _ = writeln!(s, "frame {headline} {{");
    for l in lines {
        let _ = writeln!(s, "  {l}");
    }
    let _ = writeln!(s, "}}");
    let _ = writeln!(s);
}

/// `compare KEY by MEASURE` and `focus "NAME"`, then a blank line.
fn compare_focus(s: &mut String, key: &str, measure: &str, focus: &str) {
    let _ = writeln!(s, "compare {key} by {measure}");
    let _ = writeln!(s, "focus {}", quote(focus));
    let _ = writeln!(s);
}

/// The view: a comment on the form, `view NAME = table`, its steps.
fn view(s: &mut String, comment: &str, name: &str, steps: &[String]) {
    let _ = writeln!(s, "{comment}");
    let _ = writeln!(s, "view {name} = table");
    for st in steps {
        let _ = writeln!(s, "  {st}");
    }
    let _ = writeln!(s);
}

fn conclusion_frame(s: &mut String) {
    let _ = writeln!(
        s,
        "# 4. Conclusion (placeholder): say what the audience should do."
    );
    let _ = writeln!(s, "frame \"TODO: what to do about it\" {{");
    let _ = writeln!(s, "  takeaway \"{{conclusion}}\"");
    let _ = writeln!(s, "}}");
}

/// The spotlight frame most forms end their build-up with.
fn spotlight_frame(s: &mut String, comment: &str, headline: String, takeaway: &str) {
    frame(
        s,
        comment,
        &quote(&headline),
        &["spotlight focus".into(), format!("takeaway \"{takeaway}\"")],
    );
}

/// A time bucket for a daily column with more days than a line can show
/// apart: `(function, new column)`, weeks for up to half a year of days,
/// months beyond.
fn daily_bucket(table: &Table, time: &str) -> Option<(&'static str, &'static str)> {
    let col = table.columns.iter().find(|c| c.name == time)?;
    if col.ty != crescendo_data::ColType::Date {
        return None;
    }
    let days: std::collections::BTreeSet<i32> = col
        .values
        .iter()
        .filter_map(|v| match v {
            Value::Date(d) => Some(d),
            _ => None,
        })
        .collect();
    let (first, last) = (*days.first()?, *days.last()?);
    match (days.len(), last - first) {
        (..=120, _) => None,
        (_, ..=183) => Some(("week_start", "week")),
        _ => Some(("month", "month")),
    }
}

fn trend(s: &mut String, table: &Table, time: &str, measure: &str, series: Option<&str>) {
    let m = words(measure);
    // daily rows: summed per week or month first (a line of hundreds of
    // days is noise, see the lint rule `line-crowded`)
    let bucket =
        daily_bucket(table, time).filter(|(_, n)| table.columns.iter().all(|c| c.name != *n));
    let mut steps = Vec::new();
    let day_column = time;
    let time = match bucket {
        Some((func, name)) => {
            steps.push(format!("| add {name} = {func}({day_column})"));
            name
        }
        None => time,
    };
    let mut comment = format!(
        "# Change over time: a line, {time} along x ({measure} summed per {time}{}).",
        series.map_or(String::new(), |c| format!(" and {c}"))
    );
    if bucket.is_some() {
        comment.push_str(&format!(
            "\n# `{day_column}` holds many days: summed per {time}, as a daily line would be noise."
        ));
    }
    let keys = match series {
        Some(cat) => {
            comment.push_str(&format!(
                "\n# A few {cat} values: one line each (more would tangle)."
            ));
            format!("{time}, {cat}")
        }
        None => time.to_string(),
    };
    steps.push(format!("| by {keys}: {measure} = sum({measure})"));
    view(s, &comment, "over_time", &steps);
    value_and_claim(s, "over_time", measure);
    let headline = quote(&format!("{} over time", capital(&m)));
    let y_title = format!("y title {}", quote(&capital(&m)));
    let focus = series.and_then(|c| largest(&totals(table, c, measure)));
    if let (Some(cat), Some(focus)) = (series, &focus) {
        compare_focus(s, cat, measure, focus);
        frame(
            s,
            "1. Context: one line first, so the pattern over time is clear.",
            &headline,
            &[
                format!("line over_time: x {time}, y {measure}, series {cat}"),
                y_title,
                "hide all".into(),
                format!("show {}", quote(focus)),
                "takeaway \"TODO: what the first line shows\"".into(),
            ],
        );
        frame(
            s,
            "2. Comparison: every line, on the same axes.",
            &quote(&format!("Every {} compared", words(cat))),
            &[
                "show all".into(),
                "takeaway \"TODO: how the lines differ\"".into(),
            ],
        );
        spotlight_frame(
            s,
            "3. Spotlight: the focus in colour, the rest in grey.",
            format!("{focus} stands out"),
            "Its highest value: {highest}.",
        );
    } else {
        frame(
            s,
            "1. Context: the whole series.",
            &headline,
            &[
                format!("line over_time: x {time}, y {measure}"),
                y_title,
                "takeaway \"TODO: what the line shows\"".into(),
            ],
        );
        frame(
            s,
            "2. Comparison: the first and the last value, labelled.",
            "\"From the first period to the last\"",
            &[
                "label ends".into(),
                "takeaway \"TODO: how far it moved\"".into(),
            ],
        );
        let mut lines = Vec::new();
        let peak = match bucket {
            Some(_) => None,
            None => largest(&totals(table, time, measure)),
        };
        if let Some(peak) = peak {
            let at = if peak.contains('-') {
                quote(&peak)
            } else {
                peak
            };
            lines.push(format!("callout {at} \"Highest: {{highest}}\""));
        }
        lines.push("takeaway \"TODO: why it peaked there\"".into());
        frame(
            s,
            "3. Spotlight: a note at the highest point.",
            "\"The highest point\"",
            &lines,
        );
    }
    conclusion_frame(s);
}

fn periods(s: &mut String, table: &Table, period: &str, category: &str, measure: &str) {
    let m = words(measure);
    view(
        s,
        &format!(
            "# Only two periods of {period}: bars grouped by {period} compare them\n\
             # honestly (a line through two points is one slope, not a trend)."
        ),
        "by_period",
        &[
            format!("| by {category}, {period}: {measure} = sum({measure})"),
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
    compare_focus(s, period, measure, &focus);
    frame(
        s,
        &format!("1. Context: every {category} in both periods."),
        &quote(&format!("{} by {}", capital(&m), words(category))),
        &[
            format!("bars by_period: category {category}, value {measure}, group {period}"),
            format!("y title {}", quote(&capital(&m))),
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
        "3. Spotlight: the focus in colour, the rest in grey.",
        format!("{focus} stands out"),
        "Its highest value: {highest}.",
    );
    conclusion_frame(s);
}

fn relationship(s: &mut String, table: &Table, x: &str, y: &str, label: Option<&str>) {
    view(
        s,
        "# Two measures and no time: their relationship, a scatter plot with a\n\
         # fitted line (check the correlation before you claim one).",
        "points",
        &[format!("| sort {y} descending")],
    );
    let _ = writeln!(s, "value fit = correlation(points.{y} by {x})");
    value_and_claim(s, "points", y);
    let focus = label.and_then(|l| largest(&totals(table, l, y)));
    let chart = format!(
        "scatter points: x {x}, y {y}{}",
        label.map_or(String::new(), |l| format!(", label {l}"))
    );
    let titles = [
        format!("x title {}", quote(&capital(&words(x)))),
        format!("y title {}", quote(&capital(&words(y)))),
    ];
    frame(
        s,
        "1. Context: every row as a point.",
        &quote(&format!("{} against {}", capital(&words(y)), words(x))),
        &[
            chart.clone(),
            titles[0].clone(),
            titles[1].clone(),
            "takeaway \"TODO: what the cloud of points shows\"".into(),
        ],
    );
    frame(
        s,
        "2. Comparison: the fitted line and its correlation.",
        "\"How closely they move together\"",
        &[
            format!("{chart}, fit"),
            titles[0].clone(),
            titles[1].clone(),
            "takeaway \"Correlation r = {fit}.\"".into(),
        ],
    );
    // without names to point at, the takeaway carries the point
    let mut lines: Vec<String> = focus
        .iter()
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
    value_and_claim(s, "parts", measure);
    let focus = largest(&totals(table, part, measure)).unwrap_or_default();
    compare_focus(s, part, measure, &focus);
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
        format!("{focus} is the largest part"),
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
    let focus = largest(&totals(table, name, measure)).unwrap_or_default();
    compare_focus(s, name, measure, &focus);
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
    frame(
        s,
        "2. Comparison: the highest against the rest.",
        "\"From the highest to the lowest\"",
        &["takeaway \"From {highest} down to {lowest}.\"".into()],
    );
    spotlight_frame(
        s,
        "3. Spotlight: the highest value.",
        format!("{focus} is the highest"),
        "TODO: why it matters",
    );
    conclusion_frame(s);
}

fn comparison(
    s: &mut String,
    table: &Table,
    category: &str,
    measure: &str,
    horizontal: bool,
    top: Option<usize>,
) {
    let m = words(measure);
    let mut steps = vec![format!("| by {category}: {measure} = sum({measure})")];
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
             # reads at a glance{}.",
            if horizontal {
                "; horizontal because the names are long"
            } else {
                ""
            }
        ),
        "ranked",
        &steps,
    );
    value_and_claim(s, "ranked", measure);
    let focus = largest(&totals(table, category, measure)).unwrap_or_default();
    compare_focus(s, category, measure, &focus);
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
    frame(
        s,
        "2. Comparison: the largest against the smallest.",
        "\"From the largest to the smallest\"",
        &["takeaway \"From {highest} down to {lowest}.\"".into()],
    );
    spotlight_frame(
        s,
        "3. Spotlight: the focus in colour, the rest in grey.",
        format!("{focus} leads"),
        "TODO: why it leads",
    );
    conclusion_frame(s);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quoting_escapes() {
        assert_eq!(quote("a \"b\" \\"), "\"a \\\"b\\\" \\\\\"");
    }
}
