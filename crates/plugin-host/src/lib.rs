//! The host side: load a plugin explicitly by path, check it, call it, and
//! validate everything it returns.
//!
//! Nothing a plugin returns is trusted: the descriptor is read field by
//! field with bounds, the reply is size-limited, parsed strictly, and every
//! number and point is checked before a [`Validated`] drawing is handed to
//! the renderer. The host never panics on anything a plugin does that it can
//! detect; what it cannot detect (a crash, an endless loop) is the price of
//! native plugins, which is why they are loaded only explicitly.
//!
//! What is loaded is what was checked: [`Verified::read`] (in `file.rs`)
//! opens the file once, checks where the opened file really lies, hashes
//! the bytes it read and compares them with the story's pin;
//! [`Plugin::load_verified`] loads exactly those bytes from a private copy
//! nobody can change ([`Private`]), and [`Plugin::inspected`] keeps a
//! checked plugin without loading it, so none of its code runs.

use std::ffi::c_void;
use std::os::raw::c_char;
use std::path::{Path, PathBuf};

use std::collections::BTreeMap;

use crescendo_plugin::abi::{Descriptor, OutBuffer, ABI_VERSION, ENTRY_SYMBOL, OPTIONS_SYMBOL};
use crescendo_plugin::validate::{check_area, check_reply, clip};
pub use crescendo_plugin::validate::{
    validate, PluginError, Validated, MAX_DESCRIPTION_CHARS, MAX_FORMS, MAX_NAME_BYTES, MAX_POINTS,
    MAX_PRIMITIVES, MAX_REPLY_BYTES, MAX_TEXT_CHARS,
};
use crescendo_plugin::{FormOptions, OptionDecl, Request};

pub use file::{Private, Verified};

pub mod file;

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
    /// The options each form declares (a form missing here declares none:
    /// its options are not checked).
    pub options: BTreeMap<String, Vec<OptionDecl>>,
}

/// A loaded plugin. The library stays loaded as long as this value lives:
/// the function pointers below point into it.
pub struct Plugin {
    info: PluginInfo,
    /// Where the library file really lies (absolute, links resolved).
    real_path: PathBuf,
    /// Whether the story pinned its SHA-256 (the pin matched).
    pinned: bool,
    /// The render and free functions; `None` for a plugin only inspected.
    calls: Option<(RenderFn, FreeFn)>,
    /// Declared last so it is dropped (unloaded) after everything else.
    _loaded: Option<Loaded>,
}

/// A library loaded from a private copy of its verified bytes.
struct Loaded {
    library: Option<libloading::Library>,
    copy: Option<Private>,
}

impl Drop for Loaded {
    /// Unload the library, then drop its private copy, unless the library
    /// stayed mapped (a library that registered thread-local destructors
    /// cannot be unloaded): then the copy is kept open for the life of the
    /// process, so its path and file are never reused by another copy,
    /// which the system loader would take for the library already loaded.
    fn drop(&mut self) {
        drop(self.library.take());
        if let Some(copy) = self.copy.take() {
            if still_mapped(copy.path()) {
                std::mem::forget(copy);
            }
        }
    }
}

/// Is the library loaded from `path` still mapped in this process?
fn still_mapped(path: &Path) -> bool {
    // SAFETY: with RTLD_NOLOAD nothing is loaded and no initialiser runs;
    // the handle, if any, only raises the reference count of a library that
    // is already mapped, and dropping it lowers it again.
    unsafe {
        libloading::os::unix::Library::open(
            Some(path),
            libloading::os::unix::RTLD_LAZY | libc::RTLD_NOLOAD,
        )
    }
    .is_ok()
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
type OptionsFn = extern "C" fn(*mut OutBuffer) -> i32;

/// The most options one form may declare.
pub const MAX_OPTIONS: usize = 64;

/// Call the plugin's options symbol and check what it declares: forms it
/// has, bounded names and texts, known column kinds.
fn read_options(
    options_fn: OptionsFn,
    free_fn: FreeFn,
    forms: &[String],
) -> Result<BTreeMap<String, Vec<OptionDecl>>, PluginError> {
    let bad = |why: String| PluginError::BadDescriptor(format!("its declared options: {why}"));
    let mut out = OutBuffer {
        ptr: std::ptr::null_mut(),
        len: 0,
        cap: 0,
    };
    let code = options_fn(&mut out);
    if code != 0 {
        return Err(bad(format!(
            "the options function gave up with code {code}"
        )));
    }
    let bytes = take(out, free_fn)?;
    let declared: Vec<FormOptions> =
        serde_json::from_slice(&bytes).map_err(|e| bad(format!("not a list of forms ({e})")))?;
    let mut by_form = BTreeMap::new();
    for f in declared {
        if !forms.contains(&f.form) {
            return Err(bad(format!("no form `{}`", clip(&f.form, MAX_NAME_BYTES))));
        }
        if f.options.len() > MAX_OPTIONS {
            return Err(bad(format!(
                "form `{}` declares {} options; at most {MAX_OPTIONS}",
                f.form,
                f.options.len()
            )));
        }
        for o in &f.options {
            if o.name.is_empty()
                || o.name.len() > MAX_NAME_BYTES
                || !o
                    .name
                    .chars()
                    .all(|c| c.is_ascii_alphanumeric() || c == '_')
            {
                return Err(bad(format!(
                    "option name `{}` is not a plain word",
                    clip(&o.name, MAX_NAME_BYTES)
                )));
            }
            if o.about.chars().count() > MAX_TEXT_CHARS {
                return Err(bad(format!(
                    "option `{}` has an over-long description",
                    o.name
                )));
            }
            if let Some(k) = o.kinds.iter().find(|k| !COLUMN_KINDS.contains(&k.as_str())) {
                return Err(bad(format!(
                    "option `{}` names the column kind `{}` (kinds: {})",
                    o.name,
                    clip(k, MAX_NAME_BYTES),
                    COLUMN_KINDS.join(", ")
                )));
            }
        }
        by_form.insert(f.form, f.options);
    }
    Ok(by_form)
}

/// The column kinds a request's columns have.
pub const COLUMN_KINDS: &[&str] = &["text", "number", "date", "month", "year"];

/// The name an inspected, unloaded plugin reports.
pub const NOT_LOADED: &str = "(not loaded)";

impl Plugin {
    /// Load the library at `path`; `pin` is an expected SHA-256 (hex). See
    /// [`Plugin::load_verified`]; callers that confine plugins to some
    /// folders read the file with [`Verified::read`] first.
    pub fn load(path: &Path, pin: Option<&str>) -> Result<Plugin, PluginError> {
        Plugin::load_verified(Verified::read(path, pin, &|_| true)?)
    }

    /// A plugin that was read and checked (path, pin, ELF headers) but not
    /// loaded, so none of its code ran: what listing and planning commands
    /// use unless asked to load. Its name, version and forms are unknown
    /// (the name reads `(not loaded)`); it cannot draw.
    pub fn inspected(verified: Verified) -> Plugin {
        Plugin {
            info: PluginInfo {
                name: NOT_LOADED.into(),
                version: String::new(),
                abi_version: ABI_VERSION,
                forms: Vec::new(),
                path: verified.path,
                sha256: verified.sha256,
                options: BTreeMap::new(),
            },
            real_path: verified.real_path,
            pinned: verified.pin.is_some(),
            calls: None,
            _loaded: None,
        }
    }

    /// Whether the library was loaded (its code ran), or only inspected.
    pub fn is_loaded(&self) -> bool {
        self.calls.is_some()
    }

    /// Where the library file really lies (absolute, links resolved).
    pub fn real_path(&self) -> &Path {
        &self.real_path
    }

    /// Whether the story pinned the library's SHA-256 (and the pin matched).
    pub fn pinned(&self) -> bool {
        self.pinned
    }

    /// Load exactly the bytes that were read and hashed (pin checked) by
    /// [`Verified::read`], from a private copy nobody can change: what runs
    /// is what was hashed, and no library search path takes part.
    ///
    /// Loading a library runs its initialisers: only load plugins you would
    /// run as programs.
    pub fn load_verified(verified: Verified) -> Result<Plugin, PluginError> {
        let copy = Private::of(&verified).map_err(|e| {
            PluginError::NotALibrary(format!("cannot make a private copy to load: {e}"))
        })?;

        let shown = copy.path().display().to_string();
        let given = verified.path.display().to_string();
        let mut loaded = Loaded {
            library: None,
            copy: Some(copy),
        };
        // SAFETY: loading a shared library runs its initialisers, which is
        // arbitrary native code; Rust cannot check it. That is the documented
        // trust model of plugins: the story names the file explicitly (and may
        // pin its hash, checked on the very bytes loaded here), and the user
        // trusts it like a program. The path is absolute and names our
        // private, unchangeable copy. From here on, dropping `loaded`
        // unloads the library before its copy.
        let library = unsafe { libloading::Library::new(&shown) }
            .map_err(|e| PluginError::NotALibrary(e.to_string().replace(&shown, &given)))?;
        let library = loaded.library.insert(library);

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
        // SAFETY: as for the entry symbol: only the address is read, checked
        // for null, and used while `library` keeps the library loaded.
        let options_addr: *const c_void =
            match unsafe { library.get::<*const c_void>(OPTIONS_SYMBOL) } {
                Ok(symbol) => *symbol,
                Err(_) => std::ptr::null(),
            };
        let options = if options_addr.is_null() {
            BTreeMap::new()
        } else {
            // SAFETY: the options symbol's contract is `extern "C" fn(*mut
            // OutBuffer) -> i32`; the address is non-null and in the library.
            let options_fn =
                unsafe { std::mem::transmute::<*const c_void, OptionsFn>(options_addr) };
            read_options(options_fn, read.free, &read.forms)?
        };
        let info = PluginInfo {
            name: read.name,
            version: read.version,
            abi_version: ABI_VERSION,
            forms: read.forms,
            path: verified.path,
            sha256: verified.sha256,
            options,
        };
        Ok(Plugin {
            info,
            real_path: verified.real_path,
            pinned: verified.pin.is_some(),
            calls: Some((read.render, read.free)),
            _loaded: Some(loaded),
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
        let Some((render_fn, free_fn)) = self.calls else {
            return Err(PluginError::Failed(format!(
                "plugin `{}` was only inspected, not loaded",
                self.info.path.display()
            )));
        };
        let code = render_fn(encoded.as_ptr(), encoded.len(), &mut out);
        if code != 0 {
            // The plugin promises nothing about `out` in this case; leaking a
            // buffer it may have written is safer than freeing garbage.
            return Err(PluginError::Panicked(format!(
                "its render function gave up with code {code} (it could not even write an answer)"
            )));
        }
        let bytes = take(out, free_fn)?;
        check_reply(&bytes, request.area)
    }
}

/// Copy the plugin's answer out of its buffer, then hand the buffer back to
/// the plugin's `free`.
fn take(out: OutBuffer, free_fn: FreeFn) -> Result<Vec<u8>, PluginError> {
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
    free_fn(out);
    result
}

/// What `read_descriptor` copies out of a descriptor.
struct ReadDescriptor {
    name: String,
    version: String,
    forms: Vec<String>,
    render: RenderFn,
    free: FreeFn,
}

/// Refuses a pointer of the descriptor that is null or not aligned for
/// `T`, saying which with `null` or `unaligned`.
fn check_pointer<T>(p: *const T, null: &str, unaligned: &str) -> Result<(), PluginError> {
    let problem = if p.is_null() {
        null
    } else if !p.is_aligned() {
        unaligned
    } else {
        return Ok(());
    };
    Err(PluginError::BadDescriptor(problem.into()))
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
    check_pointer(
        descriptor,
        "the entry point returned a null descriptor",
        "the descriptor is not aligned",
    )?;
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
    check_pointer(
        forms_ptr,
        "its list of forms is a null pointer",
        "its list of forms is not aligned",
    )?;
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

#[cfg(test)]
mod tests {
    use super::*;

    /// A library that stays mapped after its plugin is dropped keeps its
    /// private copy open, so its `/proc/self/fd/N` name and its file are
    /// never reused for another library (which the system loader would take
    /// for this one); a library that was unloaded lets its copy go. libm
    /// stands in for a plugin (any shared library does; its initialisers
    /// are harmless); a second handle keeps it mapped.
    #[cfg(target_os = "linux")]
    #[test]
    fn a_library_that_stays_mapped_keeps_its_private_copy() {
        use std::os::unix::fs::MetadataExt as _;
        let maps = std::fs::read_to_string("/proc/self/maps").unwrap();
        let libc = maps
            .lines()
            .filter_map(|l| l.split_whitespace().nth(5))
            .find(|p| p.contains("/libc.so"))
            .expect("libc is mapped");
        let libm = Path::new(libc).with_file_name("libm.so.6");
        let v = Verified::read(&libm, None, &|_| true).unwrap();
        for keep in [false, true] {
            let copy = Private::of(&v).unwrap();
            let path = copy.path().to_path_buf();
            let inode = std::fs::metadata(&path).unwrap().ino();
            // SAFETY: libm's initialisers only set up its own state.
            let library = unsafe { libloading::Library::new(&path) }.unwrap();
            let extra = keep.then(|| unsafe { libloading::Library::new(&path) }.unwrap());
            drop(Loaded {
                library: Some(library),
                copy: Some(copy),
            });
            let same = std::fs::metadata(&path).is_ok_and(|m| m.ino() == inode);
            assert_eq!(same, keep, "keep = {keep}");
            drop(extra);
        }
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
