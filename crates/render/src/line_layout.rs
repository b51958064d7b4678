//! Plot geometry of a line chart, shared by the line drawer
//! ([`crate::line`]) and the notes drawn over it ([`crate::annotate`]).

use crate::canvas::Canvas;
use crate::layout::{self, max_width, Region};
use crate::metrics::line_height;
use crate::theme::Theme;
use crescendo_frame::LineChart;

/// Space between the plot and the direct labels when some label moved away
/// from its line's end and needs a leader ([`crate::place`]).
use crate::layout::LEADER_PAD;
/// Widest direct-label column, in px; longer labels are cut with an ellipsis.
use crate::layout::LINE_LABEL_COLUMN as MAX_LABEL_COLUMN;
/// Space between tick labels or direct labels and the plot.
const PAD: f64 = 12.0;

/// A line chart as laid out on the canvas: what its notes are drawn over.
#[derive(Clone, Copy)]
pub(crate) struct LinePlot<'a> {
    pub canvas: &'a Canvas,
    pub theme: &'a Theme,
    pub chart: &'a LineChart,
    pub l: &'a LineLayout,
}

/// Plot geometry of a line chart. Depends only on the axes and the names of
/// all series (hidden ones included), never on roles.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct LineLayout {
    pub y_title_top: Option<f64>,
    pub x_title_top: Option<f64>,
    pub tick_column_left: f64,
    pub tick_column_right: f64,
    pub label_column_left: f64,
    pub label_column_width: f64,
    pub plot_left: f64,
    pub plot_right: f64,
    pub plot_top: f64,
    pub plot_bottom: f64,
    pub x_tick_top: f64,
}

impl LineLayout {
    /// The plot's width in px.
    pub(crate) fn plot_width(&self) -> f64 {
        self.plot_right - self.plot_left
    }

    /// Data to px along the x axis of `chart`.
    pub(crate) fn xmap(&self, chart: &LineChart) -> impl Fn(f64) -> f64 {
        let (d, a, b) = (chart.x.domain, self.plot_left, self.plot_right);
        move |x| layout::map(x, d, a, b)
    }

    /// Data to px along the y axis of `chart`.
    pub(crate) fn ymap(&self, chart: &LineChart) -> impl Fn(f64) -> f64 {
        let (d, a, b) = (chart.y.domain, self.plot_bottom, self.plot_top);
        move |y| layout::map(y, d, a, b)
    }

    /// Where notes on the chart may go: the plot, with half a line of room
    /// at the top.
    pub(crate) fn note_bounds(&self, theme: &Theme) -> crate::kit::Rect {
        crate::kit::Rect {
            x0: self.plot_left,
            y0: self.plot_top - line_height(theme.label_size) / 2.0,
            x1: self.plot_right,
            y1: self.plot_bottom - 2.0,
        }
    }
}

/// The direct labels at the right: for each series with a value, its line
/// end's y (`wanted`), the centre its label gets after de-overlapping
/// (`placed`) and its index, ordered top to bottom. Every series counts,
/// hidden ones too, so a label never moves when another series appears.
pub(crate) fn end_rows(
    chart: &LineChart,
    theme: &Theme,
    plot_top: f64,
    plot_bottom: f64,
) -> Vec<(f64, f64, usize)> {
    let ymap = |y: f64| layout::map(y, chart.y.domain, plot_bottom, plot_top);
    let mut ends: Vec<(f64, usize)> = chart
        .series
        .iter()
        .enumerate()
        .filter_map(|(i, s)| {
            s.points
                .iter()
                .rev()
                .find_map(|p| p.y.filter(|y| y.is_finite()))
                .map(|y| (ymap(y), i))
        })
        .collect();
    ends.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    let wanted: Vec<f64> = ends.iter().map(|e| e.0).collect();
    let placed = layout::spread(&wanted, theme.label_step(), plot_top, plot_bottom);
    ends.iter()
        .zip(placed)
        .map(|((w, i), p)| (*w, p, *i))
        .collect()
}

/// True when a direct label sits so far from its line's end that it needs
/// a leader.
pub(crate) fn needs_leader(wanted: f64, placed: f64, theme: &Theme) -> bool {
    (wanted - placed).abs() > line_height(theme.label_size) / 2.0
}

pub(crate) fn layout(chart: &LineChart, region: Region, theme: &Theme) -> LineLayout {
    let lh = line_height(theme.label_size);
    let mut top = region.top;
    let y_title_top = chart.y.title.as_ref().map(|_| {
        let t = top;
        top += lh + 8.0;
        t
    });
    let plot_top = top + lh / 2.0;

    let titled = chart.x.title.is_some();
    let (x_title_top, x_tick_top, plot_bottom) =
        crate::axis::bottom_rows(region.bottom, lh, titled);

    let y_ticks = layout::visible_ticks(&chart.y);
    let tick_w = region.tick_column(max_width(
        y_ticks.iter().map(|(_, l)| l.as_str()),
        theme.label_size,
        false,
    ));
    let tick_column_left = region.left;
    let tick_column_right = region.left + tick_w;
    let plot_left = if tick_w > 0.0 {
        tick_column_right + PAD
    } else {
        region.left
    };

    let label_w = max_width(
        chart.series.iter().map(|s| s.label.as_str()),
        theme.label_size,
        true,
    )
    .min(MAX_LABEL_COLUMN);
    let leaders = end_rows(chart, theme, plot_top, plot_bottom)
        .iter()
        .any(|(w, p, _)| needs_leader(*w, *p, theme));
    let pad = if leaders { LEADER_PAD } else { PAD };
    // the deck's label gutter holds the plot's right edge still
    let own = if label_w > 0.0 { label_w + pad } else { 0.0 };
    let plot_right = region.right - own.max(region.label_gutter);
    LineLayout {
        y_title_top,
        x_title_top,
        tick_column_left,
        tick_column_right,
        label_column_left: plot_right + pad,
        label_column_width: label_w,
        plot_left,
        plot_right,
        plot_top,
        plot_bottom,
        x_tick_top,
    }
}
