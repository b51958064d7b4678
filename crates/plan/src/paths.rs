//! Where a story may read from. Paths in a story (data files, the house
//! style, plugins) are relative to the story, and may not leave the story's
//! folder tree (`..`, an absolute path, or a symbolic link that points out)
//! unless the user allowed a folder with `--allow-path DIR`. So a story
//! from someone else cannot read private files into a deck.
//!
//! [`confine`] checks a path as the story wrote it, for a clear error before
//! anything is read; [`within`] gives the folders that the *opened* file is
//! checked against ([`crescendo_data::files`]), so that a file swapped for
//! a link between the check and the read is still refused.

use std::path::{Component, Path, PathBuf};
use std::sync::Arc;

use crescendo_data::files::Within;
use crescendo_diag::{Diagnostic, Source};

/// `path` with `.` and `..` taken out, without touching the file system.
pub fn normalise(path: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for c in path.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir => {
                out.pop();
            }
            other => out.push(other),
        }
    }
    out
}

/// An absolute, resolved form of `p` when it exists (symbolic links
/// followed), else its absolute, normalised form.
fn resolved(p: &Path) -> PathBuf {
    if let Ok(c) = p.canonicalize() {
        return c;
    }
    let abs = if p.is_absolute() {
        p.to_path_buf()
    } else {
        std::env::current_dir().unwrap_or_default().join(p)
    };
    // resolve the deepest existing ancestor, keep the rest as written
    let abs = normalise(&abs);
    let mut base = abs.clone();
    let mut rest = Vec::new();
    while !base.exists() {
        match (base.file_name().map(|n| n.to_os_string()), base.parent()) {
            (Some(name), Some(parent)) => {
                rest.push(name);
                base = parent.to_path_buf();
            }
            _ => return abs,
        }
    }
    let mut out = base.canonicalize().unwrap_or(base);
    for name in rest.into_iter().rev() {
        out.push(name);
    }
    out
}

/// The file `written` (as the story wrote it) relative to `story_dir`, or
/// why it may not be read: it lies outside the story's folder and every
/// folder in `allowed`.
pub fn confine(story_dir: &Path, written: &str, allowed: &[PathBuf]) -> Result<PathBuf, String> {
    let path = joined(story_dir, written);
    let target = resolved(&path);
    let home = resolved(story_dir);
    if target.starts_with(&home) || allowed.iter().any(|a| target.starts_with(resolved(a))) {
        return Ok(path);
    }
    Err(format!(
        "`{written}` is outside the story's folder ({})",
        target.display()
    ))
}

/// `written` under `story_dir`, without the `.` parts either may hold
/// (`./s.cresc` naming `./lib.so` gives `./lib.so`, not `././lib.so`); a
/// relative path keeps one leading `./` when it is a bare file name.
fn joined(story_dir: &Path, written: &str) -> PathBuf {
    let path: PathBuf = story_dir
        .join(written)
        .components()
        .filter(|c| *c != Component::CurDir)
        .collect();
    if path.is_relative() && path.parent().is_none_or(|p| p.as_os_str().is_empty()) {
        Path::new(".").join(path)
    } else {
        path
    }
}

/// The folders a story's files may be opened from: its own folder and
/// every folder the user allowed.
pub fn within(story_dir: &Path, allowed: &[PathBuf]) -> Within {
    Within::folders(std::iter::once(resolved(story_dir)).chain(allowed.iter().map(|a| resolved(a))))
}

/// The error for a file the story may not read (`what`: "data file", ...;
/// `why` from [`confine`] or the check of the opened file).
pub fn outside(
    src: &Arc<Source>,
    span: std::ops::Range<usize>,
    what: &str,
    why: &str,
) -> Diagnostic {
    Diagnostic::error("path-outside", format!("the {what} may not be read: {why}"))
        .at(src, span, "outside the story's folder")
        .note(
            "a story reads only files in its own folder and below, so a story from someone else \
             cannot read your files into a deck",
        )
        .help("move the file next to the story, or allow its folder with --allow-path DIR")
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::fs;

    /// A scratch folder holding `story/data/a.csv` and
    /// `private/secret.csv`, and its story folder.
    fn tree(name: &str) -> (PathBuf, PathBuf) {
        let d = std::env::temp_dir().join(format!("crescendo-paths-{}-{name}", std::process::id()));
        let _ = fs::remove_dir_all(&d);
        fs::create_dir_all(d.join("story/data")).unwrap();
        fs::create_dir_all(d.join("private")).unwrap();
        fs::write(d.join("story/data/a.csv"), "x\n1\n").unwrap();
        fs::write(d.join("private/secret.csv"), "x\n1\n").unwrap();
        let story = d.join("story");
        (d, story)
    }

    #[test]
    fn inside_the_story_folder_is_fine() {
        let (_, s) = tree("inside");
        assert_eq!(confine(&s, "data/a.csv", &[]), Ok(s.join("data/a.csv")));
        assert!(confine(&s, "./data/../data/a.csv", &[]).is_ok());
        // missing files are left to the loader's own error
        assert!(confine(&s, "data/missing.csv", &[]).is_ok());
    }

    #[test]
    fn leaving_the_story_folder_is_refused() {
        let (d, s) = tree("outside");
        for p in [
            "../private/secret.csv",
            "data/../../private/secret.csv",
            "../private/missing.csv",
            "/etc/passwd",
        ] {
            let e = confine(&s, p, &[]).unwrap_err();
            assert!(e.contains("outside the story's folder"), "{p}: {e}");
        }
        // the story's folder is not a prefix of its sibling's name
        fs::create_dir_all(d.join("story2")).unwrap();
        fs::write(d.join("story2/b.csv"), "x\n").unwrap();
        assert!(confine(&s, "../story2/b.csv", &[]).is_err());
    }

    #[test]
    fn symbolic_links_out_are_refused() {
        let (d, s) = tree("links");
        std::os::unix::fs::symlink(d.join("private/secret.csv"), s.join("data/link.csv")).unwrap();
        std::os::unix::fs::symlink(d.join("private"), s.join("data/dir")).unwrap();
        assert!(confine(&s, "data/link.csv", &[]).is_err());
        assert!(confine(&s, "data/dir/secret.csv", &[]).is_err());
        assert!(confine(&s, "data/dir/missing.csv", &[]).is_err());
    }

    #[test]
    fn an_allowed_folder_may_be_read() {
        let (d, s) = tree("allowed");
        let allow = [d.join("private")];
        assert!(confine(&s, "../private/secret.csv", &allow).is_ok());
        assert!(confine(&s, "/etc/passwd", &allow).is_err());
    }

    #[test]
    fn joined_paths_carry_no_dot_parts() {
        assert_eq!(joined(Path::new("."), "./lib.so"), Path::new("./lib.so"));
        assert_eq!(joined(Path::new("."), "lib.so"), Path::new("./lib.so"));
        assert_eq!(joined(Path::new("pm"), "./lib.so"), Path::new("pm/lib.so"));
        assert_eq!(
            joined(Path::new("/s/./t"), "./d/./x.csv"),
            Path::new("/s/t/d/x.csv")
        );
        // `..` is kept: it may cross a symbolic link
        assert_eq!(joined(Path::new("s"), "../x.csv"), Path::new("s/../x.csv"));
    }
}
