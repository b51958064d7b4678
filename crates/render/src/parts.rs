//! Bars split into parts: stacked (segments of one bar, from the baseline in
//! the plan's part order) or grouped (bars side by side in each category
//! slot), vertical or horizontal. Context parts get distinct greys derived
//! from the theme's context grey (darker first), the focus part the accent.
//! Parts are named directly, never in a legend: stacked parts beside the
//! last bar (vertical) or above the first bar (horizontal), grouped parts
//! over the group with the most room, with short leader lines. Stacked bars
//! may carry their totals at their ends. Hidden parts and categories leave
//! their space empty; nothing else moves.

use crate::band::{self, Band, VALUE_GAP};
use crate::band_axes::{self, PAD};
use crate::canvas::{Align, Canvas, Label};
use crate::kit::{self, context_greys, spread_widths, Obstacles};
use crate::layout::{self, fit_label_at, map, max_width, Region};
use crate::metrics::{self, line_height, text_width};
use crate::theme::{Rgb, Theme};
use crate::RenderError;
use crescendo_frame::{Orientation, PartsChart, PartsMode, Role};

/// Share of a category band filled by its bar (stacked) or group.
const BAR_SHARE: f64 = 0.62;
const GROUP_SHARE: f64 = 0.8;
/// Widest a part name may be (at 16 px labels; [`Theme::label_scaled`]).
const MAX_PART_LABEL: f64 = 240.0;
/// Widest category column of horizontal bars, as a share of the region.
const MAX_CATEGORY_SHARE: f64 = 0.3;

/// The value domain widened to include zero (bars start at zero).
fn domain(chart: &PartsChart) -> [f64; 2] {
    let [a, b] = chart.value.domain;
    [a.min(b).min(0.0), a.max(b).max(0.0)]
}

/// Extent of every part of category `c` along the value axis, in data
/// units: stacked parts pile up from zero (negative ones downwards),
/// grouped ones each start at zero. `None` for a missing value.
fn extents(chart: &PartsChart, c: usize) -> Vec<Option<(f64, f64)>> {
    let values = chart
        .categories
        .get(c)
        .map(|c| c.values.as_slice())
        .unwrap_or(&[]);
    let (mut pos, mut neg) = (0.0, 0.0);
    (0..chart.parts.len())
        .map(|j| {
            let v = values.get(j).copied().flatten().filter(|v| v.is_finite())?;
            Some(match chart.mode {
                PartsMode::Grouped => (0.0, v),
                PartsMode::Stacked if v >= 0.0 => {
                    pos += v;
                    (pos - v, pos)
                }
                PartsMode::Stacked => {
                    neg += v;
                    (neg - v, neg)
                }
            })
        })
        .collect()
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

fn part_text(theme: &Theme, name: &str) -> String {
    metrics::ellipsize(
        &metrics::normalize(name),
        theme.label_size,
        true,
        theme.label_scaled(MAX_PART_LABEL),
    )
}

fn part_label<'a>(
    theme: &Theme,
    role: Role,
    text: &'a str,
    x: f64,
    top: f64,
    align: Align,
) -> Option<Label<'a>> {
    let (color, bold) = match role {
        Role::Hidden => return None,
        Role::Focus => (theme.accent, true),
        Role::Context => (theme.context_text, false),
    };
    Some(Label {
        text,
        x,
        top,
        size: theme.label_size,
        bold,
        color,
        align,
    })
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

/// The category whose tallest part is lowest: where grouped labels have
/// the most room.
fn roomiest(chart: &PartsChart) -> usize {
    let mut best = (0, f64::INFINITY);
    for c in 0..chart.categories.len() {
        let top = extents(chart, c)
            .iter()
            .flatten()
            .map(|e| e.1.max(e.0))
            .fold(0.0, f64::max);
        if top < best.1 {
            best = (c, top);
        }
    }
    best.0
}

/// Where the part names go: beside vertical bars (`rows` is the span they
/// may take, right of `plot_right`), or above and beside horizontal ones.
enum Naming {
    Beside { rows: (f64, f64), plot_right: f64 },
    Above { row_top: f64, plot: (f64, f64, f64) },
}

pub(crate) fn draw(
    canvas: &Canvas,
    theme: &Theme,
    chart: &PartsChart,
    region: Region,
) -> Result<(), RenderError> {
    layout::check_axis(&chart.value, "value")?;
    let mut obstacles = Obstacles::default();
    let (s, cats, across, naming) = match chart.orientation {
        Orientation::Vertical => vertical(canvas, theme, chart, region, &mut obstacles)?,
        Orientation::Horizontal => horizontal(canvas, theme, chart, region, &mut obstacles)?,
    };
    categories(canvas, theme, chart, &s, cats, &mut obstacles)?;
    let zero = s.vmap(0.0);
    let baseline = (theme.baseline, theme.baseline_stroke);
    s.bands.rule(canvas, across, zero, baseline.0, baseline.1)?;
    match naming {
        Naming::Beside { rows, plot_right } => name_parts_vertical(
            canvas,
            theme,
            chart,
            &s,
            rows,
            (plot_right, region),
            &mut obstacles,
        ),
        Naming::Above { row_top, plot } => name_parts_horizontal(
            canvas,
            theme,
            chart,
            &s,
            row_top,
            plot,
            region,
            &mut obstacles,
        ),
    }
}

/// What a layout hands to the drawing: the slots, how category names are
/// set, the baseline's extent across the bands and where part names go.
type Frame = (Slots, Categories, (f64, f64), Naming);

/// Where the parts go: the category bands, the value mapping, and each
/// part's place across its band.
struct Slots {
    bands: Band,
    dom: [f64; 2],
    /// Positions of the ends of the value domain.
    ends: (f64, f64),
    /// Width of a stacked bar or of a whole group.
    thickness: f64,
    /// Width of one bar of a group.
    slot: f64,
    stacked: bool,
}

impl Slots {
    fn new(
        bands: Band,
        dom: [f64; 2],
        ends: (f64, f64),
        thickness: f64,
        k: usize,
        stacked: bool,
    ) -> Slots {
        let slot = if stacked {
            thickness
        } else {
            thickness / k.max(1) as f64
        };
        Slots {
            bands,
            dom,
            ends,
            thickness,
            slot,
            stacked,
        }
    }

    fn vmap(&self, v: f64) -> f64 {
        map(v, self.dom, self.ends.0, self.ends.1)
    }

    /// Where part `j` of category `c` sits across the category axis.
    fn across(&self, c: usize, j: usize) -> (f64, f64) {
        let centre = self.bands.centre(c);
        if self.stacked {
            (centre - self.thickness / 2.0, centre + self.thickness / 2.0)
        } else {
            let start = centre - self.thickness / 2.0 + j as f64 * self.slot;
            (start + 1.0, start + self.slot - 1.0)
        }
    }
}

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
        let lines = fit_label_at(theme.label_size, &cat.label, cats.width, cats.lines, true);
        for (i, line) in lines.iter().enumerate().filter(|_| shown) {
            let label = Label {
                text: line,
                x,
                top: first + i as f64 * step,
                size: theme.label_size,
                bold: focus,
                color: if focus { theme.accent } else { theme.muted },
                align,
            };
            kit::put(canvas, obstacles, &label)?;
        }
        if cat.role == Role::Hidden {
            continue;
        }
        let total = s.stacked.then_some((cat.total_label.as_str(), cat.role));
        let ext = extents(chart, c);
        let across = |j| s.across(c, j);
        let vmap = |v| s.vmap(v);
        band::parts(
            canvas, theme, &s.bands, c, &ext, &colors, across, vmap, total, obstacles,
        )?;
    }
    Ok(())
}

/// The part names as drawn (bold width, cut to the widest a name may be).
fn names(theme: &Theme, chart: &PartsChart) -> Vec<String> {
    chart
        .parts
        .iter()
        .map(|p| part_text(theme, &p.name))
        .collect()
}

/// Vertical bars: value ticks at the left, names under the bars, part
/// names beside the last bar (stacked) or above the roomiest group.
fn vertical(
    canvas: &Canvas,
    theme: &Theme,
    chart: &PartsChart,
    region: Region,
    obstacles: &mut Obstacles,
) -> Result<Frame, RenderError> {
    let lh = line_height(theme.label_size);
    let step = theme.label_step();
    let dom = domain(chart);
    let stacked = chart.mode == PartsMode::Stacked;
    let label_col = if stacked {
        max_width(
            names(theme, chart).iter().map(String::as_str),
            theme.label_size,
            true,
        )
    } else {
        0.0
    };
    let labels: Vec<&str> = chart.categories.iter().map(|c| c.label.as_str()).collect();
    let cat = chart.category_title.as_deref();
    let u = band_axes::upright(
        canvas,
        obstacles,
        theme,
        region,
        &chart.value,
        cat,
        &labels,
        label_col,
    )?;
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
    u.value_axis(canvas, obstacles, theme, &chart.value, vmap)?;
    let bands = Band {
        orientation: Orientation::Vertical,
        start: u.plot.0,
        size: u.band,
    };
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
    Ok((s, cats, u.plot, naming))
}

/// Names of the parts of vertical bars: stacked ones beside the last
/// category with a value for each part, grouped ones in rows above the
/// roomiest group.
fn name_parts_vertical(
    canvas: &Canvas,
    theme: &Theme,
    chart: &PartsChart,
    s: &Slots,
    (rows_top, value_bottom): (f64, f64),
    (plot_right, region): (f64, Region),
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    let lh = line_height(theme.label_size);
    let step = theme.label_step();
    let names = names(theme, chart);
    let k = chart.parts.len();
    let g = roomiest(chart);
    let zero = s.vmap(0.0);
    if s.stacked {
        // Beside the last category with a value for each part.
        let mut wanted: Vec<(f64, usize, f64)> = Vec::new();
        for j in 0..k {
            let found = (0..chart.categories.len())
                .rev()
                .find_map(|c| extents(chart, c)[j].map(|e| (c, e)));
            if let Some((c, (a, b))) = found {
                wanted.push((s.vmap((a + b) / 2.0), j, s.across(c, j).1));
            }
        }
        wanted.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        let ys: Vec<f64> = wanted.iter().map(|w| w.0).collect();
        let placed = layout::spread(&ys, step, rows_top, value_bottom);
        let x = plot_right + PAD + 8.0;
        for (&(y0, j, bar_right), y) in wanted.iter().zip(placed) {
            let Some(label) = part_label(
                theme,
                chart.parts[j].role,
                &names[j],
                x,
                y - lh / 2.0,
                Align::Start,
            ) else {
                continue;
            };
            canvas.polyline(&[(bar_right + 3.0, y0), (x - 4.0, y)], theme.baseline, 1)?;
            kit::put(canvas, obstacles, &label)?;
        }
    } else if k > 0 {
        // Rows above the roomiest group: the rightmost bar's name lowest, so
        // leaders never cross a name.
        let ext = extents(chart, g);
        let g_top = ext
            .iter()
            .flatten()
            .map(|e| s.vmap(e.1.max(0.0)))
            .fold(zero, f64::min);
        for j in 0..k {
            let row = k - 1 - j;
            let label_top = g_top - 6.0 - (row as f64 + 1.0) * step + 2.0;
            let (x0, x1) = s.across(g, j);
            let cx = (x0 + x1) / 2.0;
            let w = text_width(&names[j], theme.label_size, true);
            let x = (cx - 2.0).min(region.right - w).max(region.left);
            let Some(label) = part_label(
                theme,
                chart.parts[j].role,
                &names[j],
                x,
                label_top,
                Align::Start,
            ) else {
                continue;
            };
            let bar_top = ext[j].map(|e| s.vmap(e.1.max(0.0))).unwrap_or(zero);
            canvas.line(
                (cx, label_top + lh + 1.0),
                (cx, bar_top - 2.0),
                theme.baseline,
                1,
            )?;
            kit::put(canvas, obstacles, &label)?;
        }
    }
    Ok(())
}
/// Horizontal bars: names in a column at the left, value ticks under,
/// part names in a row above (stacked) or right of the roomiest group.
fn horizontal(
    canvas: &Canvas,
    theme: &Theme,
    chart: &PartsChart,
    region: Region,
    obstacles: &mut Obstacles,
) -> Result<Frame, RenderError> {
    let lh = line_height(theme.label_size);
    let step = theme.label_step();
    let dom = domain(chart);
    let stacked = chart.mode == PartsMode::Stacked;
    let k = chart.parts.len();
    let titles = (chart.category_title.as_deref(), chart.value.title.is_some());
    let names_row = if stacked { lh + 12.0 } else { 0.0 };
    let l = band_axes::lying(canvas, obstacles, theme, region, titles, names_row)?;
    let (plot_top, plot_bottom) = (l.plot_top, l.plot_bottom);

    let n = chart.categories.len().max(1);
    let band = (plot_bottom - plot_top) / n as f64;
    let cap = (region.right - region.left) * MAX_CATEGORY_SHARE;
    let widest = max_width(
        chart.categories.iter().map(|c| c.label.as_str()),
        theme.label_size,
        true,
    );
    let (col_w, cat_lines) = band::name_column(widest, cap, band, step);
    let col_right = region.left + col_w;
    let plot = (col_right + PAD, region.right);

    let total_w = if stacked {
        max_width(
            chart.categories.iter().map(|c| c.total_label.as_str()),
            theme.label_size,
            true,
        )
    } else {
        0.0
    };
    let (left_pad, right_pad) = band::end_room(dom, total_w, total_w > 0.0);
    let value_left = plot.0 + left_pad;
    // Grouped names go right of the roomiest group: pull the end of the
    // scale in until they fit.
    let names = names(theme, chart);
    let names_w = max_width(names.iter().map(String::as_str), theme.label_size, true);
    let over = |x: f64| x + 8.0 + names_w - region.right;
    let value_right = fit_scale(chart, dom, value_left, plot.1 - right_pad, -1.0, over);
    let values = (value_left, value_right);
    let vmap = |v: f64| map(v, dom, value_left, value_right);
    let value = (&chart.value, vmap);
    l.value_axis(canvas, obstacles, theme, value, region.left, plot, values)?;
    let bands = Band {
        orientation: Orientation::Horizontal,
        start: plot_top,
        size: band,
    };
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
    Ok((s, cats, (plot_top, plot_bottom), naming))
}

/// Names of the parts of horizontal bars: stacked ones in a row above the
/// first bar, each over its segment; grouped ones right of the roomiest
/// group, one per bar.
#[allow(clippy::too_many_arguments)]
fn name_parts_horizontal(
    canvas: &Canvas,
    theme: &Theme,
    chart: &PartsChart,
    s: &Slots,
    names_row_top: f64,
    (plot_left, plot_top, plot_bottom): (f64, f64, f64),
    region: Region,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    let lh = line_height(theme.label_size);
    let step = theme.label_step();
    let names = names(theme, chart);
    let k = chart.parts.len();
    let g = roomiest(chart);
    let zero = s.vmap(0.0);
    if s.stacked {
        // A row of names above the first bar, each over its segment.
        let mut wanted: Vec<(f64, usize, f64)> = Vec::new();
        for j in 0..k {
            let found =
                (0..chart.categories.len()).find_map(|c| extents(chart, c)[j].map(|e| (c, e)));
            if let Some((c, (a, b))) = found {
                wanted.push((s.vmap((a + b) / 2.0), j, s.across(c, j).0));
            }
        }
        wanted.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        let widths: Vec<f64> = wanted
            .iter()
            .map(|w| text_width(&names[w.1], theme.label_size, true))
            .collect();
        let xs: Vec<f64> = wanted.iter().map(|w| w.0).collect();
        let centres = spread_widths(&xs, &widths, 14.0, plot_left, region.right);
        for (&(x0, j, bar_top), x) in wanted.iter().zip(centres) {
            let Some(label) = part_label(
                theme,
                chart.parts[j].role,
                &names[j],
                x,
                names_row_top,
                Align::Middle,
            ) else {
                continue;
            };
            canvas.polyline(
                &[(x, names_row_top + lh + 2.0), (x0, bar_top - 2.0)],
                theme.baseline,
                1,
            )?;
            kit::put(canvas, obstacles, &label)?;
        }
    } else if k > 0 {
        // Names right of the roomiest group, one per bar, spread apart.
        let ext = extents(chart, g);
        let x = ext
            .iter()
            .flatten()
            .map(|e| s.vmap(e.1.max(0.0)))
            .fold(zero, f64::max)
            + 8.0;
        let wanted: Vec<f64> = (0..k)
            .map(|j| {
                let (y0, y1) = s.across(g, j);
                (y0 + y1) / 2.0
            })
            .collect();
        let placed = layout::spread(&wanted, step, plot_top + lh / 2.0, plot_bottom - lh / 2.0);
        let moved = placed.iter().zip(&wanted).any(|(p, w)| (p - w).abs() > 0.5);
        for (j, y) in placed.into_iter().enumerate() {
            // Beside its own bar when the names fit the bars' rows; else
            // all past the longest bar of the group.
            let own = ext[j].map(|e| s.vmap(e.1.max(0.0)) + 8.0).unwrap_or(x);
            let x = if moved { x } else { own };
            let Some(label) = part_label(
                theme,
                chart.parts[j].role,
                &names[j],
                x,
                y - lh / 2.0,
                Align::Start,
            ) else {
                continue;
            };
            kit::put(canvas, obstacles, &label)?;
        }
    }
    Ok(())
}
