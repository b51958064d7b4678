//! What the command prints. Everything goes through
//! [`crescendo_diag::terminal_safe`], so a control character in a story,
//! its data, a file name or a plugin's answer is shown, never obeyed by the
//! terminal; diagnostics are made safe by `crescendo_diag::render` itself.
//! JSON keeps its values exact instead (see [`json`]).

use std::borrow::Cow;

/// Print a line to standard output; a closed pipe (`crescendo check | head`)
/// ends the program quietly instead of panicking.
macro_rules! say {
    ($($arg:tt)*) => {{
        use std::io::Write as _;
        let text = format!($($arg)*);
        if writeln!(std::io::stdout(), "{}", crescendo_diag::terminal_safe(&text)).is_err() {
            std::process::exit(0);
        }
    }};
}

/// Like [`say!`] without the line break.
macro_rules! say_raw {
    ($($arg:tt)*) => {{
        use std::io::Write as _;
        let text = format!($($arg)*);
        if write!(std::io::stdout(), "{}", crescendo_diag::terminal_safe(&text)).is_err() {
            std::process::exit(0);
        }
    }};
}

/// Print a line to standard error (messages that are not diagnostics).
macro_rules! tell {
    ($($arg:tt)*) => {{
        let text = format!($($arg)*);
        eprintln!("{}", crescendo_diag::terminal_safe(&text));
    }};
}

/// JSON text safe for a terminal with its values unchanged: `serde_json`
/// escapes C0 controls already; DEL and the C1 controls are written as
/// `\u` escapes too (they occur only inside strings, so this is the same
/// JSON value).
pub fn json(text: &str) -> Cow<'_, str> {
    if !text.chars().any(|c| ('\u{7f}'..='\u{9f}').contains(&c)) {
        return Cow::Borrowed(text);
    }
    let mut out = String::with_capacity(text.len() + 16);
    for c in text.chars() {
        if ('\u{7f}'..='\u{9f}').contains(&c) {
            out.push_str(&format!("\\u{:04x}", c as u32));
        } else {
            out.push(c);
        }
    }
    Cow::Owned(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn json_stays_the_same_value_without_raw_controls() {
        let value = serde_json::json!({ "name": "a\u{1b}[2J\u{7f}\u{9b}b", "n": 1 });
        let text = serde_json::to_string(&value).unwrap();
        let safe = json(&text);
        assert!(!safe.chars().any(char::is_control), "{safe}");
        let back: serde_json::Value = serde_json::from_str(&safe).unwrap();
        assert_eq!(back, value);
        assert!(matches!(json("{\"a\":1}"), Cow::Borrowed(_)));
    }
}
