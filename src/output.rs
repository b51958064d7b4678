//! What the command prints. Everything goes through
//! [`crescendo_diag::terminal_safe`], so a control character in a story,
//! its data, a file name or a plugin's answer is shown, never obeyed by the
//! terminal; diagnostics are made safe by `crescendo_diag::render` itself.
//! JSON keeps its values exact instead (see [`json`]).

use std::borrow::Cow;
use std::cell::RefCell;

use crescendo_diag::{render, Diagnostic};

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

/// Print a line to standard error (messages that are not diagnostics),
/// and record it in the transcript being captured (see [`capture`]).
macro_rules! tell {
    ($($arg:tt)*) => {{
        let text = format!($($arg)*);
        let safe = crescendo_diag::terminal_safe(&text);
        $crate::output::to_stderr(&format!("{safe}\n"));
        $crate::output::record(&safe);
    }};
}

/// Write to standard error. A closed standard error (`crescendo diff A B
/// 2>&1 | head`) loses the message instead of panicking; the command goes
/// on, and its exit status still says how it went.
pub fn to_stderr(text: &str) {
    use std::io::Write as _;
    let _ = std::io::stderr().write_all(text.as_bytes());
}

thread_local! {
    /// What this thread printed on standard error since [`capture`] began.
    static TRANSCRIPT: RefCell<Option<String>> = const { RefCell::new(None) };
}

/// Add a line to the transcript being captured, if any.
pub fn record(line: &str) {
    TRANSCRIPT.with(|t| {
        if let Some(s) = t.borrow_mut().as_mut() {
            s.push_str(line);
            s.push('\n');
        }
    });
}

/// Print diagnostics on standard error (in colour when `color`), and record
/// them, without colour, in the transcript being captured.
pub fn diagnostics(diags: &[Diagnostic], color: bool) {
    if diags.is_empty() {
        return;
    }
    to_stderr(&render(diags, color));
    TRANSCRIPT.with(|t| {
        if let Some(s) = t.borrow_mut().as_mut() {
            s.push_str(&render(diags, false));
        }
    });
}

/// Run `f`, and return with its result the plain text of everything it
/// printed on standard error through [`diagnostics`] and `tell!` (what
/// `watch --serve` shows on the page after a failed build).
pub fn capture<T>(f: impl FnOnce() -> T) -> (T, String) {
    let before = TRANSCRIPT.with(|t| t.borrow_mut().replace(String::new()));
    let result = f();
    let text = TRANSCRIPT.with(|t| std::mem::replace(&mut *t.borrow_mut(), before));
    (result, text.unwrap_or_default())
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
    fn capture_records_diagnostics_and_lines_plainly() {
        let d = Diagnostic::error("x", "bad \u{1b}[2J thing");
        let ((), text) = capture(|| {
            diagnostics(std::slice::from_ref(&d), true);
            tell!("then {}", "this");
        });
        assert_eq!(text, format!("{}then this\n", render(&[d], false)));
        assert!(!text.contains('\u{1b}'), "{text:?}");
        // outside a capture nothing is kept
        record("lost");
        assert_eq!(capture(|| ()).1, "");
    }

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
