//! A story as it was at a git revision, read straight from the repository's
//! objects (gitoxide): no git program, no checkout, nothing written. The
//! planner reads through [`AtRevision`], an `Io` whose files are the blobs
//! of the revision's tree; plugins, databases and environment variables are
//! those of today (they are not kept in the repository).

use std::fs::File;
use std::io::{Seek, SeekFrom, Write};
use std::path::{Component, Path, PathBuf};

use crescendo_data::files::OpenError;
use crescendo_diag::Diagnostic;
use crescendo_plan::io::{Disk, Io};
use crescendo_plan::Options;

/// The first line of a large-file pointer: a small text file kept in the
/// repository in place of the data, which lives elsewhere.
const POINTER_START: &[u8] = b"version https://git-lfs";

/// A repository and the commit a review compares against.
pub struct Revision {
    repo: gix::Repository,
    /// The repository's working folder, its real path.
    pub workdir: PathBuf,
    /// The revision as the user wrote it.
    pub name: String,
    /// The commit's abbreviated id.
    pub short: String,
    tree: gix::ObjectId,
}

fn err(message: String) -> Diagnostic {
    Diagnostic::error("review", message)
}

/// The repository `story` lies in, and `rev` in it.
pub fn open(story: &Path, rev: &str) -> Result<Revision, Diagnostic> {
    let dir = story.parent().unwrap_or(Path::new("."));
    let dir = if dir.as_os_str().is_empty() {
        Path::new(".")
    } else {
        dir
    };
    let repo = gix::discover(dir).map_err(|e| {
        err(format!(
            "`{}` is not inside a git repository, so there is no earlier version to compare with",
            story.display()
        ))
        .note(format!("looking for one from `{}`: {e}", dir.display()))
        .help("run the review inside the repository that keeps the story, or compare two built decks with `crescendo diff OLD NEW`")
    })?;
    let workdir = repo
        .workdir()
        .and_then(|w| w.canonicalize().ok())
        .ok_or_else(|| {
            err("the repository has no working folder (a bare repository)".into())
                .help("review a story in a repository's working folder")
        })?;
    let (tree, short) = {
        let commit = resolve(&repo, rev)?;
        let tree = commit
            .tree_id()
            .map_err(|e| err(format!("cannot read the files of revision `{rev}`: {e}")))?
            .detach();
        (tree, commit.id().shorten_or_id().to_string())
    };
    Ok(Revision {
        workdir,
        name: rev.to_string(),
        short,
        tree,
        repo,
    })
}

/// The commit `rev` names; an unknown name says which names are near it,
/// and a shallow clone that lacks it says so.
fn resolve<'r>(repo: &'r gix::Repository, rev: &str) -> Result<gix::Commit<'r>, Diagnostic> {
    let shallow = repo.is_shallow().unwrap_or(false);
    let missing = |e: String| -> Diagnostic {
        if shallow {
            return err(format!(
                "revision `{rev}` is not in this clone: it holds only the most recent history (a shallow clone)"
            ))
            .note(e)
            .help("fetch the history the review needs, e.g. `git fetch --deepen=50` or `git fetch --unshallow`");
        }
        let mut d = err(format!("there is no revision `{rev}` in this repository"));
        let near = nearest_names(repo, rev);
        if !near.is_empty() {
            d = d.help(format!("did you mean {}?", near.join(", ")));
        } else {
            d = d.help("give a branch, a tag, a commit id, or `HEAD~1`");
        }
        d.note(e)
    };
    let id = repo
        .rev_parse_single(rev)
        .map_err(|e| missing(e.to_string()))?;
    let object = id.object().map_err(|e| missing(e.to_string()))?;
    object.peel_to_commit().map_err(|e| {
        if shallow {
            missing(e.to_string())
        } else {
            err(format!("revision `{rev}` does not name a commit: {e}"))
        }
    })
}

/// Names of branches and tags close to `rev` in spelling, nearest first.
fn nearest_names(repo: &gix::Repository, rev: &str) -> Vec<String> {
    let mut names = vec!["HEAD".to_string()];
    if let Ok(platform) = repo.references() {
        if let Ok(all) = platform.all() {
            for r in all.flatten() {
                names.push(r.name().shorten().to_string());
            }
        }
    }
    let base = rev.split(['~', '^']).next().unwrap_or(rev);
    let mut near: Vec<(usize, String)> = names
        .into_iter()
        .map(|n| (strsim::levenshtein(&n, base), n))
        .filter(|(d, n)| *d > 0 && *d <= (n.chars().count() / 3).max(2))
        .collect();
    near.sort();
    near.dedup();
    near.into_iter()
        .take(3)
        .map(|(_, n)| format!("`{n}`"))
        .collect()
}

/// `path` without `.` and `..` parts (the files need not exist today).
fn lexical(path: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for c in path.components() {
        match c {
            Component::ParentDir => {
                out.pop();
            }
            Component::CurDir => {}
            c => out.push(c),
        }
    }
    out
}

/// What a revision holds at a path, in words for an error.
enum Blob {
    Data(Vec<u8>),
    /// No such file in the revision (why, in words).
    Missing(String),
    Problem(String),
}

impl Revision {
    /// `path` (absolute, or relative to the current folder) as a path
    /// inside the repository, or why it is not inside.
    fn inside(&self, path: &Path) -> Result<PathBuf, String> {
        let absolute = if path.is_absolute() {
            path.to_path_buf()
        } else {
            std::env::current_dir()
                .map(|d| d.join(path))
                .unwrap_or_else(|_| path.to_path_buf())
        };
        // the real path of the folder part (it exists today), then the name
        let absolute = lexical(&absolute);
        let real = match (absolute.parent(), absolute.file_name()) {
            (Some(p), Some(n)) => p
                .canonicalize()
                .map(|p| p.join(n))
                .unwrap_or_else(|_| absolute.clone()),
            _ => absolute.clone(),
        };
        real.strip_prefix(&self.workdir)
            .map(Path::to_path_buf)
            .map_err(|_| {
                format!(
                    "`{}` lies outside the git repository at `{}`, so its version at `{}` is unknown and the two decks cannot be compared",
                    path.display(),
                    self.workdir.display(),
                    self.name
                )
            })
    }

    /// The bytes of `path` at this revision.
    fn blob(&self, path: &Path) -> Blob {
        let rel = match self.inside(path) {
            Ok(r) => r,
            Err(why) => return Blob::Problem(why),
        };
        let at = format!("`{}` at revision `{}`", rel.display(), self.name);
        let entry = match self
            .repo
            .find_tree(self.tree)
            .map_err(|e| e.to_string())
            .and_then(|t| t.lookup_entry_by_path(&rel).map_err(|e| e.to_string()))
        {
            Ok(Some(e)) => e,
            Ok(None) => return Blob::Missing(format!("there was no file {at}")),
            Err(e) => return Blob::Problem(format!("cannot read {at}: {e}")),
        };
        let mode = entry.mode();
        if !mode.is_blob() {
            let what = if mode.is_link() {
                "a symbolic link"
            } else {
                "not a file"
            };
            return Blob::Problem(format!("{at} is {what}"));
        }
        match self.repo.find_blob(entry.object_id()) {
            Ok(mut b) => {
                let data = b.take_data();
                if data.starts_with(POINTER_START) {
                    return Blob::Problem(format!(
                        "{at} is a large-file pointer, not the data: the repository keeps the data elsewhere, so the old version cannot be read from it"
                    ));
                }
                Blob::Data(data)
            }
            Err(e) => Blob::Problem(format!("cannot read {at}: {e}")),
        }
    }

    /// The story file's text at this revision.
    /// The story file's text at this revision; `None` when the story is
    /// new since (every frame of it is then new).
    pub fn story(&self, story: &Path) -> Result<Option<Vec<u8>>, Diagnostic> {
        match self.blob(story) {
            Blob::Data(d) => Ok(Some(d)),
            Blob::Missing(_) => Ok(None),
            Blob::Problem(why) => Err(err(format!("cannot read the story as it was: {why}"))
                .help("give a revision in which the story exists with `--against REV`")),
        }
    }
}

/// An anonymous in-memory file holding `bytes`, read from its start.
fn memory_file(name: &Path, bytes: &[u8]) -> std::io::Result<File> {
    use std::os::fd::FromRawFd;
    let label = c"crescendo-review";
    // SAFETY: `label` is a valid C string; the returned descriptor is owned
    // by the `File` made from it and by nothing else.
    let fd = unsafe { libc::memfd_create(label.as_ptr(), libc::MFD_CLOEXEC) };
    if fd < 0 {
        return Err(std::io::Error::last_os_error());
    }
    // SAFETY: `fd` is a fresh descriptor this function owns.
    let mut file = unsafe { File::from_raw_fd(fd) };
    file.write_all(bytes)
        .and_then(|_| file.seek(SeekFrom::Start(0)).map(|_| ()))
        .map_err(|e| std::io::Error::other(format!("{}: {e}", name.display())))?;
    Ok(file)
}

/// Planning's files from a revision (see the module docs).
pub struct AtRevision<'a> {
    pub revision: &'a Revision,
    disk: Disk,
    allowed: Vec<PathBuf>,
    /// Files named with `--data`, read from today's disk.
    named: Vec<PathBuf>,
}

impl<'a> AtRevision<'a> {
    pub fn new(revision: &'a Revision, options: &Options) -> AtRevision<'a> {
        AtRevision {
            revision,
            disk: Disk::new(options),
            allowed: options.allow_paths.clone(),
            named: options.data.values().cloned().collect(),
        }
    }
}

#[allow(clippy::result_large_err)]
impl Io for AtRevision<'_> {
    fn confine(&self, dir: &Path, written: &str) -> Result<PathBuf, String> {
        crescendo_plan::paths::confine(dir, written, &self.allowed)
    }

    fn file_len(&self, path: &Path) -> Option<u64> {
        if self.named.iter().any(|n| n == path) {
            return self.disk.file_len(path);
        }
        match self.revision.blob(path) {
            Blob::Data(d) => Some(d.len() as u64),
            Blob::Missing(_) | Blob::Problem(_) => None,
        }
    }

    fn open(&self, dir: Option<&Path>, path: &Path) -> Result<File, OpenError> {
        // a file named on the command line (`--data NAME=FILE`) is not the
        // story's own: both versions read it as it is today
        let Some(dir) = dir else {
            return self.disk.open(None, path);
        };
        // the same folder rule as today's files, checked on the path as
        // the revision holds it (a link is refused by `blob`)
        if self.confine(dir, &path.to_string_lossy()).is_err() {
            return Err(OpenError::Outside {
                real: lexical(&dir.join(path)),
            });
        }
        match self.revision.blob(path) {
            Blob::Data(d) => memory_file(path, &d).map_err(OpenError::Io),
            Blob::Missing(why) => Err(OpenError::Io(std::io::Error::new(
                std::io::ErrorKind::NotFound,
                why,
            ))),
            Blob::Problem(why) => Err(OpenError::Io(std::io::Error::other(why))),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_lose_dots_without_touching_the_disk() {
        assert_eq!(
            lexical(Path::new("/a/b/../c/./d.csv")),
            Path::new("/a/c/d.csv")
        );
    }

    #[test]
    fn a_memory_file_reads_back_its_bytes() {
        use std::io::Read;
        let mut f = memory_file(Path::new("x"), b"a,b\n1,2\n").unwrap();
        let mut s = String::new();
        f.read_to_string(&mut s).unwrap();
        assert_eq!(s, "a,b\n1,2\n");
    }
}
