//! Scatter plots: small grey dots, focus dots larger in the accent with
//! their names beside them (every dot named when there are few) (placed where they cover the fewest other
//! labels and dots), axes as in line charts, and an optional least-squares
//! line over the x range of the points in a dark grey with its correlation.

use crate::axis;
use crate::canvas::Canvas;
use crate::fit;
use crate::kit::{self, rect, Obstacles, Rect};
use crate::layout::{self, map, Region};
use crate::metrics::{self, line_height};
use crate::theme::Theme;
use crate::Drawn;
use crescendo_frame::{Role, ScatterChart};

/// Radius of a context dot, in px.
const DOT: u32 = 4;
/// Radius of a focus dot, in px.
const FOCUS_DOT: u32 = 6;
/// Widest a point label may be (at 16 px labels; [`Theme::label_scaled`]).
const MAX_LABEL: f64 = 220.0;
/// Up to this many labelled points, every point is labelled (a few names
/// read at a glance; more would crowd the plot, so then only the focus
/// points are).
const LABEL_ALL: usize = 12;

/// Candidate spots for a label of size `w`×`h` beside a dot at `p` with
/// radius `r`: right, left, above, below, the four diagonals, then the
/// same a little farther out.
pub(crate) fn candidates(p: (f64, f64), r: f64, w: f64, h: f64) -> Vec<Rect> {
    let mut out = Vec::new();
    for far in [0.0, 14.0] {
        let d = r + 5.0 + far;
        let spots = [
            (p.0 + d, p.1 - h / 2.0),
            (p.0 - d - w, p.1 - h / 2.0),
            (p.0 - w / 2.0, p.1 - d - h),
            (p.0 - w / 2.0, p.1 + d),
            (p.0 + d * 0.7, p.1 - d * 0.7 - h),
            (p.0 - d * 0.7 - w, p.1 - d * 0.7 - h),
            (p.0 + d * 0.7, p.1 + d * 0.7),
            (p.0 - d * 0.7 - w, p.1 + d * 0.7),
        ];
        out.extend(spots.iter().map(|&(x0, y0)| rect(x0, y0, x0 + w, y0 + h)));
    }
    out
}

/// The candidate with the lowest penalty that lies inside `bounds` and is
/// clear of text, if any.
pub(crate) fn best_spot(cands: &[Rect], obstacles: &Obstacles, bounds: &Rect) -> Option<Rect> {
    crate::place::pick(cands, obstacles, bounds, crate::place::Pick::Fewest)
}

pub(crate) fn draw(canvas: &Canvas, theme: &Theme, chart: &ScatterChart, region: Region) -> Drawn {
    layout::check_axis(&chart.x, "x")?;
    layout::check_axis(&chart.y, "y")?;
    let lh = line_height(theme.label_size);
    let reserve = region.label_gutter;
    let l = axis::xy_layout(&chart.x, &chart.y, region, reserve, theme.label_size);
    let mut obstacles = Obstacles::default();
    canvas.plot((l.plot.x0, l.plot.y0), (l.plot.x1, l.plot.y1))?;
    axis::draw_xy_axes(canvas, theme, &chart.x, &chart.y, &l, &mut obstacles)?;
    let xmap = |x: f64| map(x, chart.x.domain, l.plot.x0, l.plot.x1);
    let ymap = |y: f64| map(y, chart.y.domain, l.plot.y1, l.plot.y0);
    let finite: Vec<_> = chart
        .points
        .iter()
        .filter(|p| p.x.is_finite() && p.y.is_finite())
        .collect();

    // The fit goes under the dots, over the x range of every point (hidden
    // ones too, so it does not move), clipped to the plot.
    let mut fit_segment = None;
    if let Some(fit) = &chart.fit {
        let xs = finite.iter().map(|p| p.x);
        let (lo, hi) = (
            xs.clone().fold(f64::INFINITY, f64::min),
            xs.fold(f64::NEG_INFINITY, f64::max),
        );
        if lo < hi && fit.slope.is_finite() && fit.intercept.is_finite() {
            let a = (xmap(lo), ymap(fit.intercept + fit.slope * lo));
            let b = (xmap(hi), ymap(fit.intercept + fit.slope * hi));
            if let Some((a, b)) = l.plot.clip(a, b) {
                canvas.line(a, b, theme.context, 2)?;
                obstacles.segments.push((a, b));
                fit_segment = Some((a, b));
            }
        }
    }

    for pass in [Role::Context, Role::Focus] {
        for p in finite.iter().filter(|p| p.role == pass) {
            let (r, color) = match pass {
                Role::Focus => (FOCUS_DOT, theme.accent),
                _ => (DOT, theme.context),
            };
            let c = (xmap(p.x), ymap(p.y));
            canvas.dot(c, r, color)?;
            if let Some(k) = chart.points.iter().position(|q| std::ptr::eq(q, *p)) {
                canvas.point(k, None, c);
            }
            let r = f64::from(r);
            obstacles.segments.push(((c.0 - r, c.1), (c.0 + r, c.1)));
            obstacles.segments.push(((c.0, c.1 - r), (c.0, c.1 + r)));
        }
    }

    anchor_points(canvas, chart, (&xmap, &ymap));

    // Labels beside their dots, focus points first: every point's when there
    // are few, else the focus points'. A label with no free spot is left
    // out rather than drawn over another text. (Kept small and local: the
    // candidates and the scoring are the whole placer.)
    let bounds = rect(l.plot.x0, l.plot.y0 - lh / 2.0, l.plot.x1, l.plot.y1 - 2.0);
    let labelled = finite
        .iter()
        .filter(|p| p.role != Role::Hidden && !p.label.is_empty())
        .count();
    let focus_first = finite
        .iter()
        .filter(|p| p.role == Role::Focus)
        .chain(finite.iter().filter(|p| p.role == Role::Context));
    for p in focus_first {
        let focus = p.role == Role::Focus;
        if !focus && labelled > LABEL_ALL {
            continue;
        }
        let label = metrics::normalize(&p.label);
        let how = (theme.label_size, focus);
        let text = fit::one(canvas, &label, how, theme.label_scaled(MAX_LABEL))?;
        if text.is_empty() {
            continue;
        }
        let w = metrics::text_width(&text, theme.label_size, focus);
        let c = (xmap(p.x), ymap(p.y));
        let r = f64::from(if focus { FOCUS_DOT } else { DOT });
        let cands = candidates(c, r, w, lh);
        if let Some(spot) = best_spot(&cands, &obstacles, &bounds) {
            let color = if focus { theme.accent } else { theme.muted };
            let ink = (theme.label_size, focus, color);
            kit::put_in(canvas, &mut obstacles, &text, &spot, ink)?;
        }
    }

    if let (Some(fit), Some((a, b))) = (&chart.fit, fit_segment) {
        let text = fit.label.clone();
        let w = metrics::text_width(&text, theme.label_size, false);
        // Near the upper end of the line first, then along it.
        let (hi_end, lo_end) = if a.1 < b.1 { (a, b) } else { (b, a) };
        let mut cands = Vec::new();
        for t in [0.0, 0.15, 0.3, 0.5, 0.7, 1.0] {
            let p = (
                hi_end.0 + (lo_end.0 - hi_end.0) * t,
                hi_end.1 + (lo_end.1 - hi_end.1) * t,
            );
            cands.extend(candidates(p, 2.0, w, lh));
        }
        if let Some(spot) = best_spot(&cands, &obstacles, &bounds) {
            let ink = (theme.label_size, false, theme.muted);
            kit::put_in(canvas, &mut obstacles, &text, &spot, ink)?;
        }
    }
    Ok(())
}

/// A map from data to canvas px along one axis.
type Map<'a> = &'a dyn Fn(f64) -> f64;

/// Records where each drawn point is, for notes bound to values, and
/// where each hidden one will be when the build-up shows it.
fn anchor_points(canvas: &Canvas, chart: &ScatterChart, (xmap, ymap): (Map, Map)) {
    for (i, p) in chart.points.iter().enumerate() {
        if p.x.is_finite() && p.y.is_finite() {
            let (c, r) = ((xmap(p.x), ymap(p.y)), f64::from(FOCUS_DOT));
            if p.role == Role::Hidden {
                canvas.ghost((c.0 - r, c.1 - r), (c.0 + r, c.1 + r));
            } else {
                canvas.anchor((i, 0), (c.0 - r, c.1 - r), (c.0 + r, c.1 + r));
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn clip_keeps_the_part_inside() {
        let plot = Rect {
            x0: 0.0,
            y0: 0.0,
            x1: 100.0,
            y1: 100.0,
        };
        let c = plot.clip((0.0, -10.0), (10.0, 10.0)).unwrap();
        assert_eq!(c, ((5.0, 0.0), (10.0, 10.0)));
        assert!(plot.clip((0.0, -10.0), (10.0, -5.0)).is_none());
        // Cut at the right edge too (an `x range` narrower than the data).
        let c = plot.clip((50.0, 50.0), (150.0, 60.0)).unwrap();
        assert_eq!(c, ((50.0, 50.0), (100.0, 55.0)));
        assert!(plot.clip((110.0, 10.0), (120.0, 20.0)).is_none());
    }
}
