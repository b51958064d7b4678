//! The layout of expressions: one space around binary operators, only the
//! parentheses the precedence needs. A chain is printed in a loop.

use super::Printer;
use crate::ast::*;

// Precedence levels of expressions (higher binds tighter).
const P_OR: u8 = 1;
const P_AND: u8 = 2;
const P_NOT: u8 = 3;
const P_CMP: u8 = 4;
const P_SUM: u8 = 5;
const P_MUL: u8 = 6;
const P_NEG: u8 = 7;
const P_ATOM: u8 = 8;

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
        self.expr(e, 0);
    }

    /// An expression; parenthesised when it binds looser than `min`.
    fn expr(&mut self, e: &Expr, min: u8) {
        let paren = prec(e) < min;
        self.open(paren);
        match e {
            Expr::Name(i) => self.raw(&i.span),
            Expr::Number { span, .. } => self.raw(span),
            Expr::Text(s) => self.raw(&s.span),
            Expr::Neg { expr, .. } => {
                self.s("-");
                self.expr(expr, P_NEG);
            }
            Expr::Not { expr, .. } => {
                self.s("not ");
                self.expr(expr, P_NOT);
            }
            Expr::Chain { first, rest, .. } => {
                let (l, r) = rest.first().map_or((0, 0), |link| sides(link.op));
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
                self.expr(left, P_SUM);
                self.s(" ");
                self.s(op.symbol());
                self.s(" ");
                self.expr(right, P_SUM);
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
                self.expr(left, P_SUM);
                self.s(" about ");
                self.expr(right, P_SUM);
                self.s(" within ");
                self.raw(&tolerance.span);
            }
            Expr::Call { func, args, .. } => self.call(func, args),
        }
        self.close(paren);
    }

    /// `expr [not] in (a, b, ...)`, keeping the list's line breaks.
    fn in_list(&mut self, expr: &Expr, list: &[Expr], negated: bool) {
        self.expr(expr, P_SUM);
        self.s(if negated { " not in (" } else { " in (" });
        let open_at = list.first().map_or(0, |x| x.span().start);
        let paren_at = self.src[..open_at].rfind('(').map_or(open_at, |p| p + 1);
        for (i, x) in list.iter().enumerate() {
            if i == 0 {
                self.gap("", paren_at, x.span().start, false);
            } else {
                self.gap(",", list[i - 1].span().end, x.span().start, true);
            }
            self.expr(x, P_ATOM);
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
                CallArg::Value(v) => self.expr(v, 0),
            }
        }
        self.s(")");
    }

    fn selection(&mut self, s: &Selection) {
        self.raw(&s.view.span);
        if let Some(c) = &s.column {
            self.s(".");
            self.raw(&c.span);
        }
        self.opt(" by ", s.by.as_ref());
        if let Some(f) = &s.filter {
            self.s(" where ");
            self.expr(f, 0);
        }
    }
}

/// Minimum precedence of the left and right operand of a binary operator
/// (operators are left-associative; comparisons do not chain).
fn sides(op: BinOp) -> (u8, u8) {
    match op {
        BinOp::Or => (P_OR, P_AND),
        BinOp::And => (P_AND, P_NOT),
        BinOp::Add | BinOp::Sub => (P_SUM, P_MUL),
        BinOp::Mul | BinOp::Div => (P_MUL, P_NEG),
        BinOp::Eq | BinOp::Ne | BinOp::Lt | BinOp::Le | BinOp::Gt | BinOp::Ge => (P_SUM, P_SUM),
    }
}

fn prec(e: &Expr) -> u8 {
    match e {
        Expr::Name(_) | Expr::Number { .. } | Expr::Text(_) | Expr::Call { .. } => P_ATOM,
        Expr::Neg { .. } => P_NEG,
        Expr::Not { .. } => P_NOT,
        Expr::Compare { .. } | Expr::In { .. } | Expr::About { .. } => P_CMP,
        Expr::Chain { rest, .. } => match rest.first().map(|l| l.op) {
            Some(BinOp::Or) => P_OR,
            Some(BinOp::And) => P_AND,
            Some(BinOp::Mul | BinOp::Div) => P_MUL,
            _ => P_SUM,
        },
    }
}
