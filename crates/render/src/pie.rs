//! Pies: a circle centred in the chart region, slices clockwise from twelve
//! o'clock in the plan's order. Context slices alternate between two greys,
//! the focus slice is in the accent, and thin page-coloured cuts separate
//! the slices. Each slice is named outside the circle with its share, on a
//! short leader line; labels are spread apart on each side. A hidden slice
//! leaves its wedge empty and its label slot unused.

use crate::canvas::{Align, Canvas, Label};
use crate::fit;
use crate::layout::{self, Region};
use crate::metrics::{self, line_height};
use crate::theme::Theme;
use crate::{Drawn, RenderError};
use crescendo_frame::{PieChart, Role};
use std::f64::consts::TAU;

/// Largest radius, in px.
const MAX_RADIUS: f64 = 230.0;
/// Leader: from the rim out to the elbow, then across to the label.
const ELBOW: f64 = 16.0;
const LABEL_OUT: f64 = 34.0;
/// Room kept for labels on each side of the circle (at 16 px labels;
/// [`Theme::label_scaled`]).
const MIN_LABEL_ROOM: f64 = 180.0;

/// The point at `angle` (radians, clockwise from twelve o'clock).
fn at(c: (f64, f64), r: f64, angle: f64) -> (f64, f64) {
    (c.0 + r * angle.sin(), c.1 - r * angle.cos())
}

pub(crate) fn draw(canvas: &Canvas, theme: &Theme, chart: &PieChart, region: Region) -> Drawn {
    if chart
        .slices
        .iter()
        .any(|s| !s.share.is_finite() || s.share < 0.0)
    {
        return Err(RenderError::new(
            "a pie slice has a negative or non-finite share",
        ));
    }
    let total: f64 = chart.slices.iter().map(|s| s.share).sum();
    if chart.slices.is_empty() || total <= 0.0 {
        return Ok(());
    }
    let lh = line_height(theme.label_size);
    let width = region.right - region.left;
    let height = region.bottom - region.top;
    let radius = (height / 2.0 - 6.0)
        .min(width / 2.0 - theme.label_scaled(MIN_LABEL_ROOM) - LABEL_OUT)
        .clamp(10.0, MAX_RADIUS);
    let c = (region.left + width / 2.0, region.top + height / 2.0);

    // Angles from the shares (normalised, in case they do not add to 1).
    let mut bounds = Vec::with_capacity(chart.slices.len() + 1);
    let mut acc = 0.0;
    bounds.push(0.0);
    for s in &chart.slices {
        acc += s.share / total;
        bounds.push(acc * TAU);
    }

    for (i, s) in chart.slices.iter().enumerate() {
        let color = match s.role {
            Role::Hidden => continue,
            Role::Focus => theme.accent,
            // Every other slice the theme's second grey (both greys pass
            // 3:1 on the page; the cuts and labels carry the rest).
            Role::Context if i % 2 == 0 => theme.context,
            Role::Context => theme.context_light,
        };
        let (a0, a1) = (bounds[i], bounds[i + 1]);
        if a1 - a0 <= 0.0 {
            continue;
        }
        canvas.wedge(c, radius, (a0, a1), color)?;
        canvas.anchor_arc(i, c, radius, (a0, a1));
    }
    // Cuts between slices, where at least one neighbour is drawn.
    let n = chart.slices.len();
    if n > 1 {
        for (i, (here, start)) in chart.slices.iter().zip(&bounds).enumerate() {
            let prev = &chart.slices[(i + n - 1) % n];
            if prev.role == Role::Hidden && here.role == Role::Hidden {
                continue;
            }
            canvas.line(c, at(c, radius + 0.5, *start), theme.page, 2)?;
        }
    }

    // Labels: right half and left half, each spread top to bottom.
    let mut sides: [Vec<(f64, usize)>; 2] = [Vec::new(), Vec::new()];
    for (i, _) in chart.slices.iter().enumerate() {
        let mid = (bounds[i] + bounds[i + 1]) / 2.0;
        let elbow = at(c, radius + ELBOW, mid);
        let side = usize::from(mid > TAU / 2.0);
        sides[side].push((elbow.1, i));
    }
    for (side, items) in sides.iter_mut().enumerate() {
        items.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        let wanted: Vec<f64> = items.iter().map(|x| x.0).collect();
        let placed = layout::spread(
            &wanted,
            theme.label_step(),
            region.top + lh / 2.0,
            region.bottom - lh / 2.0,
        );
        let (x, align, dir) = if side == 0 {
            (c.0 + radius + LABEL_OUT, Align::Start, 1.0)
        } else {
            (c.0 - radius - LABEL_OUT, Align::End, -1.0)
        };
        let room = if side == 0 {
            region.right - x
        } else {
            x - region.left
        };
        for (&(_, i), y) in items.iter().zip(placed) {
            let s = &chart.slices[i];
            let (color, bold) = match s.role {
                Role::Hidden => continue,
                Role::Focus => (theme.accent, true),
                Role::Context => (theme.muted, false),
            };
            let mid = (bounds[i] + bounds[i + 1]) / 2.0;
            let rim = at(c, radius + 3.0, mid);
            let elbow = at(c, radius + ELBOW, mid);
            canvas.polyline(&[rim, elbow, (x - dir * 4.0, y)], theme.context, 1)?;
            let raw = format!(
                "{} {}",
                metrics::normalize(&s.label),
                metrics::normalize(&s.share_label)
            );
            // Fitted at bold width so the text is the same in every role.
            let how = (theme.label_size, true);
            let text = fit::one(canvas, raw.trim(), how, room.max(0.0))?;
            canvas.text(&Label {
                text: &text,
                x,
                top: y - lh / 2.0,
                size: theme.label_size,
                bold,
                color,
                align,
            })?;
        }
    }
    Ok(())
}
