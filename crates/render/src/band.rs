//! The band-chart drawer shared by bars, stacked and grouped bars and dot
//! plots: categories sit in equal bands across the plot, values run along
//! it. One orientation transform maps (across, along) to canvas points, so
//! the marks, their value labels and the baseline are drawn by the same
//! code whichever way the bars run.

use crate::canvas::{Align, Canvas, Label};
use crate::kit::{self, rect, Obstacles, Rect};
use crate::metrics::{self, line_height};
use crate::place::{self, Pick};
use crate::theme::{Rgb, Theme};
use crate::RenderError;
use crescendo_frame::{Orientation, Role};

/// Space between a bar end and its value label.
pub(crate) const VALUE_GAP: f64 = 6.0;

/// Where the category bands lie and which way the values run.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Band {
    /// `Vertical`: bands left to right, values upwards; `Horizontal`: bands
    /// top to bottom, values rightwards.
    pub orientation: Orientation,
    /// Where the first band starts (plot left or plot top).
    pub start: f64,
    /// The size of one band across the plot.
    pub size: f64,
}

impl Band {
    /// Records where bar `i` would be drawn from `zero` to `end` while it is
    /// hidden ([`Canvas::ghost`]).
    pub(crate) fn ghost(&self, canvas: &Canvas, i: usize, thickness: f64, (zero, end): (f64, f64)) {
        let centre = self.centre(i);
        let across = (centre - thickness / 2.0, centre + thickness / 2.0);
        canvas.ghost(self.point(across.0, zero), self.point(across.1, end));
    }

    /// The centre of band `i`.
    pub fn centre(&self, i: usize) -> f64 {
        self.start + (i as f64 + 0.5) * self.size
    }

    /// The canvas point `across` the bands and `along` the values.
    pub fn point(&self, across: f64, along: f64) -> (f64, f64) {
        match self.orientation {
            Orientation::Vertical => (across, along),
            Orientation::Horizontal => (along, across),
        }
    }

    /// A filled mark from `a` to `b` along the values, `from..to` across.
    pub fn mark(
        &self,
        canvas: &Canvas,
        (from, to): (f64, f64),
        (a, b): (f64, f64),
        color: Rgb,
    ) -> Result<(), RenderError> {
        canvas.rect(self.point(from, a), self.point(to, b), color)
    }

    /// A line across the marks at `along`, from `from` to `to` across.
    pub fn rule(
        &self,
        canvas: &Canvas,
        (from, to): (f64, f64),
        along: f64,
        color: Rgb,
        width: u32,
    ) -> Result<(), RenderError> {
        canvas.line(self.point(from, along), self.point(to, along), color, width)
    }

    /// Where a label goes beyond the end of a mark at `end` in band centre
    /// `centre`: past the end in the direction the mark grows (`outward`
    /// for a positive value), the text's box one gap away.
    pub fn end_label(&self, end: f64, centre: f64, lh: f64, outward: bool) -> (f64, f64, Align) {
        match (self.orientation, outward) {
            (Orientation::Vertical, true) => (centre, end - VALUE_GAP - lh, Align::Middle),
            (Orientation::Vertical, false) => (centre, end + VALUE_GAP, Align::Middle),
            (Orientation::Horizontal, true) => (end + VALUE_GAP, centre - lh / 2.0, Align::Start),
            (Orientation::Horizontal, false) => (end - VALUE_GAP, centre - lh / 2.0, Align::End),
        }
    }
}

/// The column of category names beside horizontal bars: as wide as the
/// widest name up to `cap`, and at least the deck's `gutter` (so the plot
/// starts where every other frame's does); two lines when a name is wider
/// than that and a band has room for two. Returns the width and the line
/// count.
pub(crate) fn name_column(
    widest: f64,
    (cap, gutter): (f64, f64),
    band: f64,
    step: f64,
) -> (f64, usize) {
    let width = widest.min(cap).max(gutter);
    let lines = if widest > width && band >= 2.0 * step {
        2
    } else {
        1
    };
    (width, lines)
}

/// Room past the ends of the marks for labels `width` wide (when
/// `labelled`): below zero when the domain has negative values, above it
/// when it has positive ones, less the `gutter` kept beyond the plot's end
/// for them. Returns (below, above).
pub(crate) fn end_room(dom: [f64; 2], width: f64, labelled: bool, gutter: f64) -> (f64, f64) {
    let room = |needed: bool| {
        if labelled && needed {
            width + VALUE_GAP
        } else {
            0.0
        }
    };
    (room(dom[0] < 0.0), (room(dom[1] > 0.0) - gutter).max(0.0))
}

/// One bar of a bar chart: its mark from `zero` to `end` and, in focus, its
/// value at the end.
#[allow(clippy::too_many_arguments)]
pub(crate) fn bar(
    canvas: &Canvas,
    theme: &Theme,
    band: &Band,
    i: usize,
    thickness: f64,
    (zero, end): (f64, f64),
    positive: bool,
    color: Rgb,
    focus_label: Option<&str>,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    let centre = band.centre(i);
    let across = (centre - thickness / 2.0, centre + thickness / 2.0);
    band.mark(canvas, across, (zero, end), color)?;
    obstacles.add_mark(band.point(across.0, zero), band.point(across.1, end));
    canvas.anchor(
        (i, 0),
        band.point(across.0, zero),
        band.point(across.1, end),
    );
    canvas.point(i, None, band.point(centre, end));
    if let Some(text) = focus_label {
        let lh = line_height(theme.label_size);
        let (x, top, align) = band.end_label(end, centre, lh, positive);
        let text = metrics::normalize(text);
        let label = Label {
            text: &text,
            x,
            top,
            size: theme.label_size,
            bold: true,
            color: theme.accent,
            align,
        };
        let dir = if positive { 1.0 } else { -1.0 };
        end_value(canvas, theme, band, obstacles, &label, dir)?;
    }
    Ok(())
}

/// Draws the value label at the end of a mark through the label placer
/// ([`crate::place`]): at its usual place past the end when that is free,
/// else pushed further out along the values (`dir` is +1 where the mark
/// grows towards larger canvas values along, -1 otherwise) with a leader
/// back to the mark's end. Never on another text: it stays at its usual
/// place when every spot is taken.
fn end_value(
    canvas: &Canvas,
    theme: &Theme,
    band: &Band,
    obstacles: &mut Obstacles,
    label: &Label<'_>,
    dir: f64,
) -> Result<(), RenderError> {
    let home = kit::label_rect(label);
    let lh = line_height(theme.label_size);
    let shift = |k: f64| match band.orientation {
        // vertical bars grow upwards: outward is up for positive values
        Orientation::Vertical => (0.0, -dir * k * (lh + VALUE_GAP)),
        Orientation::Horizontal => (dir * k * (lh + VALUE_GAP), 0.0),
    };
    let cands: Vec<Rect> = (0..4)
        .map(|k| {
            let (dx, dy) = shift(f64::from(k));
            rect(home.x0 + dx, home.y0 + dy, home.x1 + dx, home.y1 + dy)
        })
        .collect();
    let canvas_box = rect(
        0.0,
        0.0,
        f64::from(crate::canvas::WIDTH),
        f64::from(crate::canvas::HEIGHT),
    );
    // the end of the mark: the edge of the usual box nearest the mark
    let anchor = match band.orientation {
        Orientation::Vertical if dir > 0.0 => ((home.x0 + home.x1) / 2.0, home.y1 + VALUE_GAP),
        Orientation::Vertical => ((home.x0 + home.x1) / 2.0, home.y0 - VALUE_GAP),
        Orientation::Horizontal if dir > 0.0 => (home.x0 - VALUE_GAP, (home.y0 + home.y1) / 2.0),
        Orientation::Horizontal => (home.x1 + VALUE_GAP, (home.y0 + home.y1) / 2.0),
    };
    // a moved label's leader must not run over another mark
    let led = |r: &Rect| place::leader(anchor, r).is_none_or(|(a, b)| obstacles.leader_clear(a, b));
    let chosen = place::pick(&cands, obstacles, &canvas_box, Pick::FirstFree);
    let Some(r) = chosen.filter(|r| *r != home && obstacles.clear_of_text(r) && led(r)) else {
        return kit::put(canvas, obstacles, label);
    };
    obstacles.place(canvas, theme.muted, Some(anchor), r)?;
    canvas.text(&Label {
        x: r.x0,
        top: r.y0,
        align: Align::Start,
        ..*label
    })
}

/// The parts of one category of stacked or grouped bars: each part's mark
/// (`across(j)` gives its place across the band, `vmap` the value's
/// position), page-coloured cuts between stacked segments, and the total at
/// the end of a stacked bar.
#[allow(clippy::too_many_arguments)]
pub(crate) fn parts(
    canvas: &Canvas,
    theme: &Theme,
    band: &Band,
    c: usize,
    extents: &[Option<(f64, f64)>],
    colors: &[Option<Rgb>],
    across: impl Fn(usize) -> (f64, f64),
    vmap: impl Fn(f64) -> f64,
    total: Option<(&str, Role)>,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    for (j, e) in extents.iter().enumerate() {
        let Some((a, b)) = e else {
            continue;
        };
        let Some(Some(color)) = colors.get(j) else {
            // a hidden part: its place is kept for the frame that shows it
            let (f, t) = across(j);
            canvas.ghost(band.point(f, vmap(*a)), band.point(t, vmap(*b)));
            continue;
        };
        band.mark(canvas, across(j), (vmap(*a), vmap(*b)), *color)?;
        let (f, t) = across(j);
        obstacles.add_mark(band.point(f, vmap(*a)), band.point(t, vmap(*b)));
        canvas.anchor((c, j), band.point(f, vmap(*a)), band.point(t, vmap(*b)));
        let mid = band.point((f + t) / 2.0, (vmap(*a) + vmap(*b)) / 2.0);
        canvas.point(c, Some(j), mid);
    }
    let far = extents.iter().flatten().map(|e| e.1).fold(0.0, f64::max);
    canvas.point(c, None, band.point(band.centre(c), vmap(far)));
    let Some((total, role)) = total else {
        return Ok(());
    };
    for (a, _) in extents.iter().flatten().skip(1) {
        if *a != 0.0 {
            band.rule(canvas, across(0), vmap(*a), theme.page, 1)?;
        }
    }
    let text = metrics::normalize(total);
    // the total sits on the parts drawn, not on hidden ones still to come
    let shown = |j: &usize| colors.get(*j).is_some_and(Option::is_some);
    let high = (extents.iter().enumerate())
        .filter(|(j, _)| shown(j))
        .filter_map(|(_, e)| e.map(|e| e.1))
        .fold(0.0, f64::max);
    if !text.is_empty() {
        let lh = line_height(theme.label_size);
        let (x, top, align) = band.end_label(vmap(high), band.centre(c), lh, true);
        let focus = role == Role::Focus;
        let label = kit::mark_label(theme, &text, (x, top, align), focus);
        end_value(canvas, theme, band, obstacles, &label, 1.0)?;
    }
    Ok(())
}
