//! The starter story of a measure over time: a line (one per series when
//! there are a few), a headline that states how far it moved (a value,
//! protected by a claim), and, when the file has a second measure, a
//! scatter of the two: two measures are compared, never added.

use std::fmt::Write as _;

use crescendo_data::{ColType, Table, Value};

use super::story::{
    aggregates, capital, compare_focus, conclusion_frame, escape, fact, frame, largest, literal,
    quote, spotlight_frame, value_and_claim, view, words,
};

/// What a trend starter draws.
#[derive(Clone, Copy)]
pub(super) struct Trend<'a> {
    pub time: &'a str,
    pub measure: &'a str,
    pub agg: &'a str,
    pub series: Option<&'a str>,
    pub parts: Option<&'a str>,
    /// `(year, quarter)`: `time` is made of them (`year_quarter`).
    pub made: Option<(&'a str, &'a str)>,
    pub other: Option<&'a str>,
    /// The aggregate of `other` (by the same rule as the measure's).
    pub other_agg: &'a str,
    /// (column, value): keep only these rows, one of many series.
    pub only: Option<(&'a str, &'a str)>,
}

/// Why the measure is summed or averaged, and how the time is made.
fn comment(t: &Trend) -> String {
    let Trend {
        time,
        measure,
        agg,
        series,
        parts,
        ..
    } = t;
    let mut c = format!("# Change over time: a line, {time} along x.");
    if *agg == "sum" {
        let _ = write!(
            c,
            "\n# {measure} is an amount: the rows of each {time} add up, so they are summed."
        );
    } else {
        let _ = write!(
            c,
            "\n# {measure} is a rate or a level: the rows of each {time} are averaged\n\
             # (a sum of rates or levels means nothing)."
        );
    }
    if let Some(q) = parts {
        let _ = write!(
            c,
            "\n# {q} numbers the periods within each {time}: it is part of the time,\n\
             # not a measure, so it is never summed; the periods of a {time} are\n\
             # taken together into one point per {time}."
        );
    }
    if let Some(cat) = series {
        let _ = write!(
            c,
            "\n# A few {cat} values: one line each (more would tangle), never added together."
        );
    }
    if let Some((col, v)) = t.only {
        let _ = write!(
            c,
            "\n# Each {col} is its own series (a row per {time} and {col}): too many for\n\
             # one line each, and never averaged together, so one of them, {v}."
        );
    }
    c
}

/// A time bucket for a daily column with more days than a line can show
/// apart: `(function, new column)`, weeks for up to half a year of days,
/// months beyond.
fn daily_bucket(table: &Table, time: &str) -> Option<(&'static str, &'static str)> {
    let col = table.columns.iter().find(|c| c.name == time)?;
    if col.ty != ColType::Date
        || table
            .columns
            .iter()
            .any(|c| c.name == "month" || c.name == "week")
    {
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

/// `table` with its daily column `day` replaced by the bucket column the
/// story's `| add NAME = FUNC(day)` computes, so the figures the starter
/// states (and protects with claims) are the view's.
fn bucketed(table: &Table, day: &str, (func, name): (&str, &str)) -> Table {
    let mut out = table.clone();
    for c in &mut out.columns {
        if c.name != day {
            continue;
        }
        let month = func == "month";
        c.values = c
            .values
            .iter()
            .map(|v| match v {
                // the Monday of its ISO week (1970-01-01 was a Thursday)
                Value::Date(d) if !month => Value::Date(d - (d + 3).rem_euclid(7)),
                Value::Date(d) => Value::Month(crescendo_data::time::month_of_day(d)),
                other => other,
            })
            .collect();
        c.ty = if month { ColType::Month } else { ColType::Date };
        c.name = name.to_string();
    }
    out
}

/// `table` with the column `name`: the quarterly time of its `year` and
/// `quarter` columns, as the story's `| add` computes it.
fn quarterly(table: &Table, name: &str, (year, quarter): (&str, &str)) -> Table {
    let mut out = table.clone();
    let col = |n: &str| table.columns.iter().find(|c| c.name == n);
    let (Some(y), Some(q)) = (col(year), col(quarter)) else {
        return out;
    };
    let values = y
        .values
        .iter()
        .zip(q.values.iter())
        .map(
            |(y, q)| match crescendo_data::bucket::year_quarter(y.cell(), q.cell()) {
                Some(m) => Value::Month(m),
                None => Value::Missing,
            },
        )
        .collect();
    out.columns.push(crescendo_data::Column {
        name: name.to_string(),
        ty: ColType::Month,
        values,
    });
    out
}

pub(super) fn trend(s: &mut String, table: &Table, t: &Trend) {
    // a year and a quarter column: one quarterly time (a line of four
    // points per year, not one point per year)
    if let Some((year, q)) = t.made {
        let table = quarterly(table, t.time, (year, q));
        let step = format!("| add {} = year_quarter({year}, {q})", t.time);
        let why = format!(
            "# `{year}` and `{q}` together name each quarter: made one quarterly time,\n\
             # so the line has a point per quarter ({q} is never a measure)."
        );
        return trend_of(s, &table, t, Some((step, why)));
    }
    // daily rows: summed (or averaged) per week or month first; a line of
    // hundreds of days is noise (the lint rule `line-crowded`)
    if let Some(b) = daily_bucket(table, t.time) {
        let day = t.time;
        let table = bucketed(table, day, b);
        let t = Trend { time: b.1, ..*t };
        let step = format!("| add {} = {}({day})", b.1, b.0);
        let why = format!(
            "# `{day}` holds many days: taken together per {}, as a daily line would be noise.",
            b.1
        );
        return trend_of(s, &table, &t, Some((step, why)));
    }
    trend_of(s, table, t, None)
}

/// `made`: the `add` step that makes the time, and why (a comment).
fn trend_of(s: &mut String, table: &Table, t: &Trend, made: Option<(String, String)>) {
    let Trend {
        time,
        measure,
        agg,
        series,
        ..
    } = *t;
    let m = words(measure);
    let keys = series.map_or(time.to_string(), |cat| format!("{time}, {cat}"));
    let mut aggs = format!("{measure} = {agg}({measure})");
    if let Some(o) = t.other {
        let _ = write!(aggs, ", {o} = {}({o})", t.other_agg);
    }
    let mut steps = Vec::new();
    if let Some((col, v)) = t.only {
        steps.push(format!("| keep {col} = {}", quote(v)));
    }
    let mut why = comment(t);
    if let Some((step, made_why)) = made {
        steps.push(step);
        let _ = write!(why, "\n{made_why}");
    }
    steps.push(format!("| by {keys}: {aggs}"));
    steps.push(format!("| sort {time}"));
    view(s, &why, "over_time", &steps);
    value_and_claim(s, "over_time", measure);
    // The focus series: the one that reaches the highest value, so that
    // its spotlight's claim holds.
    let focus = series.and_then(|cat| {
        let peaks = aggregates_by_pair(table, time, cat, measure, agg);
        largest(&peaks)
    });
    let only = series.zip(focus.as_deref());
    let per_time = aggregates(table, time, measure, agg, only.or(t.only));
    let (first, last) = (
        per_time.values().next().copied(),
        per_time.values().next_back().copied(),
    );
    let filter = only.map_or(String::new(), |(c, f)| {
        format!(" where {c} = {}", literal(f))
    });
    let _ = writeln!(s, "value start_value = first(over_time.{measure}{filter})");
    let _ = writeln!(s, "value end_value = last(over_time.{measure}{filter})");
    let who_raw = focus.clone().unwrap_or_else(|| capital(&m));
    let who = escape(&who_raw);
    let (op, verb) = match (first, last) {
        (Some(a), Some(b)) if b > a => (">", "rose"),
        (Some(a), Some(b)) if b < a => ("<", "fell"),
        _ => ("=", "ended where it started"),
    };
    let headline = if op == "=" {
        format!("{who}: {verb}, at {{end_value}}")
    } else {
        format!("{who} {verb} from {{start_value}} to {{end_value}}")
    };
    fact(
        s,
        &format!("end_value {op} start_value"),
        &format!("{who_raw} {verb} from the first {time} to the last"),
    );
    let y_title = format!("y title {}", quote(&capital(&m)));
    if let (Some(cat), Some(focus)) = (series, &focus) {
        compare_focus(s, cat, measure, focus);
        let _ = writeln!(s, "value focus_peak = max(over_time.{measure}{filter})");
        fact(
            s,
            "focus_peak = highest",
            &format!("{focus} reaches the highest {m}"),
        );
        frame(
            s,
            "1. Context: one line first, so the pattern over time is clear.",
            &format!("\"{headline}\""),
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
            format!("{focus} reaches the highest {m}"),
            "TODO: why it matters",
        );
    } else {
        frame(
            s,
            "1. Context: the whole series.",
            &format!("\"{headline}\""),
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
        if let Some(peak) = largest(&per_time) {
            lines.push(format!(
                "callout {} \"Highest: {{highest}}\"",
                literal(&peak)
            ));
        }
        lines.push("takeaway \"TODO: why it peaked there\"".into());
        frame(
            s,
            "3. Spotlight: a note at the highest point.",
            "\"The highest point\"",
            &lines,
        );
    }
    if let Some(o) = t.other {
        pair(s, table, t, o);
    }
    conclusion_frame(s);
}

/// The highest aggregated value per value of `cat` (over `time` × `cat`).
fn aggregates_by_pair(
    table: &Table,
    time: &str,
    cat: &str,
    measure: &str,
    agg: &str,
) -> std::collections::BTreeMap<String, f64> {
    let mut out = std::collections::BTreeMap::new();
    for name in aggregates(table, cat, measure, "sum", None).keys() {
        let per_time = aggregates(table, time, measure, agg, Some((cat, name)));
        if let Some(peak) = per_time.values().copied().reduce(f64::max) {
            out.insert(name.clone(), peak);
        }
    }
    out
}

/// The frame of a second measure against the first: a scatter, one point
/// per period, with its fit; the headline says which way they go together,
/// protected by a claim on the correlation.
fn pair(s: &mut String, table: &Table, t: &Trend, other: &str) {
    let measure = t.measure;
    let xs = aggregates(table, t.time, measure, t.agg, t.only);
    let ys = aggregates(table, t.time, other, t.other_agg, t.only);
    let (px, py): (Vec<f64>, Vec<f64>) = xs
        .iter()
        .filter_map(|(k, x)| ys.get(k).map(|y| (*x, *y)))
        .unzip();
    let r = crescendo_data::stats::correlation(&px, &py).ok();
    let _ = writeln!(
        s,
        "# Two measures: {other} against {measure}, one point per {}, never added\n\
         # (different measures in different units do not add up).",
        t.time
    );
    // With several lines the points are per period and series, so the
    // headline stays neutral; otherwise it says which way they go.
    let neutral = format!("{} against {}", capital(&words(other)), words(measure));
    let headline = match r {
        Some(r) => {
            let _ = writeln!(
                s,
                "value together = correlation(over_time.{other} by {measure})"
            );
            let direction = match r {
                r if r >= 0.3 => Some(("together >= 0.3", "rise together")),
                r if r <= -0.3 => Some(("together <= -0.3", "move in opposite directions")),
                _ => Some(("together about 0 within 0.3", "barely move together")),
            };
            match direction.filter(|_| t.series.is_none()) {
                Some((claim, says)) => {
                    let h = format!("{} and {} {says}", capital(&words(other)), words(measure));
                    fact(s, claim, &h);
                    h
                }
                None => {
                    let _ = writeln!(s);
                    neutral
                }
            }
        }
        None => neutral,
    };
    let mut lines = vec![
        format!("scatter over_time: x {measure}, y {other}, fit"),
        format!("x title {}", quote(&capital(&words(measure)))),
        format!("y title {}", quote(&capital(&words(other)))),
    ];
    lines.push(if r.is_some() {
        "takeaway \"Correlation r = {together}.\"".into()
    } else {
        "takeaway \"TODO: what the points show\"".into()
    });
    frame(
        s,
        &format!("Relationship: {other} against {measure}, each on its own axis."),
        &quote(&headline),
        &lines,
    );
}
