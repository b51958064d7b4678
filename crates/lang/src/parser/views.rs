//! The steps of a view: `keep`, `by`, `add`, `sort`, `top`, `columns`.

use pest::iterators::Pair;

use super::{children, internal, nth, Conv, ConvertError, Res, Rule};
use crate::ast::*;

impl Conv<'_> {
    pub(super) fn step(&mut self, pair: Pair<Rule>) -> Res<StepAst> {
        let (span, rule, inner) = self.open(pair);
        let part = |i: usize| nth(&inner, i, &span);
        Ok(match rule {
            Rule::keep_step => StepAst::Keep {
                expr: self.expr(part(1)?)?,
                span,
            },
            Rule::by_step => self.by_step(inner, span)?,
            Rule::add_step => StepAst::Add {
                name: self.ident(part(1)?),
                expr: self.expr(part(2)?)?,
                span,
            },
            Rule::sort_step => StepAst::Sort {
                keys: inner
                    .into_iter()
                    .skip(1)
                    .map(|k| self.sort_key(k))
                    .collect::<Res<Vec<_>>>()?,
                span,
            },
            Rule::columns_step => StepAst::Columns {
                names: inner.into_iter().skip(1).map(|p| self.ident(p)).collect(),
                span,
            },
            Rule::top_step => {
                let n_pair = part(1)?;
                let n_span = self.span_of(&n_pair);
                let n = n_pair.as_str().parse::<u64>().map_err(|_| ConvertError {
                    span: n_span.clone(),
                    message: format!("`{}` is too large for a count", n_pair.as_str()),
                })?;
                StepAst::Top {
                    n,
                    n_span,
                    key: self.ident(part(2)?),
                    by: self.ident(part(4)?),
                    rest: inner.get(6).cloned().map(|p| self.string(p)),
                    span,
                }
            }
            _ => return Err(internal(&span)),
        })
    }

    /// `by KEY, ...: NAME = FUNC(COLUMN), ...`.
    fn by_step(&mut self, inner: Vec<Pair<Rule>>, span: Span) -> Res<StepAst> {
        let mut keys = Vec::new();
        let mut aggregates = Vec::new();
        for p in inner.into_iter().skip(1) {
            match p.as_rule() {
                Rule::ident => keys.push(self.ident(p)),
                Rule::aggregate => {
                    let (aspan, _, parts) = self.open(p);
                    aggregates.push(AggregateAst {
                        name: self.ident(nth(&parts, 0, &aspan)?),
                        func: self.ident(nth(&parts, 1, &aspan)?),
                        column: parts.get(2).map(|c| self.ident(c.clone())),
                        span: aspan,
                    });
                }
                _ => {}
            }
        }
        Ok(StepAst::By {
            keys,
            aggregates,
            span,
        })
    }

    fn sort_key(&mut self, k: Pair<Rule>) -> Res<SortKey> {
        let kspan = self.span_of(&k);
        let mut ki = children(k);
        let column = ki.next().map(|c| self.ident(c));
        let descending = ki.next().is_some_and(|d| d.as_str() == "descending");
        column
            .map(|column| SortKey {
                column,
                descending,
                span: kspan.clone(),
            })
            .ok_or_else(|| internal(&kspan))
    }
}
