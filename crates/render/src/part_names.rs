//! The names of the parts of stacked and grouped bars, set directly beside
//! the marks, never in a legend: stacked parts beside the last bar
//! (vertical) or in a row above the first bar (horizontal), grouped parts
//! over or beside the group with the most room, with short leader lines.

use crate::canvas::{Align, Canvas, Label};
use crate::kit::{spread_widths, Obstacles};
use crate::layout::{self, Region};
use crate::metrics::{line_height, text_width};
use crate::part_slots::{extents, roomiest, Slots};
use crate::place;
use crate::theme::Theme;
use crate::RenderError;
use crescendo_frame::{PartsChart, Role};

/// Where the part names go: beside vertical bars (`rows` is the span they
/// may take, right of `plot_right`), or above and beside horizontal ones
/// (`plot` is the plot's left, top and bottom).
pub(crate) enum Naming {
    Beside { rows: (f64, f64), plot_right: f64 },
    Above { row_top: f64, plot: (f64, f64, f64) },
}

/// The part names as drawn (bold width, cut to the widest a name may be).
pub(crate) fn names(theme: &Theme, chart: &PartsChart) -> Vec<String> {
    (chart.parts.iter())
        .map(|p| layout::part_name(theme, &p.name))
        .collect()
}

/// What every way of naming parts shares.
struct Namer<'a> {
    canvas: &'a Canvas,
    theme: &'a Theme,
    chart: &'a PartsChart,
    s: &'a Slots,
    names: Vec<String>,
    lh: f64,
    step: f64,
    zero: f64,
}

impl Namer<'_> {
    /// Part `j`'s name at `(x, top)`, none for a hidden part.
    fn label(&self, j: usize, x: f64, top: f64, align: Align) -> Option<Label<'_>> {
        let theme = self.theme;
        let (color, bold) = match self.chart.parts[j].role {
            Role::Hidden => return None,
            Role::Focus => (theme.accent, true),
            Role::Context => (theme.context_text, false),
        };
        Some(Label {
            text: &self.names[j],
            x,
            top,
            size: theme.label_size,
            bold,
            color,
            align,
        })
    }

    /// For each part with a value, in the last category that has one (else
    /// the first): the middle of its segment along the values, the part,
    /// and the far (else near) edge of its bar across. Sorted along.
    fn segments(&self, last: bool) -> Vec<(f64, usize, f64)> {
        let (chart, s) = (self.chart, self.s);
        let mut wanted = Vec::new();
        for j in 0..chart.parts.len() {
            let has = |c: usize| extents(chart, c)[j].map(|e| (c, e));
            let found = if last {
                (0..chart.categories.len()).rev().find_map(has)
            } else {
                (0..chart.categories.len()).find_map(has)
            };
            if let Some((c, (a, b))) = found {
                let (near, far) = s.across(c, j);
                wanted.push((s.vmap((a + b) / 2.0), j, if last { far } else { near }));
            }
        }
        wanted.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        wanted
    }

    /// The roomiest group, its parts' extents, and where its longest bar
    /// ends (`outer` picks the outermost of two positions).
    #[allow(clippy::type_complexity)]
    fn group(&self, outer: fn(f64, f64) -> f64) -> (usize, Vec<Option<(f64, f64)>>, f64) {
        let g = roomiest(self.chart);
        let ext = extents(self.chart, g);
        let end = ext
            .iter()
            .flatten()
            .map(|e| self.s.vmap(e.1.max(0.0)))
            .fold(self.zero, outer);
        (g, ext, end)
    }

    /// A part name through the placer ([`place::settle`]).
    fn settle(
        &self,
        obstacles: &mut Obstacles,
        label: &Label<'_>,
        how: (&[(f64, f64)], Option<place::Lead<'_>>),
    ) -> Result<(), RenderError> {
        place::settle(self.canvas, self.theme.baseline, obstacles, label, how)
    }
}

/// Names every part of `chart` as `naming` says.
pub(crate) fn draw(
    canvas: &Canvas,
    theme: &Theme,
    (chart, s): (&PartsChart, &Slots),
    naming: Naming,
    region: Region,
    obstacles: &mut Obstacles,
) -> Result<(), RenderError> {
    let names = names(theme, chart);
    for (p, shown) in chart.parts.iter().zip(&names) {
        crate::fit::note(canvas, &p.name, std::slice::from_ref(shown))?;
    }
    let n = Namer {
        canvas,
        theme,
        chart,
        s,
        names,
        lh: line_height(theme.label_size),
        step: theme.label_step(),
        zero: s.vmap(0.0),
    };
    let grouped = !s.stacked && !chart.parts.is_empty();
    match naming {
        Naming::Beside { rows, plot_right } if s.stacked => {
            n.stacked_beside(rows, plot_right, obstacles)
        }
        Naming::Beside { .. } if grouped => n.grouped_above(region, obstacles),
        Naming::Above { row_top, plot } if s.stacked => {
            n.stacked_row(row_top, (plot.0, region.right), obstacles)
        }
        Naming::Above { plot, .. } if grouped => n.grouped_right((plot.1, plot.2), obstacles),
        _ => Ok(()),
    }
}

impl Namer<'_> {
    /// Stacked vertical bars: names beside the last category with a value for
    /// each part, spread over `rows`, with leaders to their segments.
    fn stacked_beside(
        &self,
        (rows_top, value_bottom): (f64, f64),
        plot_right: f64,
        obstacles: &mut Obstacles,
    ) -> Result<(), RenderError> {
        let wanted = self.segments(true);
        let ys: Vec<f64> = wanted.iter().map(|w| w.0).collect();
        let placed = layout::spread(&ys, self.step, rows_top, value_bottom);
        let x = plot_right + layout::PART_NAMES_PAD;
        for (&(y0, j, bar_right), y) in wanted.iter().zip(placed) {
            let Some(label) = self.label(j, x, y - self.lh / 2.0, Align::Start) else {
                continue;
            };
            let lead = |dx: f64, dy: f64| ((bar_right + 3.0, y0), (x - 4.0 + dx, y + dy));
            let moves = place::shifts(self.step, 2, false, None);
            self.settle(obstacles, &label, (&moves, Some((true, &lead))))?;
        }
        Ok(())
    }

    /// Grouped vertical bars: rows above the roomiest group, the rightmost
    /// bar's name lowest, so leaders never cross a name.
    fn grouped_above(&self, region: Region, obstacles: &mut Obstacles) -> Result<(), RenderError> {
        let (g, ext, g_top) = self.group(f64::min);
        let k = self.chart.parts.len();
        for (j, e) in ext.iter().enumerate() {
            let row = k - 1 - j;
            let label_top = g_top - 6.0 - (row as f64 + 1.0) * self.step + 2.0;
            let (x0, x1) = self.s.across(g, j);
            let cx = (x0 + x1) / 2.0;
            let w = text_width(&self.names[j], self.theme.label_size, true);
            let x = (cx - 2.0).min(region.right - w).max(region.left);
            let Some(label) = self.label(j, x, label_top, Align::Start) else {
                continue;
            };
            let bar_top = e.map(|e| self.s.vmap(e.1.max(0.0))).unwrap_or(self.zero);
            // moved up only, so the leader stays on its bar
            let lead =
                |_: f64, dy: f64| ((cx, label_top + dy + self.lh + 1.0), (cx, bar_top - 2.0));
            let moves = place::shifts(self.step, 3, false, Some(-1.0));
            self.settle(obstacles, &label, (&moves, Some((false, &lead))))?;
        }
        Ok(())
    }

    /// Stacked horizontal bars: a row of names at `row_top` above the first
    /// bar, each over its segment, kept inside `span`.
    fn stacked_row(
        &self,
        row_top: f64,
        (lo, hi): (f64, f64),
        obstacles: &mut Obstacles,
    ) -> Result<(), RenderError> {
        let wanted = self.segments(false);
        let widths: Vec<f64> = wanted
            .iter()
            .map(|w| text_width(&self.names[w.1], self.theme.label_size, true))
            .collect();
        let xs: Vec<f64> = wanted.iter().map(|w| w.0).collect();
        let centres = spread_widths(&xs, &widths, 14.0, lo, hi);
        for (&(x0, j, bar_top), x) in wanted.iter().zip(centres) {
            let Some(label) = self.label(j, x, row_top, Align::Middle) else {
                continue;
            };
            let lead =
                |dx: f64, dy: f64| ((x + dx, row_top + dy + self.lh + 2.0), (x0, bar_top - 2.0));
            let moves = place::shifts(self.step, 2, false, Some(-1.0));
            self.settle(obstacles, &label, (&moves, Some((true, &lead))))?;
        }
        Ok(())
    }

    /// Grouped horizontal bars: names right of the roomiest group, one per
    /// bar, spread apart inside the plot's `top..bottom`.
    fn grouped_right(
        &self,
        (plot_top, plot_bottom): (f64, f64),
        obstacles: &mut Obstacles,
    ) -> Result<(), RenderError> {
        let (g, ext, end) = self.group(f64::max);
        let x = end + 8.0;
        let wanted: Vec<f64> = (0..self.chart.parts.len())
            .map(|j| {
                let (y0, y1) = self.s.across(g, j);
                (y0 + y1) / 2.0
            })
            .collect();
        let (lo, hi) = (plot_top + self.lh / 2.0, plot_bottom - self.lh / 2.0);
        let placed = layout::spread(&wanted, self.step, lo, hi);
        let moved = placed.iter().zip(&wanted).any(|(p, w)| (p - w).abs() > 0.5);
        for (j, y) in placed.into_iter().enumerate() {
            // Beside its own bar when the names fit the bars' rows; else all
            // past the longest bar of the group.
            let own = ext[j].map(|e| self.s.vmap(e.1.max(0.0)) + 8.0).unwrap_or(x);
            let x = if moved { x } else { own };
            let Some(label) = self.label(j, x, y - self.lh / 2.0, Align::Start) else {
                continue;
            };
            let moves = place::shifts(self.step, 3, true, Some(1.0));
            self.settle(obstacles, &label, (&moves, None))?;
        }
        Ok(())
    }
}
