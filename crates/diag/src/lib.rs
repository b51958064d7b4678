//! Located diagnostics shared by every stage of crescendo.
//!
//! A [`Diagnostic`] points into a [`Source`]: the story file, or an excerpt of
//! a CSV file (one record, with the line number it starts on). Rendering uses
//! `codespan-reporting`, which prints `file:line:column`, the offending line
//! and a caret under the span.

use std::borrow::Cow;
use std::fmt;
use std::ops::Range;
use std::sync::Arc;

use codespan_reporting::diagnostic as cs;
use codespan_reporting::files::{Error as FilesError, Files};
use codespan_reporting::term::{self, termcolor};
use serde::Serialize;

/// A byte range in a source.
pub type Span = Range<usize>;

/// How bad a diagnostic is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    /// A hint that would improve the deck.
    Advice,
    /// Something probably wrong; the build continues.
    Warning,
    /// The build cannot produce a correct deck.
    Error,
}

/// Text that diagnostics point into.
///
/// `first_line` is the 1-based line number of the first line of `text`; it is
/// 1 for a whole file and larger for an excerpt (one CSV record, say), so a
/// data error can show the right line number without loading the whole file.
#[derive(Debug, PartialEq, Eq)]
pub struct Source {
    pub name: String,
    pub text: String,
    pub first_line: usize,
}

impl Source {
    /// A whole file.
    pub fn file(name: impl Into<String>, text: impl Into<String>) -> Arc<Source> {
        Arc::new(Source {
            name: name.into(),
            text: text.into(),
            first_line: 1,
        })
    }

    /// An excerpt of a file that starts on line `first_line` (1-based).
    pub fn excerpt(
        name: impl Into<String>,
        text: impl Into<String>,
        first_line: usize,
    ) -> Arc<Source> {
        Arc::new(Source {
            name: name.into(),
            text: text.into(),
            first_line: first_line.max(1),
        })
    }

    fn line_starts(&self) -> Vec<usize> {
        std::iter::once(0)
            .chain(self.text.match_indices('\n').map(|(i, _)| i + 1))
            .collect()
    }

    /// 1-based line and column (in characters) of a byte offset.
    pub fn line_col(&self, offset: usize) -> (usize, usize) {
        let offset = offset.min(self.text.len());
        let starts = self.line_starts();
        let idx = match starts.binary_search(&offset) {
            Ok(i) => i,
            Err(i) => i - 1,
        };
        let col = self.text[starts[idx]..floor_char_boundary(&self.text, offset)]
            .chars()
            .count();
        (self.first_line + idx, col + 1)
    }
}

fn floor_char_boundary(s: &str, mut i: usize) -> usize {
    while i > 0 && !s.is_char_boundary(i) {
        i -= 1;
    }
    i
}

/// The character a terminal would act on instead of showing, as one
/// visible character: C0 controls and DEL become their Unicode Control
/// Pictures (ESC is `␛`), C1 controls U+FFFD. Tab and line feed are kept,
/// and so is a carriage return right before a line feed; a lone carriage
/// return (which lets text overwrite its own line) is replaced too.
fn visible(c: char, next: Option<char>) -> Option<char> {
    match c {
        '\t' | '\n' => None,
        '\r' if next == Some('\n') => None,
        '\u{0}'..='\u{1f}' => char::from_u32(0x2400 + c as u32),
        '\u{7f}' => Some('\u{2421}'),
        '\u{80}'..='\u{9f}' => Some('\u{fffd}'),
        _ => None,
    }
}

/// `text` made safe to print on a terminal: no escape sequence in a story,
/// its data or a plugin's answer can move the cursor, retitle the window or
/// clear the screen. Each control character becomes one visible character
/// (see [`visible`]), so columns and carets stay where they were. Every
/// diagnostic is rendered through it, and the command passes everything
/// else it prints through it too.
pub fn terminal_safe(text: &str) -> Cow<'_, str> {
    let mut chars = text.chars().peekable();
    let mut out: Option<String> = None;
    let mut at = 0;
    while let Some(c) = chars.next() {
        match visible(c, chars.peek().copied()) {
            Some(v) => out.get_or_insert_with(|| text[..at].to_string()).push(v),
            None => {
                if let Some(o) = out.as_mut() {
                    o.push(c);
                }
            }
        }
        at += c.len_utf8();
    }
    out.map_or(Cow::Borrowed(text), Cow::Owned)
}

/// A source as it is shown on a terminal ([`terminal_safe`]), with what
/// maps byte offsets of the original text to offsets in the shown one.
struct Shown {
    text: String,
    /// (byte offset of a replaced character in the original, total bytes
    /// added by replacements up to and including it), in order.
    shifts: Vec<(usize, usize)>,
}

impl Shown {
    fn of(text: &str) -> Shown {
        let mut shown = String::with_capacity(text.len());
        let mut shifts = Vec::new();
        let mut added = 0;
        let mut chars = text.char_indices().peekable();
        while let Some((i, c)) = chars.next() {
            match visible(c, chars.peek().map(|&(_, n)| n)) {
                Some(v) => {
                    shown.push(v);
                    added += v.len_utf8() - c.len_utf8();
                    shifts.push((i, added));
                }
                None => shown.push(c),
            }
        }
        Shown {
            text: shown,
            shifts,
        }
    }

    /// The offset in the shown text of byte `offset` of the original.
    fn offset(&self, offset: usize) -> usize {
        let before = self.shifts.partition_point(|&(at, _)| at < offset);
        offset + before.checked_sub(1).map_or(0, |i| self.shifts[i].1)
    }
}

/// A span in a source, with a short label printed under the caret.
#[derive(Clone, Debug)]
pub struct Located {
    pub source: Arc<Source>,
    pub span: Span,
    pub label: String,
}

impl Located {
    fn new(source: &Arc<Source>, span: Span, label: impl Into<String>) -> Self {
        Located {
            source: Arc::clone(source),
            span,
            label: label.into(),
        }
    }
}

/// One problem found in a story, its data, or its output.
#[derive(Clone, Debug)]
pub struct Diagnostic {
    pub severity: Severity,
    /// Short machine-readable name of the problem kind, e.g. `unknown-name`.
    pub code: &'static str,
    pub message: String,
    pub primary: Option<Located>,
    pub secondary: Vec<Located>,
    pub notes: Vec<String>,
    /// A suggested fix, printed as `help: ...`.
    pub help: Option<String>,
}

impl Diagnostic {
    pub fn error(code: &'static str, message: impl Into<String>) -> Self {
        Diagnostic {
            severity: Severity::Error,
            code,
            message: message.into(),
            primary: None,
            secondary: Vec::new(),
            notes: Vec::new(),
            help: None,
        }
    }

    pub fn warning(code: &'static str, message: impl Into<String>) -> Self {
        Diagnostic {
            severity: Severity::Warning,
            ..Diagnostic::error(code, message)
        }
    }

    /// Point the diagnostic at `span` in `source`.
    pub fn at(mut self, source: &Arc<Source>, span: Span, label: impl Into<String>) -> Self {
        self.primary = Some(Located::new(source, span, label));
        self
    }

    /// Add a secondary location (for example, where a name was declared).
    pub fn also(mut self, source: &Arc<Source>, span: Span, label: impl Into<String>) -> Self {
        self.secondary.push(Located::new(source, span, label));
        self
    }

    pub fn note(mut self, note: impl Into<String>) -> Self {
        self.notes.push(note.into());
        self
    }

    pub fn help(mut self, help: impl Into<String>) -> Self {
        self.help = Some(help.into());
        self
    }

    /// Help that names the candidate closest to a misspelt `name` (see
    /// [`closest`]), when one is close enough; else the diagnostic as it is.
    pub fn suggest<'a>(self, name: &str, candidates: impl IntoIterator<Item = &'a str>) -> Self {
        match closest(name, candidates) {
            Some(s) => self.help(format!("did you mean `{s}`?")),
            None => self,
        }
    }

    /// For a `name` that is none of `candidates`: a note listing them
    /// (`"{what}: a, b, c"`) and the closest as help ([`Self::suggest`]).
    pub fn among<'a>(
        self,
        name: &str,
        what: &str,
        candidates: impl IntoIterator<Item = &'a str>,
    ) -> Self {
        let candidates: Vec<&str> = candidates.into_iter().collect();
        self.note(format!("{what}: {}", candidates.join(", ")))
            .suggest(name, candidates)
    }

    pub fn is_error(&self) -> bool {
        self.severity == Severity::Error
    }

    /// `(file, line, column)` of the primary location, 1-based.
    pub fn location(&self) -> Option<(String, usize, usize)> {
        self.primary.as_ref().map(|p| {
            let (l, c) = p.source.line_col(p.span.start);
            (p.source.name.clone(), l, c)
        })
    }
}

impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&render(std::slice::from_ref(self), false))
    }
}

/// True when any diagnostic is an error.
pub fn has_errors(diags: &[Diagnostic]) -> bool {
    diags.iter().any(Diagnostic::is_error)
}

/// The sources of one render call, indexed by position.
struct SourceSet {
    sources: Vec<Arc<Source>>,
    /// Each source's text as shown ([`terminal_safe`]), and its line starts.
    shown: Vec<Shown>,
    starts: Vec<Vec<usize>>,
}

impl SourceSet {
    fn id_of(&mut self, s: &Arc<Source>) -> usize {
        if let Some(i) = self
            .sources
            .iter()
            .position(|x| Arc::ptr_eq(x, s) || **x == **s)
        {
            return i;
        }
        let shown = Shown::of(&s.text);
        self.starts.push(
            std::iter::once(0)
                .chain(shown.text.match_indices('\n').map(|(i, _)| i + 1))
                .collect(),
        );
        self.shown.push(shown);
        self.sources.push(Arc::clone(s));
        self.sources.len() - 1
    }

    /// `span` of source `id`, clamped to its text, in shown offsets.
    fn span(&self, id: usize, span: &Range<usize>) -> Range<usize> {
        let clamped = clamp_span(&self.sources[id], span);
        let shown = &self.shown[id];
        shown.offset(clamped.start)..shown.offset(clamped.end)
    }
}

impl<'a> Files<'a> for SourceSet {
    type FileId = usize;
    type Name = Cow<'a, str>;
    type Source = &'a str;

    fn name(&'a self, id: usize) -> Result<Cow<'a, str>, FilesError> {
        self.sources
            .get(id)
            .map(|s| terminal_safe(&s.name))
            .ok_or(FilesError::FileMissing)
    }

    fn source(&'a self, id: usize) -> Result<&'a str, FilesError> {
        self.shown
            .get(id)
            .map(|s| s.text.as_str())
            .ok_or(FilesError::FileMissing)
    }

    fn line_index(&'a self, id: usize, byte_index: usize) -> Result<usize, FilesError> {
        let starts = self.starts.get(id).ok_or(FilesError::FileMissing)?;
        Ok(match starts.binary_search(&byte_index) {
            Ok(i) => i,
            Err(i) => i - 1,
        })
    }

    fn line_number(&'a self, id: usize, line_index: usize) -> Result<usize, FilesError> {
        let s = self.sources.get(id).ok_or(FilesError::FileMissing)?;
        Ok(s.first_line + line_index)
    }

    fn line_range(&'a self, id: usize, line_index: usize) -> Result<Range<usize>, FilesError> {
        let s = self.shown.get(id).ok_or(FilesError::FileMissing)?;
        let starts = &self.starts[id];
        let start = *starts.get(line_index).ok_or(FilesError::LineTooLarge {
            given: line_index,
            max: starts.len() - 1,
        })?;
        let end = starts.get(line_index + 1).copied().unwrap_or(s.text.len());
        Ok(start..end)
    }
}

fn clamp_span(source: &Source, span: &Range<usize>) -> Range<usize> {
    let len = source.text.len();
    let start = floor_char_boundary(&source.text, span.start.min(len));
    let end = floor_char_boundary(&source.text, span.end.clamp(start, len));
    start..end
}

/// Render diagnostics as text with carets; `color` adds ANSI colours.
pub fn render(diags: &[Diagnostic], color: bool) -> String {
    let mut set = SourceSet {
        sources: Vec::new(),
        shown: Vec::new(),
        starts: Vec::new(),
    };
    let safe = |t: &str| terminal_safe(t).into_owned();
    let mut converted = Vec::with_capacity(diags.len());
    for d in diags {
        let mut cd = match d.severity {
            Severity::Error => cs::Diagnostic::error(),
            Severity::Warning => cs::Diagnostic::warning(),
            Severity::Advice => cs::Diagnostic::note(),
        }
        .with_message(safe(&d.message))
        .with_code(d.code);
        let mut labels = Vec::new();
        if let Some(p) = &d.primary {
            let id = set.id_of(&p.source);
            labels.push(cs::Label::primary(id, set.span(id, &p.span)).with_message(safe(&p.label)));
        }
        for s in &d.secondary {
            let id = set.id_of(&s.source);
            labels
                .push(cs::Label::secondary(id, set.span(id, &s.span)).with_message(safe(&s.label)));
        }
        let mut notes: Vec<String> = d.notes.iter().map(|n| safe(n)).collect();
        if let Some(h) = &d.help {
            notes.push(format!("help: {}", safe(h)));
        }
        cd = cd.with_labels(labels).with_notes(notes);
        converted.push(cd);
    }
    let config = term::Config::default();
    let mut buf = if color {
        termcolor::Buffer::ansi()
    } else {
        termcolor::Buffer::no_color()
    };
    let mut out = String::new();
    for (cd, d) in converted.iter().zip(diags) {
        // Writing into an in-memory buffer only fails on a bad span, which
        // `clamp_span` rules out; fall back to the bare message regardless.
        buf.clear();
        if term::emit_to_write_style(&mut buf, &config, &set, cd).is_err() {
            let _ =
                std::io::Write::write_all(&mut buf, format!("error: {}\n", cd.message).as_bytes());
        }
        let text = String::from_utf8_lossy(buf.as_slice());
        match d.severity {
            // the reporting library's lowest severity is called a note; ours
            // is advice, as in the JSON output (its header's first word)
            Severity::Advice => out.push_str(&text.replacen("note", "advice", 1)),
            _ => out.push_str(&text),
        }
    }
    out
}

/// The closest candidate to `name` by edit distance, if it is close enough to
/// be a plausible typo.
pub fn closest<'a, I: IntoIterator<Item = &'a str>>(name: &str, candidates: I) -> Option<&'a str> {
    let mut best: Option<(usize, &str)> = None;
    for c in candidates {
        let d = edit_distance(&name.to_lowercase(), &c.to_lowercase());
        if best.is_none_or(|(bd, _)| d < bd) {
            best = Some((d, c));
        }
    }
    let limit = name.chars().count().div_ceil(3).max(2);
    best.filter(|(d, _)| *d <= limit).map(|(_, c)| c)
}

fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for i in 1..=a.len() {
        cur[0] = i;
        for j in 1..=b.len() {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            cur[j] = (prev[j] + 1).min(cur[j - 1] + 1).min(prev[j - 1] + cost);
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn among_lists_the_candidates_and_suggests_the_closest() {
        let d = Diagnostic::error("x", "m").among("colums", "columns here", ["rows", "columns"]);
        assert_eq!(d.notes, ["columns here: rows, columns"]);
        assert_eq!(d.help.as_deref(), Some("did you mean `columns`?"));
        let d = Diagnostic::error("x", "m").among("zzzzzz", "columns here", ["rows"]);
        assert_eq!((d.notes.len(), d.help), (1, None));
    }

    #[test]
    fn suggest_names_only_a_close_candidate() {
        let d = Diagnostic::error("x", "m").suggest("colums", ["rows", "columns"]);
        assert_eq!(d.help.as_deref(), Some("did you mean `columns`?"));
        let d = Diagnostic::error("x", "m").suggest("zzzzzz", ["rows", "columns"]);
        assert_eq!(d.help, None);
    }

    #[test]
    fn line_col_counts_characters_from_one() {
        let s = Source::file("a.cresc", "ab\ncdé f\n");
        assert_eq!(s.line_col(0), (1, 1));
        assert_eq!(s.line_col(3), (2, 1));
        // 'f' comes after "cdé " (é is two bytes) -> column 5
        assert_eq!(s.line_col(8), (2, 5));
    }

    /// Terminal output names the severity as the JSON output does:
    /// `advice[...]`, and only the header changes.
    #[test]
    fn advice_is_printed_as_advice() {
        let s = Source::file("s.cresc", "note notes\n");
        let mut d = Diagnostic::warning("bars-crowded", "a note on notes").at(&s, 0..4, "note");
        d.severity = Severity::Advice;
        for color in [false, true] {
            let out = render(std::slice::from_ref(&d), color);
            let plain = out.replace("\u{1b}", "");
            assert!(plain.contains("advice[bars-crowded]"), "{out}");
            assert!(!plain.contains("note[bars-crowded]"), "{out}");
            assert_eq!(out.matches("note").count(), 5, "{out}");
        }
        let warn = render(&[Diagnostic::warning("w", "x")], false);
        assert!(warn.starts_with("warning[w]: x"), "{warn}");
    }

    #[test]
    fn excerpt_keeps_real_line_numbers() {
        let s = Source::excerpt("data.csv", "x,oops,3\n", 41);
        let d = Diagnostic::error("bad-number", "not a number").at(&s, 2..6, "here");
        let out = render(std::slice::from_ref(&d), false);
        assert!(out.contains("data.csv:41:3"), "{out}");
        assert!(out.contains("^^^^"), "{out}");
        assert_eq!(d.location(), Some(("data.csv".into(), 41, 3)));
    }

    #[test]
    fn closest_suggests_typos_only() {
        let words = ["spotlight", "show", "hide", "takeaway"];
        assert_eq!(closest("spotlite", words), Some("spotlight"));
        assert_eq!(closest("shwo", words), Some("show"));
        assert_eq!(closest("banana", words), None);
    }

    #[test]
    fn terminal_safe_shows_control_characters_one_for_one() {
        assert_eq!(
            terminal_safe("plain, é, \t and\r\n"),
            "plain, é, \t and\r\n"
        );
        assert!(matches!(terminal_safe("plain"), Cow::Borrowed(_)));
        assert_eq!(
            terminal_safe("\u{1b}]0;pwned\u{7}\u{1b}[2J\u{9b}31m\u{7f}a\rb\u{0}"),
            "\u{241b}]0;pwned\u{2407}\u{241b}[2J\u{fffd}31m\u{2421}a\u{240d}b\u{2400}"
        );
    }

    /// A CSV header cell that retitles the terminal and clears the screen
    /// (issue 15, item 14): the rendered error holds no control character,
    /// and the caret still sits under the offending cell.
    #[test]
    fn escape_sequences_in_sources_and_messages_are_not_rendered_raw() {
        let cell = "\u{1b}]0;owned\u{7}\u{1b}[2J";
        let s = Source::excerpt("d\u{1b}[31m.csv", format!("{cell},oops,3\n"), 7);
        let start = cell.len() + 1;
        let d = Diagnostic::error("bad-number", format!("`{cell}` is not a number"))
            .at(&s, start..start + 4, format!("in {cell}"))
            .note(format!("note {cell}"))
            .help(format!("help {cell}"));
        for color in [false, true] {
            let out = render(std::slice::from_ref(&d), color);
            let controls: Vec<char> = out
                .chars()
                .filter(|&c| c.is_control() && c != '\n' && !(color && c == '\u{1b}'))
                .collect();
            assert!(controls.is_empty(), "{controls:?} in {out:?}");
            if !color {
                assert!(!out.contains('\u{1b}'), "{out:?}");
                assert!(out.contains("d\u{241b}[31m.csv:7:"), "{out}");
                assert!(
                    out.contains("\u{241b}]0;owned\u{2407}\u{241b}[2J,oops,3"),
                    "{out}"
                );
                // the caret is under `oops`: same column as in the line
                let line = out.lines().find(|l| l.contains(",oops,")).unwrap();
                let caret = out.lines().find(|l| l.contains("^^^^")).unwrap();
                let oops = line.find(",oops").map(|b| line[..b].chars().count() + 1);
                assert_eq!(oops, caret.chars().position(|c| c == '^'), "{out}");
                assert!(out.contains(".csv:7:16"), "{out}");
            }
        }
        assert_eq!(d.location(), Some((s.name.clone(), 7, 16)));
    }

    #[test]
    fn spans_past_the_end_do_not_panic() {
        let s = Source::file("a", "abc");
        let d = Diagnostic::error("x", "y").at(&s, 10..20, "z");
        let out = render(&[d], false);
        assert!(out.contains("a:1:4"), "{out}");
    }
}
