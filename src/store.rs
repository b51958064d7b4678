//! The build's cache folder (beside the deck, outside the folder that is
//! swapped on every build): the frames the build drew (`incremental.rs`)
//! and the planner's view cache, which the planner reaches through its I/O
//! interface ([`Reading`]). Only the command writes here.
//!
//! Every entry is a JSON file named by its key and holding the key again; an
//! entry that does not parse, is of another format version or holds another
//! key is ignored (and rewritten), never an error. Writes go to a temporary
//! file that is renamed into place, so a reader never sees half an entry.

use std::fs::{self, File};
use std::path::{Path, PathBuf};
use std::time::{SystemTime, UNIX_EPOCH};

use crescendo_data::files::{OpenError, ReadAt};
use crescendo_plan::cache::{hash_hex, hash_reader, FORMAT};
use crescendo_plan::io::{Disk, Io, ViewCache};
use serde::de::DeserializeOwned;
use serde::{Deserialize, Serialize};

#[derive(Serialize, Deserialize)]
struct Entry<T> {
    format: u32,
    key: String,
    value: T,
}

/// What the file-hash memo remembers of a file.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
struct Stat {
    len: u64,
    modified_ns: u128,
    /// When the hash was taken.
    hashed_ns: u128,
    hash: String,
}

/// A cache folder.
#[derive(Clone, Debug)]
pub struct Cache {
    dir: PathBuf,
}

fn now_ns() -> u128 {
    SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map_or(0, |d| d.as_nanos())
}

/// A file whose modification time is this close to when it was hashed may
/// have been changed again within the file system's time resolution, so its
/// stat is not trusted (the "racy clean" rule of content trackers; common
/// practice).
const RACY_NS: u128 = 2_000_000_000;

impl Cache {
    pub fn new(dir: impl Into<PathBuf>) -> Cache {
        Cache { dir: dir.into() }
    }

    pub fn dir(&self) -> &Path {
        &self.dir
    }

    fn path(&self, kind: &str, key: &str) -> PathBuf {
        self.dir.join(kind).join(format!("{key}.json"))
    }

    /// The entry `key` of `kind`, if present and sound.
    pub fn get<T: DeserializeOwned>(&self, kind: &str, key: &str) -> Option<T> {
        let text = fs::read(self.path(kind, key)).ok()?;
        let e: Entry<T> = serde_json::from_slice(&text).ok()?;
        (e.format == FORMAT && e.key == key).then_some(e.value)
    }

    /// Store an entry; failures are ignored (the cache is an optimisation).
    pub fn put<T: Serialize>(&self, kind: &str, key: &str, value: &T) {
        let entry = Entry {
            format: FORMAT,
            key: key.to_string(),
            value,
        };
        let Ok(bytes) = serde_json::to_vec(&entry) else {
            return;
        };
        let path = self.path(kind, key);
        let Some(folder) = path.parent() else { return };
        if fs::create_dir_all(folder).is_err() {
            return;
        }
        let tmp = folder.join(format!(".{key}.{}.tmp", std::process::id()));
        if fs::write(&tmp, bytes).is_ok() && fs::rename(&tmp, &path).is_err() {
            let _ = fs::remove_file(&tmp);
        }
    }

    /// The content hash of a file. Size and modification time are only a
    /// shortcut: when both match what the memo recorded, and the file was
    /// not modified within [`RACY_NS`] of being hashed, the recorded hash is
    /// used; otherwise the bytes are hashed again. So a changed file is
    /// always noticed by its content, and an unchanged 600 MB file is not
    /// read again on a rebuild. `file` is the open file (whose bytes are
    /// hashed), `path` only names it in the memo.
    pub fn file_hash(&self, path: &Path, file: &File) -> std::io::Result<String> {
        let meta = file.metadata()?;
        let modified_ns = meta
            .modified()
            .ok()
            .and_then(|m| m.duration_since(UNIX_EPOCH).ok())
            .map_or(0, |d| d.as_nanos());
        let id = fs::canonicalize(path).unwrap_or_else(|_| path.to_path_buf());
        let memo_key = hash_hex(&[id.to_string_lossy().as_bytes()]);
        if let Some(s) = self.get::<Stat>("files", &memo_key) {
            if s.len == meta.len()
                && s.modified_ns == modified_ns
                && s.hashed_ns.saturating_sub(modified_ns) > RACY_NS
            {
                return Ok(s.hash);
            }
        }
        let hashed_ns = now_ns();
        let hash = hash_reader(ReadAt::new(file, 0))?;
        self.put(
            "files",
            &memo_key,
            &Stat {
                len: meta.len(),
                modified_ns,
                hashed_ns,
                hash: hash.clone(),
            },
        );
        Ok(hash)
    }
}

impl ViewCache for Cache {
    fn content_hash(&mut self, path: &Path, file: &File) -> std::io::Result<String> {
        self.file_hash(path, file)
    }

    fn get(&self, kind: &str, key: &str) -> Option<Vec<u8>> {
        let value: serde_json::Value = Cache::get(self, kind, key)?;
        serde_json::to_vec(&value).ok()
    }

    fn put(&mut self, kind: &str, key: &str, json: Vec<u8>) {
        if let Ok(value) = serde_json::from_slice::<serde_json::Value>(&json) {
            Cache::put(self, kind, key, &value);
        }
    }
}

/// What planning reads through during a build: the story's files, plugins
/// and databases (as [`Disk`] reads them), and the view cache in the
/// build's cache folder, when it keeps one.
pub struct Reading {
    disk: Disk,
    views: Option<Cache>,
}

impl Reading {
    /// `cache`: the build's cache folder (none: no view cache).
    pub fn new(options: &crescendo_plan::Options, cache: Option<&Path>) -> Reading {
        Reading {
            disk: Disk::new(options),
            views: cache.map(Cache::new),
        }
    }
}

#[allow(clippy::result_large_err)]
impl Io for Reading {
    fn confine(&self, dir: &Path, written: &str) -> Result<PathBuf, String> {
        self.disk.confine(dir, written)
    }

    fn file_len(&self, path: &Path) -> Option<u64> {
        self.disk.file_len(path)
    }

    fn open(&self, dir: Option<&Path>, path: &Path) -> Result<File, OpenError> {
        self.disk.open(dir, path)
    }

    fn cache(&mut self) -> Option<&mut dyn ViewCache> {
        self.views.as_mut().map(|c| c as &mut dyn ViewCache)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// An empty scratch folder of this test process.
    pub(super) fn scratch(name: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("crescendo-{name}-{}", std::process::id()));
        let _ = fs::remove_dir_all(&d);
        d
    }

    #[test]
    fn corrupt_or_foreign_entries_are_ignored() {
        let dir = scratch("cache-test");
        let c = Cache::new(&dir);
        assert_eq!(c.get::<u32>("v", "k"), None);
        c.put("v", "k", &7u32);
        assert_eq!(c.get::<u32>("v", "k"), Some(7));
        fs::write(dir.join("v/k.json"), b"{not json").unwrap();
        assert_eq!(c.get::<u32>("v", "k"), None);
        // an entry copied under another key is not trusted
        c.put("v", "a", &1u32);
        fs::copy(dir.join("v/a.json"), dir.join("v/b.json")).unwrap();
        assert_eq!(c.get::<u32>("v", "b"), None);
        // content hash: same bytes, same hash; other bytes, other hash
        let f = dir.join("f.csv");
        fs::write(&f, b"a\n1\n").unwrap();
        let h1 = c.file_hash(&f, &File::open(&f).unwrap()).unwrap();
        assert_eq!(h1, crescendo_plan::cache::hash_file(&f).unwrap());
        fs::write(&f, b"a\n2\n").unwrap();
        assert_ne!(c.file_hash(&f, &File::open(&f).unwrap()).unwrap(), h1);
        let _ = fs::remove_dir_all(&dir);
    }
}

#[cfg(test)]
mod opening {
    use super::tests::scratch;
    use super::*;

    #[test]
    fn reading_checks_the_opened_file_and_hashes_it() {
        let d = scratch("reading");
        fs::create_dir_all(d.join("story")).unwrap();
        fs::create_dir_all(d.join("private")).unwrap();
        fs::write(d.join("private/secret.csv"), "a\nsecret\n").unwrap();
        std::os::unix::fs::symlink(d.join("private/secret.csv"), d.join("story/t.csv")).unwrap();
        let story = d.join("story");
        let reading = Reading::new(&crescendo_plan::Options::default(), Some(&d.join("cache")));
        // a data file or house style that links out is refused when opened
        assert!(matches!(
            reading.open(Some(&story), &story.join("t.csv")),
            Err(OpenError::Outside { .. })
        ));
        assert!(matches!(
            reading.read_text(&story, &story.join("t.csv")),
            Err(OpenError::Outside { .. })
        ));
        // the content hash is the open file's: a file put in place of the
        // path after it was opened is not what is hashed
        fs::remove_file(story.join("t.csv")).unwrap();
        fs::write(story.join("t.csv"), "a\n1\n").unwrap();
        let opened = reading.open(Some(&story), &story.join("t.csv")).unwrap();
        fs::remove_file(story.join("t.csv")).unwrap();
        fs::write(story.join("t.csv"), "a\n2\n").unwrap();
        let mut reading = reading;
        let cache = reading.cache().expect("a view cache");
        let hash = cache.content_hash(&story.join("t.csv"), &opened).unwrap();
        assert_eq!(hash, hash_reader(&b"a\n1\n"[..]).unwrap());
        let _ = fs::remove_dir_all(&d);
    }
}
