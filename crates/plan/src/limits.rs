//! Limits on what one build may read and make, so that a hostile or broken
//! input stops with a clear, located error instead of exhausting memory or
//! time. Each is a command-line option (`--max-input-bytes`, `--max-rows`,
//! `--max-frames`, `--max-text`); the defaults are far above any real deck.
//!
//! The row limit applies to rows held in memory (a data file loaded whole,
//! the kept rows of a streamed view) and is checked while the file is read.
//! By default it follows the machine: rows may be held while they take at
//! most half of the memory available when the build starts (`MemAvailable`
//! of `/proc/meminfo`; where that is unknown, there is no default limit).

use std::path::Path;
use std::sync::Arc;

use crescendo_data::load::ReadLimits;
use crescendo_data::{Cell, Table};
use crescendo_diag::{Diagnostic, Source};
use crescendo_lang::ast::{Item, StoryAst};
use crescendo_lang::source::{comment_end, literal_end};

/// The byte limit of a story and of a data file read whole when the user
/// sets none: 4 GiB. A streamed data file has no default byte limit (its
/// memory does not grow with its size).
pub const DEFAULT_INPUT_BYTES: u64 = 4 << 30;

/// The limits of one build.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Limits {
    /// Largest story or data file, in bytes; `None`: the user set none, so
    /// a story or a data file read whole may have [`DEFAULT_INPUT_BYTES`]
    /// and a streamed data file any size.
    pub input_bytes: Option<u64>,
    /// Most rows of a data file held in memory; `None`: as many as fit in
    /// half the available memory (see the module docs).
    pub rows: Option<usize>,
    /// Most frames in a deck.
    pub frames: usize,
    /// Longest text, in characters: a string in the story, or a text cell.
    pub text: usize,
}

impl Default for Limits {
    fn default() -> Self {
        Self {
            input_bytes: None,
            rows: None,
            frames: 500,
            text: 10_000,
        }
    }
}

/// Is the file at `path`, read whole, within the size limit? (A file that
/// cannot be read is left to the reader's own error.)
pub fn file_size(path: &Path, limits: &Limits) -> Result<(), String> {
    size(
        path,
        std::fs::metadata(path).ok().map(|m| m.len()),
        limits,
        false,
    )
}

/// Is a file of `len` bytes (`None`: unreadable) within the size limit?
/// `streamed`: the file is read record by record, so only a limit the user
/// set applies.
pub fn size(path: &Path, len: Option<u64>, limits: &Limits, streamed: bool) -> Result<(), String> {
    let limit = match limits.input_bytes {
        Some(l) => l,
        None if streamed => return Ok(()),
        None => DEFAULT_INPUT_BYTES,
    };
    match len {
        Some(len) if len > limit => Err(format!(
            "`{}` has {len} bytes, more than the limit of {limit} (--max-input-bytes)",
            path.display(),
        )),
        _ => Ok(()),
    }
}

/// Memory available to this process now, in bytes (`MemAvailable` of
/// `/proc/meminfo`), if known.
pub fn available_memory() -> Option<u64> {
    let info = std::fs::read_to_string("/proc/meminfo").ok()?;
    let line = info.lines().find(|l| l.starts_with("MemAvailable:"))?;
    let kb: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    kb.checked_mul(1024)
}

/// The limits the data reader applies (text, rows, and the memory the
/// rows may take without a row limit).
pub fn read_limits(limits: &Limits) -> ReadLimits {
    ReadLimits {
        text: limits.text,
        rows: limits.rows,
        memory: available_memory().map_or(u64::MAX, |m| m / 2),
    }
}

/// Is a loaded table within the row and text limits? (The CSV reader
/// checks them while it reads; this is for tables from a database.)
pub fn table(t: &Table, limits: &Limits) -> Result<(), String> {
    let rows = t.columns.first().map_or(0, |c| c.values.len());
    if let Some(max) = limits.rows.filter(|&m| rows > m) {
        return Err(format!(
            "the file has {rows} rows, more than the limit of {max} (--max-rows)"
        ));
    }
    for c in &t.columns {
        for (i, v) in c.values.cells().enumerate() {
            if let Cell::Text(s) = v {
                if s.len() > limits.text && s.chars().count() > limits.text {
                    return Err(format!(
                        "a text in column `{}` (row {}) has {} characters, more than the limit of {} (--max-text)",
                        c.name,
                        i + 1,
                        s.chars().count(),
                        limits.text
                    ));
                }
            }
        }
    }
    Ok(())
}

/// The byte ranges of the string literals of a story (comments skipped).
fn literals(text: &str) -> Vec<std::ops::Range<usize>> {
    let bytes = text.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while let Some(&b) = bytes.get(i) {
        match b {
            b'"' => {
                let start = i;
                i = literal_end(bytes, i);
                let end = (i + 1).min(text.len());
                out.push(start..end);
            }
            b'#' => i = comment_end(bytes, i),
            _ => {}
        }
        i += 1;
    }
    out
}

/// The error for a text that quotes values (`text`, at `span` in the
/// story) and, with them filled in, is longer than the text limit: ten
/// `{conclusion}`s in a takeaway make a text ten conclusions long.
pub fn expanded_text(
    src: &Arc<Source>,
    span: &std::ops::Range<usize>,
    text: &str,
    limits: &Limits,
) -> Option<Diagnostic> {
    if text.len() <= limits.text {
        return None;
    }
    let n = text.chars().count();
    (n > limits.text).then(|| {
        Diagnostic::error(
            "limit",
            format!(
                "this text has {n} characters with its quoted values filled in, more than the limit of {} (--max-text)",
                limits.text
            ),
        )
        .at(src, span.start..span.start + 1, "this text is too long")
        .help("quote fewer or shorter values, or raise the limit")
    })
}

/// Errors for a story over the text or frame limits.
pub fn story(src: &Arc<Source>, ast: &StoryAst, limits: &Limits) -> Vec<Diagnostic> {
    let mut diags = Vec::new();
    let text = src.text.as_str();
    for r in literals(text) {
        let Some(s) = text.get(r.clone()) else {
            continue;
        };
        if s.len() > limits.text && s.chars().count() > limits.text + 2 {
            diags.push(
                Diagnostic::error(
                    "limit",
                    format!(
                        "this text has {} characters, more than the limit of {} (--max-text)",
                        s.chars().count() - 2,
                        limits.text
                    ),
                )
                .at(src, r.start..r.start + 1, "this text is too long"),
            );
        }
    }
    let frames: Vec<_> = ast
        .items
        .iter()
        .filter_map(|i| match i {
            Item::Frame(f) => Some(f.span.clone()),
            _ => None,
        })
        .collect();
    if let Some(first_over) = frames.get(limits.frames) {
        diags.push(
            Diagnostic::error(
                "limit",
                format!(
                    "the story has {} frames, more than the limit of {} (--max-frames)",
                    frames.len(),
                    limits.frames
                ),
            )
            .at(
                src,
                first_over.start..first_over.start + 5,
                "the first frame over the limit",
            ),
        );
    }
    diags
}

#[cfg(test)]
mod tests {
    use super::*;
    use crescendo_data::{ColType, Column, Value};

    fn limits() -> Limits {
        Limits {
            input_bytes: Some(10),
            rows: Some(2),
            frames: 1,
            text: 5,
        }
    }

    #[test]
    fn long_story_texts_and_too_many_frames_are_located() {
        let text = "story \"short\" # \"a comment is not a text at all\"\n\
                    frame \"sixsix\" {\n}\nframe \"b\" {\n}\n";
        let src = Source::file("s.cresc", text.to_string());
        let (ast, _) = crescendo_lang::parse(&src);
        let d = story(&src, &ast, &limits());
        assert_eq!(d.len(), 2, "{d:?}");
        assert!(d[0].message.contains("6 characters"), "{}", d[0].message);
        assert_eq!(d[0].location().unwrap().1, 2);
        assert!(d[1].message.contains("2 frames"), "{}", d[1].message);
        assert_eq!(d[1].location().unwrap().1, 4);
        assert!(story(&src, &ast, &Limits::default()).is_empty());
    }

    #[test]
    fn rows_and_text_cells_are_counted() {
        let col = |values: Vec<Value>| Table {
            columns: vec![Column {
                name: "c".into(),
                ty: ColType::Text,
                values: values.into(),
            }],
        };
        let t = |s: &str| Value::Text(s.into());
        assert!(table(&col(vec![t("a"), t("b")]), &limits()).is_ok());
        let e = table(&col(vec![t("a"), t("b"), t("c")]), &limits()).unwrap_err();
        assert!(e.contains("3 rows"), "{e}");
        let e = table(&col(vec![t("abcdef")]), &limits()).unwrap_err();
        assert!(e.contains("6 characters"), "{e}");
        // characters, not bytes
        assert!(table(&col(vec![t("ééééé")]), &limits()).is_ok());
    }

    #[test]
    fn file_sizes_are_checked() {
        let p = std::env::temp_dir().join(format!("crescendo-limit-{}", std::process::id()));
        std::fs::write(&p, "0123456789").unwrap();
        assert!(file_size(&p, &limits()).is_ok());
        std::fs::write(&p, "0123456789a").unwrap();
        assert!(file_size(&p, &limits()).unwrap_err().contains("11 bytes"));
        assert!(file_size(&p.with_extension("none"), &limits()).is_ok());
        // without a limit set: the default for a file read whole, none for
        // a streamed file; a limit the user sets holds for both
        let big = Some(DEFAULT_INPUT_BYTES + 1);
        let default = Limits::default();
        assert!(size(&p, big, &default, false).is_err());
        assert!(size(&p, big, &default, true).is_ok());
        assert!(size(&p, Some(11), &limits(), true).is_err());
    }
}
