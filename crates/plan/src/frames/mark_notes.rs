//! `callout AT [on "PART"] "text"` on the forms other than lines: a bar,
//! a segment of stacked bars or one bar of a group, a dot, a scatter point
//! or a table cell. AT names the bar's category, the dot's row, the
//! point's label or the table row's first cell; `on` names the part, the
//! series of dots or the table column. The renderer places the text next
//! to the mark through the label placer.

use crescendo_lang::ast::{Position, Span, Str};

use crate::context::{Ctx, Outcome, Reported};
use crate::frames::positions;
use crate::model::*;
use crate::scope::Scope;
use crate::sequence::SeqState;

/// Where callouts apply, for messages.
const WHERE: &str =
    "callouts go on lines, bars, stacked or grouped bars, dots, scatter points and table cells";

/// What a callout may name on a chart: the items (bars, categories, rows,
/// points, table rows) and the parts (parts, series, columns) with the
/// words for them; `None` for the forms callouts do not apply to.
fn names(chart: &Chart) -> Option<(Vec<&str>, Vec<&str>, [&'static str; 2])> {
    Some(match chart {
        Chart::Bars(b) => (
            b.bars.iter().map(|b| b.label.as_str()).collect(),
            Vec::new(),
            ["category", "part"],
        ),
        Chart::Parts(p) => (
            p.categories.iter().map(|c| c.label.as_str()).collect(),
            p.parts.iter().map(|s| s.name.as_str()).collect(),
            ["category", "part"],
        ),
        Chart::Dots(d) => (
            d.rows.iter().map(|r| r.label.as_str()).collect(),
            d.series.iter().map(|s| s.name.as_str()).collect(),
            ["row", "series"],
        ),
        Chart::Scatter(s) => (
            s.points.iter().map(|p| p.label.as_str()).collect(),
            Vec::new(),
            ["point", "part"],
        ),
        Chart::Table(t) => (
            t.rows
                .iter()
                .map(|r| r.cells.first().map_or("", String::as_str))
                .collect(),
            t.columns.iter().map(|c| c.title.as_str()).collect(),
            ["row", "column"],
        ),
        _ => return None,
    })
}

/// The form's name, for messages.
fn form(chart: &Chart) -> &'static str {
    match chart {
        Chart::Pie(_) => "a pie",
        Chart::Figures(_) => "a figure",
        Chart::Panels(_) => "split into panels",
        Chart::Plugin(_) => "drawn by a plugin",
        _ => "this chart",
    }
}

/// Names in quotes, joined by commas.
fn quoted(names: &[&str]) -> String {
    let quoted: Vec<String> = names.iter().map(|n| format!("\"{n}\"")).collect();
    quoted.join(", ")
}

/// The error for a callout naming a WORD (category, part, ...) the chart
/// does not have, with `help` below.
fn not_in_chart(cx: &mut Ctx, word: &str, name: &Str, help: String) -> Reported {
    let d = cx
        .at(
            "annotation",
            format!("no {word} named \"{}\" in this chart", name.value),
            name.span.clone(),
            format!("not a {word} here"),
        )
        .help(help);
    cx.report(d)
}

/// Plans a callout on a mark of `st`'s chart; `text` is already resolved.
pub(crate) fn callout(
    cx: &mut Ctx,
    scope: &Scope,
    st: &mut SeqState,
    (at, on): (&Position, Option<&Str>),
    text: String,
    span: &Span,
) -> Outcome<()> {
    let at = positions::literal(cx, scope, at)?;
    let Some((items, parts, [item_word, part_word])) = names(&st.chart) else {
        return Err(cx.error_with_help(
            "annotation",
            format!(
                "a callout has no mark to point at: this frame's chart is {}",
                form(&st.chart)
            ),
            span.clone(),
            "no mark here",
            format!("{WHERE}; say it in the takeaway instead"),
        ));
    };
    let Position::Text(name) = &at else {
        return Err(cx.error(
            "annotation",
            format!("name the {item_word} in quotes: this chart's marks are named, not numbered"),
            at.span(),
            "not a name",
        ));
    };
    let Some(item) = items.iter().position(|n| *n == name.value) else {
        let help = match crescendo_diag::closest(&name.value, items.iter().copied()) {
            Some(c) => format!("did you mean \"{c}\"?"),
            None => format!("this chart has {}", quoted(&items[..items.len().min(6)])),
        };
        return Err(not_in_chart(cx, item_word, name, help));
    };
    let part = match on {
        None if parts.len() > 1 && matches!(st.chart, Chart::Dots(_)) => {
            return Err(cx.error_with_help(
                "annotation",
                format!(
                    "which dot of \"{}\" does this callout point at? ({} series)",
                    name.value,
                    parts.len()
                ),
                span.clone(),
                "ambiguous",
                format!(
                    "write `callout \"{}\" on \"{}\" \"text\"`",
                    name.value, parts[0]
                ),
            ));
        }
        None if matches!(st.chart, Chart::Dots(_)) => Some(0),
        None => None,
        Some(p) if parts.is_empty() => {
            return Err(cx.error(
                "annotation",
                format!(
                    "this chart's marks have no parts: leave out `on \"{}\"`",
                    p.value
                ),
                p.span.clone(),
                "no parts here",
            ))
        }
        // a table column by its heading or by the view's name for it
        Some(p) => match (parts.iter().position(|n| *n == p.value)).or_else(|| {
            (st.column_titles.iter())
                .position(|(col, _)| *col == p.value)
                .filter(|_| matches!(st.chart, Chart::Table(_)))
        }) {
            Some(j) => Some(j),
            None => {
                let help = format!("this chart has {}", quoted(&parts));
                return Err(not_in_chart(cx, part_word, p, help));
            }
        },
    };
    if text.trim().is_empty() {
        return Err(cx.error(
            "annotation",
            "a callout needs a text",
            span.clone(),
            "empty",
        ));
    }
    st.mark_notes.push(MarkNote { item, part, text });
    Ok(())
}

/// The notes a frame draws: none once its chart is no longer a form they
/// apply to (a `split` into panels).
pub(crate) fn kept(chart: &Chart, notes: &[MarkNote]) -> Vec<MarkNote> {
    if names(chart).is_some() {
        notes.to_vec()
    } else {
        Vec::new()
    }
}
