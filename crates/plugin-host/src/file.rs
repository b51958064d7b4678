//! The plugin file, from the story's path to the bytes the system loader
//! maps.
//!
//! [`Verified::read`] opens the file once, asks where the opened file
//! really lies (so a symbolic link swapped in after the story's paths were
//! checked cannot lead outside the allowed folders), reads it, hashes the
//! bytes it read and compares them with the story's pin. Nothing is loaded.
//!
//! [`Private::of`] then puts exactly those bytes where nobody else can
//! change them: a sealed memory file on Linux (no write, grow or shrink is
//! possible once sealed), else a read-only file in a private temporary
//! folder. The loader is handed that copy's absolute path, so what runs is
//! what was hashed whatever happens to the file on disk in the meantime,
//! and no library search path (`LD_LIBRARY_PATH`, the loader's cache) can
//! substitute another library: a path with a `/` is never searched for.

use std::fs::File;
use std::io::Read;
use std::path::{Path, PathBuf};

use sha2::{Digest, Sha256};

use crate::PluginError;

/// The largest plugin library read, in bytes.
pub const MAX_LIBRARY_BYTES: u64 = 1 << 30;

/// A plugin library read once and checked, not loaded.
#[derive(Clone, Debug)]
pub struct Verified {
    /// The path as the caller gave it (for messages).
    pub path: PathBuf,
    /// Where the opened file really lies (absolute, links resolved).
    pub real_path: PathBuf,
    /// SHA-256 of the bytes read, lowercase hex.
    pub sha256: String,
    /// The pin it was compared with, if any (lowercase hex).
    pub pin: Option<String>,
    bytes: Vec<u8>,
}

impl Verified {
    /// Open `path` once, check that the opened file lies where `allowed`
    /// says a plugin may be, read it, and compare its SHA-256 with `pin`.
    /// A pinned file that differs is refused before anything can run.
    pub fn read(
        path: &Path,
        pin: Option<&str>,
        allowed: &dyn Fn(&Path) -> bool,
    ) -> Result<Verified, PluginError> {
        let unreadable =
            |e: &dyn std::fmt::Display| PluginError::Unreadable(format!("{}: {e}", path.display()));
        let mut file = File::open(path).map_err(|e| unreadable(&e))?;
        let meta = file.metadata().map_err(|e| unreadable(&e))?;
        if !meta.is_file() {
            return Err(unreadable(&"not a regular file"));
        }
        if meta.len() > MAX_LIBRARY_BYTES {
            return Err(unreadable(&format!(
                "{} bytes; a plugin library may have at most {MAX_LIBRARY_BYTES}",
                meta.len()
            )));
        }
        let real_path = real_path(&file, path).map_err(|e| unreadable(&e))?;
        if !allowed(&real_path) {
            return Err(PluginError::Outside(real_path.display().to_string()));
        }
        let mut bytes = Vec::new();
        (&mut file)
            .take(MAX_LIBRARY_BYTES + 1)
            .read_to_end(&mut bytes)
            .map_err(|e| unreadable(&e))?;
        if bytes.len() as u64 > MAX_LIBRARY_BYTES {
            return Err(unreadable(&"it grew past the size limit while it was read"));
        }
        let sha256 = hex(&Sha256::digest(&bytes));
        let pin = pin.map(|p| p.trim().to_ascii_lowercase());
        if let Some(expected) = &pin {
            if *expected != sha256 {
                return Err(PluginError::ChecksumMismatch {
                    expected: expected.clone(),
                    actual: sha256,
                });
            }
        }
        // A truncated ELF file makes the system loader map pages past the
        // end of the file, and touching them kills the process (SIGBUS):
        // refuse such files before the loader sees them.
        check_elf(&bytes).map_err(PluginError::NotALibrary)?;
        Ok(Verified {
            path: path.to_path_buf(),
            real_path,
            sha256,
            pin,
            bytes,
        })
    }

    pub fn bytes(&self) -> &[u8] {
        &self.bytes
    }
}

/// Where the open `file` (opened from `path`) really lies. On Linux the
/// kernel says so (`/proc/self/fd`); elsewhere the resolved path is checked
/// to be the very file that was opened.
fn real_path(file: &File, path: &Path) -> Result<PathBuf, String> {
    #[cfg(target_os = "linux")]
    {
        use std::os::fd::AsRawFd as _;
        if let Ok(p) = std::fs::read_link(format!("/proc/self/fd/{}", file.as_raw_fd())) {
            if p.is_absolute() {
                return Ok(p);
            }
        }
    }
    use std::os::unix::fs::MetadataExt as _;
    let real = std::fs::canonicalize(path).map_err(|e| e.to_string())?;
    let (opened, named) = (
        file.metadata().map_err(|e| e.to_string())?,
        std::fs::metadata(&real).map_err(|e| e.to_string())?,
    );
    if (opened.dev(), opened.ino()) != (named.dev(), named.ino()) {
        return Err("the file was replaced while it was opened".into());
    }
    Ok(real)
}

/// A private copy of verified bytes for the system loader, kept for as long
/// as the library may be mapped.
#[derive(Debug)]
pub struct Private {
    path: PathBuf,
    _file: File,
    /// The private folder of a temporary-file copy (removed on drop).
    _dir: Option<tempfile::TempDir>,
}

impl Private {
    /// A copy of `v`'s bytes that nobody can change: a sealed memory file
    /// where the system has them, else a read-only file in a private
    /// temporary folder.
    pub fn of(v: &Verified) -> std::io::Result<Private> {
        #[cfg(target_os = "linux")]
        if let Ok(p) = Private::sealed(v.bytes()) {
            return Ok(p);
        }
        Private::in_temp_folder(v.bytes())
    }

    /// The absolute path the loader opens.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// A memory file holding `bytes`, sealed against writing, growing and
    /// shrinking (and against removing the seals), opened by the loader
    /// through `/proc/self/fd`.
    #[cfg(target_os = "linux")]
    pub(crate) fn sealed(bytes: &[u8]) -> std::io::Result<Private> {
        use rustix::fs::{fcntl_add_seals, memfd_create, MemfdFlags, SealFlags};
        use std::io::Write as _;
        use std::os::fd::AsRawFd as _;
        let fd = memfd_create(
            "crescendo-plugin",
            MemfdFlags::CLOEXEC | MemfdFlags::ALLOW_SEALING,
        )?;
        let mut file = File::from(fd);
        file.write_all(bytes)?;
        fcntl_add_seals(
            &file,
            SealFlags::WRITE | SealFlags::GROW | SealFlags::SHRINK | SealFlags::SEAL,
        )?;
        let path = PathBuf::from(format!("/proc/self/fd/{}", file.as_raw_fd()));
        // the loader must be able to open it (a system without /proc cannot)
        File::open(&path)?;
        Ok(Private {
            path,
            _file: file,
            _dir: None,
        })
    }

    /// A read-only copy of `bytes` in a new folder only this user can open,
    /// under a name used once.
    pub(crate) fn in_temp_folder(bytes: &[u8]) -> std::io::Result<Private> {
        use std::io::Write as _;
        use std::os::unix::fs::OpenOptionsExt as _;
        use std::os::unix::fs::PermissionsExt as _;
        let dir = tempfile::Builder::new()
            .prefix("crescendo-plugin-")
            .permissions(std::fs::Permissions::from_mode(0o700))
            .tempdir()?;
        let path = dir.path().join("plugin.so");
        let mut file = std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .mode(0o500)
            .open(&path)?;
        file.write_all(bytes)?;
        file.sync_all()?;
        Ok(Private {
            path,
            _file: file,
            _dir: Some(dir),
        })
    }
}

/// Check that an ELF file's header, program headers, the file ranges of its
/// segments and its section header table all lie within the file. Files that
/// are not ELF are left to the system loader (which refuses them cleanly).
pub(crate) fn check_elf(bytes: &[u8]) -> Result<(), String> {
    if bytes.get(..4) != Some(b"\x7fELF".as_slice()) {
        return Ok(());
    }
    let short = || "the file is truncated (it ends inside its ELF headers)".to_string();
    let wide = match bytes.get(4) {
        Some(1) => false,
        Some(2) => true,
        _ => return Err("the ELF file has an unknown class".into()),
    };
    let big = match bytes.get(5) {
        Some(1) => false,
        Some(2) => true,
        _ => return Err("the ELF file has an unknown byte order".into()),
    };
    let uint = |at: usize, size: usize| -> Option<u64> {
        let b = bytes.get(at..at.checked_add(size)?)?;
        let mut v: u64 = 0;
        for k in 0..size {
            let byte = if big { b[k] } else { b[size - 1 - k] };
            v = (v << 8) | u64::from(byte);
        }
        Some(v)
    };
    // Offsets of e_phoff, e_shoff, e_phentsize, e_phnum, e_shentsize,
    // e_shnum; the width of an address; the smallest program header; and the
    // offsets of p_offset and p_filesz in a program header.
    let (phoff, shoff, phentsize, phnum, shentsize, shnum, addr, ph_min, p_offset, p_filesz) =
        if wide {
            (0x20, 0x28, 0x36, 0x38, 0x3a, 0x3c, 8, 56, 0x08, 0x20)
        } else {
            (0x1c, 0x20, 0x2a, 0x2c, 0x2e, 0x30, 4, 32, 0x04, 0x10)
        };
    let field = |at: usize, size: usize| uint(at, size).ok_or_else(short);
    let len = bytes.len() as u64;
    let table_fits = |off: u64, entsize: u64, num: u64| {
        entsize
            .checked_mul(num)
            .and_then(|size| off.checked_add(size))
            .is_some_and(|end| end <= len)
    };
    let (ph_off, ph_size, ph_num) = (field(phoff, addr)?, field(phentsize, 2)?, field(phnum, 2)?);
    if ph_num > 0 && ph_size < ph_min {
        return Err("the ELF file's program headers are too small".into());
    }
    if !table_fits(ph_off, ph_size, ph_num) {
        return Err(short());
    }
    for i in 0..ph_num {
        let base = ph_off + i * ph_size;
        let at = |rel: usize| {
            usize::try_from(base)
                .ok()
                .and_then(|b| b.checked_add(rel))
                .ok_or_else(short)
        };
        let (offset, size) = (field(at(p_offset)?, addr)?, field(at(p_filesz)?, addr)?);
        if offset.checked_add(size).is_none_or(|end| end > len) {
            return Err(format!(
                "the file is truncated: a segment needs {} bytes at offset {offset}, but the file has {len}",
                size
            ));
        }
    }
    let (sh_off, sh_size, sh_num) = (field(shoff, addr)?, field(shentsize, 2)?, field(shnum, 2)?);
    if sh_off != 0 && !table_fits(sh_off, sh_size, sh_num) {
        return Err(format!(
            "the file is truncated: its section table ends past its {len} bytes"
        ));
    }
    Ok(())
}

pub(crate) fn hex(bytes: &[u8]) -> String {
    let mut s = String::with_capacity(bytes.len() * 2);
    for b in bytes {
        s.push_str(&format!("{b:02x}"));
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::io::Write as _;

    fn folder(name: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!(
            "crescendo-plugin-file-{}-{name}",
            std::process::id()
        ));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(&d).unwrap();
        d
    }

    #[test]
    fn hex_is_lowercase_two_digits_a_byte() {
        assert_eq!(hex(&[0, 1, 0xab, 0xff]), "0001abff");
    }

    #[test]
    fn the_real_path_of_a_link_is_its_target() {
        let d = folder("link");
        std::fs::create_dir_all(d.join("inside")).unwrap();
        std::fs::create_dir_all(d.join("outside")).unwrap();
        std::fs::write(d.join("outside/lib.so"), b"not elf").unwrap();
        std::os::unix::fs::symlink(d.join("outside/lib.so"), d.join("inside/lib.so")).unwrap();
        let inside = std::fs::canonicalize(d.join("inside")).unwrap();
        let allowed = |p: &Path| p.starts_with(&inside);
        let r = Verified::read(&d.join("inside/lib.so"), None, &allowed);
        assert!(
            matches!(&r, Err(PluginError::Outside(p)) if p.ends_with("outside/lib.so")),
            "{r:?}"
        );
        let anywhere = |_: &Path| true;
        let v = Verified::read(&d.join("inside/lib.so"), None, &anywhere).unwrap();
        assert_eq!(v.bytes(), b"not elf");
        assert_eq!(
            v.real_path,
            std::fs::canonicalize(d.join("outside/lib.so")).unwrap()
        );
    }

    #[test]
    fn folders_and_pins_are_checked_before_anything_is_kept() {
        let d = folder("checks");
        let anywhere = |_: &Path| true;
        let r = Verified::read(&d, None, &anywhere);
        assert!(
            matches!(&r, Err(PluginError::Unreadable(m)) if m.contains("not a regular file")),
            "{r:?}"
        );
        std::fs::write(d.join("lib.so"), b"abc").unwrap();
        // SHA-256("abc"), FIPS 180-2 appendix B.1
        let abc = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad";
        let v = Verified::read(&d.join("lib.so"), Some(&abc.to_uppercase()), &anywhere).unwrap();
        assert_eq!(v.sha256, abc);
        let r = Verified::read(&d.join("lib.so"), Some("00"), &anywhere);
        assert!(
            matches!(r, Err(PluginError::ChecksumMismatch { .. })),
            "{r:?}"
        );
    }

    /// Both private copies hold exactly the bytes under an absolute path;
    /// the sealed one refuses every write (even by its owner, even root),
    /// the other is read-only in a folder only its owner can open.
    #[test]
    fn private_copies_hold_the_bytes_and_cannot_be_changed() {
        use std::os::unix::fs::PermissionsExt as _;
        let bytes = b"\x7fELF pretend library bytes".repeat(100);
        let copies = vec![Private::in_temp_folder(&bytes).unwrap()];
        for p in &copies {
            assert!(p.path().is_absolute(), "{}", p.path().display());
            assert_eq!(std::fs::read(p.path()).unwrap(), bytes);
        }
        let mode = |p: &Path| std::fs::metadata(p).unwrap().permissions().mode() & 0o777;
        assert_eq!(mode(copies[0].path()), 0o500);
        assert_eq!(mode(copies[0].path().parent().unwrap()), 0o700);
        #[cfg(target_os = "linux")]
        {
            let sealed = Private::sealed(&bytes).unwrap();
            assert!(sealed.path().is_absolute());
            assert_eq!(std::fs::read(sealed.path()).unwrap(), bytes);
            let opened = std::fs::OpenOptions::new().write(true).open(sealed.path());
            let written = opened.and_then(|mut f| f.write_all(b"evil"));
            assert!(written.is_err(), "the sealed copy took a write");
            assert_eq!(std::fs::read(sealed.path()).unwrap(), bytes);
        }
        // the temporary folder is gone with its copy
        let folder = copies[0].path().parent().unwrap().to_path_buf();
        drop(copies);
        assert!(!folder.exists());
    }
}
