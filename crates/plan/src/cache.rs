//! The on-disk cache of the planner: content hashes of data files and the
//! tables of streamed views, in a folder the command chooses (beside the
//! deck, outside the folder that is swapped on every build).
//!
//! Every entry is a JSON file named by its key and holding the key again; an
//! entry that does not parse, is of another format version or holds another
//! key is ignored (and rewritten), never an error. Writes go to a temporary
//! file that is renamed into place, so a reader never sees half an entry.

use std::fs;
use std::io::Read;
use std::path::{Path, PathBuf};
use std::time::{SystemTime, UNIX_EPOCH};

use serde::de::DeserializeOwned;
use serde::{Deserialize, Serialize};

/// Bump when the meaning of an entry changes.
pub const FORMAT: u32 = 1;

/// A 128-bit hash as 32 hex digits (xxh3-128: fast, not cryptographic; the
/// cache only needs to tell its own inputs apart).
pub fn hash_hex(parts: &[&[u8]]) -> String {
    let mut h = xxhash_rust::xxh3::Xxh3::new();
    for p in parts {
        h.update(&(p.len() as u64).to_le_bytes());
        h.update(p);
    }
    format!("{:032x}", h.digest128())
}

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
    /// read again on a rebuild.
    /// `file` is the open file, `path` only names it in the memo.
    pub fn file_hash(&self, path: &Path, file: &fs::File) -> std::io::Result<String> {
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
        let hash = hash_reader(crescendo_data::files::ReadAt::new(file, 0))?;
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

/// xxh3-128 of a file's bytes.
pub fn hash_file(path: &Path) -> std::io::Result<String> {
    hash_reader(fs::File::open(path)?)
}

/// xxh3-128 of the bytes of a reader.
fn hash_reader(mut f: impl Read) -> std::io::Result<String> {
    let mut h = xxhash_rust::xxh3::Xxh3::new();
    let mut buf = vec![0u8; 1 << 20];
    loop {
        let n = f.read(&mut buf)?;
        if n == 0 {
            break;
        }
        h.update(&buf[..n]);
    }
    Ok(format!("{:032x}", h.digest128()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn corrupt_or_foreign_entries_are_ignored() {
        let dir = std::env::temp_dir().join(format!("crescendo-cache-test-{}", std::process::id()));
        let _ = fs::remove_dir_all(&dir);
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
        let h1 = c.file_hash(&f, &fs::File::open(&f).unwrap()).unwrap();
        assert_eq!(h1, hash_file(&f).unwrap());
        fs::write(&f, b"a\n2\n").unwrap();
        assert_ne!(c.file_hash(&f, &fs::File::open(&f).unwrap()).unwrap(), h1);
        let _ = fs::remove_dir_all(&dir);
    }
}
