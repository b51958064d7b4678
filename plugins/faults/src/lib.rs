//! TEST FIXTURE, not a real plugin: each form misbehaves on purpose so the
//! host's fault tests (`crates/plugin-host/tests/host.rs`) can check that every
//! misbehaviour becomes the right `PluginError` and never a crash.
//!
//! Most forms go through the SDK (so its panic catching and NaN check are
//! exercised); `garbage`, `badrole`, `nullnum`, `flood` and `code` bypass it
//! to send what an SDK-built plugin never would.

use crescendo_plugin::abi::{Descriptor, OutBuffer, ABI_VERSION};
use crescendo_plugin::sdk::{self, c_str, Form, StaticDescriptor, StaticNames};
use crescendo_plugin::{Drawing, Primitive, Pt, Request, Role, Space};

/// Draws one line corner to corner: proof the fixture itself works.
pub struct Fine;
/// Panics inside `render`.
pub struct Panics;
/// Returns a NaN coordinate.
pub struct NotANumber;
/// Returns a point outside the plot area.
pub struct Outside;
/// Returns more primitives than the host accepts.
pub struct Huge;
/// Returns an error reply.
pub struct Errs;
pub struct LongText;

fn line(from: (f64, f64), to: (f64, f64)) -> Primitive {
    Primitive::Line {
        from: Pt {
            x: from.0,
            y: from.1,
            space: Space::Plot,
        },
        to: Pt {
            x: to.0,
            y: to.1,
            space: Space::Plot,
        },
        role: Role::Context,
    }
}

impl Form for Fine {
    fn render(&self, r: &Request) -> Result<Drawing, String> {
        Ok(Drawing {
            primitives: vec![line((0.0, 0.0), (r.area.width, r.area.height))],
            data_domain: None,
            description: Some("One line.".into()),
        })
    }
}

impl Form for Panics {
    fn render(&self, r: &Request) -> Result<Drawing, String> {
        let empty: Vec<f64> = Vec::new();
        // Index past the end, as a buggy plugin would.
        let v = empty[r.columns.len() + 3];
        Ok(Drawing {
            primitives: vec![line((v, v), (v, v))],
            ..Drawing::default()
        })
    }
}

impl Form for NotANumber {
    fn render(&self, _: &Request) -> Result<Drawing, String> {
        Ok(Drawing {
            primitives: vec![line((0.0, f64::NAN), (1.0, 1.0))],
            ..Drawing::default()
        })
    }
}

impl Form for Outside {
    fn render(&self, r: &Request) -> Result<Drawing, String> {
        Ok(Drawing {
            primitives: vec![line((0.0, 0.0), (r.area.width + 40.0, 1.0))],
            ..Drawing::default()
        })
    }
}

impl Form for Huge {
    fn render(&self, _: &Request) -> Result<Drawing, String> {
        Ok(Drawing {
            primitives: vec![line((0.0, 0.0), (1.0, 1.0)); 50_001],
            ..Drawing::default()
        })
    }
}

/// A label anchored inside the plot, at its right edge, that runs far past
/// the canvas.
impl Form for LongText {
    fn render(&self, r: &Request) -> Result<Drawing, String> {
        Ok(Drawing {
            primitives: vec![Primitive::Text {
                at: Pt {
                    x: r.area.width - 1.0,
                    y: 10.0,
                    space: Space::Plot,
                },
                text: "a label far too long to fit anywhere on the frame at all".into(),
                anchor: crescendo_plugin::Anchor::Start,
                bold: false,
                role: Role::Annotation,
            }],
            ..Drawing::default()
        })
    }
}

impl Form for Errs {
    fn render(&self, _: &Request) -> Result<Drawing, String> {
        Err("the fixture refuses on purpose".into())
    }
}

const COUNT: usize = 12;

static FORMS: StaticNames<COUNT> = StaticNames([
    c_str("fine\0"),
    c_str("panic\0"),
    c_str("nan\0"),
    c_str("outside\0"),
    c_str("huge\0"),
    c_str("error\0"),
    c_str("garbage\0"),
    c_str("badrole\0"),
    c_str("nullnum\0"),
    c_str("flood\0"),
    c_str("code\0"),
    c_str("longtext\0"),
]);

static DESCRIPTOR: StaticDescriptor = StaticDescriptor(Descriptor {
    abi_version: ABI_VERSION,
    name: c_str("faults\0"),
    version: c_str("0.0.1\0"),
    forms: &FORMS as *const StaticNames<COUNT> as *const *const std::os::raw::c_char,
    form_count: COUNT,
    render,
    free,
});

/// The entry symbol, written by hand (not with `export_plugin!`) so `render`
/// can bypass the SDK for some forms.
#[unsafe(no_mangle)]
pub extern "C" fn crescendo_plugin_entry() -> *const Descriptor {
    &DESCRIPTOR.0
}

const ROLE_SPARKLE: &str = r#"{"drawing":{"primitives":[{"kind":"line","from":{"x":1,"y":1},"to":{"x":2,"y":2},"role":"sparkle"}]}}"#;
const NULL_NUMBER: &str = r#"{"drawing":{"primitives":[{"kind":"circle","center":{"x":null,"y":1},"radius":2,"role":"focus"}]}}"#;

extern "C" fn render(request: *const u8, request_len: usize, out: *mut OutBuffer) -> i32 {
    if request.is_null() || out.is_null() {
        return 1;
    }
    // SAFETY: the host passes `request_len` readable bytes.
    let bytes = unsafe { std::slice::from_raw_parts(request, request_len) };
    let form = serde_json::from_slice::<Request>(bytes)
        .map(|r| r.form)
        .unwrap_or_default();
    let raw: Vec<u8> = match form.as_str() {
        "garbage" => vec![0xff, 0xfe, 0x00, b'{', 0xc3],
        "badrole" => ROLE_SPARKLE.as_bytes().to_vec(),
        "nullnum" => NULL_NUMBER.as_bytes().to_vec(),
        "flood" => vec![b' '; 9 * 1024 * 1024],
        "code" => return 7,
        _ => {
            let forms: &[(&str, &dyn Form)] = &[
                ("fine", &Fine),
                ("panic", &Panics),
                ("nan", &NotANumber),
                ("outside", &Outside),
                ("huge", &Huge),
                ("error", &Errs),
                ("longtext", &LongText),
            ];
            // SAFETY: as above; `out` is non-null and writable per the ABI.
            return unsafe { sdk::render_entry(forms, request, request_len, out) };
        }
    };
    // SAFETY: `out` is non-null and writable per the ABI.
    unsafe { out.write(sdk::hand_over(raw)) };
    0
}

extern "C" fn free(buffer: OutBuffer) {
    // SAFETY: the host hands back, once, a buffer made by `hand_over`.
    unsafe { sdk::free_buffer(buffer) }
}
