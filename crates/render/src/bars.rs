//! Bar charts from zero, vertical or horizontal. Category labels are never
//! rotated: vertical bars wrap them onto two lines under the bar, horizontal
//! bars right-align them in a column at the left. Focus bars carry their
//! value at the bar end; hidden bars leave their slot empty.

use crate::axis;
use crate::band::{self, Band, VALUE_GAP};
use crate::canvas::{Align, Canvas, Label, WIDTH};
use crate::kit::Obstacles;
use crate::layout::{self, map, max_width, Region};
use crate::metrics::{line_height, text_width};
use crate::theme::Theme;
use crate::RenderError;
use crescendo_frame::{Bar, BarChart, Orientation, Role};

/// Space between a label column and the plot.
const PAD: f64 = 12.0;
/// Share of a category band filled by the bar.
const BAR_SHARE: f64 = 0.62;
/// Widest category column of horizontal bars, as a share of the canvas.
const MAX_CATEGORY_SHARE: f64 = 0.3;

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

pub(crate) fn draw(
    canvas: &Canvas,
    theme: &Theme,
    chart: &BarChart,
    region: Region,
) -> Result<(), RenderError> {
    layout::check_axis(&chart.value, "value")?;
    match chart.orientation {
        Orientation::Vertical => vertical(canvas, theme, chart, region),
        Orientation::Horizontal => horizontal(canvas, theme, chart, region),
    }
}

fn vertical(
    canvas: &Canvas,
    theme: &Theme,
    chart: &BarChart,
    region: Region,
) -> Result<(), RenderError> {
    let lh = line_height(theme.label_size);
    let step = theme.label_step();
    let domain = value_domain(chart);
    // texts and bars so far, for the value labels ([`crate::place`])
    let mut obstacles = Obstacles::default();
    let ticks = layout::visible_ticks(&chart.value);
    let tick_w = region.tick_column(max_width(
        ticks.iter().map(|(_, l)| l.as_str()),
        theme.label_size,
        false,
    ));
    let plot_left = if tick_w > 0.0 {
        region.left + tick_w + PAD
    } else {
        region.left
    };
    let plot_right = region.right;
    let n = chart.bars.len().max(1);
    let band = (plot_right - plot_left) / n as f64;
    let cat_w = band - 8.0;
    let two_lines = chart.bars.iter().any(|b| {
        text_width(
            &crate::metrics::normalize(&b.label),
            theme.label_size,
            false,
        ) > cat_w
    });
    let cat_lines = if two_lines { 2 } else { 1 };

    let mut top = region.top;
    if let Some(title) = chart.value.title.as_deref() {
        axis::title(
            canvas,
            &mut obstacles,
            theme,
            title,
            region.right - region.left,
            (region.left, top),
            Align::Start,
        )?;
        top += lh + 8.0;
    }
    let mut bottom = region.bottom;
    if let Some(title) = chart.category_title.as_deref() {
        bottom -= lh;
        axis::title(
            canvas,
            &mut obstacles,
            theme,
            title,
            plot_right - plot_left,
            ((plot_left + plot_right) / 2.0, bottom),
            Align::Middle,
        )?;
        bottom -= 6.0;
    }
    let cat_top = bottom - (cat_lines - 1) as f64 * step - lh;
    // Room for value labels above positive and below negative bars.
    let value_top = top + lh + VALUE_GAP;
    let mut value_bottom = cat_top - 10.0;
    if domain[0] < 0.0 {
        value_bottom -= lh + VALUE_GAP;
    }
    let vmap = |v: f64| map(v, domain, value_bottom, value_top);

    let (size, right) = (theme.label_size, region.left + tick_w);
    axis::column(
        canvas,
        &mut obstacles,
        theme,
        size,
        &chart.value,
        vmap,
        right,
    )?;

    let zero = vmap(0.0);
    axis::gridlines(
        canvas,
        theme,
        &chart.value,
        vmap,
        plot_left,
        plot_right,
        axis::Across::Rows,
        Some(zero),
    )?;
    let bar_w = (band * BAR_SHARE).min(160.0);
    let bands = Band {
        orientation: Orientation::Vertical,
        start: plot_left,
        size: band,
    };
    for (i, bar) in chart.bars.iter().enumerate() {
        let centre = bands.centre(i);
        for (k, line) in layout::fit_label_at(theme.label_size, &bar.label, cat_w, cat_lines, false)
            .iter()
            .enumerate()
        {
            canvas.text(&muted_label(
                theme,
                line,
                centre,
                cat_top + k as f64 * step,
                Align::Middle,
            ))?;
        }
        let (Some(color), Some(value)) =
            (bar_color(theme, bar), bar.value.filter(|v| v.is_finite()))
        else {
            continue;
        };
        marks(
            canvas,
            theme,
            &bands,
            i,
            bar_w,
            (zero, vmap(value)),
            bar,
            color,
            &mut obstacles,
        )?;
    }
    let baseline = (theme.baseline, theme.baseline_stroke);
    bands.rule(
        canvas,
        (plot_left, plot_right),
        zero,
        baseline.0,
        baseline.1,
    )
}

/// Bar `i`'s mark from `zero` to `end` and, in focus, its value.
#[allow(clippy::too_many_arguments)]
fn marks(
    canvas: &Canvas,
    theme: &Theme,
    bands: &Band,
    i: usize,
    thickness: f64,
    (zero, end): (f64, f64),
    bar: &Bar,
    color: crate::theme::Rgb,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    let positive = bar.value.is_some_and(|v| v >= 0.0);
    let label = (bar.role == Role::Focus).then_some(bar.value_label.as_str());
    band::bar(
        canvas,
        theme,
        bands,
        i,
        thickness,
        (zero, end),
        positive,
        color,
        label,
        obstacles,
    )
}

fn horizontal(
    canvas: &Canvas,
    theme: &Theme,
    chart: &BarChart,
    region: Region,
) -> Result<(), RenderError> {
    let lh = line_height(theme.label_size);
    let step = theme.label_step();
    let domain = value_domain(chart);
    // texts and bars so far, for the value labels ([`crate::place`])
    let mut obstacles = Obstacles::default();

    let mut top = region.top;
    if let Some(title) = chart.category_title.as_deref() {
        axis::title(
            canvas,
            &mut obstacles,
            theme,
            title,
            region.right - region.left,
            (region.left, top),
            Align::Start,
        )?;
        top += lh + 8.0;
    }
    let plot_top = top;
    let titled = chart.value.title.is_some();
    let (value_title_top, tick_top, plot_bottom) = axis::bottom_rows(region.bottom, lh, titled);

    let n = chart.bars.len().max(1);
    let band = (plot_bottom - plot_top) / n as f64;
    let cap = WIDTH as f64 * MAX_CATEGORY_SHARE;
    let widest = max_width(
        chart.bars.iter().map(|b| b.label.as_str()),
        theme.label_size,
        false,
    );
    let (col_w, cat_lines) = band::name_column(widest, cap, band, step);
    let col_right = region.left + col_w;
    let plot_left = col_right + PAD;
    let plot_right = region.right;

    // Room for value labels beyond the ends of the bars.
    let value_w = max_width(
        chart.bars.iter().map(|b| b.value_label.as_str()),
        theme.label_size,
        true,
    );
    let (left_pad, right_pad) = band::end_room(domain, value_w, true);
    let (value_left, value_right) = (plot_left + left_pad, plot_right - right_pad);
    let vmap = |v: f64| map(v, domain, value_left, value_right);

    let row = axis::Row {
        top: tick_top,
        lo: region.left,
        hi: plot_right,
        gap: 12.0,
        fit: axis::Fit::AsWritten,
        keep_left: false,
    };
    let under = axis::Under {
        title: value_title_top
            .map(|t| (t, plot_right - plot_left, (value_left + value_right) / 2.0)),
        row,
        across: (plot_top, plot_bottom),
        skip_zero: true,
    };
    axis::under(canvas, &mut obstacles, theme, &chart.value, vmap, under)?;
    let zero = vmap(0.0);
    let bar_h = (band * BAR_SHARE).min(56.0);
    let bands = Band {
        orientation: Orientation::Horizontal,
        start: plot_top,
        size: band,
    };
    let labels = name_rows(theme, chart, &bands, col_w, cat_lines);
    for (i, bar) in chart.bars.iter().enumerate() {
        let (first_top, lines) = &labels[i];
        for (k, line) in lines.iter().enumerate() {
            canvas.text(&muted_label(
                theme,
                line,
                col_right,
                first_top + k as f64 * step,
                Align::End,
            ))?;
        }
        let (Some(color), Some(value)) =
            (bar_color(theme, bar), bar.value.filter(|v| v.is_finite()))
        else {
            continue;
        };
        marks(
            canvas,
            theme,
            &bands,
            i,
            bar_h,
            (zero, vmap(value)),
            bar,
            color,
            &mut obstacles,
        )?;
    }
    let baseline = (theme.baseline, theme.baseline_stroke);
    bands.rule(
        canvas,
        (plot_top, plot_bottom),
        zero,
        baseline.0,
        baseline.1,
    )
}

/// The names of horizontal bars, centred on their bands in a column
/// `col_w` wide: each name's first top and lines, no lines for a name
/// dropped so that none collide (a safety net for more bars than rows).
fn name_rows(
    theme: &Theme,
    chart: &BarChart,
    bands: &Band,
    col_w: f64,
    cat_lines: usize,
) -> Vec<(f64, Vec<String>)> {
    let lh = line_height(theme.label_size);
    let step = theme.label_step();
    let labels: Vec<(f64, Vec<String>)> = chart
        .bars
        .iter()
        .enumerate()
        .map(|(i, bar)| {
            let centre = bands.centre(i);
            let lines = layout::fit_label_at(theme.label_size, &bar.label, col_w, cat_lines, false);
            let first_top = centre - ((lines.len().max(1) - 1) as f64 * step + lh) / 2.0;
            (first_top, lines)
        })
        .collect();
    let spans: Vec<(f64, f64)> = labels
        .iter()
        .map(|(t, lines)| (*t, t + (lines.len().max(1) - 1) as f64 * step + lh))
        .collect();
    let keep = layout::thin(&spans, 0.0);
    labels
        .into_iter()
        .zip(keep)
        .map(|((top, lines), keep)| (top, if keep { lines } else { Vec::new() }))
        .collect()
}
