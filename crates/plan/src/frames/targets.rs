//! `show`, `hide` and `spotlight`: which series, bars or rows a frame
//! shows and lights, by name, `all`, `none` or the story's `focus`; and
//! single cells of a table.

use std::collections::BTreeSet;

use crescendo_diag::closest;
use crescendo_lang::ast::{FrameStmt, Ident, Span, Str, Targets};

use crate::context::{Ctx, Outcome};
use crate::header::Header;
use crate::labels::humanize;
use crate::model::Chart;
use crate::sequence::SeqState;

/// Apply a `show`, `hide` or `spotlight` statement.
pub(crate) fn apply(cx: &mut Ctx, h: &Header, st: &mut SeqState, stmt: &FrameStmt) -> Outcome<()> {
    match stmt {
        FrameStmt::Show { targets, span } => {
            for n in names(cx, h, st, targets, span, "show")? {
                st.hidden.remove(&n);
            }
        }
        FrameStmt::Hide { targets, span } => {
            for n in names(cx, h, st, targets, span, "hide")? {
                st.spotlight.remove(&n);
                st.hidden.insert(n);
            }
        }
        FrameStmt::Spotlight { targets, span } => {
            st.anchors.spotlight = Some(span.clone());
            if let Targets::All(s) = targets {
                return Err(cx.error_with_help(
                    "spotlight-all",
                    "a spotlight on everything highlights nothing",
                    s.clone(),
                    "",
                    "use `spotlight none` to remove the spotlight",
                ));
            }
            if let Targets::Cells(cells) = targets {
                st.cells = table_cells(cx, st, cells)?;
                st.spotlight.clear();
                return Ok(());
            }
            let names = names(cx, h, st, targets, span, "spotlight")?;
            // A spotlight shows what it lights.
            for n in &names {
                st.hidden.remove(n);
            }
            st.spotlight = names.into_iter().collect();
        }
        _ => {}
    }
    Ok(())
}

/// Resolve `spotlight "Row" in column, ...` against a table.
fn table_cells(
    cx: &mut Ctx,
    st: &SeqState,
    cells: &[(Str, Ident)],
) -> Outcome<BTreeSet<(String, String)>> {
    let Chart::Table(t) = &st.chart else {
        let span = cells.first().map_or(0..0, |c| c.1.span.clone());
        return Err(cx.error(
            "targets",
            "single cells can only be spotlighted in a table",
            span,
            "not a table",
        ));
    };
    let mut out = BTreeSet::new();
    for (row, col) in cells {
        if col.name.is_empty() {
            return Err(cx.error(
                "targets",
                "spotlight either rows or cells, not both in one statement",
                row.span.clone(),
                "a whole row",
            ));
        }
        if !st.names.contains(&row.value) {
            let message = format!("no row \"{}\" in this table", row.value);
            return Err(st.unknown(cx, row, message, "not a row of this table"));
        }
        // the header text the table shows for that column
        let title = st
            .column_titles
            .iter()
            .find(|(name, _)| *name == col.name)
            .map_or_else(|| humanize(&col.name), |(_, t)| t.clone());
        if !t.columns.iter().any(|c| c.title == title) {
            return Err(cx.error(
                "unknown-column",
                format!("this table has no column `{}`", col.name),
                col.span.clone(),
                "not a column of this table",
            ));
        }
        out.insert((row.value.clone(), title));
    }
    Ok(out)
}

/// Resolve the names of a show/hide/spotlight statement.
fn names(
    cx: &mut Ctx,
    h: &Header,
    st: &SeqState,
    targets: &Targets,
    span: &Span,
    verb: &str,
) -> Outcome<Vec<String>> {
    let what = if matches!(st.chart, Chart::Bars(_)) {
        "bar"
    } else {
        "series"
    };
    let wanted: Vec<Str> = match targets {
        Targets::Cells(cells) => {
            let span = cells.first().map_or(span.clone(), |c| c.1.span.clone());
            return Err(cx.error(
                "targets",
                format!(
                    "`{verb}` takes whole {what}s; single cells can only be spotlighted in a table"
                ),
                span,
                "a cell",
            ));
        }
        Targets::All(_) => return Ok(st.names.clone()),
        Targets::None(s) => {
            if verb == "spotlight" {
                return Ok(Vec::new());
            }
            return Err(cx.error_with_help(
                "targets",
                format!("`{verb} none` does nothing"),
                s.clone(),
                "",
                format!("name the {what} to {verb}, or write `{verb} all`"),
            ));
        }
        Targets::Focus(s) => match &h.focus {
            Some(f) => f.clone(),
            None => {
                return Err(cx.error_with_help(
                    "no-focus",
                    "the story has no focus to refer to",
                    s.clone(),
                    "`focus` used here",
                    "add a top-level line like `focus \"Harbour Loop\"`, or name the series here",
                ));
            }
        },
        Targets::Names(n) => n.clone(),
    };
    let cp = cx.checkpoint();
    let mut out = Vec::new();
    for w in &wanted {
        if st.names.contains(&w.value) {
            out.push(w.value.clone());
            continue;
        }
        let mut d = cx
            .at(
                "unknown-series",
                format!(
                    "no {what} named \"{}\" in this chart (`{}` by `{}`)",
                    w.value, st.view_name, st.key_name
                ),
                w.span.clone(),
                format!("not a {what} of this chart"),
            )
            .also(cx.src, span.clone(), format!("in this `{verb}`"));
        if let Some(s) = closest(&w.value, st.names.iter().map(String::as_str)) {
            d = d.help(format!("did you mean \"{s}\"?"));
        } else {
            let shown: Vec<String> = st
                .names
                .iter()
                .take(12)
                .map(|n| format!("\"{n}\""))
                .collect();
            d = d.note(format!("the chart has: {}", shown.join(", ")));
        }
        cx.report(d);
    }
    cx.errors_since(cp)?;
    Ok(out)
}
