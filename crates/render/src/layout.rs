//! Frame-level layout shared by every chart form: type sizes, margins, the
//! headline block at the top left, the source note at the bottom left, and
//! the rectangle left for the chart.
//!
//! Everything that decides where the chart goes is computed over the whole
//! deck: one grid, with the same bands for headline, takeaway and source
//! and the same chart region on every frame, so the chart does not jump
//! between frames even when their headlines wrap differently or one frame
//! has no takeaway.

use crate::canvas::{Align, Canvas, Label, HEIGHT, WIDTH};
use crate::metrics::{self, line_height, text_width};
use crate::theme::Theme;
use crate::RenderError;
use crescendo_frame::{Axis, Chart, DeckPlan, FramePlan, Orientation, PanelChart, PartsMode};
use crescendo_look::display::Part;

pub use crescendo_look::theme::{
    HEADLINE_SIZE, LABEL_SIZE, MARGIN_BOTTOM, MARGIN_TOP, MARGIN_X, SOURCE_SIZE, TAKEAWAY_SIZE,
};

/// Line pitch of wrapped headlines and takeaways, as a multiple of the size
/// (40 px for the 32 px headline, 25 px for the 20 px takeaway).
const LINE_PITCH: f64 = 1.25;
const HEADLINE_GAP: f64 = 8.0;
const HEADER_TO_CHART: f64 = 26.0;
const CHART_TO_SOURCE: f64 = 18.0;
/// At most this many lines of headline, of takeaway and of source note.
const MAX_TEXT_LINES: usize = 2;
/// Line pitch of a wrapped source note, as a multiple of its size.
const SOURCE_PITCH: f64 = 1.2;

/// Vertical distance between two rows of 16 px labels (the default theme;
/// [`Theme::label_step`] follows a house style).
pub fn label_step() -> f64 {
    line_height(LABEL_SIZE) + 2.0
}

/// Width available to full-width text with the default margins
/// ([`Theme::text_column`] follows a house style).
pub fn text_column() -> f64 {
    WIDTH as f64 - 2.0 * MARGIN_X
}

/// The area left for the chart (titles, ticks and marks), in px.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Region {
    /// Left edge.
    pub left: f64,
    /// Top edge.
    pub top: f64,
    /// Right edge.
    pub right: f64,
    /// Bottom edge.
    pub bottom: f64,
    /// Width of the widest tick label on a vertical measure axis of any
    /// frame of the deck: the forms with such an axis (lines, columns,
    /// vertical stacks, scatter) give their tick column this width at
    /// least, so the plot's left edge is the same on all of them.
    pub gutter: f64,
    /// Room right of the plot for direct labels (line labels, bar values,
    /// stack totals, part names): the most any chart frame of the deck
    /// needs, so every plot ends at the same right edge.
    pub label_gutter: f64,
}

impl Region {
    /// The width of the tick column of a vertical axis whose labels are
    /// `own` wide: the deck's [`Region::gutter`] when there are labels.
    pub fn tick_column(&self, own: f64) -> f64 {
        if own > 0.0 {
            own.max(self.gutter)
        } else {
            0.0
        }
    }
}

/// The vertical measure axis a chart draws its tick labels beside, if any.
fn left_axis(chart: &Chart) -> Option<&Axis> {
    match chart {
        Chart::Line(l) => Some(&l.y),
        Chart::Bars(b) if b.orientation == Orientation::Vertical => Some(&b.value),
        Chart::Parts(p) if p.orientation == Orientation::Vertical => Some(&p.value),
        Chart::Scatter(s) => Some(&s.y),
        Chart::Panels(p) => split_scatter_y(p),
        _ => None,
    }
}

/// The y axis every panel of a split scatter shares (the first panel's);
/// `None` unless every panel is a scatter.
pub(crate) fn split_scatter_y(chart: &PanelChart) -> Option<&Axis> {
    let mut ys = chart.panels.iter().map(|p| match &p.chart {
        Chart::Scatter(s) => Some(&s.y),
        _ => None,
    });
    let first = ys.next()??;
    ys.all(|y| y.is_some()).then_some(first)
}

/// Widest category-name column left of a plot, as a share of the region.
pub(crate) const NAME_COLUMN_SHARE: f64 = 0.3;
/// Widest column of line labels right of a plot.
pub(crate) const LINE_LABEL_COLUMN: f64 = 280.0;
/// Space between line ends and their labels when leaders are drawn.
pub(crate) const LEADER_PAD: f64 = 28.0;
/// Widest a part name may be (at 16 px labels; [`Theme::label_scaled`]).
const MAX_PART_LABEL: f64 = 240.0;
/// Space between the plot and a column of part names beside it.
pub(crate) const PART_NAMES_PAD: f64 = 20.0;

/// A part's name as drawn beside stacked and grouped bars: bold, cut to
/// the widest a name may be.
pub(crate) fn part_name(theme: &Theme, name: &str) -> String {
    metrics::ellipsize(
        &metrics::normalize(name),
        theme.label_size,
        true,
        theme.label_scaled(MAX_PART_LABEL),
    )
}

/// The room a chart wants left of its plot: its vertical axis' widest
/// tick label, or its widest category name set in a column (at most
/// [`NAME_COLUMN_SHARE`] of `width`).
fn left_room(chart: &Chart, theme: &Theme, width: f64) -> f64 {
    let size = theme.label_size;
    let names = |names: &mut dyn Iterator<Item = &str>, bold: bool| {
        max_width(names, size, bold).min(width * NAME_COLUMN_SHARE)
    };
    match chart {
        Chart::Bars(b) if b.orientation == Orientation::Horizontal => {
            names(&mut b.bars.iter().map(|b| b.label.as_str()), false)
        }
        Chart::Parts(p) if p.orientation == Orientation::Horizontal => {
            names(&mut p.categories.iter().map(|c| c.label.as_str()), true)
        }
        Chart::Dots(d) => names(&mut d.rows.iter().map(|r| r.label.as_str()), true),
        _ => left_axis(chart)
            .map(|axis| {
                let ticks = visible_ticks(axis);
                max_width(ticks.iter().map(|(_, l)| l.as_str()), size, false)
            })
            .unwrap_or(0.0),
    }
}

/// The room a chart wants right of its plot for the labels it sets there.
fn right_room(chart: &Chart, theme: &Theme) -> f64 {
    let size = theme.label_size;
    // labels past the ends of bars that grow rightwards
    let ends = |dom: [f64; 2], w: f64| {
        let top = dom[0].max(dom[1]);
        if w > 0.0 && top > 0.0 {
            w + crate::band::VALUE_GAP
        } else {
            0.0
        }
    };
    match chart {
        Chart::Line(l) => {
            let w = max_width(l.series.iter().map(|s| s.label.as_str()), size, true)
                .min(LINE_LABEL_COLUMN);
            if w > 0.0 {
                w + LEADER_PAD
            } else {
                0.0
            }
        }
        Chart::Bars(b) if b.orientation == Orientation::Horizontal => {
            let w = max_width(b.bars.iter().map(|b| b.value_label.as_str()), size, true);
            ends(b.value.domain, w)
        }
        Chart::Parts(p) if p.mode == PartsMode::Stacked => {
            if p.orientation == Orientation::Horizontal {
                let totals = p.categories.iter().map(|c| c.total_label.as_str());
                ends(p.value.domain, max_width(totals, size, true))
            } else {
                let names: Vec<String> =
                    p.parts.iter().map(|q| part_name(theme, &q.name)).collect();
                let w = max_width(names.iter().map(String::as_str), size, true);
                if w > 0.0 {
                    w + PART_NAMES_PAD
                } else {
                    0.0
                }
            }
        }
        _ => 0.0,
    }
}

/// The deck's gutters ([`Region::gutter`], [`Region::label_gutter`]): the
/// most room any frame of the deck wants left and right of its plot.
fn gutters(deck: &DeckPlan, frame: &FramePlan, theme: &Theme, width: f64) -> (f64, f64) {
    grid_frames(deck, frame)
        .iter()
        .map(|f| {
            (
                left_room(&f.chart, theme, width),
                right_room(&f.chart, theme),
            )
        })
        .fold((0.0, 0.0), |(l, r), (a, b)| (l.max(a), r.max(b)))
}

struct Header<'t> {
    theme: &'t Theme,
    headline: Vec<String>,
    takeaway: Vec<String>,
}

impl<'t> Header<'t> {
    fn of(frame: &FramePlan, theme: &'t Theme) -> Self {
        let headline = metrics::wrap(
            &frame.headline,
            theme.headline_size,
            true,
            theme.text_column(),
            MAX_TEXT_LINES,
        );
        let takeaway = frame
            .takeaway
            .as_deref()
            .map(|t| {
                metrics::wrap(
                    t,
                    theme.takeaway_size,
                    false,
                    theme.text_column(),
                    MAX_TEXT_LINES,
                )
            })
            .unwrap_or_default();
        Self {
            theme,
            headline,
            takeaway,
        }
    }

    fn takeaway_top(&self) -> f64 {
        let t = self.theme;
        match self.headline.len() {
            0 => t.margin_top,
            n => {
                t.margin_top
                    + (n - 1) as f64 * t.headline_size * LINE_PITCH
                    + line_height(t.headline_size)
                    + HEADLINE_GAP
            }
        }
    }

    /// Bottom of the last text box of the block.
    fn bottom(&self) -> f64 {
        let th = self.theme;
        match (self.headline.len(), self.takeaway.len()) {
            (0, 0) => th.margin_top,
            (_, 0) => self.takeaway_top() - HEADLINE_GAP,
            (_, t) => {
                self.takeaway_top()
                    + (t - 1) as f64 * th.takeaway_size * LINE_PITCH
                    + line_height(th.takeaway_size)
            }
        }
    }
}

/// The frames the grid is computed over: every frame of the deck (always
/// including `frame`).
pub(crate) fn grid_frames<'a>(deck: &'a DeckPlan, frame: &'a FramePlan) -> Vec<&'a FramePlan> {
    let mut frames: Vec<&FramePlan> = deck.frames.iter().collect();
    if !frames.contains(&frame) {
        frames.push(frame);
    }
    frames
}

fn source_of<'a>(deck: &'a DeckPlan, frame: &'a FramePlan) -> Option<String> {
    frame
        .source
        .as_deref()
        .or(deck.source.as_deref())
        .map(metrics::normalize)
        .filter(|s| !s.is_empty())
}

/// The width a frame's source note may take: the text column, or half of
/// it beside a draft frame's notices.
fn source_width(theme: &Theme, frame: &FramePlan) -> f64 {
    if frame.notices.is_empty() {
        theme.text_column()
    } else {
        theme.text_column() / 2.0 - 12.0
    }
}

/// The source note's lines (at most [`MAX_TEXT_LINES`]) and how many the
/// whole note needs.
fn source_lines(deck: &DeckPlan, frame: &FramePlan, theme: &Theme) -> (Vec<String>, usize) {
    let Some(source) = source_of(deck, frame) else {
        return (Vec::new(), 0);
    };
    let width = source_width(theme, frame);
    let all = metrics::wrap(&source, theme.source_size, false, width, usize::MAX);
    let lines = metrics::wrap(&source, theme.source_size, false, width, MAX_TEXT_LINES);
    (lines, all.len())
}

/// Top of the source band when it holds `lines` lines.
fn source_band_top(theme: &Theme, lines: usize) -> f64 {
    HEIGHT as f64
        - theme.margin_bottom
        - line_height(theme.source_size)
        - lines.saturating_sub(1) as f64 * theme.source_size * SOURCE_PITCH
}

fn source_top(theme: &Theme) -> f64 {
    source_band_top(theme, 1)
}

/// Draws the headline, takeaway and source note of `frame` and returns the
/// region left for the chart, which depends only on the frame's sequence.
pub fn draw_page(
    canvas: &Canvas,
    theme: &Theme,
    deck: &DeckPlan,
    frame: &FramePlan,
) -> Result<Region, RenderError> {
    let header = Header::of(frame, theme);
    let margin_x = theme.margin_x;
    let needed = metrics::wrap(
        &frame.headline,
        theme.headline_size,
        true,
        theme.text_column(),
        usize::MAX,
    )
    .len();
    canvas.group(Part::Headline { needed }, || {
        for (i, line) in header.headline.iter().enumerate() {
            canvas.text(&Label {
                text: line,
                x: margin_x,
                top: theme.margin_top + i as f64 * theme.headline_size * LINE_PITCH,
                size: theme.headline_size,
                bold: true,
                color: theme.headline,
                align: Align::Start,
            })?;
        }
        Ok(())
    })?;
    let takeaway_top = header.takeaway_top();
    let takeaway_needed = frame.takeaway.as_deref().map_or(0, |t| {
        metrics::wrap(
            t,
            theme.takeaway_size,
            false,
            theme.text_column(),
            usize::MAX,
        )
        .len()
    });
    canvas.group(
        Part::Takeaway {
            needed: takeaway_needed,
        },
        || {
            for (i, line) in header.takeaway.iter().enumerate() {
                canvas.text(&Label {
                    text: line,
                    x: margin_x,
                    top: takeaway_top + i as f64 * theme.takeaway_size * LINE_PITCH,
                    size: theme.takeaway_size,
                    bold: false,
                    color: theme.takeaway,
                    align: Align::Start,
                })?;
            }
            Ok(())
        },
    )?;
    // A draft build marks frames whose texts rest on a claim the data no
    // longer supports: bold, in the accent colour, at the bottom right.
    let notice = frame.notices.join("  ·  ");
    if !notice.is_empty() {
        let half = source_width(theme, frame);
        let text = crate::fit::one(canvas, &notice, (theme.source_size, true), half)?;
        canvas.group(Part::Notices, || {
            canvas.text(&Label {
                text: &text,
                x: WIDTH as f64 - margin_x,
                top: source_top(theme),
                size: theme.source_size,
                bold: true,
                color: theme.accent,
                align: Align::End,
            })
        })?;
    }
    let frames = grid_frames(deck, frame);
    // The source band holds as many lines as the longest note of the deck
    // needs (at most two), the lines set from the top of the band.
    let band_lines = frames
        .iter()
        .map(|f| source_lines(deck, f, theme).0.len())
        .max()
        .unwrap_or(0);
    // The claims footnote's band sits above the source note's.
    let foot_lines = crate::footnote::band(theme, &frames);
    let pitch = theme.source_size * SOURCE_PITCH;
    let foot_top = source_band_top(theme, band_lines + foot_lines);
    crate::footnote::draw(canvas, theme, frame, foot_top, pitch)?;
    let (lines, needed) = source_lines(deck, frame, theme);
    if !lines.is_empty() {
        let top = foot_top + foot_lines as f64 * pitch;
        canvas.group(Part::Source { needed }, || {
            for (i, line) in lines.iter().enumerate() {
                canvas.text(&Label {
                    text: line,
                    x: margin_x,
                    top: top + i as f64 * theme.source_size * SOURCE_PITCH,
                    size: theme.source_size,
                    bold: false,
                    color: theme.muted,
                    align: Align::Start,
                })?;
            }
            Ok(())
        })?;
    }

    let header_bottom = frames
        .iter()
        .map(|f| Header::of(f, theme).bottom())
        .fold(theme.margin_top, f64::max);
    let any_source = frames
        .iter()
        .any(|f| source_of(deck, f).is_some() || !f.notices.is_empty() || foot_lines > 0);
    let bottom = if any_source {
        source_band_top(theme, (band_lines + foot_lines).max(1)) - CHART_TO_SOURCE
    } else {
        HEIGHT as f64 - theme.margin_bottom
    };
    let (left, right) = (margin_x, WIDTH as f64 - margin_x);
    let (gutter, label_gutter) = gutters(deck, frame, theme, right - left);
    Ok(Region {
        left,
        top: header_bottom + HEADER_TO_CHART,
        right,
        bottom,
        gutter,
        label_gutter,
    })
}

/// Maps `v` from `domain` linearly onto `a..b` (the middle if the domain is
/// empty).
pub fn map(v: f64, domain: [f64; 2], a: f64, b: f64) -> f64 {
    let span = domain[1] - domain[0];
    if span == 0.0 || !span.is_finite() {
        return (a + b) / 2.0;
    }
    a + (v - domain[0]) / span * (b - a)
}

/// Ticks of `axis` that lie inside its domain, with normalized labels.
pub fn visible_ticks(axis: &Axis) -> Vec<(f64, String)> {
    let (lo, hi) = (
        axis.domain[0].min(axis.domain[1]),
        axis.domain[0].max(axis.domain[1]),
    );
    let slack = (hi - lo).abs() * 1e-9;
    axis.ticks
        .iter()
        .filter(|t| t.value.is_finite() && t.value >= lo - slack && t.value <= hi + slack)
        .map(|t| (t.value, metrics::normalize(&t.label)))
        .collect()
}

/// Checks that an axis can be drawn.
pub fn check_axis(axis: &Axis, what: &str) -> Result<(), RenderError> {
    if !axis.domain[0].is_finite() || !axis.domain[1].is_finite() {
        return Err(RenderError::new(format!(
            "the {what} axis has a non-finite domain {:?}",
            axis.domain
        )));
    }
    Ok(())
}

/// Widest of `texts` at `size` (0 for none).
pub fn max_width<'a>(texts: impl IntoIterator<Item = &'a str>, size: f64, bold: bool) -> f64 {
    texts
        .into_iter()
        .map(|t| text_width(t, size, bold))
        .fold(0.0, f64::max)
}

/// Chooses which of a run of labels along one axis to keep so that none
/// overlap: every one if possible, else every 2nd, 3rd, … counted from the
/// first. `spans` are the labels' extents along the axis, in order.
pub fn thin(spans: &[(f64, f64)], min_gap: f64) -> Vec<bool> {
    let n = spans.len();
    for stride in 1..=n.max(1) {
        let kept: Vec<usize> = (0..n).step_by(stride).collect();
        let clear = kept.windows(2).all(|w| {
            let (a, b) = (spans[w[0]], spans[w[1]]);
            let (a0, a1) = (a.0.min(a.1), a.0.max(a.1));
            let (b0, b1) = (b.0.min(b.1), b.0.max(b.1));
            a1 + min_gap <= b0 || b1 + min_gap <= a0
        });
        if clear {
            return (0..n).map(|i| i % stride == 0).collect();
        }
    }
    (0..n).map(|i| i == 0).collect()
}

/// Places label centres as close as possible to where they are wanted
/// (least squares), at least `gap` apart and inside `lo..=hi`. `wanted` must
/// be sorted ascending. Neighbours that collide form a block centred on the
/// mean of their wishes, so a crowd of labels spreads both ways instead of
/// being pushed all to one side.
pub fn spread(wanted: &[f64], gap: f64, lo: f64, hi: f64) -> Vec<f64> {
    let n = wanted.len();
    if n == 0 {
        return Vec::new();
    }
    if (n - 1) as f64 * gap > hi - lo {
        // They cannot all fit: space them evenly over the range.
        let step = if n > 1 {
            (hi - lo) / (n - 1) as f64
        } else {
            0.0
        };
        return (0..n).map(|i| lo + i as f64 * step).collect();
    }
    // Each block: (members, sum over members j of wanted_j - j·gap).
    struct Block {
        count: usize,
        sum: f64,
    }
    let start = |b: &Block| {
        let last = hi - (b.count - 1) as f64 * gap;
        (b.sum / b.count as f64).clamp(lo, last)
    };
    let mut blocks: Vec<Block> = Vec::new();
    for &w in wanted {
        blocks.push(Block { count: 1, sum: w });
        while blocks.len() >= 2 {
            let b = &blocks[blocks.len() - 1];
            let a = &blocks[blocks.len() - 2];
            if start(a) + a.count as f64 * gap <= start(b) {
                break;
            }
            let merged = Block {
                count: a.count + b.count,
                sum: a.sum + b.sum - (a.count * b.count) as f64 * gap,
            };
            blocks.pop();
            blocks.pop();
            blocks.push(merged);
        }
    }
    let mut out = Vec::with_capacity(n);
    for b in &blocks {
        let s = start(b);
        out.extend((0..b.count).map(|j| s + j as f64 * gap));
    }
    out
}

/// Text of a category or series label fitted into `width`, on at most
/// `lines` lines, at the default label size.
pub fn fit_label(text: &str, width: f64, lines: usize, bold: bool) -> Vec<String> {
    fit_label_at(LABEL_SIZE, text, width, lines, bold)
}

/// [`fit_label`] at `size` px (a theme's [`Theme::label_size`]).
pub fn fit_label_at(size: f64, text: &str, width: f64, lines: usize, bold: bool) -> Vec<String> {
    crate::fit::shown(size, text, width, lines, bold)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spread_keeps_order_gap_and_range() {
        let p = spread(&[100.0, 101.0, 102.0, 300.0], 20.0, 90.0, 400.0);
        // Mean wish of the block is 81, clamped to the top of the range.
        assert_eq!(p, vec![90.0, 110.0, 130.0, 300.0]);
        let p = spread(&[200.0, 201.0, 202.0], 20.0, 0.0, 400.0);
        assert_eq!(p, vec![181.0, 201.0, 221.0]);
        let p = spread(&[395.0, 399.0, 400.0], 20.0, 90.0, 400.0);
        assert_eq!(p, vec![360.0, 380.0, 400.0]);
        let p = spread(&[0.0, 0.0, 0.0], 20.0, 0.0, 10.0);
        assert_eq!(p, vec![0.0, 5.0, 10.0]);
        assert!(spread(&[], 1.0, 0.0, 1.0).is_empty());
    }

    #[test]
    fn thin_drops_every_other_when_crowded() {
        let spans: Vec<(f64, f64)> = (0..5)
            .map(|i| (i as f64 * 10.0, i as f64 * 10.0 + 15.0))
            .collect();
        assert_eq!(thin(&spans, 2.0), vec![true, false, true, false, true]);
        let roomy: Vec<(f64, f64)> = (0..3)
            .map(|i| (i as f64 * 100.0, i as f64 * 100.0 + 15.0))
            .collect();
        assert_eq!(thin(&roomy, 2.0), vec![true; 3]);
    }

    #[test]
    fn map_is_linear_and_safe() {
        assert_eq!(map(5.0, [0.0, 10.0], 100.0, 200.0), 150.0);
        assert_eq!(map(5.0, [0.0, 10.0], 200.0, 100.0), 150.0);
        assert_eq!(map(0.0, [0.0, 10.0], 200.0, 100.0), 200.0);
        assert_eq!(map(3.0, [2.0, 2.0], 0.0, 10.0), 5.0);
    }
}
