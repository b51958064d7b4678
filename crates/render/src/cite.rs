//! `cite VALUE` drawn: the evidence of a value on its chart, after the
//! form has drawn everything else. The marks are found where the form
//! recorded them ([`Canvas::anchor`]); what the figure must avoid is read
//! from what was drawn (every text, every data mark and data line); the
//! figure goes through the one label placer ([`crate::place`]), inside the
//! plot, with a leader when it had to move away.
//!
//! - two marks compared (a ratio, a difference): a bracket over two bars
//!   (beside them when they run sideways), a connector between two points;
//! - a change along a line: a level line from the first point and a rise
//!   (or fall) with an arrowhead to the last;
//! - a share: its marks outlined (its slices' rims on a pie);
//! - one row: its mark outlined (ringed for a point);
//! - a growth or a slope: the compound or fitted path, thin, over the data.

use crate::canvas::{Align, Anchor, Canvas, Label};
use crate::layout::{map, Region};
use crate::metrics::{line_height, text_width};
use crate::place::{self, Obstacles, Pick};
use crate::theme::Theme;
use crate::RenderError;
use crescendo_frame::{Chart, Cite, CiteShape, FramePlan, MarkRef, Orientation, PartsMode};
use crescendo_look::display::{Item, NoteOf, Part, Rect};

/// Distances (px) at which the figure is tried around its anchor.
const DISTANCES: [f64; 5] = [8.0, 20.0, 40.0, 70.0, 110.0];

/// What a cite draws on: the marks, the plot bounds, and how the chart's
/// data coordinates map to the canvas (for paths).
struct Stage {
    marks: Vec<Anchor>,
    plot: Rect,
    /// `px = a * x + b` along x and along y.
    map: Option<((f64, f64), (f64, f64))>,
    /// Bars that grow sideways.
    sideways: bool,
    /// Stacked parts: a part's figure goes beside it, not past its end
    /// (where the total is).
    stacked: bool,
    /// What the figure avoids in every frame of the sequence, drawn or not
    /// in this one (every line, bar, part, dot and point, hidden ones too;
    /// the room of every bar's value label), so it keeps its place while
    /// the build-up changes.
    steady: Obstacles,
}

/// Draws every cite of `frame`. Each figure is recorded in a
/// [`Part::Note`] group that says whether it had to cover data (the lint
/// warns about it, naming the frame).
pub(crate) fn draw(
    canvas: &Canvas,
    theme: &Theme,
    frame: &FramePlan,
    region: Region,
) -> Result<(), RenderError> {
    if frame.cites.is_empty() {
        return Ok(());
    }
    let Some(stage) = stage(canvas, theme, frame, region) else {
        return Ok(());
    };
    let mut obstacles = obstacles_of(&canvas.drawn());
    obstacles.marks.extend(stage.steady.marks.iter().copied());
    obstacles
        .segments
        .extend(stage.steady.segments.iter().copied());
    for c in &frame.cites {
        one(canvas, theme, &stage, c, &mut obstacles)?;
    }
    Ok(())
}

fn stage(canvas: &Canvas, theme: &Theme, frame: &FramePlan, region: Region) -> Option<Stage> {
    let whole = Rect {
        x0: region.left,
        y0: region.top,
        x1: region.right,
        y1: region.bottom,
    };
    match &frame.chart {
        Chart::Line(chart) => {
            let l = crate::line_layout::layout(chart, region, theme);
            let (dx, dy) = (chart.x.domain, chart.y.domain);
            let xm = |x: f64| map(x, dx, l.plot_left, l.plot_right);
            let ym = |y: f64| map(y, dy, l.plot_bottom, l.plot_top);
            let mut marks = Vec::new();
            let mut steady = Obstacles::default();
            for s in &chart.series {
                for run in crate::line::runs(s, &xm, &ym) {
                    steady.add_polyline(&run);
                }
            }
            for (i, s) in chart.series.iter().enumerate() {
                for (k, p) in s.points.iter().enumerate() {
                    if let Some(y) = p.y.filter(|y| y.is_finite() && p.x.is_finite()) {
                        let c = (xm(p.x), ym(y));
                        marks.push(point_anchor(MarkRef { item: i, part: k }, c, 3.0));
                    }
                }
            }
            let ax = affine((dx[0], l.plot_left), (dx[1], l.plot_right));
            let ay = affine((dy[0], l.plot_bottom), (dy[1], l.plot_top));
            Some(Stage {
                marks,
                plot: Rect {
                    x0: l.plot_left,
                    y0: l.plot_top - line_height(theme.label_size) / 2.0,
                    x1: l.plot_right,
                    y1: l.plot_bottom - 2.0,
                },
                map: ax.zip(ay),
                sideways: false,
                stacked: false,
                steady,
            })
        }
        Chart::Bars(_) | Chart::Parts(_) | Chart::Dots(_) | Chart::Scatter(_) | Chart::Pie(_) => {
            let marks = canvas.anchors();
            // marks hidden here and shown later in the sequence
            let ghosts = canvas.ghosts();
            let sideways = match &frame.chart {
                Chart::Bars(b) => b.orientation == Orientation::Horizontal,
                Chart::Parts(p) => p.orientation == Orientation::Horizontal,
                _ => false,
            };
            let hull = hull(marks.iter().map(|a| a.rect).chain(ghosts.iter().copied()))?;
            let plot = match &frame.chart {
                Chart::Pie(_) => whole,
                Chart::Bars(_) | Chart::Parts(_) if sideways => Rect {
                    x1: whole.x1,
                    ..hull
                },
                Chart::Bars(_) | Chart::Parts(_) => Rect {
                    y0: whole.y0,
                    ..hull
                },
                _ => Rect {
                    x0: (hull.x0 - 12.0).max(whole.x0),
                    y0: whole.y0,
                    x1: whole.x1,
                    y1: (hull.y1 + 12.0).min(whole.y1),
                },
            };
            let map = match &frame.chart {
                Chart::Scatter(s) => scatter_map(&marks, s),
                _ => None,
            };
            let every: Vec<Rect> = (marks.iter().map(|a| a.rect))
                .chain(ghosts.iter().copied())
                .collect();
            let mut steady = label_room(&frame.chart, &every, sideways, theme);
            steady.marks.extend(ghosts);
            let stacked = matches!(&frame.chart, Chart::Parts(p) if p.mode == PartsMode::Stacked);
            Some(Stage {
                marks,
                plot,
                map,
                sideways,
                stacked,
                steady,
            })
        }
        _ => None,
    }
}

/// The room of every bar's value label past its end, whether or not this
/// frame labels it (a spotlight labels the bars it lights) or shows the bar
/// (hidden bars are shown later).
fn label_room(chart: &Chart, marks: &[Rect], sideways: bool, theme: &Theme) -> Obstacles {
    let mut o = Obstacles::default();
    if !matches!(chart, Chart::Bars(_) | Chart::Parts(_)) {
        return o;
    }
    let lh = line_height(theme.label_size);
    for r in marks {
        let r = *r;
        if sideways {
            o.add_mark((r.x1, r.y0), (r.x1 + 8.0 + 4.0 * lh, r.y1));
        } else {
            o.add_mark((r.x0, r.y0 - 6.0 - lh), (r.x1, r.y0));
        }
    }
    o
}

/// The box around a point mark.
fn point_anchor(mark: MarkRef, c: (f64, f64), r: f64) -> Anchor {
    Anchor {
        mark,
        rect: Rect {
            x0: c.0 - r,
            y0: c.1 - r,
            x1: c.0 + r,
            y1: c.1 + r,
        },
        arc: None,
    }
}

/// The smallest box holding every box of `rects`.
fn hull(rects: impl Iterator<Item = Rect>) -> Option<Rect> {
    rects.reduce(|a, b| Rect {
        x0: a.x0.min(b.x0),
        y0: a.y0.min(b.y0),
        x1: a.x1.max(b.x1),
        y1: a.y1.max(b.y1),
    })
}

/// The linear map through two (data, px) pairs, as (a, b) of `a * x + b`.
fn affine(p: (f64, f64), q: (f64, f64)) -> Option<(f64, f64)> {
    let d = q.0 - p.0;
    (d != 0.0 && d.is_finite()).then(|| {
        let a = (q.1 - p.1) / d;
        (a, p.1 - a * p.0)
    })
}

/// A scatter's data-to-canvas map, read back from where its points were
/// drawn (the map is linear on each axis).
fn scatter_map(
    marks: &[Anchor],
    chart: &crescendo_frame::ScatterChart,
) -> Option<((f64, f64), (f64, f64))> {
    let pts: Vec<((f64, f64), (f64, f64))> = marks
        .iter()
        .filter_map(|a| {
            let p = chart.points.get(a.mark.item)?;
            Some(((p.x, p.y), centre(&a.rect)))
        })
        .collect();
    let first = pts.first()?;
    let ox = pts.iter().find(|p| p.0 .0 != first.0 .0)?;
    let oy = pts.iter().find(|p| p.0 .1 != first.0 .1)?;
    Some((
        affine((first.0 .0, first.1 .0), (ox.0 .0, ox.1 .0))?,
        affine((first.0 .1, first.1 .1), (oy.0 .1, oy.1 .1))?,
    ))
}

fn centre(r: &Rect) -> (f64, f64) {
    ((r.x0 + r.x1) / 2.0, (r.y0 + r.y1) / 2.0)
}

/// What a figure must avoid, read from what was drawn: every text, every
/// filled mark, data lines (2 px and more) and short thin lines (leaders).
fn obstacles_of(items: &[Item]) -> Obstacles {
    let mut o = Obstacles::default();
    for item in items {
        match item {
            Item::Text(t) => o.boxes.push(t.bounds()),
            Item::Rect { a, b, .. } => o.add_mark(*a, *b),
            Item::Dot { at, radius, .. } => {
                let r = f64::from(*radius);
                o.add_mark((at.0 - r, at.1 - r), (at.0 + r, at.1 + r));
            }
            Item::Polygon { points, .. } => {
                if let Some(h) = hull(points.iter().map(|p| Rect {
                    x0: p.0,
                    y0: p.1,
                    x1: p.0,
                    y1: p.1,
                })) {
                    o.marks.push(h);
                }
            }
            Item::Wedge {
                centre,
                radius,
                from,
                to,
                ..
            } => o.marks.extend(wedge_box(*centre, *radius, *from, *to)),
            Item::Polyline { points, width, .. } => {
                let span = hull(points.iter().map(|p| Rect {
                    x0: p.0,
                    y0: p.1,
                    x1: p.0,
                    y1: p.1,
                }));
                let short = span.is_some_and(|s| (s.x1 - s.x0).max(s.y1 - s.y0) < 200.0);
                if *width >= 2 || short {
                    o.add_polyline(points);
                }
            }
            _ => {}
        }
    }
    o
}

/// The point at `angle` (clockwise from twelve o'clock) on a circle.
fn on_circle(c: (f64, f64), r: f64, angle: f64) -> (f64, f64) {
    (c.0 + r * angle.sin(), c.1 - r * angle.cos())
}

/// The box of a pie slice (its centre and rim, sampled).
fn wedge_box(c: (f64, f64), r: f64, from: f64, to: f64) -> Option<Rect> {
    let n = 16;
    hull(
        std::iter::once(c)
            .chain(
                (0..=n).map(|k| on_circle(c, r, from + (to - from) * f64::from(k) / f64::from(n))),
            )
            .map(|p| Rect {
                x0: p.0,
                y0: p.1,
                x1: p.0,
                y1: p.1,
            }),
    )
}

/// Draws one cite (nothing when its marks are not drawn in this frame).
fn one(
    canvas: &Canvas,
    theme: &Theme,
    stage: &Stage,
    cite: &Cite,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    let anchor = canvas.group(Part::Evidence, || {
        evidence(canvas, theme, stage, cite, obstacles)
    })?;
    let Some(anchor) = anchor else {
        return Ok(());
    };
    figure(canvas, theme, stage, cite, anchor, obstacles)
}

/// Draws what a cite marks on the data; returns where its figure goes
/// from (`None` when its marks are not drawn in this frame).
fn evidence(
    canvas: &Canvas,
    theme: &Theme,
    stage: &Stage,
    cite: &Cite,
    obstacles: &mut Obstacles,
) -> Result<Option<(f64, f64)>, RenderError> {
    let find = |m: &MarkRef| stage.marks.iter().find(|a| a.mark == *m).copied();
    let anchor = match &cite.shape {
        CiteShape::Between { from, to } => {
            let (Some(a), Some(b)) = (find(from), find(to)) else {
                return Ok(None);
            };
            between(canvas, theme, stage, (a, b), obstacles)?
        }
        CiteShape::Change { from, to } => {
            let (Some(a), Some(b)) = (find(from), find(to)) else {
                return Ok(None);
            };
            change(canvas, theme, (centre(&a.rect), centre(&b.rect)), obstacles)?
        }
        CiteShape::One { mark } => {
            let Some(a) = find(mark) else {
                return Ok(None);
            };
            outline(canvas, theme, stage, &a, obstacles)?
        }
        CiteShape::Part { marks } => {
            let found: Vec<Anchor> = marks.iter().filter_map(find).collect();
            let mut at = None;
            for a in &found {
                at = Some(outline(canvas, theme, stage, a, obstacles)?);
            }
            match (found.len(), at) {
                (1, Some(p)) => p,
                (_, Some(_)) => {
                    let h = hull(found.iter().map(|a| a.rect)).unwrap_or(stage.plot);
                    end_of(stage, &h)
                }
                _ => return Ok(None),
            }
        }
        CiteShape::Path { points } => {
            let Some(((ax, bx), (ay, by))) = stage.map else {
                return Ok(None);
            };
            let px: Vec<(f64, f64)> = points
                .iter()
                .map(|(x, y)| (ax * x + bx, ay * y + by))
                .filter(|p| p.0.is_finite() && p.1.is_finite())
                .collect();
            canvas.polyline(&px, theme.takeaway, 1)?;
            obstacles.add_polyline(&px);
            match px.last() {
                Some(p) => *p,
                None => return Ok(None),
            }
        }
    };
    Ok(Some(anchor))
}

/// Where a label of a bar goes from: the middle of its end.
fn end_of(stage: &Stage, r: &Rect) -> (f64, f64) {
    if stage.sideways {
        (r.x1, (r.y0 + r.y1) / 2.0)
    } else {
        ((r.x0 + r.x1) / 2.0, r.y0)
    }
}

/// Places the figure near `anchor` through the label placer, in a
/// [`Part::Note`] group that says whether it could only go over data.
fn figure(
    canvas: &Canvas,
    theme: &Theme,
    stage: &Stage,
    cite: &Cite,
    anchor: (f64, f64),
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    let text = cite.figure.as_str();
    if text.is_empty() {
        return Ok(());
    }
    let (w, h) = (
        text_width(text, theme.label_size, true),
        line_height(theme.label_size),
    );
    // spots whose leader would cross a text come last
    let crosses = |r: &Rect| {
        place::leader(anchor, r)
            .is_some_and(|(a, b)| obstacles.boxes.iter().any(|t| t.hit_by(a, b)))
    };
    let (mut cands, later): (Vec<Rect>, Vec<Rect>) = place::around(anchor, w, h, &DISTANCES)
        .into_iter()
        .partition(|r| !crosses(r));
    cands.extend(later);
    let chosen = place::pick(&cands, obstacles, &stage.plot, Pick::FirstFree);
    let part = place::note_part(NoteOf::Cite(cite.value.clone()), chosen, obstacles);
    let Some(r) = chosen else {
        return canvas.group(part, || Ok(()));
    };
    obstacles.place(canvas, theme.muted, Some(anchor), r)?;
    canvas.group(part, || {
        canvas.text(&Label {
            text,
            x: r.x0,
            top: r.y0,
            size: theme.label_size,
            bold: true,
            color: theme.takeaway,
            align: Align::Start,
        })
    })
}

/// A mark outlined (a bar or a segment), ringed (a point) or its rim
/// traced (a slice); returns where its figure goes from.
fn outline(
    canvas: &Canvas,
    theme: &Theme,
    stage: &Stage,
    a: &Anchor,
    obstacles: &mut Obstacles,
) -> Result<(f64, f64), RenderError> {
    if let Some((c, r, from, to)) = a.arc {
        let n = 24;
        let rim: Vec<(f64, f64)> = (0..=n)
            .map(|k| on_circle(c, r + 4.0, from + (to - from) * f64::from(k) / f64::from(n)))
            .collect();
        canvas.polyline(&rim, theme.takeaway, 3)?;
        obstacles.add_polyline(&rim);
        return Ok(on_circle(c, r + 4.0, (from + to) / 2.0));
    }
    let g = a.rect.grow(3.0);
    let small = (a.rect.x1 - a.rect.x0).max(a.rect.y1 - a.rect.y0) <= 16.0;
    if small {
        let c = centre(&a.rect);
        let r = (a.rect.x1 - a.rect.x0).max(6.0) / 2.0 + 4.0;
        let ring: Vec<(f64, f64)> = (0..=20)
            .map(|k| on_circle(c, r, std::f64::consts::TAU * f64::from(k) / 20.0))
            .collect();
        canvas.polyline(&ring, theme.takeaway, 2)?;
        obstacles.add_mark((c.0 - r, c.1 - r), (c.0 + r, c.1 + r));
        return Ok(c);
    }
    let frame = [
        (g.x0, g.y0),
        (g.x1, g.y0),
        (g.x1, g.y1),
        (g.x0, g.y1),
        (g.x0, g.y0),
    ];
    canvas.polyline(&frame, theme.takeaway, 2)?;
    obstacles.add_mark((g.x0, g.y0), (g.x1, g.y1));
    Ok(match (stage.stacked, stage.sideways) {
        (true, false) => (g.x1, (g.y0 + g.y1) / 2.0),
        (true, true) => ((g.x0 + g.x1) / 2.0, g.y1),
        _ => end_of(stage, &g),
    })
}

/// Two marks compared: a bracket past the ends of two bars, or a connector
/// between two points; returns where the figure goes from.
fn between(
    canvas: &Canvas,
    theme: &Theme,
    stage: &Stage,
    (a, b): (Anchor, Anchor),
    obstacles: &mut Obstacles,
) -> Result<(f64, f64), RenderError> {
    let bars = a.arc.is_none()
        && (a.rect.x1 - a.rect.x0).max(a.rect.y1 - a.rect.y0) > 16.0
        && (b.rect.x1 - b.rect.x0).max(b.rect.y1 - b.rect.y0) > 16.0;
    if !bars {
        // a slice is met inside its arc, a point at its centre
        let at = |x: &Anchor| match x.arc {
            Some((c, r, from, to)) => on_circle(c, r * 0.7, (from + to) / 2.0),
            None => centre(&x.rect),
        };
        let (p, q) = (at(&a), at(&b));
        let (dx, dy) = (q.0 - p.0, q.1 - p.1);
        let len = (dx * dx + dy * dy).sqrt().max(1.0);
        let (ux, uy) = (dx / len * 8.0, dy / len * 8.0);
        let seg = [(p.0 + ux, p.1 + uy), (q.0 - ux, q.1 - uy)];
        canvas.polyline(&seg, theme.takeaway, 1)?;
        for end in [p, q] {
            canvas.dot(end, 4, theme.takeaway)?;
            obstacles.add_mark((end.0 - 4.0, end.1 - 4.0), (end.0 + 4.0, end.1 + 4.0));
        }
        obstacles.add_polyline(&seg);
        return Ok(((p.0 + q.0) / 2.0, (p.1 + q.1) / 2.0));
    }
    // In (across, along) terms: across the bands, and outward along the
    // values (up for columns, right for sideways bars).
    let sw = stage.sideways;
    let to_px = |across: f64, along: f64| if sw { (along, across) } else { (across, along) };
    let out = if sw { 1.0 } else { -1.0 };
    let mid = |r: &Rect| {
        if sw {
            (r.y0 + r.y1) / 2.0
        } else {
            (r.x0 + r.x1) / 2.0
        }
    };
    let end = |r: &Rect| if sw { r.x1 } else { r.y0 };
    let (ca, cb) = (mid(&a.rect), mid(&b.rect));
    let (lo, hi) = (ca.min(cb), ca.max(cb));
    // beyond both ends and every text or mark between them
    let further = |x: f64, y: f64| if out > 0.0 { x.max(y) } else { x.min(y) };
    let mut level = further(end(&a.rect), end(&b.rect)) + out * 10.0;
    let in_lane = |r: &Rect| {
        let (f, t) = if sw { (r.y0, r.y1) } else { (r.x0, r.x1) };
        t >= lo - 2.0 && f <= hi + 2.0
    };
    let far_edge = |r: &Rect| if out > 0.0 { r.x1 } else { r.y0 };
    let near_edge = |r: &Rect| if out > 0.0 { r.x0 } else { r.y1 };
    for _ in 0..32 {
        let blocking = obstacles
            .boxes
            .iter()
            .chain(&obstacles.marks)
            .filter(|r| in_lane(r))
            .filter(|r| (near_edge(r) - level) * out <= 3.0 && (far_edge(r) - level) * out >= -3.0)
            .map(far_edge)
            .fold(None, |acc: Option<f64>, e| {
                Some(acc.map_or(e, |x| further(x, e)))
            });
        match blocking {
            Some(e) => level = e + out * 6.0,
            None => break,
        }
    }
    // never past the plot's far edge
    level = if sw {
        level.min(stage.plot.x1 - 2.0)
    } else {
        level.max(stage.plot.y0 + 2.0)
    };
    let legs = |c: f64, r: &Rect| [to_px(c, end(r) + out * 3.0), to_px(c, level)];
    let bracket = [
        legs(ca, &a.rect)[0],
        legs(ca, &a.rect)[1],
        legs(cb, &b.rect)[1],
        legs(cb, &b.rect)[0],
    ];
    canvas.polyline(&bracket, theme.takeaway, 1)?;
    obstacles.add_polyline(&bracket);
    Ok(to_px((ca + cb) / 2.0, level))
}

/// A change along a line: the level of the first point carried across, a
/// rise or fall with an arrowhead at the last; returns where the figure
/// goes from.
fn change(
    canvas: &Canvas,
    theme: &Theme,
    (a, b): ((f64, f64), (f64, f64)),
    obstacles: &mut Obstacles,
) -> Result<(f64, f64), RenderError> {
    for p in [a, b] {
        canvas.dot(p, 4, theme.takeaway)?;
        obstacles.add_mark((p.0 - 4.0, p.1 - 4.0), (p.0 + 4.0, p.1 + 4.0));
    }
    let level = [(a.0 + 6.0, a.1), (b.0, a.1)];
    canvas.polyline(&level, theme.muted, 1)?;
    obstacles.add_polyline(&level);
    let dir = if b.1 < a.1 { -1.0 } else { 1.0 };
    if (b.1 - a.1).abs() > 14.0 {
        let tip = (b.0, b.1 - dir * 6.0);
        let rise = [(b.0, a.1), (b.0, tip.1 - dir * 6.0)];
        canvas.polyline(&rise, theme.takeaway, 1)?;
        canvas.polygon(
            &[
                (tip.0 - 4.0, tip.1 - dir * 7.0),
                (tip.0 + 4.0, tip.1 - dir * 7.0),
                tip,
            ],
            theme.takeaway,
        )?;
        obstacles.add_polyline(&[(b.0, a.1), tip]);
    }
    Ok((b.0, (a.1 + b.1) / 2.0))
}
