//! Tables for looking values up: column titles over a single thin rule,
//! numbers right-aligned and text left-aligned, no other lines. Shaded rows
//! sit on a very light band; a focus row is bold in the accent, and so is a
//! focus cell. Hidden rows keep their place empty.
//!
//! Columns are as wide as their widest text (measured bold, so a spotlight
//! never changes the layout), shrunk together when the table is wider than
//! the region, with cells cut by an ellipsis; a narrower table spreads its
//! columns over the chart area's width, and few rows grow apart (up to
//! [`MAX_ROW_GROWTH`]) to fill its height. A spotlighted row is tinted
//! across the table in a light wash of the accent. Rows are capped to what fits
//! the region: when some are left out, a line says how many more there
//! are. Spotlighted rows (and rows with a spotlighted cell) are always
//! drawn: when they lie beyond the rows that fit, they follow that line,
//! in place of the last rows before it.

use crate::canvas::{Align, Canvas, Label};
use crate::fit;
use crate::kit::{faint_fill, mix};
use crate::layout::Region;
use crate::metrics::{self, line_height, text_width};
use crate::theme::Theme;
use crate::Drawn;
use crescendo_frame::{Role, TableChart};
use crescendo_look::display::Part;

/// Space between columns.
const COLUMN_GAP: f64 = 36.0;
/// Padding above and below the text of a row.
const ROW_PAD: f64 = 6.0;
/// Shading reaches this far beyond the first and last column.
const BAND_OVERHANG: f64 = 10.0;
/// Rows may grow to this multiple of their height to fill the chart area.
const MAX_ROW_GROWTH: f64 = 1.8;
/// Widest gap columns are spread to, in px.
const MAX_COLUMN_GAP: f64 = 160.0;

fn row_height(theme: &Theme) -> f64 {
    line_height(theme.label_size) + 2.0 * ROW_PAD
}

pub(crate) fn draw(canvas: &Canvas, theme: &Theme, chart: &TableChart, region: Region) -> Drawn {
    let ncol = chart.columns.len();
    if ncol == 0 {
        return Ok(());
    }
    let lh = line_height(theme.label_size);
    let (widths, lefts) = columns(theme, chart, region);
    let table_left = region.left + BAND_OVERHANG;
    let table_right = lefts
        .last()
        .zip(widths.last())
        .map_or(table_left, |(l, w)| l + w);
    let anchor = |c: usize| -> (f64, Align) {
        if chart.columns[c].numeric {
            (lefts[c] + widths[c], Align::End)
        } else {
            (lefts[c], Align::Start)
        }
    };

    // Header and the one rule under it.
    for (c, col) in chart.columns.iter().enumerate() {
        let title = metrics::normalize(&col.title);
        let text = fit::one(canvas, &title, (theme.label_size, true), widths[c])?;
        let (x, align) = anchor(c);
        canvas.text(&Label {
            text: &text,
            x,
            top: region.top,
            size: theme.label_size,
            bold: true,
            color: theme.muted,
            align,
        })?;
    }
    let rule_y = region.top + lh + 6.0;
    canvas.line(
        (table_left - BAND_OVERHANG, rule_y),
        (table_right + BAND_OVERHANG, rule_y),
        theme.baseline,
        theme.baseline_stroke,
    )?;

    // Rows: as many as fit; if some do not, one slot counts them.
    let rows_top = rule_y + 4.0;
    let base = row_height(theme);
    let fit = ((region.bottom - rows_top) / base).floor().max(0.0) as usize;
    // Few rows grow apart to fill the height, up to MAX_ROW_GROWTH.
    let step = if chart.rows.len() < fit && !chart.rows.is_empty() {
        ((region.bottom - rows_top) / chart.rows.len() as f64).min(base * MAX_ROW_GROWTH)
    } else {
        base
    };
    let pad = (step - line_height(theme.label_size)) / 2.0;
    let lit: Vec<bool> = chart
        .rows
        .iter()
        .map(|r| r.role == Role::Focus || r.focus_cell.is_some())
        .collect();
    let (drawn, more) = rows_to_draw(&lit, fit);
    let fill = faint_fill(theme);
    let wash = mix(theme.page, theme.accent, 0.12);
    for (i, r, row) in drawn.iter().map(|&(slot, r)| (slot, r, &chart.rows[r])) {
        if row.role == Role::Hidden {
            continue;
        }
        let top = rows_top + i as f64 * step;
        let tint = if row.role == Role::Focus {
            Some(wash)
        } else {
            row.shaded.then_some(fill)
        };
        if let Some(tint) = tint {
            canvas.group(Part::Tint, || {
                canvas.rect(
                    (table_left - BAND_OVERHANG, top),
                    (table_right + BAND_OVERHANG, top + step),
                    tint,
                )
            })?;
        }
        for (c, &width) in widths.iter().enumerate() {
            let cell = row
                .cells
                .get(c)
                .map(|s| metrics::normalize(s))
                .unwrap_or_default();
            let focus = row.role == Role::Focus || row.focus_cell == Some(c);
            let text = fit::one(canvas, &cell, (theme.label_size, true), width)?;
            let (x, align) = anchor(c);
            let w = text_width(&text, theme.label_size, focus);
            let mid = match align {
                Align::Start => x + w / 2.0,
                Align::End => x - w / 2.0,
                _ => x,
            };
            let centre = (mid, top + pad + line_height(theme.label_size) / 2.0);
            canvas.point(r, Some(c), centre);
            canvas.text(&Label {
                text: &text,
                x,
                top: top + pad,
                size: theme.label_size,
                bold: focus,
                color: if focus { theme.accent } else { theme.takeaway },
                align,
            })?;
        }
    }
    if let Some((slot, more)) = more {
        let note = format!("… {more} more row{}", if more == 1 { "" } else { "s" });
        // cut only in a very narrow region, and then noted for the lint
        let how = (theme.label_size, false);
        let text = fit::one(canvas, &note, how, region.right - table_left)?;
        canvas.text(&Label {
            text: &text,
            x: table_left,
            top: rows_top + slot as f64 * step + pad,
            size: theme.label_size,
            bold: false,
            color: theme.muted,
            align: Align::Start,
        })?;
    }
    Ok(())
}

/// The columns' widths and left edges: as wide as their widest text,
/// shrunk together when the table is wider than the region, spread apart
/// over its width when narrower.
fn columns(theme: &Theme, chart: &TableChart, region: Region) -> (Vec<f64>, Vec<f64>) {
    let ncol = chart.columns.len();
    let mut widths: Vec<f64> = chart
        .columns
        .iter()
        .enumerate()
        .map(|(c, col)| {
            chart
                .rows
                .iter()
                .filter_map(|r| r.cells.get(c))
                .map(|t| text_width(&metrics::normalize(t), theme.label_size, true))
                .fold(
                    text_width(&metrics::normalize(&col.title), theme.label_size, true),
                    f64::max,
                )
        })
        .collect();
    let inner = region.right - region.left - 2.0 * BAND_OVERHANG;
    let gaps = ncol.saturating_sub(1) as f64 * COLUMN_GAP;
    let natural: f64 = widths.iter().sum();
    if natural + gaps > inner && natural > 0.0 {
        let k = ((inner - gaps) / natural).max(0.0);
        for w in &mut widths {
            *w *= k;
        }
    }
    // Spread over the width: the room left over goes into the gaps.
    let gap = if ncol > 1 && natural + gaps < inner {
        ((inner - natural) / (ncol - 1) as f64).min(MAX_COLUMN_GAP)
    } else {
        COLUMN_GAP
    };
    let mut lefts = Vec::with_capacity(ncol);
    let mut x = region.left + BAND_OVERHANG;
    for w in &widths {
        lefts.push(x);
        x += w + gap;
    }
    (widths, lefts)
}

/// The slot of the "… N more rows" line, and N.
type MoreRows = (usize, usize);

/// Which rows a table of `lit.len()` rows draws in `fit` row slots: (slot,
/// row) pairs, and the slot of the "… N more rows" line with N. When not
/// every row fits, the first rows fill the slots before that line; a lit
/// row (spotlighted, or with a spotlighted cell) that would fall beyond
/// them follows the line instead, in place of the last rows before it.
fn rows_to_draw(lit: &[bool], fit: usize) -> (Vec<(usize, usize)>, Option<MoreRows>) {
    let total = lit.len();
    if total <= fit {
        return ((0..total).map(|r| (r, r)).collect(), None);
    }
    let slots = fit.saturating_sub(1);
    // The most leading rows that leave room for the lit rows after them.
    let lit_from = |k: usize| lit[k..].iter().filter(|l| **l).count();
    let lead = (0..=slots)
        .rev()
        .find(|&k| k + lit_from(k) <= slots)
        .unwrap_or(0);
    let mut drawn: Vec<(usize, usize)> = (0..lead).map(|r| (r, r)).collect();
    let late = (lead..total).filter(|&r| lit[r]).take(slots - lead);
    drawn.extend(late.enumerate().map(|(i, r)| (lead + 1 + i, r)));
    let more = total - drawn.len();
    (drawn, Some((lead, more)))
}

#[cfg(test)]
mod tests {
    use super::rows_to_draw;

    fn rows(lit: &[usize], total: usize) -> Vec<bool> {
        (0..total).map(|r| lit.contains(&r)).collect()
    }

    #[test]
    fn rows_that_fit_are_all_drawn() {
        let (drawn, more) = rows_to_draw(&rows(&[], 4), 4);
        assert_eq!(drawn, [(0, 0), (1, 1), (2, 2), (3, 3)]);
        assert_eq!(more, None);
    }

    #[test]
    fn too_many_rows_end_with_a_count() {
        // 5 slots: 4 rows, then "… 6 more rows"
        let (drawn, more) = rows_to_draw(&rows(&[2], 10), 5);
        assert_eq!(drawn, [(0, 0), (1, 1), (2, 2), (3, 3)]);
        assert_eq!(more, Some((4, 6)));
    }

    #[test]
    fn a_spotlighted_row_beyond_the_fold_is_drawn_after_the_count() {
        // row 8 is lit: rows 0..3, "… 6 more rows", row 8
        let (drawn, more) = rows_to_draw(&rows(&[8], 10), 5);
        assert_eq!(drawn, [(0, 0), (1, 1), (2, 2), (4, 8)]);
        assert_eq!(more, Some((3, 6)));
        // two lit rows, one before and one after the fold
        let (drawn, more) = rows_to_draw(&rows(&[1, 9], 10), 5);
        assert_eq!(drawn, [(0, 0), (1, 1), (2, 2), (4, 9)]);
        assert_eq!(more, Some((3, 6)));
        // more lit rows than slots: as many as fit, after the count
        let (drawn, more) = rows_to_draw(&rows(&[5, 6, 7, 8, 9], 10), 3);
        assert_eq!(drawn, [(1, 5), (2, 6)]);
        assert_eq!(more, Some((0, 8)));
        // no room at all
        let (drawn, more) = rows_to_draw(&rows(&[5], 10), 0);
        assert!(drawn.is_empty());
        assert_eq!(more, Some((0, 10)));
    }
}
