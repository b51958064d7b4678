//! The layout of expressions: one space around binary operators, only the
//! parentheses the precedence needs. A chain is printed in a loop.

use super::Printer;
use crate::ast::*;

/// Precedence levels of expressions, loosest first (a later level binds
/// tighter). `Top` is the place of a whole expression: nothing needs
/// parentheses there.
#[derive(Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
enum Prec {
    Top,
    Or,
    And,
    Not,
    Cmp,
    Sum,
    Mul,
    Neg,
    Atom,
}

impl Printer<'_> {
    fn open(&mut self, need: bool) {
        if need {
            self.s("(");
        }
    }

    fn close(&mut self, need: bool) {
        if need {
            self.s(")");
        }
    }

    /// An expression at the top of its place (no parentheses around it).
    pub(super) fn top_expr(&mut self, e: &Expr) {
        self.expr(e, Prec::Top);
    }

    /// An expression; parenthesised when it binds looser than `min`.
    fn expr(&mut self, e: &Expr, min: Prec) {
        let paren = prec(e) < min;
        self.open(paren);
        match e {
            Expr::Name(i) => self.raw(&i.span),
            Expr::Number { span, .. } => self.raw(span),
            Expr::Text(s) => self.raw(&s.span),
            Expr::Neg { expr, .. } => {
                self.s("-");
                self.expr(expr, Prec::Neg);
            }
            Expr::Not { expr, .. } => {
                self.s("not ");
                self.expr(expr, Prec::Not);
            }
            Expr::Chain { first, rest, .. } => {
                let (l, r) = rest
                    .first()
                    .map_or((Prec::Top, Prec::Top), |link| sides(link.op));
                self.expr(first, l);
                for link in rest {
                    self.s(" ");
                    self.s(link.op.symbol());
                    self.s(" ");
                    self.expr(&link.operand, r);
                }
            }
            Expr::Compare {
                op, left, right, ..
            } => {
                self.expr(left, Prec::Sum);
                self.s(" ");
                self.s(op.symbol());
                self.s(" ");
                self.expr(right, Prec::Sum);
            }
            Expr::In {
                expr,
                list,
                negated,
                ..
            } => self.in_list(expr, list, *negated),
            Expr::About {
                left,
                right,
                tolerance,
                ..
            } => {
                self.expr(left, Prec::Sum);
                self.s(" about ");
                self.expr(right, Prec::Sum);
                self.s(" within ");
                self.raw(&tolerance.span);
            }
            Expr::Call { func, args, .. } => self.call(func, args),
        }
        self.close(paren);
    }

    /// `expr [not] in (a, b, ...)`, keeping the list's line breaks.
    fn in_list(&mut self, expr: &Expr, list: &[Expr], negated: bool) {
        self.expr(expr, Prec::Sum);
        self.s(if negated { " not in (" } else { " in (" });
        let open_at = list.first().map_or(0, |x| x.span().start);
        let paren_at = self.src[..open_at].rfind('(').map_or(open_at, |p| p + 1);
        for (i, x) in list.iter().enumerate() {
            if i == 0 {
                self.gap("", paren_at, x.span().start, false);
            } else {
                self.gap(",", list[i - 1].span().end, x.span().start, true);
            }
            self.expr(x, Prec::Atom);
        }
        self.s(")");
    }

    /// `FUNCTION(ARGUMENT, ...)`, keeping the arguments' line breaks.
    fn call(&mut self, func: &Ident, args: &[CallArg]) {
        self.raw(&func.span);
        self.s("(");
        for (i, a) in args.iter().enumerate() {
            if i == 0 {
                let paren = self.src[..a.span().start]
                    .rfind('(')
                    .map_or(a.span().start, |p| p + 1);
                self.gap("", paren, a.span().start, false);
            } else {
                self.gap(",", args[i - 1].span().end, a.span().start, true);
            }
            match a {
                CallArg::Selection(s) => self.selection(s),
                CallArg::Value(v) => self.expr(v, Prec::Top),
            }
        }
        self.s(")");
    }

    fn selection(&mut self, s: &Selection) {
        self.raw(&s.view.span);
        if let Some(c) = &s.column {
            self.put(".", c);
        }
        self.opt(" by ", s.by.as_ref());
        if let Some(f) = &s.filter {
            self.s(" where ");
            self.expr(f, Prec::Top);
        }
    }
}

/// Minimum precedence of the left and right operand of a binary operator
/// (operators are left-associative; comparisons do not chain).
fn sides(op: BinOp) -> (Prec, Prec) {
    match op {
        BinOp::Or => (Prec::Or, Prec::And),
        BinOp::And => (Prec::And, Prec::Not),
        BinOp::Add | BinOp::Sub => (Prec::Sum, Prec::Mul),
        BinOp::Mul | BinOp::Div => (Prec::Mul, Prec::Neg),
        BinOp::Eq | BinOp::Ne | BinOp::Lt | BinOp::Le | BinOp::Gt | BinOp::Ge => {
            (Prec::Sum, Prec::Sum)
        }
    }
}

fn prec(e: &Expr) -> Prec {
    match e {
        Expr::Name(_) | Expr::Number { .. } | Expr::Text(_) | Expr::Call { .. } => Prec::Atom,
        Expr::Neg { .. } => Prec::Neg,
        Expr::Not { .. } => Prec::Not,
        Expr::Compare { .. } | Expr::In { .. } | Expr::About { .. } => Prec::Cmp,
        Expr::Chain { rest, .. } => match rest.first().map(|l| l.op) {
            Some(BinOp::Or) => Prec::Or,
            Some(BinOp::And) => Prec::And,
            Some(BinOp::Mul | BinOp::Div) => Prec::Mul,
            _ => Prec::Sum,
        },
    }
}
