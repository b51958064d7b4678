//! Opening the files a story names, so that what is read is what was checked.
//!
//! The planner checks every path a story writes before reading it (it may
//! not leave the story's folder tree), but a check of a *path* says nothing
//! about the file a later open of that path gets: a data file swapped for a
//! symbolic link to a private file between the check and the open would be
//! read. So every file a story causes to be read is opened once, by
//! [`Within::open`], and the check is made on the *open file*: the real path
//! of the descriptor (as the kernel reports it in `/proc/self/fd`, links
//! resolved) must lie in an allowed folder. Every later read of that load —
//! the type probe, the whole load, each thread of a streamed read — goes
//! through that one descriptor with positional reads ([`ReadAt`]), never
//! through the path again.

use std::fs::File;
use std::io::{self, Read};
use std::path::{Path, PathBuf};

/// Where files may be opened from (by default: nowhere).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Within {
    /// Resolved folders (links followed); `None`: anywhere.
    roots: Option<Vec<PathBuf>>,
}

impl Default for Within {
    fn default() -> Self {
        Within {
            roots: Some(Vec::new()),
        }
    }
}

/// Why a file was not opened.
#[derive(Debug)]
pub enum OpenError {
    /// The open itself failed.
    Io(io::Error),
    /// The file that was opened lies outside every allowed folder; `real`
    /// is where it really is.
    Outside { real: PathBuf },
}

impl Within {
    /// Any file may be opened (a file named on the user's own command line).
    pub fn anywhere() -> Within {
        Within { roots: None }
    }

    /// Only files inside these folders. Each folder is resolved (links
    /// followed) now; a folder that does not exist allows nothing.
    pub fn folders<I: IntoIterator<Item = PathBuf>>(folders: I) -> Within {
        Within {
            roots: Some(
                folders
                    .into_iter()
                    .filter_map(|f| f.canonicalize().ok())
                    .collect(),
            ),
        }
    }

    /// Open `path` for reading, then check where the opened file really is.
    pub fn open(&self, path: &Path) -> Result<File, OpenError> {
        let file = File::open(path).map_err(OpenError::Io)?;
        let Some(roots) = &self.roots else {
            return Ok(file);
        };
        let real = real_path(&file, path).map_err(OpenError::Io)?;
        if roots.iter().any(|r| real.starts_with(r)) {
            Ok(file)
        } else {
            Err(OpenError::Outside { real })
        }
    }
}

/// Where the open `file` really is: the kernel's name for the descriptor.
#[cfg(any(target_os = "linux", target_os = "android"))]
fn real_path(file: &File, path: &Path) -> io::Result<PathBuf> {
    use std::os::fd::AsRawFd;
    match std::fs::read_link(format!("/proc/self/fd/{}", file.as_raw_fd())) {
        Ok(p) if p.is_absolute() => Ok(p),
        _ => same_file_path(file, path),
    }
}

#[cfg(not(any(target_os = "linux", target_os = "android")))]
fn real_path(file: &File, path: &Path) -> io::Result<PathBuf> {
    same_file_path(file, path)
}

/// Without `/proc`: the resolved path, accepted only when it names the very
/// file that is open (same device and inode). A weaker check (the folders
/// on the way could change between the two looks), used only where the
/// kernel cannot name an open descriptor.
fn same_file_path(file: &File, path: &Path) -> io::Result<PathBuf> {
    let real = path.canonicalize()?;
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        let (open, named) = (file.metadata()?, std::fs::symlink_metadata(&real)?);
        if open.dev() != named.dev() || open.ino() != named.ino() {
            return Err(io::Error::other("the file changed while it was opened"));
        }
    }
    #[cfg(not(unix))]
    let _ = file;
    Ok(real)
}

/// Reads an open file from an offset on, without moving the descriptor's
/// own position, so several threads can read one descriptor at once.
pub struct ReadAt<'f> {
    file: &'f File,
    pos: u64,
}

impl<'f> ReadAt<'f> {
    pub fn new(file: &'f File, pos: u64) -> Self {
        ReadAt { file, pos }
    }
}

impl Read for ReadAt<'_> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        #[cfg(unix)]
        let n = std::os::unix::fs::FileExt::read_at(self.file, buf, self.pos)?;
        #[cfg(windows)]
        let n = std::os::windows::fs::FileExt::seek_read(self.file, buf, self.pos)?;
        self.pos += n as u64;
        Ok(n)
    }
}

#[cfg(test)]
mod tests;
