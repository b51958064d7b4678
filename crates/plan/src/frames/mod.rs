//! The frames: each frame item planned in turn, carrying the build-up
//! state of its sequence (visible series, spotlight, axis titles,
//! annotations) from frame to frame and turning it into roles.

mod annotations;
mod axes;
mod cite;
mod footnote;
mod frame;
mod mark_notes;
mod moments;
mod positions;
mod provenance;
mod roles;
mod split;
mod targets;
mod texts;
mod unfold;

use std::collections::BTreeSet;

use crescendo_lang::ast;

use crate::anchors::Anchors;
use crate::context::Ctx;
use crate::header::Header;
use crate::model::{ClaimPlan, FramePlan};
use crate::numbers::Quoted;
use crate::scope::Scope;
use crate::sequence::Sequence;
use crate::values::Resolved;
use frame::Deck;
use unfold::Budget;

/// A claim that does not hold: its sentence and the value names it rests
/// on. A frame whose texts use one of them carries a draft notice.
pub(crate) type FailedClaim = (String, BTreeSet<String>);

/// Plan every frame item, in order. Frames that fail are left out (their
/// errors are reported); `anchors` gets one entry per planned frame.
pub(crate) fn plan_frames(
    cx: &mut Ctx,
    scope: &Scope,
    header: &Header,
    items: &[&ast::FrameDecl],
    (source, failed, claims): (Option<&Resolved>, &[FailedClaim], &[ClaimPlan]),
    anchors: &mut Anchors,
) -> Vec<FramePlan> {
    let mut deck = Deck {
        scope,
        header,
        source,
        seq: Sequence::NotStarted,
        sequence: 0,
    };
    let mut planned = Vec::new();
    // per planned frame: the numbers its texts quote and its key's name
    let mut quotes = Vec::new();
    for (i, f) in items.iter().enumerate() {
        let budget = Budget {
            before: planned.len(),
            after: items.len() - i - 1,
            limit: cx.options.limits.frames,
        };
        let Ok(made) = frame::plan(cx, &mut deck, f, budget) else {
            continue;
        };
        for mut fp in made.frames {
            anchors.frames.push(made.anchors.clone());
            for (sentence, deps) in failed {
                if deps.iter().any(|d| made.texts.depends.contains(d)) {
                    fp.notices
                        .push(format!("Draft: the data does not support \"{sentence}\""));
                }
            }
            if made.footnote || cx.options.claims_footnote {
                fp.claim_notes = footnote::lines(claims, &made.texts.depends);
            }
            fp.quoted = made.texts.quoted.clone();
            fp.templates = made.texts.templates.clone();
            planned.push(fp);
            quotes.push((made.texts.numbers.clone(), made.key_name.clone()));
        }
    }
    sequence_labels(&mut planned, &quotes);
    planned
}

/// Labels agree across a build-up sequence: a quantity quoted by a text of
/// any frame of the sequence prints as quoted (or with at least as many
/// significant digits) in every frame of it, and the descriptions follow
/// (see `crate::numbers`). Each frame already did so for its own texts.
fn sequence_labels(planned: &mut [FramePlan], quotes: &[(Vec<Quoted>, String)]) {
    let mut start = 0;
    while start < planned.len() {
        let seq = planned[start].sequence;
        let end = start
            + planned[start..]
                .iter()
                .take_while(|f| f.sequence == seq)
                .count();
        let all: Vec<Quoted> = quotes[start..end]
            .iter()
            .flat_map(|(q, _)| q.iter().cloned())
            .collect();
        for (fp, (own, key)) in planned[start..end].iter_mut().zip(&quotes[start..end]) {
            if all.len() > own.len() {
                crate::numbers::write_labels(&mut fp.chart, &all);
                fp.description = crate::describe::describe(&fp.chart, key, fp.takeaway.as_deref());
            }
        }
        start = end;
    }
}
