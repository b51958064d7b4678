//! Bar charts from zero, vertical or horizontal. Category labels are never
//! rotated: vertical bars wrap them onto two lines under the bar, horizontal
//! bars right-align them in a column at the left. Focus bars carry their
//! value at the bar end; hidden bars leave their slot empty.

use crate::band::{self, Band, VALUE_GAP};
use crate::band_axes::{self, Surface};
use crate::canvas::{Align, Canvas, Label};
use crate::fit;
use crate::kit::Obstacles;
use crate::layout::{self, map, max_width, Region};
use crate::metrics::line_height;
use crate::theme::Theme;
use crate::{Drawn, RenderError};
use crescendo_frame::{Bar, BarChart, Orientation, Role};

/// Share of a category band filled by the bar.
const BAR_SHARE: f64 = 0.62;

fn bar_color(theme: &Theme, bar: &Bar) -> Option<crate::theme::Rgb> {
    match bar.role {
        Role::Focus => Some(theme.accent),
        Role::Context => Some(theme.context),
        Role::Hidden => None,
    }
}

/// The value axis domain, widened to include zero (bars start at zero).
fn value_domain(chart: &BarChart) -> [f64; 2] {
    let [a, b] = chart.value.domain;
    [a.min(b).min(0.0), a.max(b).max(0.0)]
}

fn muted_label<'a>(theme: &Theme, text: &'a str, x: f64, top: f64, align: Align) -> Label<'a> {
    Label {
        text,
        x,
        top,
        size: theme.label_size,
        bold: false,
        color: theme.muted,
        align,
    }
}

/// Where a bar chart's parts go: the bands, the thickness of a bar, the
/// positions of the value domain's ends, the extent of the baseline across
/// the bands, each category name's place and lines, and the texts placed
/// so far (for the value labels, [`crate::place`]).
struct Frame {
    bands: Band,
    thickness: f64,
    ends: (f64, f64),
    across: (f64, f64),
    names: Vec<(f64, f64, Align, Vec<String>)>,
    obstacles: Obstacles,
}

pub(crate) fn draw(canvas: &Canvas, theme: &Theme, chart: &BarChart, region: Region) -> Drawn {
    layout::check_axis(&chart.value, "value")?;
    let step = theme.label_step();
    let domain = value_domain(chart);
    let on = Surface {
        canvas,
        theme,
        region,
    };
    let mut f = match chart.orientation {
        Orientation::Vertical => vertical(on, chart)?,
        Orientation::Horizontal => horizontal(on, chart)?,
    };
    let vmap = |v: f64| map(v, domain, f.ends.0, f.ends.1);
    let zero = vmap(0.0);
    for (i, bar) in chart.bars.iter().enumerate() {
        if let Some((x, first_top, align, lines)) = f.names.get(i) {
            for (k, line) in lines.iter().enumerate() {
                let top = first_top + k as f64 * step;
                canvas.text(&muted_label(theme, line, *x, top, *align))?;
            }
        }
        let Some(value) = bar.value.filter(|v| v.is_finite()) else {
            continue;
        };
        let Some(color) = bar_color(theme, bar) else {
            // hidden: its place is kept for the frame that shows it
            f.bands.ghost(canvas, i, f.thickness, (zero, vmap(value)));
            continue;
        };
        let positive = bar.value.is_some_and(|v| v >= 0.0);
        let label = (bar.role == Role::Focus).then_some(bar.value_label.as_str());
        band::bar(
            canvas,
            theme,
            &f.bands,
            i,
            f.thickness,
            (zero, vmap(value)),
            positive,
            color,
            label,
            &mut f.obstacles,
        )?;
    }
    let baseline = (theme.baseline, theme.baseline_stroke);
    f.bands.rule(canvas, f.across, zero, baseline.0, baseline.1)
}

/// Vertical bars: value ticks at the left, names under the bars.
fn vertical(on: Surface, chart: &BarChart) -> Result<Frame, RenderError> {
    let mut obstacles = Obstacles::default();
    let (canvas, theme) = (on.canvas, on.theme);
    let lh = line_height(theme.label_size);
    let domain = value_domain(chart);
    let names: Vec<&str> = chart.bars.iter().map(|b| b.label.as_str()).collect();
    let cat = chart.category_title.as_deref();
    let u = band_axes::upright(on, &mut obstacles, &chart.value, cat, &names, 0.0)?;
    // Room for value labels above positive and below negative bars.
    let value_top = u.top + lh + VALUE_GAP;
    let mut value_bottom = u.names_top - 10.0;
    if domain[0] < 0.0 {
        value_bottom -= lh + VALUE_GAP;
    }
    let vmap = |v: f64| map(v, domain, value_bottom, value_top);
    let ends = (value_top, value_bottom);
    let bands = u.plot_bands(on, &mut obstacles, &chart.value, vmap, ends)?;
    let how = (theme.label_size, false);
    let names = (chart.bars.iter().enumerate())
        .map(|(i, bar)| {
            let lines = fit::lines(canvas, &bar.label, how, u.name_width, u.name_lines)?;
            Ok((bands.centre(i), u.names_top, Align::Middle, lines))
        })
        .collect::<Result<_, RenderError>>()?;
    Ok(Frame {
        bands,
        thickness: (u.band * BAR_SHARE).min(160.0),
        ends: (value_bottom, value_top),
        across: u.plot,
        names,
        obstacles,
    })
}

/// Horizontal bars: names in a column at the left, value ticks under.
fn horizontal(on: Surface, chart: &BarChart) -> Result<Frame, RenderError> {
    let mut obstacles = Obstacles::default();
    let (canvas, theme, region) = (on.canvas, on.theme, on.region);
    let domain = value_domain(chart);
    let titles = (chart.category_title.as_deref(), chart.value.title.is_some());
    let l = band_axes::lying(on, &mut obstacles, titles, 0.0)?;
    let (plot_top, plot_bottom) = (l.plot_top, l.plot_bottom);

    let names = chart.bars.iter().map(|b| b.label.as_str());
    let col = l.names(theme, region, names, false);
    let (band, col_w, cat_lines, col_right, plot) =
        (col.band, col.width, col.lines, col.right, col.plot);

    // Room for value labels beyond the ends of the bars.
    let value_w = max_width(
        chart.bars.iter().map(|b| b.value_label.as_str()),
        theme.label_size,
        true,
    );
    let (left_pad, right_pad) = band::end_room(domain, value_w, true, region.label_gutter);
    let values = (plot.0 + left_pad, plot.1 - right_pad);
    let bands = l.plot(on, &mut obstacles, &col, (&chart.value, domain), values)?;
    let names = name_rows(canvas, theme, chart, &bands, (col_w, cat_lines))?
        .into_iter()
        .map(|(top, lines)| (col_right, top, Align::End, lines))
        .collect();
    Ok(Frame {
        bands,
        thickness: (band * BAR_SHARE).min(56.0),
        ends: values,
        across: (plot_top, plot_bottom),
        names,
        obstacles,
    })
}

/// The names of horizontal bars, centred on their bands in a column
/// `col_w` wide: each name's first top and lines, no lines for a name
/// dropped so that none collide (a safety net for more bars than rows).
fn name_rows(
    canvas: &Canvas,
    theme: &Theme,
    chart: &BarChart,
    bands: &Band,
    (col_w, cat_lines): (f64, usize),
) -> Result<Vec<(f64, Vec<String>)>, RenderError> {
    let lh = line_height(theme.label_size);
    let step = theme.label_step();
    let how = (theme.label_size, false);
    let labels: Vec<(f64, Vec<String>)> = (chart.bars.iter().enumerate())
        .map(|(i, bar)| {
            let centre = bands.centre(i);
            let lines = fit::lines(canvas, &bar.label, how, col_w, cat_lines)?;
            let first_top = centre - ((lines.len().max(1) - 1) as f64 * step + lh) / 2.0;
            Ok((first_top, lines))
        })
        .collect::<Result<_, RenderError>>()?;
    let spans: Vec<(f64, f64)> = labels
        .iter()
        .map(|(t, lines)| (*t, t + (lines.len().max(1) - 1) as f64 * step + lh))
        .collect();
    let keep = layout::thin(&spans, 0.0);
    Ok(labels
        .into_iter()
        .zip(keep)
        .map(|((top, lines), keep)| (top, if keep { lines } else { Vec::new() }))
        .collect())
}
