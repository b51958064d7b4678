//! Expressions: one grammar and one tree for view steps, selections,
//! values, claims and quoted values. A chain of operators of one level
//! (`a + b - c`) is read in a loop into one [`Expr::Chain`], so reading it
//! takes no stack in proportion to its length (pest reads the repetition in
//! a loop too).

use pest::iterators::Pair;

use super::{children, internal, Conv, ConvertError, Res, Rule};
use crate::ast::*;

fn binary_op(text: &str) -> Option<BinOp> {
    Some(match text {
        "+" => BinOp::Add,
        "-" => BinOp::Sub,
        "*" => BinOp::Mul,
        "/" => BinOp::Div,
        "=" | "==" => BinOp::Eq,
        "!=" => BinOp::Ne,
        "<" => BinOp::Lt,
        "<=" => BinOp::Le,
        ">" => BinOp::Gt,
        ">=" => BinOp::Ge,
        "and" => BinOp::And,
        "or" => BinOp::Or,
        _ => return None,
    })
}

/// True when two operators have the same precedence level.
fn same_level(a: BinOp, b: BinOp) -> bool {
    let level = |op| match op {
        BinOp::Add | BinOp::Sub => 1,
        BinOp::Mul | BinOp::Div => 2,
        BinOp::And => 3,
        BinOp::Or => 4,
        _ => 0,
    };
    level(a) == level(b) && level(a) != 0
}

impl Conv<'_> {
    pub(super) fn expr(&mut self, pair: Pair<Rule>) -> Res<Expr> {
        let span = self.span_of(&pair);
        match pair.as_rule() {
            Rule::expr | Rule::not_expr => {
                self.expr(children(pair).next().ok_or_else(|| internal(&span))?)
            }
            Rule::or_expr | Rule::and_expr | Rule::sum_expr | Rule::product => self.chain(pair),
            Rule::negation => {
                let operand = children(pair).nth(1).ok_or_else(|| internal(&span))?;
                Ok(Expr::Not {
                    expr: Box::new(self.expr(operand)?),
                    span,
                })
            }
            Rule::compare_expr => self.compare(pair),
            Rule::unary => {
                let parts: Vec<Pair<Rule>> = children(pair).collect();
                let negs = parts
                    .iter()
                    .filter(|p| p.as_rule() == Rule::neg_sign)
                    .count();
                let atom = parts.into_iter().last().ok_or_else(|| internal(&span))?;
                let mut e = self.expr(atom)?;
                for _ in 0..negs {
                    e = Expr::Neg {
                        expr: Box::new(e),
                        span: span.clone(),
                    };
                }
                Ok(e)
            }
            Rule::number => Ok(Expr::Number {
                value: self.number(&pair)?,
                span,
            }),
            Rule::string => Ok(Expr::Text(self.string(pair))),
            Rule::ident => Ok(Expr::Name(self.ident(pair))),
            Rule::call => self.call(pair),
            _ => Err(internal(&span)),
        }
    }

    /// `a op b op c ...` of one precedence level, read in a loop.
    fn chain(&mut self, pair: Pair<Rule>) -> Res<Expr> {
        let span = self.span_of(&pair);
        let mut it = children(pair);
        let first = self.expr(it.next().ok_or_else(|| internal(&span))?)?;
        let mut rest = Vec::new();
        while let (Some(op), Some(operand)) = (it.next(), it.next()) {
            let op = binary_op(op.as_str()).ok_or_else(|| internal(&span))?;
            rest.push(Link {
                op,
                operand: self.expr(operand)?,
            });
        }
        let Some(op) = rest.first().map(|l| l.op) else {
            return Ok(first);
        };
        // `(a + b) + c` is `a + b + c`: a parenthesised chain of the same
        // level on the left joins this one, so that the tree does not
        // depend on redundant parentheses (the formatter drops them)
        let first = match first {
            Expr::Chain {
                first,
                rest: mut links,
                ..
            } if links.first().is_some_and(|l| same_level(l.op, op)) => {
                links.append(&mut rest);
                rest = links;
                *first
            }
            other => other,
        };
        let span = rest
            .last()
            .map_or(span, |last| span_from(&first, &last.operand));
        Ok(Expr::Chain {
            first: Box::new(first),
            rest,
            span,
        })
    }

    /// `a < b`, `a [not] in (...)`, `a about b within t`, or just `a`.
    fn compare(&mut self, pair: Pair<Rule>) -> Res<Expr> {
        let span = self.span_of(&pair);
        let mut it = children(pair);
        let left = self.expr(it.next().ok_or_else(|| internal(&span))?)?;
        let Some(tail) = it.next() else {
            return Ok(left);
        };
        let left = Box::new(left);
        match tail.as_rule() {
            Rule::cmp_tail => {
                let mut t = children(tail);
                let op = t
                    .next()
                    .and_then(|p| binary_op(p.as_str()))
                    .ok_or_else(|| internal(&span))?;
                let right = self.expr(t.next().ok_or_else(|| internal(&span))?)?;
                Ok(Expr::Compare {
                    op,
                    left,
                    right: Box::new(right),
                    span,
                })
            }
            Rule::in_tail => {
                let mut negated = false;
                let mut list = Vec::new();
                for p in children(tail) {
                    match p.as_rule() {
                        Rule::kw_not => negated = true,
                        Rule::kw_in => {}
                        _ => list.push(self.expr(p)?),
                    }
                }
                Ok(Expr::In {
                    expr: left,
                    list,
                    negated,
                    span,
                })
            }
            Rule::about_tail => {
                // [about, sum_expr, within, tolerance]
                let parts: Vec<Pair<Rule>> = children(tail).collect();
                let right = self.expr(parts.get(1).cloned().ok_or_else(|| internal(&span))?)?;
                let tol = parts.get(3).cloned().ok_or_else(|| internal(&span))?;
                let tspan = self.span_of(&tol);
                let mut ti = children(tol);
                let amount = self.number(&ti.next().ok_or_else(|| internal(&tspan))?)?;
                let relative = ti.next().is_some();
                Ok(Expr::About {
                    left,
                    right: Box::new(right),
                    tolerance: Tolerance {
                        amount: if relative { amount / 100.0 } else { amount },
                        relative,
                        span: tspan,
                    },
                    span,
                })
            }
            _ => Err(internal(&span)),
        }
    }

    /// A number literal, finite.
    fn number(&self, pair: &Pair<Rule>) -> Res<f64> {
        let span = self.span_of(pair);
        let value: f64 = pair.as_str().parse().map_err(|_| ConvertError {
            span: span.clone(),
            message: format!("`{}` is not a number", pair.as_str()),
        })?;
        if !value.is_finite() {
            return Err(ConvertError {
                span,
                message: "this number is too large".into(),
            });
        }
        Ok(value)
    }

    /// `FUNCTION(ARGUMENT, ...)`.
    fn call(&mut self, pair: Pair<Rule>) -> Res<Expr> {
        let span = self.span_of(&pair);
        let mut it = children(pair);
        let func = self.ident(it.next().ok_or_else(|| internal(&span))?);
        let mut args = Vec::new();
        for a in it {
            if a.as_rule() == Rule::selection {
                args.push(CallArg::Selection(self.selection(a)?));
            } else {
                args.push(CallArg::Value(self.expr(a)?));
            }
        }
        Ok(Expr::Call { func, args, span })
    }

    /// `VIEW.COLUMN [by COLUMN] [where CONDITION]` or `VIEW where CONDITION`.
    fn selection(&mut self, a: Pair<Rule>) -> Res<Selection> {
        let sspan = self.span_of(&a);
        let mut si = children(a);
        let view = self.ident(si.next().ok_or_else(|| internal(&sspan))?);
        let mut sel = Selection {
            view,
            column: None,
            by: None,
            filter: None,
            span: sspan.clone(),
        };
        for part in si {
            match part.as_rule() {
                Rule::ident => sel.column = Some(self.ident(part)),
                Rule::by_part => {
                    sel.by = children(part).nth(1).map(|p| self.ident(p));
                }
                Rule::where_part => {
                    let e = children(part).nth(1).ok_or_else(|| internal(&sspan))?;
                    sel.filter = Some(self.expr(e)?);
                }
                _ => {}
            }
        }
        Ok(sel)
    }
}
