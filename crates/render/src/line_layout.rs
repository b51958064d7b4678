//! Plot geometry of a line chart, shared by the line drawer
//! ([`crate::line`]) and the notes drawn over it ([`crate::annotate`]).

use crate::layout::{self, max_width, Region};
use crate::metrics::line_height;
use crate::theme::Theme;
use crescendo_frame::LineChart;

/// Widest direct-label column, in px; longer labels are cut with an ellipsis.
const MAX_LABEL_COLUMN: f64 = 280.0;
/// Space between tick labels or direct labels and the plot.
const PAD: f64 = 12.0;

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
    let plot_right = if label_w > 0.0 {
        region.right - label_w - PAD
    } else {
        region.right
    };
    LineLayout {
        y_title_top,
        x_title_top,
        tick_column_left,
        tick_column_right,
        label_column_left: plot_right + PAD,
        label_column_width: label_w,
        plot_left,
        plot_right,
        plot_top,
        plot_bottom,
        x_tick_top,
    }
}
