//! Sums too large for a number. The view engine sums exactly and writes a
//! sum beyond the largest double (about ±1.8 × 10^308) as an infinite
//! number (`crescendo_data::view::overflow`); here that becomes one located
//! error, the same whether the view's prefix was streamed or computed from
//! a loaded table, at the aggregate that asked for the sum (or at the `top`
//! step whose folded rest is too large).

use std::sync::Arc;

use crescendo_data::view::overflow;
use crescendo_data::{Step, Table};
use crescendo_diag::{Diagnostic, Source};
use crescendo_lang::ast::StepAst;

use crate::labels::display;

/// The error for the first sum too large for a number in `out`, the table
/// `step` (written as `ast`) made; `None` when there is none.
pub(crate) fn check(
    src: &Arc<Source>,
    ast: &StepAst,
    step: &Step,
    out: &Table,
) -> Option<Diagnostic> {
    if !matches!(step, Step::Group { .. } | Step::Top { .. }) {
        return None;
    }
    let o = overflow(out)?;
    let column = out.columns.get(o.column).map_or("", |c| c.name.as_str());
    let direction = if o.sign < 0.0 {
        "below the lowest"
    } else {
        "beyond the largest"
    };
    let (message, span, label) = match (step, ast) {
        (Step::Group { keys, .. }, StepAst::By { aggregates, .. }) => {
            let group: Vec<String> = out
                .columns
                .iter()
                .take(keys.len())
                .map(|c| format!("`{}` = \"{}\"", c.name, display(&c.values.value(o.row))))
                .collect();
            let of = if group.is_empty() {
                String::new()
            } else {
                format!(" for {}", group.join(", "))
            };
            let span = o
                .column
                .checked_sub(keys.len())
                .and_then(|i| aggregates.get(i))
                .map_or(ast.span().clone(), |a| a.span.clone());
            (
                format!("the sum `{column}`{of} is {direction} number (about ±1.8 × 10^308)"),
                span,
                "this sum",
            )
        }
        _ => (
            format!(
                "the rest that `top` folds sums `{column}` to a total {direction} number \
                 (about ±1.8 × 10^308)"
            ),
            ast.span().clone(),
            "this step",
        ),
    };
    Some(
        Diagnostic::error("overflow", message)
            .at(src, span, label)
            .note(
                "the exact sum of the values is too large for a double-precision number, \
                 so no figure of it could be shown",
            )
            .help(
                "look in the data for values far too large: a wrong unit, or a placeholder \
                 such as 1e308 written for a missing value",
            ),
    )
}
