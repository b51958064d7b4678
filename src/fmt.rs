//! `crescendo fmt`: rewrite stories in the canonical layout
//! (`crescendo_lang::format`), or with `--check` only say which would change.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use crescendo_diag::Diagnostic;

/// Exit status of `fmt --check` when a file would change.
pub const EXIT_WOULD_CHANGE: u8 = 1;
/// Exit status when a story has syntax errors or cannot be read or written.
pub const EXIT_ERROR: u8 = 2;

/// Format (or check) every file; files with errors are left untouched and
/// the others are still processed.
pub fn run(files: &[PathBuf], check: bool, color: bool) -> ExitCode {
    let mut errors = 0;
    let mut changed = Vec::new();
    for path in &expand(files) {
        match format_file(path) {
            Ok(None) => {}
            Ok(Some(formatted)) => {
                if check {
                    changed.push(path.clone());
                } else if let Err(d) = write_atomically(path, &formatted) {
                    crate::output::diagnostics(&[d], color);
                    errors += 1;
                } else {
                    changed.push(path.clone());
                }
            }
            Err(diags) => {
                crate::output::diagnostics(&diags, color);
                tell!("{} was not formatted", path.display());
                errors += 1;
            }
        }
    }
    for p in &changed {
        if check {
            say!("would reformat {}", p.display());
        } else {
            say!("formatted {}", p.display());
        }
    }
    if errors > 0 {
        ExitCode::from(EXIT_ERROR)
    } else if check && !changed.is_empty() {
        tell!(
            "{} file{} not in the canonical layout; run `crescendo fmt` on {}",
            changed.len(),
            if changed.len() == 1 { " is" } else { "s are" },
            if changed.len() == 1 { "it" } else { "them" }
        );
        ExitCode::from(EXIT_WOULD_CHANGE)
    } else {
        ExitCode::SUCCESS
    }
}

/// The files to format: each file named, and the `.cresc` files under each
/// folder named (sorted; hidden folders and `deck` output folders skipped).
fn expand(paths: &[PathBuf]) -> Vec<PathBuf> {
    fn walk(dir: &Path, out: &mut Vec<PathBuf>) {
        let Ok(entries) = std::fs::read_dir(dir) else {
            return;
        };
        let mut entries: Vec<PathBuf> = entries.flatten().map(|e| e.path()).collect();
        entries.sort();
        for p in entries {
            let name = p.file_name().map(|n| n.to_string_lossy().into_owned());
            let skip = name
                .as_deref()
                .is_some_and(|n| n.starts_with('.') || n == "deck" || n == "target");
            if p.is_dir() {
                if !skip {
                    walk(&p, out);
                }
            } else if p.extension().is_some_and(|x| x == "cresc") {
                out.push(p);
            }
        }
    }
    let mut out = Vec::new();
    for p in paths {
        if p.is_dir() {
            walk(p, &mut out);
        } else {
            out.push(p.clone());
        }
    }
    out
}

/// The formatted text when it differs from the file, `None` when the file
/// is already formatted.
fn format_file(path: &Path) -> Result<Option<String>, Vec<Diagnostic>> {
    let bytes = std::fs::read(path).map_err(|e| {
        vec![Diagnostic::error(
            "io",
            format!("cannot read {}: {e}", path.display()),
        )]
    })?;
    let source = crescendo_lang::source::decode(&path.display().to_string(), bytes)?;
    let formatted = crescendo_lang::format_source(&source)?;
    Ok((formatted != source.text).then_some(formatted))
}

/// Replace `path` with `text` through a temporary file in the same folder
/// and a rename, so an interrupted run leaves the old file or the new one,
/// never half of one. The file keeps its permissions.
fn write_atomically(path: &Path, text: &str) -> Result<(), Diagnostic> {
    let fail = |what: &str, e: std::io::Error| {
        Diagnostic::error("output", format!("cannot {what} {}: {e}", path.display()))
            .note("the story was left as it was")
    };
    let dir = path
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "story".into());
    let tmp = dir.join(format!(".{name}.fmt-{}", std::process::id()));
    let result = (|| {
        use std::io::Write as _;
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(text.as_bytes())?;
        f.sync_all()?;
        if let Ok(meta) = std::fs::metadata(path) {
            std::fs::set_permissions(&tmp, meta.permissions())?;
        }
        std::fs::rename(&tmp, path)
    })();
    if let Err(e) = result {
        let _ = std::fs::remove_file(&tmp);
        return Err(fail("write", e));
    }
    Ok(())
}
