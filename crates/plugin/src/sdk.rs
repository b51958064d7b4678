//! The SDK for plugin authors: a safe trait, one macro, and small helpers.
//!
//! A plugin crate is a `cdylib` (plus `rlib`, so its unit tests can call it
//! directly) that implements [`Form`] for each chart form it draws and
//! exports them with [`export_plugin!`](crate::export_plugin):
//!
//! ```
//! use crescendo_plugin::sdk::{answer, Form};
//! use crescendo_plugin::{Drawing, Reply, Request};
//!
//! pub struct Ribbon;
//!
//! impl Form for Ribbon {
//!     fn render(&self, request: &Request) -> Result<Drawing, String> {
//!         Err(format!("no ribbons yet ({} columns)", request.columns.len()))
//!     }
//! }
//!
//! crescendo_plugin::export_plugin! {
//!     name: "ribbons",
//!     version: "0.1.0",
//!     forms: { "ribbon" => Ribbon },
//! }
//!
//! // Unit tests of a plugin can call the same dispatch without FFI:
//! let request = br#"{"abi_version":1,"form":"ribbon","options":{},"columns":[],
//!     "roles":{},"texts":{"headline":"","x_title":null,"y_title":null},
//!     "area":{"width":100,"height":50}}"#;
//! assert_eq!(answer(&[("ribbon", &Ribbon)], request), Reply::Error("no ribbons yet (0 columns)".into()));
//! ```
//!
//! The macro writes the unsafe part once: the static descriptor, the entry
//! symbol, and the `render`/`free` functions, which parse the request,
//! dispatch by form name, turn a panic into an error reply, refuse
//! coordinates JSON cannot carry (NaN, infinities), and hand the reply over
//! as a buffer the host frees through the plugin.

use std::os::raw::c_char;
use std::panic::{catch_unwind, AssertUnwindSafe};

use crate::abi::{Descriptor, OutBuffer, ABI_VERSION};
use crate::message::{
    Cell, Column, Drawing, FormOptions, OptionDecl, Primitive, Pt, Reply, Request, Role,
};

/// One chart form a plugin draws.
pub trait Form: Sync {
    /// Draw the panel described by `request`, or say in a sentence for the
    /// user why not (e.g. a missing option or a column of the wrong kind).
    fn render(&self, request: &Request) -> Result<Drawing, String>;

    /// The options the form takes (each names a column of the view). A
    /// form that declares them has every `draw` statement checked by
    /// `crescendo check` (unknown, missing and wrong-kind options get a
    /// caret); one that declares none is given whatever the story writes.
    fn options(&self) -> Vec<OptionDecl> {
        Vec::new()
    }
}

/// The options of every form, as the options symbol sends them.
pub fn declared_options(forms: &[(&str, &dyn Form)]) -> Vec<FormOptions> {
    forms
        .iter()
        .map(|(name, form)| FormOptions {
            form: name.to_string(),
            options: form.options(),
        })
        .collect()
}

/// The body of the options symbol the macro exports: the declared options
/// as JSON in `out`; 0, or 1 when it could not write them.
///
/// # Safety
/// `out` must be null or valid for a write of one [`OutBuffer`].
pub unsafe fn options_entry(forms: &[(&str, &dyn Form)], out: *mut OutBuffer) -> i32 {
    if out.is_null() {
        return 1;
    }
    // SAFETY: `out` is non-null and writable per the contract.
    unsafe { write_json(out, || serde_json::to_vec(&declared_options(forms))) }
}

/// Encode a message with `encode` (a panic caught) into the non-null,
/// writable `out`: 0, or 1 when it could not be encoded.
///
/// # Safety
/// `out` must be non-null and valid for a write of one [`OutBuffer`].
unsafe fn write_json(
    out: *mut OutBuffer,
    encode: impl FnOnce() -> serde_json::Result<Vec<u8>>,
) -> i32 {
    let encoded = catch_unwind(AssertUnwindSafe(encode));
    match encoded {
        Ok(Ok(json)) => {
            // SAFETY: `out` is non-null and writable per the contract.
            unsafe { out.write(hand_over(json)) };
            0
        }
        Ok(Err(_)) => 1,
        Err(payload) => {
            std::mem::forget(payload);
            1
        }
    }
}

/// A descriptor that may live in a `static` (it only holds pointers to other
/// statics and to functions).
#[repr(transparent)]
pub struct StaticDescriptor(pub Descriptor);

// SAFETY: the descriptor is immutable and its pointers point to immutable
// statics (strings, the forms array) that live for the whole process.
unsafe impl Sync for StaticDescriptor {}

/// The forms array of a descriptor, as a `static`.
#[repr(transparent)]
pub struct StaticNames<const N: usize>(pub [*const c_char; N]);

// SAFETY: the pointers point to immutable NUL-terminated string literals.
unsafe impl<const N: usize> Sync for StaticNames<N> {}

/// A pointer to a NUL-terminated string literal, for descriptors.
pub const fn c_str(nul_terminated: &'static str) -> *const c_char {
    nul_terminated.as_ptr().cast()
}

/// Answer a request given as JSON bytes: parse it, dispatch to the form
/// named in it, catch a panic, and check the drawing can be sent. Safe and
/// free of FFI, so plugin tests can call it; the macro's `render` uses it.
pub fn answer(forms: &[(&str, &dyn Form)], request: &[u8]) -> Reply {
    let request: Request = match serde_json::from_slice(request) {
        Ok(r) => r,
        Err(e) => return Reply::Error(format!("the plugin cannot read the request: {e}")),
    };
    answer_request(forms, &request)
}

/// Like [`answer`], for a request already parsed.
pub fn answer_request(forms: &[(&str, &dyn Form)], request: &Request) -> Reply {
    if request.abi_version != ABI_VERSION {
        return Reply::Error(format!(
            "the request is for plugin ABI version {}, but this plugin speaks version {ABI_VERSION}",
            request.abi_version
        ));
    }
    let Some((name, form)) = forms.iter().find(|(n, _)| *n == request.form) else {
        let names: Vec<&str> = forms.iter().map(|(n, _)| *n).collect();
        return Reply::Error(format!(
            "this plugin has no form `{}` (its forms: {})",
            request.form,
            names.join(", ")
        ));
    };
    // A panic inside a form becomes an error reply; keep the plugin's own
    // panic report off the user's terminal while the form runs (the message
    // travels in the reply instead).
    let previous = std::panic::take_hook();
    std::panic::set_hook(Box::new(|_| {}));
    let outcome = catch_unwind(AssertUnwindSafe(|| form.render(request)));
    std::panic::set_hook(previous);
    match outcome {
        Ok(Ok(drawing)) => match first_non_finite(&drawing) {
            Some(what) => Reply::Error(format!(
                "form `{name}` drew {what}, which is not a finite number"
            )),
            None => Reply::Drawing(drawing),
        },
        Ok(Err(message)) => Reply::Error(message),
        Err(payload) => {
            let message = panic_message(payload.as_ref());
            // Dropping a payload can itself panic; forget it instead.
            std::mem::forget(payload);
            Reply::Error(format!("form `{name}` panicked: {message}"))
        }
    }
}

fn panic_message(payload: &(dyn std::any::Any + Send)) -> String {
    if let Some(s) = payload.downcast_ref::<&str>() {
        (*s).to_string()
    } else if let Some(s) = payload.downcast_ref::<String>() {
        s.clone()
    } else {
        "a panic without a message".to_string()
    }
}

/// JSON has no NaN or infinity (serde_json would write `null`), so say which
/// number is not finite while the plugin author can still read why.
fn first_non_finite(drawing: &Drawing) -> Option<String> {
    let bad_pt = |p: &Pt| !p.x.is_finite() || !p.y.is_finite();
    for (i, p) in drawing.primitives.iter().enumerate() {
        let bad = match p {
            Primitive::Line { from, to, .. } | Primitive::Rect { from, to, .. } => {
                bad_pt(from) || bad_pt(to)
            }
            Primitive::Polyline { points, .. } | Primitive::Area { points, .. } => {
                points.iter().any(bad_pt)
            }
            Primitive::Circle { center, radius, .. } => bad_pt(center) || !radius.is_finite(),
            Primitive::Text { at, .. } => bad_pt(at),
        };
        if bad {
            return Some(format!("a coordinate of primitive {}", i + 1));
        }
    }
    if let Some(d) = &drawing.data_domain {
        if d.x.iter().chain(d.y.iter()).any(|v| !v.is_finite()) {
            return Some("a bound of the data domain".to_string());
        }
    }
    None
}

/// Hand bytes to the host as an [`OutBuffer`]; [`free_buffer`] takes them back.
pub fn hand_over(bytes: Vec<u8>) -> OutBuffer {
    let mut bytes = std::mem::ManuallyDrop::new(bytes);
    OutBuffer {
        ptr: bytes.as_mut_ptr(),
        len: bytes.len(),
        cap: bytes.capacity(),
    }
}

/// Free a buffer made by [`hand_over`]. A null buffer, or one whose length
/// exceeds its capacity (not one of ours), is left alone.
///
/// # Safety
/// `buffer` must come from [`hand_over`] in this same library, and must not
/// be freed twice.
pub unsafe fn free_buffer(buffer: OutBuffer) {
    if buffer.ptr.is_null() || buffer.len > buffer.cap {
        return;
    }
    // SAFETY: per the contract, ptr/len/cap are those of a Vec<u8> forgotten
    // by `hand_over`, allocated by this library's allocator.
    drop(unsafe { Vec::from_raw_parts(buffer.ptr, buffer.len, buffer.cap) });
}

/// The body of the exported `render` function: answer the request and write
/// the reply into `out`. Returns 0, or 1 when not even an error reply could
/// be written (null pointers, a panic while encoding). Never unwinds.
///
/// # Safety
/// `request` must point to `request_len` readable bytes (or be null), and
/// `out` must point to a writable [`OutBuffer`] (or be null).
pub unsafe fn render_entry(
    forms: &[(&str, &dyn Form)],
    request: *const u8,
    request_len: usize,
    out: *mut OutBuffer,
) -> i32 {
    if out.is_null() || (request.is_null() && request_len != 0) {
        return 1;
    }
    let bytes: &[u8] = if request_len == 0 {
        &[]
    } else {
        // SAFETY: non-null, and the host promises `request_len` bytes.
        unsafe { std::slice::from_raw_parts(request, request_len) }
    };
    // SAFETY: `out` is non-null and writable per the contract.
    unsafe { write_json(out, || serde_json::to_vec(&answer(forms, bytes))) }
}

/// Export forms from a plugin crate: writes the descriptor, the entry symbol
/// and the `render`/`free` functions. Use it once, at the crate root:
///
/// ```text
/// crescendo_plugin::export_plugin! {
///     name: "slope",
///     version: "0.1.0",
///     forms: { "slope" => SlopeChart },
/// }
/// ```
///
/// Each form is a string literal (its name in stories) and an expression of
/// a type implementing [`Form`] (typically a unit struct), evaluated per call.
#[macro_export]
macro_rules! export_plugin {
    (
        name: $name:literal,
        version: $version:literal,
        forms: { $($form:literal => $value:expr),+ $(,)? } $(,)?
    ) => {
        const _: () = {
            const __COUNT: usize = [$($form),+].len();

            static __FORMS: $crate::sdk::StaticNames<__COUNT> =
                $crate::sdk::StaticNames([$($crate::sdk::c_str(concat!($form, "\0"))),+]);

            static __DESCRIPTOR: $crate::sdk::StaticDescriptor =
                $crate::sdk::StaticDescriptor($crate::abi::Descriptor {
                    abi_version: $crate::abi::ABI_VERSION,
                    name: $crate::sdk::c_str(concat!($name, "\0")),
                    version: $crate::sdk::c_str(concat!($version, "\0")),
                    forms: &__FORMS as *const $crate::sdk::StaticNames<__COUNT>
                        as *const *const ::std::os::raw::c_char,
                    form_count: __COUNT,
                    render: __render,
                    free: __free,
                });

            extern "C" fn __render(
                request: *const u8,
                request_len: usize,
                out: *mut $crate::abi::OutBuffer,
            ) -> i32 {
                let forms: &[(&str, &dyn $crate::sdk::Form)] = &[$(($form, &$value)),+];
                // SAFETY: the host passes `request_len` readable bytes and a
                // writable buffer, per the ABI; `render_entry` never unwinds.
                unsafe { $crate::sdk::render_entry(forms, request, request_len, out) }
            }

            /// The options each form declares (see `Form::options`).
            #[unsafe(no_mangle)]
            pub extern "C" fn crescendo_plugin_options(out: *mut $crate::abi::OutBuffer) -> i32 {
                let forms: &[(&str, &dyn $crate::sdk::Form)] = &[$(($form, &$value)),+];
                // SAFETY: the host passes a writable buffer, per the ABI;
                // `options_entry` never unwinds.
                unsafe { $crate::sdk::options_entry(forms, out) }
            }

            extern "C" fn __free(buffer: $crate::abi::OutBuffer) {
                // SAFETY: the host hands back, once, a buffer `__render` made.
                unsafe { $crate::sdk::free_buffer(buffer) }
            }

            /// The plugin's entry point: its descriptor.
            #[unsafe(no_mangle)]
            pub extern "C" fn crescendo_plugin_entry() -> *const $crate::abi::Descriptor {
                &__DESCRIPTOR.0
            }
        };
    };
}

// ---------------------------------------------------------------------------
// Helpers for plugin authors.

/// A linear map from a data extent onto a pixel range (either may be
/// reversed, e.g. y from `[min, max]` onto `[height, 0]`).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Linear {
    pub domain: [f64; 2],
    pub range: [f64; 2],
}

impl Linear {
    /// A scale; an empty or non-finite domain is widened around its value so
    /// the scale always maps somewhere finite (to the middle of the range).
    pub fn new(domain: [f64; 2], range: [f64; 2]) -> Linear {
        let [a, b] = domain;
        let domain = if !a.is_finite() || !b.is_finite() {
            [0.0, 1.0]
        } else if a == b {
            let pad = if a == 0.0 { 1.0 } else { a.abs() * 0.1 };
            [a - pad, b + pad]
        } else {
            domain
        };
        Linear { domain, range }
    }

    /// The pixel position of `v`.
    pub fn map(&self, v: f64) -> f64 {
        let [d0, d1] = self.domain;
        let [r0, r1] = self.range;
        r0 + (v - d0) / (d1 - d0) * (r1 - r0)
    }
}

/// The smallest and largest of some numbers (ignoring non-finite ones).
pub fn extent(values: impl IntoIterator<Item = f64>) -> Option<[f64; 2]> {
    values
        .into_iter()
        .filter(|v| v.is_finite())
        .fold(None, |acc, v| match acc {
            None => Some([v, v]),
            Some([lo, hi]) => Some([lo.min(v), hi.max(v)]),
        })
}

/// A number for a label: at most `decimals` decimals, no trailing zeros,
/// thousands separated by commas, a minus sign for negatives
/// (`1234.50` → `1,234.5`, `-0.0` → `0`), always in English. To write
/// like the story (its locale, the true minus, the host's rounding), use
/// the request's [`Writing`](crate::Writing): `request.writing.number(v, d)`.
pub fn format_number(v: f64, decimals: usize) -> String {
    if !v.is_finite() {
        return if v.is_nan() {
            "NaN".into()
        } else if v > 0.0 {
            "∞".into()
        } else {
            "-∞".into()
        };
    }
    let text = format!("{:.*}", decimals.min(12), v.abs());
    let (int, frac) = match text.split_once('.') {
        Some((i, f)) => (i, f.trim_end_matches('0')),
        None => (text.as_str(), ""),
    };
    let mut grouped = String::with_capacity(int.len() + int.len() / 3);
    for (i, c) in int.chars().enumerate() {
        if i > 0 && (int.len() - i) % 3 == 0 {
            grouped.push(',');
        }
        grouped.push(c);
    }
    let zero = int.chars().all(|c| c == '0') && frac.is_empty();
    let sign = if v < 0.0 && !zero { "-" } else { "" };
    if frac.is_empty() {
        format!("{sign}{grouped}")
    } else {
        format!("{sign}{grouped}.{frac}")
    }
}

/// Like [`format_number`], with a `+` on positive numbers (for changes).
pub fn format_signed(v: f64, decimals: usize) -> String {
    let s = format_number(v, decimals);
    if v > 0.0 && s != "0" {
        format!("+{s}")
    } else {
        s
    }
}

/// The fewest decimals (up to `max`) that show every value exactly to
/// within rounding noise, e.g. `[1.5, 2.25]` → 2, `[100.0, 3.0]` → 0.
pub fn decimals_needed(values: impl IntoIterator<Item = f64>, max: usize) -> usize {
    let mut needed = 0;
    for v in values.into_iter().filter(|v| v.is_finite()) {
        while needed < max {
            let p = 10f64.powi(needed as i32);
            let scaled = v * p;
            if (scaled - scaled.round()).abs() <= 1e-9 * scaled.abs().max(1.0) {
                break;
            }
            needed += 1;
        }
    }
    needed
}

/// Move label positions (e.g. the y of each label's centre) apart so that
/// neighbours are at least `gap` apart, keeping them within `[lo, hi]` when
/// there is room and moving each as little as this simple two-pass method
/// allows. Returns the new positions in the order given. Deterministic: ties
/// keep their input order.
pub fn spread(positions: &[f64], gap: f64, lo: f64, hi: f64) -> Vec<f64> {
    let mut order: Vec<usize> = (0..positions.len()).collect();
    order.sort_by(|&a, &b| positions[a].total_cmp(&positions[b]).then(a.cmp(&b)));
    let mut placed: Vec<f64> = order
        .iter()
        .map(|&i| positions[i].clamp(lo, hi.max(lo)))
        .collect();
    // Downwards: each at least `gap` below the previous.
    for k in 1..placed.len() {
        placed[k] = placed[k].max(placed[k - 1] + gap);
    }
    // Upwards from the end: back inside `hi`, keeping the gaps.
    if let Some(last) = placed.last_mut() {
        *last = last.min(hi);
    }
    for k in (0..placed.len().saturating_sub(1)).rev() {
        placed[k] = placed[k].min(placed[k + 1] - gap);
    }
    // When there is not room for all, the top ones go no higher than `lo`.
    for p in placed.iter_mut() {
        *p = p.max(lo);
    }
    let mut out = vec![0.0; positions.len()];
    for (k, &i) in order.iter().enumerate() {
        out[i] = placed[k];
    }
    out
}

/// A rough width in pixels of `text` set at `size` pixels, for layout when
/// the host's font is unknown (about 0.6 em per character).
pub fn text_width(text: &str, size: f64) -> f64 {
    text.chars().count() as f64 * size * 0.6
}

/// The column named by option `option`, or an error sentence naming the
/// missing option or column.
pub fn column<'a>(request: &'a Request, option: &str) -> Result<&'a Column, String> {
    let name = request.options.get(option).ok_or_else(|| {
        format!(
            "the `{}` form needs the option `{option}` (a column name)",
            request.form
        )
    })?;
    request.columns.iter().find(|c| c.name == *name).ok_or_else(|| {
        let names: Vec<&str> = request.columns.iter().map(|c| c.name.as_str()).collect();
        format!("option `{option}` names column `{name}`, which the view does not have (it has: {})", names.join(", "))
    })
}

/// The text of a cell: text as is, a number formatted, missing as `None`.
pub fn cell_text(cell: &Cell) -> Option<String> {
    match cell {
        Cell::Missing => None,
        Cell::Text(t) => Some(t.clone()),
        Cell::Number(n) => Some(format_number(*n, 6)),
    }
}

/// The number in a cell (`None` when missing, text, or not finite).
pub fn cell_number(cell: &Cell) -> Option<f64> {
    match cell {
        Cell::Number(n) if n.is_finite() => Some(*n),
        _ => None,
    }
}

/// How the frame shows a named item.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Shown {
    /// Drawn with this role (focus or context).
    As(Role),
    /// Not drawn, but keeps its place in the layout.
    Hidden,
}

/// How the frame shows item `name`: hidden, or its role (context when
/// unlisted).
pub fn shown(request: &Request, name: &str) -> Shown {
    if request.hidden.iter().any(|h| h == name) {
        Shown::Hidden
    } else {
        Shown::As(request.roles.get(name).copied().unwrap_or(Role::Context))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::message::{Area, Texts};
    use std::collections::BTreeMap;

    #[test]
    fn numbers_lose_trailing_zeros_and_gain_separators() {
        assert_eq!(format_number(1234.5, 2), "1,234.5");
        assert_eq!(format_number(1234.0, 2), "1,234");
        assert_eq!(format_number(-1234567.891, 1), "-1,234,567.9");
        assert_eq!(format_number(999.0, 0), "999");
        assert_eq!(format_number(1000.0, 0), "1,000");
        assert_eq!(format_number(-0.0001, 2), "0");
        assert_eq!(format_number(0.25, 3), "0.25");
        assert_eq!(format_signed(120.0, 0), "+120");
        assert_eq!(format_signed(-45.0, 0), "-45");
        assert_eq!(format_signed(0.0, 0), "0");
    }

    #[test]
    fn linear_maps_both_ways_and_survives_empty_domains() {
        let s = Linear::new([0.0, 10.0], [100.0, 0.0]);
        assert_eq!(s.map(0.0), 100.0);
        assert_eq!(s.map(10.0), 0.0);
        assert_eq!(s.map(2.5), 75.0);
        let flat = Linear::new([5.0, 5.0], [0.0, 100.0]);
        assert_eq!(flat.map(5.0), 50.0);
        let nan = Linear::new([f64::NAN, 1.0], [0.0, 100.0]);
        assert!(nan.map(0.5).is_finite());
        assert_eq!(extent([3.0, f64::NAN, -1.0, 2.0]), Some([-1.0, 3.0]));
        assert_eq!(extent([]), None);
    }

    #[test]
    fn decimals_and_spread() {
        assert_eq!(decimals_needed([1.5, 2.25], 3), 2);
        assert_eq!(decimals_needed([100.0, 3.0], 3), 0);
        assert_eq!(decimals_needed([0.1 + 0.2], 3), 1);
        assert_eq!(decimals_needed([1.0 / 3.0], 2), 2);
        // Apart already: unchanged.
        assert_eq!(spread(&[10.0, 50.0], 16.0, 0.0, 100.0), vec![10.0, 50.0]);
        // Too close: pushed apart, order kept.
        assert_eq!(
            spread(&[50.0, 40.0, 45.0], 10.0, 0.0, 100.0),
            vec![60.0, 40.0, 50.0]
        );
        // At the bottom edge: pushed back up.
        assert_eq!(spread(&[100.0, 99.0], 10.0, 0.0, 100.0), vec![100.0, 90.0]);
        // No room: none above `lo`.
        let s = spread(&[5.0, 5.0, 5.0], 10.0, 0.0, 10.0);
        assert!(s.iter().all(|v| (0.0..=10.0).contains(v)), "{s:?}");
    }

    struct Fine;
    impl Form for Fine {
        fn render(&self, _: &Request) -> Result<Drawing, String> {
            Ok(Drawing::default())
        }
    }
    struct Boom;
    impl Form for Boom {
        fn render(&self, r: &Request) -> Result<Drawing, String> {
            panic!("no column {}", r.columns.len());
        }
    }
    struct NotFinite;
    impl Form for NotFinite {
        fn render(&self, _: &Request) -> Result<Drawing, String> {
            Ok(Drawing {
                primitives: vec![Primitive::Circle {
                    center: Pt {
                        x: f64::NAN,
                        y: 1.0,
                        space: Default::default(),
                    },
                    radius: 2.0,
                    role: Role::Focus,
                }],
                ..Drawing::default()
            })
        }
    }

    fn request(form: &str) -> Request {
        Request {
            abi_version: ABI_VERSION,
            form: form.into(),
            options: BTreeMap::new(),
            columns: vec![],
            roles: BTreeMap::new(),
            hidden: vec![],
            texts: Texts::default(),
            area: Area {
                width: 100.0,
                height: 100.0,
            },
            label_size: 16.0,
            writing: Default::default(),
        }
    }

    #[test]
    fn answer_dispatches_catches_panics_and_refuses_nan() {
        let forms: &[(&str, &dyn Form)] = &[("fine", &Fine), ("boom", &Boom), ("nan", &NotFinite)];
        let bytes = |f: &str| serde_json::to_vec(&request(f)).unwrap();
        assert_eq!(
            answer(forms, &bytes("fine")),
            Reply::Drawing(Drawing::default())
        );
        assert_eq!(
            answer(forms, &bytes("boom")),
            Reply::Error("form `boom` panicked: no column 0".into())
        );
        let Reply::Error(e) = answer(forms, &bytes("nan")) else {
            panic!("NaN passed")
        };
        assert!(e.contains("not a finite number"), "{e}");
        let Reply::Error(e) = answer(forms, &bytes("other")) else {
            panic!("unknown form passed")
        };
        assert!(
            e.contains("no form `other`") && e.contains("fine, boom, nan"),
            "{e}"
        );
        let Reply::Error(e) = answer(forms, b"{not json") else {
            panic!("garbage passed")
        };
        assert!(e.contains("cannot read the request"), "{e}");
    }

    #[test]
    fn buffers_round_trip_through_render_entry() {
        let forms: &[(&str, &dyn Form)] = &[("fine", &Fine)];
        let req = serde_json::to_vec(&request("fine")).unwrap();
        let mut out = OutBuffer {
            ptr: std::ptr::null_mut(),
            len: 0,
            cap: 0,
        };
        // SAFETY: valid request bytes and a writable buffer.
        let code = unsafe { render_entry(forms, req.as_ptr(), req.len(), &mut out) };
        assert_eq!(code, 0);
        // SAFETY: `out` was just written by `hand_over`.
        let reply: Reply =
            serde_json::from_slice(unsafe { std::slice::from_raw_parts(out.ptr, out.len) })
                .unwrap();
        assert_eq!(reply, Reply::Drawing(Drawing::default()));
        // SAFETY: freed once.
        unsafe { free_buffer(out) };
        // SAFETY: a null `out` is refused without being written.
        assert_eq!(
            unsafe { render_entry(forms, req.as_ptr(), req.len(), std::ptr::null_mut()) },
            1
        );
    }

    #[test]
    fn shown_reads_hidden_and_roles() {
        let mut r = request("fine");
        r.roles.insert("a".into(), Role::Focus);
        r.hidden.push("b".into());
        assert_eq!(shown(&r, "a"), Shown::As(Role::Focus));
        assert_eq!(shown(&r, "b"), Shown::Hidden);
        assert_eq!(shown(&r, "c"), Shown::As(Role::Context));
    }
}
