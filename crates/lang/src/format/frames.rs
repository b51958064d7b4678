//! The layout of frames and their statements.

use super::Printer;
use crate::ast::*;

impl Printer<'_> {
    pub(super) fn frame(&mut self, f: &FrameDecl) {
        self.put("frame ", &f.headline);
        let open = self.src[f.headline.span.end..]
            .find('{')
            .map_or(f.headline.span.end, |o| f.headline.span.end + o);
        let close = f.span.end.saturating_sub(1);
        let has_comment = self
            .comments
            .get(self.next)
            .is_some_and(|c| c.start < close);
        if f.stmts.is_empty() && !has_comment {
            self.s(" {}");
            self.last_end = f.span.end;
            return;
        }
        self.s(" {");
        self.trailing(open + 1);
        self.newline();
        self.level += 1;
        let mut first = true;
        for st in &f.stmts {
            let sp = st.span();
            self.leading(sp.start, !first);
            first = false;
            self.indent();
            self.frame_stmt(st);
            self.trailing(sp.end);
            self.newline();
        }
        self.leading(close, false);
        self.level -= 1;
        self.indent();
        self.s("}");
        self.last_end = f.span.end;
    }

    fn targets(&mut self, t: &Targets) {
        match t {
            Targets::All(_) => self.s("all"),
            Targets::None(_) => self.s("none"),
            Targets::Focus(_) => self.s("focus"),
            Targets::Names(names) => self.strs(names),
            Targets::Cells(cells) => {
                for (i, (name, col)) in cells.iter().enumerate() {
                    if i > 0 {
                        self.gap(",", cells[i - 1].1.span.end, name.span.start, true);
                    }
                    self.raw(&name.span);
                    self.put(" in ", col);
                }
            }
        }
    }

    /// The source word `index` (0-based, split at blank space) of a
    /// one-line statement: numbers the tree keeps only as values.
    fn word(&mut self, span: &Span, index: usize) {
        let text = self.src.get(span.clone()).unwrap_or("");
        let w = text.split_whitespace().nth(index).unwrap_or("");
        let w = w.to_string();
        self.s(&w);
    }

    fn position(&mut self, p: &Position) {
        self.raw(&p.span());
    }

    fn frame_stmt(&mut self, st: &FrameStmt) {
        match st {
            FrameStmt::Chart(c) => {
                self.s(c.form.keyword());
                self.put(" ", &c.view);
                for (i, o) in c.opts.iter().enumerate() {
                    if i == 0 {
                        self.s(": ");
                    } else {
                        self.gap(",", c.opts[i - 1].span.end, o.span.start, true);
                    }
                    self.s(o.name.keyword());
                    self.opt(" ", o.column.as_ref());
                    self.opt(" ", o.text.as_ref());
                }
            }
            FrameStmt::Draw(d) => {
                self.put("draw ", &d.plugin);
                if let Some(form) = &d.form {
                    self.put(".", form);
                }
                self.put(" ", &d.view);
                for (i, (opt, col)) in d.opts.iter().enumerate() {
                    if i == 0 {
                        self.s(": ");
                    } else {
                        self.gap(",", d.opts[i - 1].1.span.end, opt.span.start, true);
                    }
                    self.raw(&opt.span);
                    self.put(" ", col);
                }
            }
            FrameStmt::AxisTitle { axis, text, .. } => {
                self.s(axis_kw(*axis));
                self.put(" title ", text);
            }
            FrameStmt::Show { targets, .. } => {
                self.s("show ");
                self.targets(targets);
            }
            FrameStmt::Hide { targets, .. } => {
                self.s("hide ");
                self.targets(targets);
            }
            FrameStmt::Spotlight { targets, .. } => {
                self.s("spotlight ");
                self.targets(targets);
            }
            FrameStmt::Takeaway { text, .. } => {
                self.put("takeaway ", text);
            }
            FrameStmt::Notes { text, .. } => {
                self.put("notes ", text);
            }
            FrameStmt::Range { axis, span, .. } => {
                self.s(axis_kw(*axis));
                self.s(" range ");
                self.word(span, 2);
                self.s(" to ");
                self.word(span, 4);
            }
            FrameStmt::Allow(a) => self.allow(a),
            FrameStmt::Figure { text, caption, .. } => {
                self.put("figure ", text);
                self.put(" ", caption);
            }
            FrameStmt::Split(s) => {
                self.put("split ", &s.key);
                match s.descending {
                    Some(true) => self.s(" descending"),
                    Some(false) => self.s(" ascending"),
                    None => {}
                }
                self.opt(" by ", s.by.as_ref());
                if !s.order.is_empty() {
                    self.s(" order ");
                    self.strs(&s.order);
                }
                if s.trim {
                    self.s(" trim");
                }
                if s.own_scales {
                    self.s(" own scales");
                }
            }
            FrameStmt::Unfold { order, .. } => {
                self.s("unfold");
                if !order.is_empty() {
                    self.s(" ");
                    self.strs(order);
                }
            }
            FrameStmt::Callout { .. }
            | FrameStmt::Band { .. }
            | FrameStmt::Reference { .. }
            | FrameStmt::Moment { .. }
            | FrameStmt::Cite { .. } => self.annotation(st),
            FrameStmt::LabelEnds { .. } => self.s("label ends"),
            FrameStmt::Footnote { claims, .. } => self.s(if *claims {
                "footnote claims"
            } else {
                "footnote off"
            }),
            FrameStmt::Gridlines { on, .. } => {
                self.s(if *on { "gridlines" } else { "gridlines off" })
            }
        }
    }

    /// The notes drawn on a chart: `callout`, `band`, `reference`, `moment`.
    fn annotation(&mut self, st: &FrameStmt) {
        match st {
            FrameStmt::Callout { at, on, text, .. } => {
                self.s("callout ");
                self.position(at);
                self.opt(" on ", on.as_ref());
                self.put(" ", text);
            }
            FrameStmt::Band { from, to, text, .. } => {
                self.s("band ");
                self.position(from);
                self.s(" to ");
                self.position(to);
                self.opt(" ", text.as_ref());
            }
            FrameStmt::Reference { value, text, .. } => {
                self.s("reference ");
                self.position(value);
                self.put(" ", text);
            }
            FrameStmt::Moment {
                at, until, text, ..
            } => {
                self.s("moment ");
                self.position(at);
                if let Some(u) = until {
                    self.s(" to ");
                    self.position(u);
                }
                self.put(" ", text);
            }
            FrameStmt::Cite { value, .. } => {
                self.put("cite ", value);
            }
            _ => {}
        }
    }
}

fn axis_kw(a: AxisName) -> &'static str {
    match a {
        AxisName::X => "x",
        AxisName::Y => "y",
    }
}
