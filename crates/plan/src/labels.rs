//! Cells and names as people read them: a cell's text, its position on an
//! axis, a column name as a title, a headline as a file name.

use crescendo_data::{format, time, Value};

/// A cell as text (`(missing)` for a missing cell).
pub(crate) fn display(v: &Value) -> String {
    match v {
        Value::Missing => "(missing)".to_string(),
        Value::Number(n) => format::number(*n, None),
        Value::Text(t) => t.clone(),
        Value::Date(d) => time::date_iso(*d),
        Value::Month(m) => time::month_label(*m),
        Value::Year(y) => y.to_string(),
    }
}

/// A cell's position on a number or time axis.
pub(crate) fn position(v: &Value) -> Option<f64> {
    match v {
        Value::Number(n) => Some(*n),
        Value::Date(d) | Value::Month(d) | Value::Year(d) => Some(f64::from(*d)),
        _ => None,
    }
}

/// A number cell's value.
pub(crate) fn number(v: &Value) -> Option<f64> {
    match v {
        Value::Number(n) => Some(*n),
        _ => None,
    }
}

/// Turn an identifier like `riders_per_trip` into "Riders per trip".
pub(crate) fn humanize(name: &str) -> String {
    let s = name.replace('_', " ");
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().collect::<String>() + c.as_str(),
        None => s,
    }
}

/// File-name-safe slug of a headline: `[a-z0-9-]`, at most 48 characters.
pub fn slug(headline: &str) -> String {
    let mut out = String::new();
    for c in headline.chars().flat_map(char::to_lowercase) {
        if c.is_ascii_alphanumeric() {
            out.push(c);
        } else if !out.ends_with('-') && !out.is_empty() {
            out.push('-');
        }
    }
    let mut out = out.trim_end_matches('-').to_string();
    if out.len() > 48 {
        out.truncate(48);
        if let Some(i) = out.rfind('-').filter(|&i| i >= 24) {
            out.truncate(i);
        }
        out = out.trim_end_matches('-').to_string();
    }
    if out.is_empty() {
        "frame".to_string()
    } else {
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn slugs_are_file_safe_and_bounded() {
        assert_eq!(
            slug("Riders on three routes since 2019"),
            "riders-on-three-routes-since-2019"
        );
        assert_eq!(slug("  Ünïcode & «quotes» — 2.3×!  "), "n-code-quotes-2-3");
        assert_eq!(slug("???"), "frame");
        let long = slug(
            "The Harbour Loop now carries more than twice the riders of the Bay Line every month",
        );
        assert!(long.len() <= 48, "{long}");
        assert!(!long.ends_with('-'));
    }

    #[test]
    fn humanize_names() {
        assert_eq!(humanize("riders_per_trip"), "Riders per trip");
    }
}
