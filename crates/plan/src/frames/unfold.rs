//! `unfold` and `unfold "A", "B"`: one frame per hidden item, each showing
//! one more. The frames it makes count against `--max-frames` before any
//! of them is built.

use crescendo_lang::ast::{Span, Str};

use crate::context::{Ctx, Outcome};
use crate::sequence::SeqState;

/// Where a frame stands in the deck, for the frame limit.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Budget {
    /// Frames planned before this one.
    pub(crate) before: usize,
    /// Frame items after this one (each makes at least one frame).
    pub(crate) after: usize,
    /// `--max-frames`.
    pub(crate) limit: usize,
}

/// The frames a frame makes: for each, the item it shows in addition
/// (`None`: one frame, showing nothing more).
pub(crate) fn steps(
    cx: &mut Ctx,
    st: &SeqState,
    unfold: Option<&(Vec<Str>, Span)>,
    budget: Budget,
) -> Outcome<Vec<Option<String>>> {
    let Some((order, span)) = unfold else {
        return Ok(vec![None]);
    };
    let items: Vec<String> = if order.is_empty() {
        st.names
            .iter()
            .filter(|n| st.hidden.contains(*n))
            .cloned()
            .collect()
    } else {
        let mut items = Vec::new();
        for o in order {
            if !st.names.contains(&o.value) {
                let message = format!("nothing named \"{}\" to unfold in this chart", o.value);
                return Err(st.unknown(cx, o, message, "not in this chart"));
            }
            items.push(o.value.clone());
        }
        items
    };
    if items.is_empty() {
        return Err(cx.error_with_help(
            "unfold",
            "nothing is hidden, so there is nothing to unfold",
            span.clone(),
            "nothing to unfold",
            "hide the series first (`hide all`), then unfold them",
        ));
    }
    let total = budget
        .before
        .saturating_add(items.len())
        .saturating_add(budget.after);
    if total > budget.limit {
        return Err(cx.error_with_help(
            "limit",
            format!(
                "this `unfold` makes {} frames, which brings the story to {total} frames, more than the limit of {} (--max-frames)",
                items.len(),
                budget.limit
            ),
            span.clone(),
            "too many frames",
            "unfold fewer items (name them: `unfold \"A\", \"B\"`), or raise --max-frames",
        ));
    }
    Ok(items.into_iter().map(Some).collect())
}
