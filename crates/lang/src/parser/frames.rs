//! The statements inside a frame.

use pest::iterators::Pair;

use crescendo_diag::Diagnostic;

use super::{children, internal, nth, Conv, ConvertError, Res, Rule};
use crate::ast::*;

impl Conv<'_> {
    pub(super) fn frame_stmt(&mut self, pair: Pair<Rule>) -> Res<FrameStmt> {
        let (span, rule, inner) = self.open(pair);
        let part = |i: usize| nth(&inner, i, &span);
        let last_string = || {
            inner
                .iter()
                .rev()
                .find(|p| p.as_rule() == Rule::string)
                .cloned()
                .ok_or_else(|| internal(&span))
        };
        let axis = |p: &Pair<Rule>| {
            if p.as_str() == "x" {
                AxisName::X
            } else {
                AxisName::Y
            }
        };
        Ok(match rule {
            Rule::chart_stmt => FrameStmt::Chart(self.chart_stmt(inner, span)?),
            Rule::axis_title_stmt => FrameStmt::AxisTitle {
                axis: axis(&part(0)?),
                text: self.text(last_string()?),
                span,
            },
            Rule::show_stmt => FrameStmt::Show {
                targets: self.targets(part(1)?),
                span,
            },
            Rule::hide_stmt => FrameStmt::Hide {
                targets: self.targets(part(1)?),
                span,
            },
            Rule::spotlight_stmt => FrameStmt::Spotlight {
                targets: self.targets(part(1)?),
                span,
            },
            Rule::frame_allow => FrameStmt::Allow(self.allow_decl(inner, span)?),
            Rule::draw_stmt => FrameStmt::Draw(self.draw_stmt(inner, span)?),
            Rule::figure_stmt => FrameStmt::Figure {
                text: self.text(part(1)?),
                caption: self.text(part(2)?),
                span,
            },
            Rule::split_stmt => FrameStmt::Split(self.split_stmt(inner, span)?),
            Rule::unfold_stmt => FrameStmt::Unfold {
                order: inner.into_iter().skip(1).map(|p| self.string(p)).collect(),
                span,
            },
            Rule::callout_stmt => self.callout(inner, span)?,
            Rule::band_stmt => FrameStmt::Band {
                from: self.position(part(1)?)?,
                to: self.position(part(3)?)?,
                text: inner.get(4).cloned().map(|p| self.text(p)),
                span,
            },
            Rule::reference_stmt => FrameStmt::Reference {
                value: self.position(part(1)?)?,
                text: self.text(part(2)?),
                span,
            },
            Rule::cite_stmt => FrameStmt::Cite {
                value: self.ident(part(1)?),
                span,
            },
            Rule::moment_stmt => self.moment(inner, span)?,
            Rule::label_ends_stmt => FrameStmt::LabelEnds { span },
            Rule::footnote_stmt => FrameStmt::Footnote {
                claims: inner.iter().any(|p| p.as_rule() == Rule::kw_claims),
                span,
            },
            Rule::gridlines_stmt => FrameStmt::Gridlines {
                on: !inner.iter().any(|p| p.as_rule() == Rule::kw_off),
                span,
            },
            Rule::range_stmt => FrameStmt::Range {
                axis: axis(&part(0)?),
                from: self.signed_number(&part(2)?)?,
                to: self.signed_number(&part(4)?)?,
                span,
            },
            Rule::takeaway_stmt => FrameStmt::Takeaway {
                text: self.text(last_string()?),
                span,
            },
            Rule::notes_stmt => FrameStmt::Notes {
                text: self.text(last_string()?),
                span,
            },
            _ => return Err(internal(&span)),
        })
    }

    /// `FORM VIEW[: OPTION [COLUMN], ...]`.
    fn chart_stmt(&mut self, inner: Vec<Pair<Rule>>, span: Span) -> Res<ChartStmt> {
        let mut it = inner.into_iter();
        let form = match it.next().ok_or_else(|| internal(&span))?.as_str() {
            "line" => ChartForm::Line,
            "bars" => ChartForm::Bars,
            "dots" => ChartForm::Dots,
            "scatter" => ChartForm::Scatter,
            "pie" => ChartForm::Pie,
            _ => ChartForm::Table,
        };
        let view = self.ident(it.next().ok_or_else(|| internal(&span))?);
        let mut opts = Vec::new();
        for o in it {
            let ospan = self.span_of(&o);
            let mut oi = children(o);
            let name = match oi.next().map(|p| p.as_str().to_string()).as_deref() {
                Some("x") => OptName::X,
                Some("y") => OptName::Y,
                Some("series") => OptName::Series,
                Some("category") => OptName::Category,
                Some("value") => OptName::Value,
                Some("ordered") => OptName::Ordered,
                Some("horizontal") => OptName::Horizontal,
                Some("vertical") => OptName::Vertical,
                Some("stack") => OptName::Stack,
                Some("group") => OptName::Group,
                Some("label") => OptName::Label,
                Some("fit") => OptName::Fit,
                Some("heading") => OptName::Heading,
                _ => return Err(internal(&ospan)),
            };
            let (mut column, mut text) = (None, None);
            for p in oi {
                match p.as_rule() {
                    Rule::ident => column = Some(self.ident(p)),
                    _ => text = Some(self.string(p)),
                }
            }
            opts.push(ChartOpt {
                name,
                column,
                text,
                span: ospan,
            });
        }
        Ok(ChartStmt {
            form,
            view,
            opts,
            span,
        })
    }

    /// `draw PLUGIN[.FORM] VIEW[: OPTION COLUMN, ...]`.
    fn draw_stmt(&mut self, inner: Vec<Pair<Rule>>, span: Span) -> Res<DrawStmt> {
        let mut names: Vec<Ident> = Vec::new();
        let mut opts = Vec::new();
        for p in inner.into_iter().skip(1) {
            match p.as_rule() {
                Rule::ident => names.push(self.ident(p)),
                Rule::draw_opt => {
                    let mut o = children(p);
                    if let (Some(k), Some(v)) = (o.next(), o.next()) {
                        opts.push((self.ident(k), self.ident(v)));
                    }
                }
                _ => {}
            }
        }
        let (plugin, form, view) = match names.len() {
            2 => (names.remove(0), None, names.remove(0)),
            3 => (names.remove(0), Some(names.remove(0)), names.remove(0)),
            _ => return Err(internal(&span)),
        };
        Ok(DrawStmt {
            plugin,
            form,
            view,
            opts,
            span,
        })
    }

    /// `split KEY [options]`.
    fn split_stmt(&mut self, inner: Vec<Pair<Rule>>, span: Span) -> Res<SplitStmt> {
        let mut it = inner.into_iter().skip(1);
        let key = self.ident(it.next().ok_or_else(|| internal(&span))?);
        let mut split = SplitStmt {
            key,
            descending: None,
            by: None,
            order: Vec::new(),
            trim: false,
            own_scales: false,
            span,
        };
        for opt in it {
            let parts: Vec<Pair<Rule>> = children(opt).collect();
            match parts.first().map(|p| p.as_rule()) {
                Some(Rule::direction) => split.descending = Some(parts[0].as_str() == "descending"),
                Some(Rule::kw_by) => split.by = parts.get(1).cloned().map(|p| self.ident(p)),
                Some(Rule::kw_order) => {
                    split.order = parts.into_iter().skip(1).map(|p| self.string(p)).collect()
                }
                Some(Rule::kw_trim) => split.trim = true,
                Some(Rule::own_scales) => split.own_scales = true,
                Some(Rule::split_free) => {
                    let at = self.span_of(&parts[0]);
                    self.diags.push(
                        Diagnostic::error("syntax", "`free` is not an option of `split`")
                            .at(self.source, at, "not an option")
                            .help("write `own scales` to give each panel a scale of its own (the lint warns: panels on different scales look alike when they are not)"),
                    );
                    split.own_scales = true;
                }
                _ => {}
            }
        }
        Ok(split)
    }

    /// `callout AT [on "Series"] "text"`.
    fn callout(&mut self, inner: Vec<Pair<Rule>>, span: Span) -> Res<FrameStmt> {
        let mut it = inner.into_iter().skip(1);
        let at = self.position(it.next().ok_or_else(|| internal(&span))?)?;
        let rest: Vec<Pair<Rule>> = it.collect();
        let mut strings = rest.iter().filter(|p| p.as_rule() == Rule::string);
        let on = match rest.iter().any(|p| p.as_rule() == Rule::kw_on) {
            true => strings.next().cloned().map(|p| self.string(p)),
            false => None,
        };
        let text = strings
            .next_back()
            .cloned()
            .ok_or_else(|| internal(&span))?;
        Ok(FrameStmt::Callout {
            at,
            on,
            text: self.text(text),
            span,
        })
    }

    /// `moment AT [to UNTIL] "text"`.
    fn moment(&mut self, inner: Vec<Pair<Rule>>, span: Span) -> Res<FrameStmt> {
        let mut positions = Vec::new();
        let mut text = None;
        for p in inner {
            match p.as_rule() {
                Rule::position => positions.push(self.position(p)?),
                Rule::string => text = Some(self.text(p)),
                _ => {}
            }
        }
        let mut positions = positions.into_iter();
        Ok(FrameStmt::Moment {
            at: positions.next().ok_or_else(|| internal(&span))?,
            until: positions.next(),
            text: text.ok_or_else(|| internal(&span))?,
            span,
        })
    }

    fn targets(&mut self, pair: Pair<Rule>) -> Targets {
        let span = self.span_of(&pair);
        let first = children(pair.clone()).next();
        match first.as_ref().map(|p| p.as_rule()) {
            Some(Rule::kw_all) => return Targets::All(span),
            Some(Rule::kw_none) => return Targets::None(span),
            Some(Rule::kw_focus) => return Targets::Focus(span),
            _ => {}
        }
        let items: Vec<(Str, Option<Ident>)> = children(pair)
            .filter_map(|item| {
                let mut it = children(item);
                let name = it.next().map(|p| self.string(p))?;
                Some((name, it.nth(1).map(|p| self.ident(p))))
            })
            .collect();
        if !items.iter().any(|(_, c)| c.is_some()) {
            return Targets::Names(items.into_iter().map(|(n, _)| n).collect());
        }
        Targets::Cells(
            items
                .into_iter()
                .map(|(n, c)| {
                    let col = c.unwrap_or_else(|| Ident {
                        name: String::new(),
                        span: n.span.clone(),
                    });
                    (n, col)
                })
                .collect(),
        )
    }

    /// A position along x: a quoted time or a number.
    fn position(&mut self, pair: Pair<Rule>) -> Res<Position> {
        let span = self.span_of(&pair);
        let p = children(pair).next().ok_or_else(|| internal(&span))?;
        match p.as_rule() {
            Rule::string => Ok(Position::Text(self.string(p))),
            Rule::position_value => {
                let e = children(p).next().ok_or_else(|| internal(&span))?;
                Ok(Position::Value(self.expr(e)?))
            }
            _ => {
                // the number's own span: the position's may end in the
                // blank space its lookahead skipped
                let span = self.span_of(&p);
                let value = finite(p.as_str()).ok_or_else(|| ConvertError {
                    span: span.clone(),
                    message: format!("`{}` is not a number", p.as_str()),
                })?;
                Ok(Position::Number { value, span })
            }
        }
    }

    /// A `signed_number`, finite.
    fn signed_number(&self, p: &Pair<Rule>) -> Res<f64> {
        finite(p.as_str()).ok_or_else(|| ConvertError {
            span: self.span_of(p),
            message: format!("`{}` is not a number", p.as_str()),
        })
    }
}

fn finite(text: &str) -> Option<f64> {
    text.parse::<f64>().ok().filter(|x| x.is_finite())
}
