//! Bars split into parts: stacked (segments of one bar, from the baseline in
//! the plan's part order) or grouped (bars side by side in each category
//! slot), vertical or horizontal. Context parts get distinct greys derived
//! from the theme's context grey (darker first), the focus part the accent.
//! Parts are named directly, never in a legend: stacked parts beside the
//! last bar (vertical) or above the first bar (horizontal), grouped parts
//! over the group with the most room, with short leader lines. Stacked bars
//! may carry their totals at their ends. Hidden parts and categories leave
//! their space empty; nothing else moves. Where parts sit is
//! `part_slots.rs`, how they are named `part_names.rs`.

use crate::band::{self, VALUE_GAP};
use crate::band_axes::{self, Surface};
use crate::canvas::{Align, Canvas};
use crate::fit;
use crate::kit::{context_greys, mark_label, Obstacles};
use crate::layout::{self, map, max_width, Region};
use crate::metrics::line_height;
use crate::part_names::{self, Naming};
use crate::part_slots::{extents, roomiest, Slots};
use crate::place;
use crate::theme::{Rgb, Theme};
use crate::{Drawn, RenderError};
use crescendo_frame::{Orientation, PartsChart, PartsMode, Role};

/// Share of a category band filled by its bar (stacked) or group.
const BAR_SHARE: f64 = 0.62;
const GROUP_SHARE: f64 = 0.8;

/// The value domain widened to include zero (bars start at zero).
fn domain(chart: &PartsChart) -> [f64; 2] {
    let [a, b] = chart.value.domain;
    [a.min(b).min(0.0), a.max(b).max(0.0)]
}

/// Colour of each part (None when hidden).
fn colours(theme: &Theme, chart: &PartsChart) -> Vec<Option<Rgb>> {
    // The greys alternate over the context parts in order, so two context
    // parts next to each other (around a focus part too) always differ.
    let n = chart.parts.iter().filter(|p| p.role != Role::Focus).count();
    let mut greys = context_greys(theme, n).into_iter();
    chart
        .parts
        .iter()
        .map(|p| match p.role {
            Role::Focus => Some(theme.accent),
            Role::Hidden => {
                greys.next();
                None
            }
            Role::Context => greys.next(),
        })
        .collect()
}

/// Grouped bars name their parts beside the roomiest group: moves the
/// position `end` of the top of the value domain (`start` is its bottom) by
/// `sign` × the room `need(position of that group's end)` asks for, until it
/// asks for none (at most 32 times). Stacked bars keep `end`.
fn fit_scale(
    chart: &PartsChart,
    dom: [f64; 2],
    start: f64,
    mut end: f64,
    sign: f64,
    need: impl Fn(f64) -> f64,
) -> f64 {
    if chart.mode == PartsMode::Stacked || chart.parts.is_empty() {
        return end;
    }
    let g_end = extents(chart, roomiest(chart))
        .iter()
        .flatten()
        .map(|e| e.1.max(0.0))
        .fold(0.0, f64::max);
    for _ in 0..32 {
        let more = need(map(g_end, dom, start, end));
        if more <= 0.5 {
            break;
        }
        end += sign * more;
    }
    end
}

pub(crate) fn draw(canvas: &Canvas, theme: &Theme, chart: &PartsChart, region: Region) -> Drawn {
    layout::check_axis(&chart.value, "value")?;
    let on = Surface {
        canvas,
        theme,
        region,
    };
    let (s, cats, across, naming, mut obstacles) = match chart.orientation {
        Orientation::Vertical => vertical(on, chart)?,
        Orientation::Horizontal => horizontal(on, chart)?,
    };
    categories(canvas, theme, chart, &s, cats, &mut obstacles)?;
    let zero = s.vmap(0.0);
    let baseline = (theme.baseline, theme.baseline_stroke);
    s.bands.rule(canvas, across, zero, baseline.0, baseline.1)?;
    part_names::draw(canvas, theme, (chart, &s), naming, region, &mut obstacles)
}

/// What a layout hands to the drawing: the slots, how category names are
/// set, the baseline's extent across the bands, where part names go, and
/// the texts placed so far (for the names and labels still to place).
type Frame = (Slots, Categories, (f64, f64), Naming, Obstacles);

/// How category names are set: at most `lines` lines `width` wide, from
/// `start` (the top of the names under vertical bars, the right edge of the
/// name column of horizontal ones).
#[derive(Clone, Copy)]
struct Categories {
    width: f64,
    lines: usize,
    start: f64,
}

/// Every category's name and, unless hidden, its parts.
fn categories(
    canvas: &Canvas,
    theme: &Theme,
    chart: &PartsChart,
    s: &Slots,
    cats: Categories,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    let lh = line_height(theme.label_size);
    let step = theme.label_step();
    let colors = colours(theme, chart);
    let horizontal = s.bands.orientation == Orientation::Horizontal;
    // Names beside horizontal bars are centred on their band; a safety net
    // for more categories than rows keeps them apart.
    let spans: Vec<(f64, f64)> = (0..chart.categories.len())
        .map(|c| {
            let h = (cats.lines - 1) as f64 * step + lh;
            (s.bands.centre(c) - h / 2.0, s.bands.centre(c) + h / 2.0)
        })
        .collect();
    let keep = layout::thin(&spans, 0.0);
    for (c, cat) in chart.categories.iter().enumerate() {
        let focus = cat.role == Role::Focus;
        let (x, first, align, shown) = if horizontal {
            let shown = keep.get(c).copied().unwrap_or(false);
            (cats.start, spans[c].0, Align::End, shown)
        } else {
            (s.bands.centre(c), cats.start, Align::Middle, true)
        };
        let how = (theme.label_size, true);
        let lines = fit::lines(canvas, &cat.label, how, cats.width, cats.lines)?;
        for (i, line) in lines.iter().enumerate().filter(|_| shown) {
            let label = mark_label(theme, line, (x, first + i as f64 * step, align), focus);
            place::settle(canvas, theme.baseline, obstacles, &label, (&[], None))?;
        }
        let ext = extents(chart, c);
        if cat.role == Role::Hidden {
            // its places are kept for the frame that shows it
            for (j, e) in ext.iter().enumerate() {
                if let Some((a, b)) = e {
                    let (f, t) = s.across(c, j);
                    canvas.ghost(s.bands.point(f, s.vmap(*a)), s.bands.point(t, s.vmap(*b)));
                }
            }
            continue;
        }
        let total = s.stacked.then_some((cat.total_label.as_str(), cat.role));
        let across = |j| s.across(c, j);
        let vmap = |v| s.vmap(v);
        band::parts(
            canvas, theme, &s.bands, c, &ext, &colors, across, vmap, total, obstacles,
        )?;
    }
    Ok(())
}

/// Vertical bars: value ticks at the left, names under the bars, part
/// names beside the last bar (stacked) or above the roomiest group.
fn vertical(on: Surface, chart: &PartsChart) -> Result<Frame, RenderError> {
    let mut obstacles = Obstacles::default();
    let theme = on.theme;
    let lh = line_height(theme.label_size);
    let step = theme.label_step();
    let dom = domain(chart);
    let stacked = chart.mode == PartsMode::Stacked;
    let label_col = if stacked {
        max_width(
            part_names::names(theme, chart).iter().map(String::as_str),
            theme.label_size,
            true,
        )
    } else {
        0.0
    };
    let labels: Vec<&str> = chart.categories.iter().map(|c| c.label.as_str()).collect();
    let cat = chart.category_title.as_deref();
    let u = band_axes::upright(on, &mut obstacles, &chart.value, cat, &labels, label_col)?;
    let top = u.top;
    let mut value_bottom = u.names_top - 10.0;
    if dom[0] < 0.0 && stacked {
        value_bottom -= lh + VALUE_GAP;
    }
    // Totals need a line above the bars; grouped labels need rows above the
    // roomiest group, found by moving the top of the scale down until they fit.
    let value_top = if stacked {
        top + lh + VALUE_GAP
    } else {
        top + lh / 2.0 + 2.0
    };
    let k = chart.parts.len();
    let rows = k as f64 * step;
    let value_top = fit_scale(chart, dom, value_bottom, value_top, 1.0, |y| {
        top - (y - 6.0 - rows)
    });
    let vmap = |v: f64| map(v, dom, value_bottom, value_top);
    // The plot is the deck's rectangle; a grouped scale may start lower in
    // it, leaving rows for the part names above the roomiest group.
    let plot_top = if stacked {
        value_top
    } else {
        top + lh / 2.0 + 2.0
    };
    let ends = (plot_top, value_bottom);
    let bands = u.plot_bands(on, &mut obstacles, &chart.value, vmap, ends)?;
    let bar_w = if stacked {
        (u.band * BAR_SHARE).min(140.0)
    } else {
        (u.band * GROUP_SHARE).min(60.0 * k.max(1) as f64)
    };
    let s = Slots::new(bands, dom, (value_bottom, value_top), bar_w, k, stacked);
    let cats = Categories {
        width: u.name_width,
        lines: u.name_lines,
        start: u.names_top,
    };
    let naming = Naming::Beside {
        rows: (value_top.min(top + lh / 2.0), value_bottom),
        plot_right: u.plot.1,
    };
    Ok((s, cats, u.plot, naming, obstacles))
}

/// Horizontal bars: names in a column at the left, value ticks under,
/// part names in a row above (stacked) or right of the roomiest group.
fn horizontal(on: Surface, chart: &PartsChart) -> Result<Frame, RenderError> {
    let mut obstacles = Obstacles::default();
    let (theme, region) = (on.theme, on.region);
    let lh = line_height(theme.label_size);
    let dom = domain(chart);
    let stacked = chart.mode == PartsMode::Stacked;
    let k = chart.parts.len();
    let titles = (chart.category_title.as_deref(), chart.value.title.is_some());
    let names_row = if stacked { lh + 12.0 } else { 0.0 };
    let l = band_axes::lying(on, &mut obstacles, titles, names_row)?;
    let (plot_top, plot_bottom) = (l.plot_top, l.plot_bottom);

    let names = chart.categories.iter().map(|c| c.label.as_str());
    let col = l.names(theme, region, names, true);
    let (band, col_w, cat_lines, col_right, plot) =
        (col.band, col.width, col.lines, col.right, col.plot);

    let total_w = if stacked {
        max_width(
            chart.categories.iter().map(|c| c.total_label.as_str()),
            theme.label_size,
            true,
        )
    } else {
        0.0
    };
    let (left_pad, right_pad) = band::end_room(dom, total_w, total_w > 0.0, region.label_gutter);
    let value_left = plot.0 + left_pad;
    // Grouped names go right of the roomiest group: pull the end of the
    // scale in until they fit.
    let names = part_names::names(theme, chart);
    let names_w = max_width(names.iter().map(String::as_str), theme.label_size, true);
    let over = |x: f64| x + 8.0 + names_w - region.right;
    let value_right = fit_scale(chart, dom, value_left, plot.1 - right_pad, -1.0, over);
    let values = (value_left, value_right);
    let bands = l.plot(on, &mut obstacles, &col, (&chart.value, dom), values)?;
    let bar_h = if stacked {
        (band * BAR_SHARE).min(56.0)
    } else {
        (band * GROUP_SHARE).min(28.0 * k.max(1) as f64)
    };
    let s = Slots::new(bands, dom, values, bar_h, k, stacked);
    let cats = Categories {
        width: col_w,
        lines: cat_lines,
        start: col_right,
    };
    let naming = Naming::Above {
        row_top: l.names_row_top,
        plot: (plot.0, plot_top, plot_bottom),
    };
    Ok((s, cats, (plot_top, plot_bottom), naming, obstacles))
}
