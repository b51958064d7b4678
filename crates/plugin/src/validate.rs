//! Validation of what a plugin returns: every reply is size-limited,
//! parsed strictly, and every number and point is checked before a
//! [`Validated`] drawing is handed to the renderer. This module has no
//! loader: loading and calling a library is `crescendo-plugin-host`.

use crate::message::{Area, DataDomain, Drawing, Primitive, Pt, Reply, Space};

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
/// The longest error message passed on to the user, in characters.
const MAX_ERROR_CHARS: usize = 2_000;
/// How far outside the plot area a point may lie (rounding), in pixels.
const SLACK: f64 = 0.5;

/// At most `max` characters of `s`, with an ellipsis when cut.
pub fn clip(s: &str, max: usize) -> String {
    match s.char_indices().nth(max) {
        Some((i, _)) => format!("{}…", &s[..i]),
        None => s.to_string(),
    }
}

pub fn check_area(area: Area) -> Result<(), PluginError> {
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
pub fn check_reply(bytes: &[u8], area: Area) -> Result<Validated, PluginError> {
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
        // the points of a polyline or an area, at least `least` of them
        let path = |points: &[Pt], least: usize, what: &str| {
            if points.len() < least {
                let n = points.len();
                return Err(at(format!("{what} needs at least {least} points, not {n}")));
            }
            mapper.map_all(points).map_err(at)
        };
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
            Primitive::Polyline { points, role } => Primitive::Polyline {
                points: path(points, 2, "a polyline")?,
                role: *role,
            },
            Primitive::Area { points, role } => Primitive::Area {
                points: path(points, 3, "an area")?,
                role: *role,
            },
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
}
