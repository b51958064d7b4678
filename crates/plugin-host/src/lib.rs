//! The host side: load a plugin explicitly by path, check it, call it, and
//! validate everything it returns.
//!
//! Nothing a plugin returns is trusted: the descriptor is read field by
//! field with bounds, the reply is size-limited, parsed strictly, and every
//! number and point is checked before a [`Validated`] drawing is handed to
//! the renderer. The host never panics on anything a plugin does that it can
//! detect; what it cannot detect (a crash, an endless loop) is the price of
//! native plugins, which is why they are loaded only explicitly.

use std::ffi::c_void;
use std::os::raw::c_char;
use std::path::{Path, PathBuf};

use sha2::{Digest, Sha256};

use crescendo_plugin::abi::{Descriptor, OutBuffer, ABI_VERSION, ENTRY_SYMBOL};
use crescendo_plugin::validate::{check_area, check_reply, clip};
pub use crescendo_plugin::validate::{
    validate, PluginError, Validated, MAX_DESCRIPTION_CHARS, MAX_FORMS, MAX_NAME_BYTES, MAX_POINTS,
    MAX_PRIMITIVES, MAX_REPLY_BYTES, MAX_TEXT_CHARS,
};
use crescendo_plugin::Request;

/// What a loaded plugin says about itself.
#[derive(Clone, Debug, PartialEq)]
pub struct PluginInfo {
    pub name: String,
    pub version: String,
    pub abi_version: u32,
    pub forms: Vec<String>,
    pub path: PathBuf,
    /// SHA-256 of the library file, lowercase hex.
    pub sha256: String,
}

/// A loaded plugin. The library stays loaded as long as this value lives:
/// the function pointers below point into it.
pub struct Plugin {
    info: PluginInfo,
    render_fn: RenderFn,
    free_fn: FreeFn,
    /// Declared last so it is dropped (unloaded) after everything else.
    _library: libloading::Library,
}

impl std::fmt::Debug for Plugin {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Plugin")
            .field("info", &self.info)
            .finish_non_exhaustive()
    }
}

type EntryFn = extern "C" fn() -> *const Descriptor;
type RenderFn = extern "C" fn(*const u8, usize, *mut OutBuffer) -> i32;
type FreeFn = extern "C" fn(OutBuffer);

impl Plugin {
    /// Load the library at `path`; `pin` is an expected SHA-256 (hex).
    ///
    /// The file is hashed before anything is loaded, so a pinned plugin that
    /// changed is refused without running any of its code. Loading a library
    /// runs its initialisers: only load plugins you would run as programs.
    pub fn load(path: &Path, pin: Option<&str>) -> Result<Plugin, PluginError> {
        let bytes = std::fs::read(path)
            .map_err(|e| PluginError::Unreadable(format!("{}: {e}", path.display())))?;
        let sha256 = hex(&Sha256::digest(&bytes));
        let elf = check_elf(&bytes);
        drop(bytes);
        if let Some(pin) = pin {
            let expected = pin.trim().to_ascii_lowercase();
            if expected != sha256 {
                return Err(PluginError::ChecksumMismatch {
                    expected,
                    actual: sha256,
                });
            }
        }

        // A truncated ELF file makes the system loader map pages past the end
        // of the file, and touching them kills the process (SIGBUS): refuse
        // such files before the loader sees them.
        elf.map_err(PluginError::NotALibrary)?;

        // SAFETY: loading a shared library runs its initialisers, which is
        // arbitrary native code; Rust cannot check it. That is the documented
        // trust model of plugins: the story names the file explicitly (and may
        // pin its hash, checked above), and the user trusts it like a
        // program. The file could change between hashing and loading; a pin
        // protects against accidents, not against an attacker who can write
        // the plugin's folder.
        let library = unsafe { libloading::Library::new(path) }
            .map_err(|e| PluginError::NotALibrary(e.to_string()))?;

        // SAFETY: we ask for the symbol as a plain data pointer, which is
        // sound for any symbol: we only read its address, and check it for
        // null before treating it as a function.
        let entry_addr: *const c_void = match unsafe { library.get::<*const c_void>(ENTRY_SYMBOL) }
        {
            Ok(symbol) => *symbol,
            Err(_) => return Err(PluginError::NoEntry),
        };
        if entry_addr.is_null() {
            return Err(PluginError::NoEntry);
        }
        // SAFETY: the entry symbol's contract is `extern "C" fn() -> *const
        // Descriptor`; the address is non-null and points into the loaded
        // library, which `library` keeps loaded for as long as we use it.
        let entry = unsafe { std::mem::transmute::<*const c_void, EntryFn>(entry_addr) };
        let descriptor = entry();

        // SAFETY: `descriptor` is checked for null and alignment inside, and
        // only read while `library` is loaded.
        let read = unsafe { read_descriptor(descriptor) }?;
        let info = PluginInfo {
            name: read.name,
            version: read.version,
            abi_version: ABI_VERSION,
            forms: read.forms,
            path: path.to_path_buf(),
            sha256,
        };
        Ok(Plugin {
            info,
            render_fn: read.render,
            free_fn: read.free,
            _library: library,
        })
    }

    pub fn info(&self) -> &PluginInfo {
        &self.info
    }

    /// Ask the plugin to draw, then validate the answer.
    pub fn render(&self, request: &Request) -> Result<Validated, PluginError> {
        if !self.info.forms.contains(&request.form) {
            return Err(PluginError::Failed(format!(
                "plugin `{}` has no form `{}` (its forms: {})",
                self.info.name,
                clip(&request.form, MAX_NAME_BYTES),
                self.info.forms.join(", ")
            )));
        }
        check_area(request.area)?;
        let encoded = if request.abi_version == ABI_VERSION {
            serde_json::to_vec(request)
        } else {
            let mut fixed = request.clone();
            fixed.abi_version = ABI_VERSION;
            serde_json::to_vec(&fixed)
        }
        .map_err(|e| PluginError::Failed(format!("cannot encode the request: {e}")))?;

        let mut out = OutBuffer {
            ptr: std::ptr::null_mut(),
            len: 0,
            cap: 0,
        };
        let code = (self.render_fn)(encoded.as_ptr(), encoded.len(), &mut out);
        if code != 0 {
            // The plugin promises nothing about `out` in this case; leaking a
            // buffer it may have written is safer than freeing garbage.
            return Err(PluginError::Panicked(format!(
                "its render function gave up with code {code} (it could not even write an answer)"
            )));
        }
        let bytes = self.take(out)?;
        check_reply(&bytes, request.area)
    }

    /// Copy the plugin's answer out of its buffer, then hand the buffer back
    /// to the plugin's `free`.
    fn take(&self, out: OutBuffer) -> Result<Vec<u8>, PluginError> {
        if out.ptr.is_null() {
            return Err(PluginError::Malformed(
                "the plugin returned no answer (a null buffer)".into(),
            ));
        }
        if out.len > out.cap {
            // Not a buffer `free` could rebuild: leak it rather than risk it.
            return Err(PluginError::Malformed(format!(
                "the plugin returned a buffer of {} bytes with a capacity of {}",
                out.len, out.cap
            )));
        }
        let result = if out.len > MAX_REPLY_BYTES {
            Err(PluginError::Invalid(format!(
                "the answer is {} bytes; at most {MAX_REPLY_BYTES} are accepted",
                out.len
            )))
        } else {
            // SAFETY: the plugin handed over `len` initialised bytes at `ptr`
            // (non-null, u8 needs no alignment, `len` is at most 8 MiB so it
            // fits in isize); the buffer stays valid until we call `free`,
            // which happens only after this copy.
            Ok(unsafe { std::slice::from_raw_parts(out.ptr, out.len) }.to_vec())
        };
        (self.free_fn)(out);
        result
    }
}

/// What `read_descriptor` copies out of a descriptor.
struct ReadDescriptor {
    name: String,
    version: String,
    forms: Vec<String>,
    render: RenderFn,
    free: FreeFn,
}

/// Read a descriptor defensively: the ABI version first (nothing else is
/// read when it differs, since another version may lay the struct out
/// differently), then every pointer checked for null, every string bounded.
///
/// # Safety
/// `descriptor`, when non-null and aligned, must point to memory readable as
/// a `u32` and, when that `u32` is [`ABI_VERSION`], as a [`Descriptor`] whose
/// non-null string pointers point to readable bytes, each NUL-terminated or at
/// least [`MAX_NAME_BYTES`] + 1 long, and whose non-null `forms` points to
/// `form_count` readable pointers when `form_count` is at most [`MAX_FORMS`].
unsafe fn read_descriptor(descriptor: *const Descriptor) -> Result<ReadDescriptor, PluginError> {
    if descriptor.is_null() {
        return Err(PluginError::BadDescriptor(
            "the entry point returned a null descriptor".into(),
        ));
    }
    if !descriptor.is_aligned() {
        return Err(PluginError::BadDescriptor(
            "the descriptor is not aligned".into(),
        ));
    }
    // SAFETY (for every read below): see the function's contract; we read
    // fields through raw pointers without forming a reference to the whole
    // struct, and read the version alone first.
    let found = unsafe { std::ptr::addr_of!((*descriptor).abi_version).read() };
    if found != ABI_VERSION {
        return Err(PluginError::WrongAbi {
            found,
            expected: ABI_VERSION,
        });
    }
    let name = unsafe { read_name(std::ptr::addr_of!((*descriptor).name).read(), "name") }?;
    let version =
        unsafe { read_name(std::ptr::addr_of!((*descriptor).version).read(), "version") }?;
    let forms_ptr = unsafe { std::ptr::addr_of!((*descriptor).forms).read() };
    let count = unsafe { std::ptr::addr_of!((*descriptor).form_count).read() };
    if count == 0 {
        return Err(PluginError::BadDescriptor("it declares no forms".into()));
    }
    if count > MAX_FORMS {
        return Err(PluginError::BadDescriptor(format!(
            "it declares {count} forms; at most {MAX_FORMS} are allowed"
        )));
    }
    if forms_ptr.is_null() {
        return Err(PluginError::BadDescriptor(
            "its list of forms is a null pointer".into(),
        ));
    }
    if !forms_ptr.is_aligned() {
        return Err(PluginError::BadDescriptor(
            "its list of forms is not aligned".into(),
        ));
    }
    let mut forms = Vec::with_capacity(count);
    for i in 0..count {
        let p = unsafe { forms_ptr.add(i).read() };
        let form = unsafe { read_name(p, "form name") }?;
        if form.trim().is_empty() {
            return Err(PluginError::BadDescriptor(format!(
                "form {} has an empty name",
                i + 1
            )));
        }
        if forms.contains(&form) {
            return Err(PluginError::BadDescriptor(format!(
                "form `{form}` is declared twice"
            )));
        }
        forms.push(form);
    }
    // Read the function pointers as `Option`s: a null one (possible in a
    // descriptor not built by the SDK) becomes `None` instead of an invalid
    // function pointer. `Option<extern "C" fn>` has the layout of the
    // function pointer, with null as `None`.
    let render =
        unsafe { (std::ptr::addr_of!((*descriptor).render) as *const Option<RenderFn>).read() };
    let free = unsafe { (std::ptr::addr_of!((*descriptor).free) as *const Option<FreeFn>).read() };
    let (Some(render), Some(free)) = (render, free) else {
        return Err(PluginError::BadDescriptor(
            "its render or free function is a null pointer".into(),
        ));
    };
    Ok(ReadDescriptor {
        name,
        version,
        forms,
        render,
        free,
    })
}

/// Read a NUL-terminated UTF-8 string of at most [`MAX_NAME_BYTES`] bytes,
/// never reading past the byte after that limit.
///
/// # Safety
/// `p`, when non-null, must point to bytes readable up to its NUL or to
/// [`MAX_NAME_BYTES`] + 1 bytes, whichever comes first.
unsafe fn read_name(p: *const c_char, what: &str) -> Result<String, PluginError> {
    if p.is_null() {
        return Err(PluginError::BadDescriptor(format!(
            "its {what} is a null pointer"
        )));
    }
    let p = p.cast::<u8>();
    let mut bytes = Vec::new();
    loop {
        // SAFETY: see the contract; we stop at the NUL or one byte past the limit.
        let b = unsafe { p.add(bytes.len()).read() };
        if b == 0 {
            break;
        }
        if bytes.len() == MAX_NAME_BYTES {
            return Err(PluginError::BadDescriptor(format!(
                "its {what} is longer than {MAX_NAME_BYTES} bytes"
            )));
        }
        bytes.push(b);
    }
    let s = String::from_utf8(bytes)
        .map_err(|_| PluginError::BadDescriptor(format!("its {what} is not UTF-8")))?;
    if s.chars().any(char::is_control) {
        return Err(PluginError::BadDescriptor(format!(
            "its {what} contains control characters"
        )));
    }
    if what != "form name" && s.trim().is_empty() {
        return Err(PluginError::BadDescriptor(format!("its {what} is empty")));
    }
    Ok(s)
}

/// Check that an ELF file's header, program headers, the file ranges of its
/// segments and its section header table all lie within the file. Files that
/// are not ELF are left to the system loader (which refuses them cleanly).
fn check_elf(bytes: &[u8]) -> Result<(), String> {
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

fn hex(bytes: &[u8]) -> String {
    let mut s = String::with_capacity(bytes.len() * 2);
    for b in bytes {
        s.push_str(&format!("{b:02x}"));
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hex_is_lowercase_and_padded() {
        assert_eq!(hex(&[0, 1, 0xab, 0xff]), "0001abff");
    }

    #[test]
    fn missing_files_are_unreadable() {
        let r = Plugin::load(Path::new("/nonexistent/libnothing.so"), None);
        assert!(
            matches!(r, Err(PluginError::Unreadable(ref m)) if m.contains("libnothing.so")),
            "{r:?}"
        );
    }
}
