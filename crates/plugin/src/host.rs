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

use crate::abi::{Descriptor, OutBuffer, ABI_VERSION, ENTRY_SYMBOL};
pub use crate::file::{Private, Verified};
use crate::message::{Area, DataDomain, Drawing, Primitive, Pt, Reply, Request, Space};

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

/// Why a plugin could not be loaded or used. `Display` gives a sentence for
/// the user.
#[derive(Clone, Debug, PartialEq)]
pub enum PluginError {
    /// The file is missing or unreadable.
    Unreadable(String),
    /// The opened file lies outside the folders plugins may be loaded from
    /// (its real path).
    Outside(String),
    /// The file's SHA-256 differs from the pin in the story.
    ChecksumMismatch { expected: String, actual: String },
    /// The file is not a loadable shared library.
    NotALibrary(String),
    /// The library exports no entry symbol.
    NoEntry,
    /// The descriptor reports another ABI version.
    WrongAbi { found: u32, expected: u32 },
    /// The descriptor is unusable (null pointers, invalid UTF-8, no forms).
    BadDescriptor(String),
    /// The plugin answered with an error message.
    Failed(String),
    /// The plugin panicked or crashed while rendering (caught at the boundary).
    Panicked(String),
    /// The reply is not a valid message.
    Malformed(String),
    /// The reply is a valid message with invalid contents (NaN, outside the
    /// plot area, too large).
    Invalid(String),
}

impl std::fmt::Display for PluginError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            PluginError::Unreadable(e) => write!(f, "cannot read the plugin file: {e}"),
            PluginError::Outside(p) => write!(
                f,
                "the opened file is `{p}`, outside the folders the story may load plugins from"
            ),
            PluginError::ChecksumMismatch { expected, actual } => {
                write!(f, "the plugin file's sha256 is {actual}, but the story pins {expected}")
            }
            PluginError::NotALibrary(e) => write!(f, "not a shared library that can be loaded: {e}"),
            PluginError::NoEntry => write!(f, "the library exports no crescendo plugin entry point"),
            PluginError::WrongAbi { found, expected } => write!(
                f,
                "the plugin was built for plugin ABI version {found}, but this crescendo speaks version {expected}"
            ),
            PluginError::BadDescriptor(e) => write!(f, "the plugin describes itself wrongly: {e}"),
            PluginError::Failed(e) => write!(f, "the plugin reported an error: {e}"),
            PluginError::Panicked(e) => write!(f, "the plugin failed while drawing: {e}"),
            PluginError::Malformed(e) => write!(f, "the plugin's answer is not a valid message: {e}"),
            PluginError::Invalid(e) => write!(f, "the plugin's drawing is invalid: {e}"),
        }
    }
}

/// A drawing that passed validation: every point in plot pixels.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Validated {
    pub primitives: Vec<Primitive>,
    pub description: Option<String>,
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

/// The most forms one plugin may declare.
pub const MAX_FORMS: usize = 64;
/// The longest name, version or form name, in bytes.
pub const MAX_NAME_BYTES: usize = 200;
/// The largest reply, in bytes.
pub const MAX_REPLY_BYTES: usize = 8 * 1024 * 1024;
/// The most primitives in one drawing.
pub const MAX_PRIMITIVES: usize = 50_000;
/// The most points, over all primitives of one drawing.
pub const MAX_POINTS: usize = 200_000;
/// The longest text primitive, in characters.
pub const MAX_TEXT_CHARS: usize = 300;
/// The longest description, in characters.
pub const MAX_DESCRIPTION_CHARS: usize = 2_000;
/// The name an inspected, unloaded plugin reports.
pub const NOT_LOADED: &str = "(not loaded)";
/// The longest error message passed on to the user, in characters.
const MAX_ERROR_CHARS: usize = 2_000;
/// How far outside the plot area a point may lie (rounding), in pixels.
const SLACK: f64 = 0.5;

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
        let info = PluginInfo {
            name: read.name,
            version: read.version,
            abi_version: ABI_VERSION,
            forms: read.forms,
            path: verified.path,
            sha256: verified.sha256,
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

/// At most `max` characters of `s`, with an ellipsis when cut.
fn clip(s: &str, max: usize) -> String {
    match s.char_indices().nth(max) {
        Some((i, _)) => format!("{}…", &s[..i]),
        None => s.to_string(),
    }
}

fn check_area(area: Area) -> Result<(), PluginError> {
    let ok = |v: f64| v.is_finite() && v > 0.0;
    if ok(area.width) && ok(area.height) {
        Ok(())
    } else {
        Err(PluginError::Invalid(format!(
            "the plot area {} × {} is not a positive size",
            area.width, area.height
        )))
    }
}

/// Parse and validate the bytes of a reply for a plot area.
pub(crate) fn check_reply(bytes: &[u8], area: Area) -> Result<Validated, PluginError> {
    let text = std::str::from_utf8(bytes)
        .map_err(|e| PluginError::Malformed(format!("the answer is not UTF-8 text: {e}")))?;
    let reply: Reply =
        serde_json::from_str(text).map_err(|e| PluginError::Malformed(e.to_string()))?;
    match reply {
        Reply::Error(message) => Err(PluginError::Failed(clip(message.trim(), MAX_ERROR_CHARS))),
        Reply::Drawing(drawing) => validate(drawing, area),
    }
}

/// Check a drawing against the limits and the plot area, and map every point
/// into plot pixels.
pub fn validate(drawing: Drawing, area: Area) -> Result<Validated, PluginError> {
    let invalid = |m: String| Err(PluginError::Invalid(m));
    check_area(area)?;
    if drawing.primitives.len() > MAX_PRIMITIVES {
        return invalid(format!(
            "it has {} primitives; at most {MAX_PRIMITIVES} are allowed",
            drawing.primitives.len()
        ));
    }
    let points: usize = drawing.primitives.iter().map(point_count).sum();
    if points > MAX_POINTS {
        return invalid(format!(
            "it has {points} points; at most {MAX_POINTS} are allowed"
        ));
    }
    let uses_data = drawing
        .primitives
        .iter()
        .any(|p| points_of(p).iter().any(|pt| pt.space == Space::Data));
    let mapper = Mapper::new(area, drawing.data_domain, uses_data)?;

    let mut primitives = Vec::with_capacity(drawing.primitives.len());
    for (i, p) in drawing.primitives.into_iter().enumerate() {
        let at =
            |m: String| PluginError::Invalid(format!("primitive {} ({}): {m}", i + 1, kind_of(&p)));
        let mapped = match &p {
            Primitive::Line { from, to, role } => Primitive::Line {
                from: mapper.map(*from).map_err(at)?,
                to: mapper.map(*to).map_err(at)?,
                role: *role,
            },
            Primitive::Rect { from, to, role } => Primitive::Rect {
                from: mapper.map(*from).map_err(at)?,
                to: mapper.map(*to).map_err(at)?,
                role: *role,
            },
            Primitive::Polyline { points, role } => {
                if points.len() < 2 {
                    return Err(at(format!(
                        "a polyline needs at least 2 points, not {}",
                        points.len()
                    )));
                }
                Primitive::Polyline {
                    points: mapper.map_all(points).map_err(at)?,
                    role: *role,
                }
            }
            Primitive::Area { points, role } => {
                if points.len() < 3 {
                    return Err(at(format!(
                        "an area needs at least 3 points, not {}",
                        points.len()
                    )));
                }
                Primitive::Area {
                    points: mapper.map_all(points).map_err(at)?,
                    role: *role,
                }
            }
            Primitive::Circle {
                center,
                radius,
                role,
            } => {
                let largest = area.width.max(area.height);
                if !radius.is_finite() || *radius <= 0.0 || *radius > largest {
                    return Err(at(format!(
                        "the radius {radius} is not between 0 and {largest}"
                    )));
                }
                Primitive::Circle {
                    center: mapper.map(*center).map_err(at)?,
                    radius: *radius,
                    role: *role,
                }
            }
            Primitive::Text {
                at: pos,
                text,
                anchor,
                bold,
                role,
            } => {
                if text.trim().is_empty() {
                    return Err(at("the text is empty".into()));
                }
                let chars = text.chars().count();
                if chars > MAX_TEXT_CHARS {
                    return Err(at(format!(
                        "the text has {chars} characters; at most {MAX_TEXT_CHARS} are allowed"
                    )));
                }
                if text.chars().any(char::is_control) {
                    return Err(at("the text contains control characters".into()));
                }
                Primitive::Text {
                    at: mapper.map(*pos).map_err(at)?,
                    text: text.clone(),
                    anchor: *anchor,
                    bold: *bold,
                    role: *role,
                }
            }
        };
        primitives.push(mapped);
    }

    let description = match drawing.description {
        Some(d) if d.trim().is_empty() => None,
        Some(d) => {
            let chars = d.chars().count();
            if chars > MAX_DESCRIPTION_CHARS {
                return invalid(format!(
                    "the description has {chars} characters; at most {MAX_DESCRIPTION_CHARS} are allowed"
                ));
            }
            if d.chars().any(|c| c.is_control() && c != '\n') {
                return invalid("the description contains control characters".into());
            }
            Some(d)
        }
        None => None,
    };
    Ok(Validated {
        primitives,
        description,
    })
}

fn kind_of(p: &Primitive) -> &'static str {
    match p {
        Primitive::Line { .. } => "line",
        Primitive::Polyline { .. } => "polyline",
        Primitive::Area { .. } => "area",
        Primitive::Rect { .. } => "rect",
        Primitive::Circle { .. } => "circle",
        Primitive::Text { .. } => "text",
    }
}

fn point_count(p: &Primitive) -> usize {
    match p {
        Primitive::Line { .. } | Primitive::Rect { .. } => 2,
        Primitive::Polyline { points, .. } | Primitive::Area { points, .. } => points.len(),
        Primitive::Circle { .. } | Primitive::Text { .. } => 1,
    }
}

fn points_of(p: &Primitive) -> Vec<Pt> {
    match p {
        Primitive::Line { from, to, .. } | Primitive::Rect { from, to, .. } => vec![*from, *to],
        Primitive::Polyline { points, .. } | Primitive::Area { points, .. } => points.clone(),
        Primitive::Circle { center, .. } => vec![*center],
        Primitive::Text { at, .. } => vec![*at],
    }
}

/// Maps points into plot pixels and checks them.
struct Mapper {
    area: Area,
    /// Origin and span of x and y, when data points are allowed.
    data: Option<([f64; 2], [f64; 2])>,
}

impl Mapper {
    fn new(area: Area, domain: Option<DataDomain>, needed: bool) -> Result<Mapper, PluginError> {
        let Some(domain) = domain else {
            if needed {
                return Err(PluginError::Invalid(
                    "it has points in data coordinates but no data_domain".into(),
                ));
            }
            return Ok(Mapper { area, data: None });
        };
        let axis = |name: &str, [a, b]: [f64; 2]| {
            let span = b - a;
            if !(a.is_finite() && b.is_finite() && span.is_finite()) || span == 0.0 {
                Err(PluginError::Invalid(format!(
                    "the data_domain's {name} extent [{a}, {b}] is not a finite, non-empty span"
                )))
            } else {
                Ok([a, span])
            }
        };
        let x = axis("x", domain.x)?;
        let y = axis("y", domain.y)?;
        Ok(Mapper {
            area,
            data: Some((x, y)),
        })
    }

    fn map(&self, p: Pt) -> Result<Pt, String> {
        if !p.x.is_finite() || !p.y.is_finite() {
            return Err(format!("the point ({}, {}) is not finite", p.x, p.y));
        }
        let (x, y) = match (p.space, self.data) {
            (Space::Plot, _) => (p.x, p.y),
            (Space::Data, Some(([x0, xs], [y0, ys]))) => (
                (p.x - x0) / xs * self.area.width,
                self.area.height - (p.y - y0) / ys * self.area.height,
            ),
            (Space::Data, None) => {
                return Err("a point in data coordinates without a data_domain".into())
            }
        };
        let (w, h) = (self.area.width, self.area.height);
        let inside = |v: f64, max: f64| v.is_finite() && v >= -SLACK && v <= max + SLACK;
        if !inside(x, w) || !inside(y, h) {
            let note = if p.space == Space::Data {
                format!(" (data ({}, {}))", p.x, p.y)
            } else {
                String::new()
            };
            return Err(format!(
                "the point ({x}, {y}){note} lies outside the plot area {w} × {h}"
            ));
        }
        Ok(Pt {
            x: x.clamp(0.0, w),
            y: y.clamp(0.0, h),
            space: Space::Plot,
        })
    }

    fn map_all(&self, points: &[Pt]) -> Result<Vec<Pt>, String> {
        points.iter().map(|p| self.map(*p)).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::message::{Anchor, Role};

    const AREA: Area = Area {
        width: 200.0,
        height: 100.0,
    };

    fn plot(x: f64, y: f64) -> Pt {
        Pt {
            x,
            y,
            space: Space::Plot,
        }
    }

    fn data(x: f64, y: f64) -> Pt {
        Pt {
            x,
            y,
            space: Space::Data,
        }
    }

    fn line(from: Pt, to: Pt) -> Primitive {
        Primitive::Line {
            from,
            to,
            role: Role::Context,
        }
    }

    fn text(s: &str) -> Primitive {
        Primitive::Text {
            at: plot(1.0, 1.0),
            text: s.into(),
            anchor: Anchor::Start,
            bold: false,
            role: Role::Axis,
        }
    }

    fn drawing(primitives: Vec<Primitive>) -> Drawing {
        Drawing {
            primitives,
            data_domain: None,
            description: None,
        }
    }

    fn invalid(r: Result<Validated, PluginError>) -> String {
        match r {
            Err(PluginError::Invalid(m)) => m,
            other => panic!("expected Invalid, got {other:?}"),
        }
    }

    #[test]
    fn data_points_map_onto_plot_pixels() {
        let mut d = drawing(vec![
            line(data(0.0, 0.0), data(10.0, 50.0)),
            line(data(5.0, 25.0), plot(3.0, 4.0)),
        ]);
        d.data_domain = Some(DataDomain {
            x: [0.0, 10.0],
            y: [0.0, 50.0],
        });
        let v = validate(d, AREA).unwrap();
        assert_eq!(v.primitives[0], line(plot(0.0, 100.0), plot(200.0, 0.0)));
        assert_eq!(v.primitives[1], line(plot(100.0, 50.0), plot(3.0, 4.0)));
        // A reversed domain maps the other way round.
        let mut d = drawing(vec![line(data(10.0, 0.0), data(0.0, 50.0))]);
        d.data_domain = Some(DataDomain {
            x: [10.0, 0.0],
            y: [50.0, 0.0],
        });
        assert_eq!(
            validate(d, AREA).unwrap().primitives[0],
            line(plot(0.0, 0.0), plot(200.0, 100.0))
        );
    }

    #[test]
    fn data_points_need_a_usable_domain() {
        let m = invalid(validate(
            drawing(vec![line(data(0.0, 0.0), data(1.0, 1.0))]),
            AREA,
        ));
        assert!(m.contains("no data_domain"), "{m}");
        for (x, y) in [
            ([1.0, 1.0], [0.0, 1.0]),
            ([0.0, f64::INFINITY], [0.0, 1.0]),
            ([0.0, 1.0], [f64::NAN, 1.0]),
        ] {
            let mut d = drawing(vec![line(data(0.0, 0.0), data(1.0, 1.0))]);
            d.data_domain = Some(DataDomain { x, y });
            let m = invalid(validate(d, AREA));
            assert!(m.contains("not a finite, non-empty span"), "{m}");
        }
    }

    #[test]
    fn points_must_be_finite_and_inside_with_half_a_pixel_of_slack() {
        let m = invalid(validate(
            drawing(vec![line(plot(f64::NAN, 0.0), plot(1.0, 1.0))]),
            AREA,
        ));
        assert!(
            m.contains("primitive 1 (line)") && m.contains("not finite"),
            "{m}"
        );
        let m = invalid(validate(
            drawing(vec![line(plot(0.0, 0.0), plot(201.0, 1.0))]),
            AREA,
        ));
        assert!(m.contains("outside the plot area"), "{m}");
        let m = invalid(validate(
            drawing(vec![text("a"), line(plot(0.0, -0.6), plot(1.0, 1.0))]),
            AREA,
        ));
        assert!(m.contains("primitive 2"), "{m}");
        // Within the slack: accepted and clamped into the area.
        let v = validate(
            drawing(vec![line(plot(-0.4, 100.4), plot(200.5, 0.0))]),
            AREA,
        )
        .unwrap();
        assert_eq!(v.primitives[0], line(plot(0.0, 100.0), plot(200.0, 0.0)));
        // Data points mapped outside are refused too.
        let mut d = drawing(vec![line(data(0.0, 0.0), data(11.0, 1.0))]);
        d.data_domain = Some(DataDomain {
            x: [0.0, 10.0],
            y: [0.0, 1.0],
        });
        assert!(invalid(validate(d, AREA)).contains("data (11, 1)"));
    }

    #[test]
    fn circles_texts_and_descriptions_are_bounded() {
        let circle = |radius| Primitive::Circle {
            center: plot(5.0, 5.0),
            radius,
            role: Role::Focus,
        };
        assert!(validate(drawing(vec![circle(3.0)]), AREA).is_ok());
        assert!(validate(drawing(vec![circle(200.0)]), AREA).is_ok());
        for r in [0.0, -1.0, 200.1, f64::INFINITY, f64::NAN] {
            assert!(
                invalid(validate(drawing(vec![circle(r)]), AREA)).contains("radius"),
                "{r}"
            );
        }
        assert!(validate(drawing(vec![text(&"x".repeat(300))]), AREA).is_ok());
        assert!(
            invalid(validate(drawing(vec![text(&"é".repeat(301))]), AREA))
                .contains("301 characters")
        );
        assert!(invalid(validate(drawing(vec![text("  ")]), AREA)).contains("empty"));
        assert!(invalid(validate(drawing(vec![text("a\u{0}b")]), AREA)).contains("control"));
        let mut d = drawing(vec![]);
        d.description = Some("d".repeat(2_000));
        assert!(validate(d.clone(), AREA).is_ok());
        d.description = Some("d".repeat(2_001));
        assert!(invalid(validate(d, AREA)).contains("description"));
    }

    #[test]
    fn counts_are_limited() {
        let many = vec![line(plot(0.0, 0.0), plot(1.0, 1.0)); MAX_PRIMITIVES];
        assert!(validate(drawing(many.clone()), AREA).is_ok());
        let mut too_many = many;
        too_many.push(text("one more"));
        assert!(invalid(validate(drawing(too_many), AREA)).contains("50001 primitives"));
        let poly = |n| Primitive::Polyline {
            points: vec![plot(1.0, 1.0); n],
            role: Role::Context,
        };
        assert!(validate(drawing(vec![poly(100_000), poly(100_000)]), AREA).is_ok());
        assert!(
            invalid(validate(drawing(vec![poly(100_000), poly(100_001)]), AREA))
                .contains("200001 points")
        );
        assert!(invalid(validate(drawing(vec![poly(1)]), AREA)).contains("at least 2"));
        let area = Primitive::Area {
            points: vec![plot(1.0, 1.0); 2],
            role: Role::Context,
        };
        assert!(invalid(validate(drawing(vec![area]), AREA)).contains("at least 3"));
    }

    #[test]
    fn replies_are_parsed_strictly() {
        let ok = br#"{"drawing":{"primitives":[{"kind":"line","from":{"x":1,"y":2},"to":{"x":3,"y":4,"space":"plot"},"role":"focus"}],"data_domain":null,"description":"Two points."}}"#;
        let v = check_reply(ok, AREA).unwrap();
        assert_eq!(
            v.primitives,
            vec![Primitive::Line {
                from: plot(1.0, 2.0),
                to: plot(3.0, 4.0),
                role: Role::Focus
            }]
        );
        assert_eq!(v.description.as_deref(), Some("Two points."));

        let malformed = |bytes: &[u8]| match check_reply(bytes, AREA) {
            Err(PluginError::Malformed(m)) => m,
            other => panic!("expected Malformed, got {other:?}"),
        };
        assert!(malformed(&[0xff, 0xfe, b'{']).contains("not UTF-8"));
        assert!(malformed(b"").contains("EOF"));
        assert!(malformed(br#"{"drawing":{"primitives":[{"kind":"line","from":{"x":1,"y":2},"to":{"x":3,"y":4},"role":"sparkle"}]}}"#).contains("sparkle"));
        assert!(malformed(
            br#"{"drawing":{"primitives":[{"kind":"star","at":{"x":1,"y":2},"role":"focus"}]}}"#
        )
        .contains("star"));
        assert!(malformed(br#"{"drawing":{"primitives":[{"kind":"circle","center":{"x":1,"y":2},"radius":1,"role":"focus","fill":"red"}]}}"#).contains("fill"));
        assert!(malformed(br#"{"drawing":{"primitives":[{"kind":"circle","center":{"x":null,"y":2},"radius":1,"role":"focus"}]}}"#).contains("null"));
        assert!(malformed(br#"{"drawing":{"primitives":[{"kind":"circle","center":{"x":1e999,"y":2},"radius":1,"role":"focus"}]}}"#).contains("out of range"));
        assert!(malformed(br#"{"shrug":1}"#).contains("shrug"));

        assert_eq!(
            check_reply(br#"{"error":"no column `year`"}"#, AREA),
            Err(PluginError::Failed("no column `year`".into()))
        );
        let long = format!(r#"{{"error":"{}"}}"#, "e".repeat(5_000));
        let Err(PluginError::Failed(m)) = check_reply(long.as_bytes(), AREA) else {
            panic!()
        };
        assert_eq!(m.chars().count(), MAX_ERROR_CHARS + 1);
    }

    #[test]
    fn clip_cuts_with_an_ellipsis() {
        assert_eq!(clip("abcdef", 3), "abc…");
        assert_eq!(clip("abc", 3), "abc");
    }

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
