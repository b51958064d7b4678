//! Charts drawn by plugins: the renderer asks the plugin host for a drawing
//! of the plot area and styles every primitive by its role with the theme,
//! like built-in output.

use crescendo_frame::PluginChart;
use crescendo_plugin::validate::Validated;
use crescendo_plugin::{Anchor, Area, Primitive, Pt, Role};

use crate::canvas::{Align, Canvas, Label};
use crate::layout::Region;
use crate::theme::{Rgb, Theme};
use crate::RenderError;

/// Something that can ask a loaded plugin (by the story's name for it) to
/// draw a request, returning a validated drawing in plot pixels.
pub trait PluginDrawer {
    /// Draw `request` with the plugin the story named `plugin`.
    fn draw(&self, plugin: &str, request: &crescendo_plugin::Request) -> Result<Validated, String>;
}

/// Lays plugin charts out as empty plot areas without running any plugin
/// code, for readers of a frame's layout that need only the page around the
/// chart (the lint's `check`).
pub struct SkipPlugins;

impl PluginDrawer for SkipPlugins {
    fn draw(&self, _: &str, _: &crescendo_plugin::Request) -> Result<Validated, String> {
        Ok(Validated::default())
    }
}

/// The fill of an area, rectangle or circle: marks never take the faint
/// baseline grey, so an axis-role fill (a waterfall's start and total) is
/// the theme's second context grey, at 3:1 or more on the page.
fn fill(theme: &Theme, role: Role) -> Rgb {
    match role {
        Role::Focus => theme.accent,
        Role::Context => theme.context,
        Role::Annotation => theme.muted,
        Role::Axis => theme.context_light,
    }
}

fn ink(theme: &Theme, role: Role) -> (Rgb, u32) {
    match role {
        Role::Focus => (theme.accent, theme.focus_stroke),
        Role::Context => (theme.context, theme.context_stroke),
        Role::Annotation => (theme.muted, 1),
        Role::Axis => (theme.baseline, theme.baseline_stroke),
    }
}

fn text_ink(theme: &Theme, role: Role) -> Rgb {
    match role {
        Role::Focus => theme.accent,
        Role::Context => theme.context_text,
        Role::Annotation | Role::Axis => theme.muted,
    }
}

/// Draw a plugin chart into `region`. Returns the plugin's description of
/// the panel, if it gave one.
pub fn draw(
    canvas: &Canvas,
    theme: &Theme,
    chart: &PluginChart,
    region: Region,
    plugins: Option<&dyn PluginDrawer>,
) -> Result<Option<String>, RenderError> {
    let Some(host) = plugins else {
        return Err(RenderError::new(format!(
            "frame needs plugin `{}`, which is not loaded here",
            chart.plugin
        )));
    };
    let mut request = chart.request.clone();
    request.area = Area {
        width: region.right - region.left,
        height: region.bottom - region.top,
    };
    request.label_size = theme.label_size;
    let drawing = host.draw(&chart.plugin, &request).map_err(|e| {
        RenderError::new(format!(
            "plugin `{}` ({} {}): {e}",
            chart.plugin, chart.plugin_name, chart.plugin_version
        ))
    })?;
    let at = |p: &Pt| (region.left + p.x, region.top + p.y);
    // Areas and rectangles first, lines over them, text on top.
    let order = |p: &Primitive| match p {
        Primitive::Area { .. } | Primitive::Rect { .. } => 0,
        Primitive::Line { .. } | Primitive::Polyline { .. } | Primitive::Circle { .. } => 1,
        Primitive::Text { .. } => 2,
    };
    let mut prims: Vec<&Primitive> = drawing.primitives.iter().collect();
    prims.sort_by_key(|p| order(p));
    for p in prims {
        match p {
            Primitive::Line { from, to, role } => {
                let (c, w) = ink(theme, *role);
                canvas.line(at(from), at(to), c, w)?;
            }
            Primitive::Polyline { points, role } => {
                let (c, w) = ink(theme, *role);
                let pts: Vec<(f64, f64)> = points.iter().map(at).collect();
                canvas.polyline(&pts, c, w)?;
            }
            Primitive::Area { points, role } => {
                let c = fill(theme, *role);
                let pts: Vec<(f64, f64)> = points.iter().map(at).collect();
                canvas.polygon(&pts, c)?;
            }
            Primitive::Rect { from, to, role } => {
                let c = fill(theme, *role);
                canvas.rect(at(from), at(to), c)?;
            }
            Primitive::Circle {
                center,
                radius,
                role,
            } => {
                let c = fill(theme, *role);
                canvas.dot(at(center), radius.round().max(1.0) as u32, c)?;
            }
            Primitive::Text {
                at: p,
                text,
                anchor,
                bold,
                role,
            } => {
                let (x, y) = at(p);
                let align = match anchor {
                    Anchor::Start => Align::Start,
                    Anchor::Middle => Align::Middle,
                    Anchor::End => Align::End,
                };
                let bold = *bold || *role == Role::Focus;
                // the point is inside the plot (validated); the text must
                // fit on the canvas too, measured with the bundled font
                let b =
                    crescendo_look::display::text_box(text, x, y, theme.label_size, bold, align);
                let (w, h) = (
                    f64::from(crescendo_look::theme::WIDTH),
                    f64::from(crescendo_look::theme::HEIGHT),
                );
                if b.x0 < 0.0 || b.y0 < 0.0 || b.x1 > w || b.y1 > h {
                    let shown: String = text.chars().take(40).collect();
                    return Err(RenderError::new(format!(
                        "plugin `{}` ({} {}): its text \"{shown}\" runs past the {w}×{h} canvas \
                         (it spans x {:.0} to {:.0}, y {:.0} to {:.0} at {} px)",
                        chart.plugin,
                        chart.plugin_name,
                        chart.plugin_version,
                        b.x0,
                        b.x1,
                        b.y0,
                        b.y1,
                        theme.label_size
                    )));
                }
                canvas.text(&Label {
                    text,
                    x,
                    top: y,
                    size: theme.label_size,
                    bold,
                    color: text_ink(theme, *role),
                    align,
                })?;
            }
        }
    }
    Ok(drawing.description)
}
