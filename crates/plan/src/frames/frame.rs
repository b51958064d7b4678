//! One `frame` item: its chart statement (which starts a new sequence) or
//! the build-up statements that change the current one, its texts, and
//! the frame plans it makes.

use std::collections::BTreeMap;
use std::mem;

use crescendo_lang::ast::{self, FrameStmt, Span, Str, Text};

use crate::anchors::{Allowance, FrameAnchors};
use crate::context::{Ctx, Outcome, Reported};
use crate::describe::describe;
use crate::forms;
use crate::frames::texts::FrameTexts;
use crate::frames::unfold::{self, Budget};
use crate::frames::{annotations, axes, cite, mark_notes, moments};
use crate::frames::{positions, roles, split, targets};
use crate::header::Header;
use crate::labels::slug;
use crate::model::*;
use crate::scope::Scope;
use crate::sequence::{SeqState, Sequence};
use crate::values::Resolved;

/// What the frames of a deck share while they are planned.
pub(crate) struct Deck<'s> {
    pub(crate) scope: &'s Scope,
    pub(crate) header: &'s Header,
    /// The source note, resolved.
    pub(crate) source: Option<&'s Resolved>,
    /// The build-up so far.
    pub(crate) seq: Sequence,
    /// Number of the current sequence (1-based; 0 before the first).
    pub(crate) sequence: usize,
}

/// The frames one frame item made, with its texts and where its parts
/// were said.
pub(crate) struct Made {
    pub(crate) frames: Vec<FramePlan>,
    pub(crate) texts: FrameTexts,
    pub(crate) anchors: FrameAnchors,
    /// `footnote claims`: print the claims the texts rest on.
    pub(crate) footnote: bool,
    /// The name of the chart's key (for descriptions written again).
    pub(crate) key_name: String,
}

/// What a frame's own statements said.
#[derive(Default)]
struct Said {
    footnote: bool,
    takeaway: Option<String>,
    notes: Option<String>,
    unfold: Option<(Vec<Str>, Span)>,
    texts: FrameTexts,
    anchors: FrameAnchors,
}

impl Said {
    /// The frame text `field` (takeaway, notes) resolved, its quoted values
    /// kept for the frame.
    fn text(&mut self, cx: &mut Ctx, scope: &Scope, field: &str, text: &Text) -> String {
        let r = scope.text(cx, text);
        self.texts.add(field, &r);
        r.text
    }
}

/// A text a frame says once: a second one (`[plural, singular]` name it)
/// is an error.
fn once(
    cx: &mut Ctx,
    slot: &mut Option<String>,
    text: String,
    span: &Span,
    [many, one]: [&str; 2],
) {
    if slot.replace(text).is_some() {
        let message = format!("this frame has two {many}");
        cx.error("duplicate", message, span.clone(), format!("second {one}"));
    }
}

/// Plan a frame item: the frame (or the frames its `unfold` makes).
pub(crate) fn plan(
    cx: &mut Ctx,
    deck: &mut Deck,
    f: &ast::FrameDecl,
    budget: Budget,
) -> Outcome<Made> {
    let cp = cx.checkpoint();
    let mut said = Said::default();
    if let Some(s) = deck.source {
        said.texts.add("source", s);
    }
    for (k, stmt) in f.stmts.iter().enumerate() {
        statement(cx, deck, f, k, stmt, &mut said)?;
    }
    cx.errors_since(cp)?;
    let st = current(cx, &mut deck.seq, f, "this frame has no chart")?;
    let at = (deck.sequence, deck.source);
    finish(cx, deck.scope, st, at, f, said, budget)
}

/// The current sequence's state; reports a frame without a chart (once:
/// after that the sequence is broken).
fn current<'q>(
    cx: &mut Ctx,
    seq: &'q mut Sequence,
    f: &ast::FrameDecl,
    message: &str,
) -> Outcome<&'q mut SeqState> {
    match seq {
        Sequence::Open(st) => Ok(st),
        Sequence::Broken(r) => Err(*r),
        Sequence::NotStarted => {
            let d = cx
                .at(
                    "no-chart",
                    message,
                    f.headline.span.clone(),
                    "first frame without a chart",
                )
                .help("start the first frame with `line VIEW: ...` or `bars VIEW: ...`");
            let r = cx.report(d);
            *seq = Sequence::Broken(r);
            Err(r)
        }
    }
}

fn statement(
    cx: &mut Ctx,
    deck: &mut Deck,
    f: &ast::FrameDecl,
    k: usize,
    stmt: &FrameStmt,
    said: &mut Said,
) -> Outcome<()> {
    match stmt {
        FrameStmt::Chart(c) => {
            if k > 0 {
                let d = cx
                    .at(
                        "chart-order",
                        "the chart statement must come first in its frame",
                        c.span.clone(),
                        "move this to the top of the frame",
                    )
                    .help("the other statements of a frame apply to its chart");
                return Err(broken(deck, cx.report(d)));
            }
            let started = forms::start(cx, &deck.scope.tables, deck.header.compare.as_ref(), c);
            let started = started.map(|mut st| {
                st.chart_stmt = Some(c.clone());
                st
            });
            open(deck, started)
        }
        FrameStmt::Draw(d) => {
            if k > 0 {
                let r = cx.error(
                    "chart-order",
                    "the chart statement must come first in its frame",
                    d.span.clone(),
                    "move this to the top of the frame",
                );
                return Err(broken(deck, r));
            }
            let started = forms::draw(cx, deck.scope, d);
            open(deck, started)
        }
        FrameStmt::Figure {
            text,
            caption,
            span,
        } => figure(cx, deck, f, k, (text, caption), span, said),
        other => {
            let message = "this frame has no chart to apply its statements to";
            let st = current(cx, &mut deck.seq, f, message)?;
            build_up(cx, deck.scope, deck.header, st, other, said)
        }
    }
}

/// The sequence is broken by an error reported as `r`.
fn broken(deck: &mut Deck, r: Reported) -> Reported {
    deck.seq = Sequence::Broken(r);
    r
}

/// Start a new sequence (or break the current one when its chart fails:
/// the frames after build on this chart, not on the previous sequence's).
fn open(deck: &mut Deck, started: Outcome<SeqState>) -> Outcome<()> {
    let st = started.map_err(|r| broken(deck, r))?;
    deck.seq = Sequence::Open(Box::new(st));
    deck.sequence += 1;
    Ok(())
}

/// `figure "text" "caption"`: the first starts a sequence of figures.
fn figure(
    cx: &mut Ctx,
    deck: &mut Deck,
    f: &ast::FrameDecl,
    k: usize,
    (text, caption): (&Text, &Text),
    span: &Span,
    said: &mut Said,
) -> Outcome<()> {
    let first = !f.stmts[..k]
        .iter()
        .any(|s| matches!(s, FrameStmt::Figure { .. }));
    if first {
        if k > 0 {
            let r = cx.error(
                "chart-order",
                "figures must come first in their frame",
                span.clone(),
                "move this to the top of the frame",
            );
            return Err(broken(deck, r));
        }
        let chart = Chart::Figures(FigureChart {
            figures: Vec::new(),
        });
        deck.seq = Sequence::Open(Box::new(SeqState {
            key_name: "figure".into(),
            anchors: FrameAnchors {
                chart: span.clone(),
                ..FrameAnchors::default()
            },
            ..SeqState::new(chart)
        }));
        deck.sequence += 1;
    }
    let figure = deck.scope.text(cx, text);
    let label = deck.scope.text(cx, caption);
    said.texts.add("figure", &figure);
    said.texts.add("caption", &label);
    let Sequence::Open(st) = &mut deck.seq else {
        // the first figure of this frame started the sequence
        return Err(cx.already_reported());
    };
    let Chart::Figures(fc) = &mut st.chart else {
        // the first figure of this frame started the sequence
        return Err(cx.already_reported());
    };
    if fc.figures.len() == 2 {
        return Err(cx.error_with_help(
            "figures",
            "a frame holds at most two figures",
            span.clone(),
            "a third figure",
            "one figure is the message; a second may compare with it",
        ));
    }
    fc.figures.push(Figure {
        text: figure.text,
        caption: label.text,
        role: Role::Focus,
    });
    Ok(())
}

/// A statement that changes the current sequence.
fn build_up(
    cx: &mut Ctx,
    scope: &Scope,
    h: &Header,
    st: &mut SeqState,
    stmt: &FrameStmt,
    said: &mut Said,
) -> Outcome<()> {
    match stmt {
        FrameStmt::AxisTitle { axis, text, span } => {
            let r = scope.text(cx, text);
            match axis {
                ast::AxisName::X => {
                    st.x_title = Some(r);
                    st.anchors.x_title = Some(span.clone());
                }
                ast::AxisName::Y => {
                    st.y_title = Some(r);
                    st.anchors.y_title = Some(span.clone());
                }
            }
        }
        FrameStmt::Allow(a) => said.anchors.allows.push(Allowance {
            rule: a.rule.name.clone(),
            rule_span: a.rule.span.clone(),
            reason: a.reason.value.clone(),
        }),
        FrameStmt::Range {
            axis,
            from,
            to,
            span,
        } => axes::range(cx, st, *axis, *from, *to, span)?,
        FrameStmt::Takeaway { text, span } => {
            said.anchors.takeaway = Some(span.clone());
            let r = said.text(cx, scope, "takeaway", text);
            once(cx, &mut said.takeaway, r, span, ["takeaways", "takeaway"]);
        }
        FrameStmt::Notes { text, span } => {
            said.anchors.notes = Some(span.clone());
            let r = said.text(cx, scope, "notes", text);
            once(cx, &mut said.notes, r, span, ["notes", "notes"]);
        }
        FrameStmt::Show { .. } | FrameStmt::Hide { .. } | FrameStmt::Spotlight { .. } => {
            targets::apply(cx, h, st, stmt)?
        }
        FrameStmt::Split(sp) => {
            split::split(cx, st, sp)?;
            st.anchors.split = Some(sp.span.clone());
        }
        FrameStmt::Callout { at, on, text, span } => {
            positions::names(scope, at, &mut said.texts.depends);
            if matches!(st.chart, Chart::Line(_)) {
                annotations::callout(cx, scope, st, at, on, text, span)?
            } else {
                let r = scope.text(cx, text);
                said.texts.depends.extend(r.depends.iter().cloned());
                mark_notes::callout(cx, scope, st, (at, on.as_ref()), r.text, span)?
            }
            st.anchors.callouts.push(span.clone());
        }
        FrameStmt::Band {
            from,
            to,
            text,
            span,
        } => {
            positions::names(scope, from, &mut said.texts.depends);
            positions::names(scope, to, &mut said.texts.depends);
            annotations::band(cx, scope, st, from, to, text, span)?
        }
        FrameStmt::Reference { value, text, span } => {
            positions::names(scope, value, &mut said.texts.depends);
            annotations::reference(cx, scope, st, value, text, span)?
        }
        FrameStmt::Moment {
            at,
            until,
            text,
            span,
        } => {
            positions::names(scope, at, &mut said.texts.depends);
            if let Some(u) = until {
                positions::names(scope, u, &mut said.texts.depends);
            }
            let r = scope.text(cx, text);
            // what the label quotes counts, but it is no field of its own
            said.texts.depends.extend(r.depends.iter().cloned());
            moments::moment(cx, scope, st, (at, until.as_ref()), r.text, span)?;
            st.anchors.moments.push(span.clone());
        }
        FrameStmt::LabelEnds { span } => annotations::label_ends(cx, st, span)?,
        FrameStmt::Cite { value, span } => cite::cite(cx, scope, st, value, span)?,
        FrameStmt::Gridlines { on, span } => axes::gridlines(cx, st, *on, span)?,
        FrameStmt::Footnote { claims, .. } => said.footnote = *claims,
        FrameStmt::Unfold { order, span } => {
            if said.unfold.replace((order.clone(), span.clone())).is_some() {
                return Err(cx.error(
                    "duplicate",
                    "this frame unfolds twice",
                    span.clone(),
                    "second unfold",
                ));
            }
        }
        FrameStmt::Chart(_) | FrameStmt::Figure { .. } | FrameStmt::Draw(_) => {}
    }
    Ok(())
}

/// The frame plans of a frame whose statements all held.
fn finish(
    cx: &mut Ctx,
    scope: &Scope,
    st: &mut SeqState,
    (sequence, deck_source): (usize, Option<&Resolved>),
    f: &ast::FrameDecl,
    mut said: Said,
    budget: Budget,
) -> Outcome<Made> {
    if let Some(t) = &st.x_title {
        said.texts.add("x_title", t);
    }
    if let Some(t) = &st.y_title {
        said.texts.add("y_title", t);
    }
    let headline = scope.text(cx, &f.headline);
    said.texts.add("headline", &headline);
    let own = mem::take(&mut said.anchors);
    let anchors = FrameAnchors {
        frame: f.span.clone(),
        headline: f.headline.span.clone(),
        takeaway: own.takeaway,
        notes: own.notes,
        allows: own.allows,
        ..st.anchors.clone()
    };
    cite::settle(st, &said.texts.quoted);
    let cites: Vec<_> = st.cites.iter().map(|c| c.0.clone()).collect();
    let steps = unfold::steps(cx, st, said.unfold.as_ref(), budget)?;
    let source = deck_source.map(|s| s.text.clone());
    let mut frames = Vec::with_capacity(steps.len());
    let last = steps.len().saturating_sub(1);
    for (k, shown) in steps.into_iter().enumerate() {
        if let Some(n) = &shown {
            st.hidden.remove(n);
        }
        let mut chart = roles::apply_state(st);
        if k == last {
            cite::check_shown(cx, &chart, &cites, &st.anchors.cites, &f.span)?;
        }
        // labels of quantities the texts quote print as quoted, in the
        // chart and in its description alike
        crate::numbers::write_labels(&mut chart, &said.texts.numbers);
        let mut description = describe(&chart, &st.key_name, said.takeaway.as_deref());
        description.push_str(&cite::describe(&chart, &cites));
        // The slug comes from the headline's own words, its quoted values
        // left out, so file names stay the same when the numbers change
        // and never carry the words of an expression.
        frames.push(FramePlan {
            number: budget.before + 1 + frames.len(),
            slug: slug(&own_words(&f.headline)),
            sequence,
            headline: headline.text.clone(),
            takeaway: said.takeaway.clone(),
            notes: said.notes.clone(),
            source: source.clone(),
            description,
            quoted: BTreeMap::new(),
            templates: BTreeMap::new(),
            notices: Vec::new(),
            claim_notes: Vec::new(),
            mark_notes: mark_notes::kept(&chart, &st.mark_notes),
            chart,
            cites: cites.clone(),
        });
    }
    Ok(Made {
        frames,
        texts: said.texts,
        anchors,
        footnote: said.footnote,
        key_name: st.key_name.clone(),
    })
}

/// The literal words of a text, each quoted value replaced by a space.
fn own_words(text: &crescendo_lang::ast::Text) -> String {
    text.template
        .parts
        .iter()
        .map(|p| match p {
            crescendo_lang::ast::TextPart::Literal(l) => l.as_str(),
            crescendo_lang::ast::TextPart::Quote { .. } => " ",
        })
        .collect()
}
