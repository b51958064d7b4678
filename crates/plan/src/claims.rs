//! `value NAME = ...` and `claim "sentence": CONDITION` items: values are
//! computed as they are defined; every claim is checked on every build.

use std::collections::BTreeSet;

use crescendo_diag::Diagnostic;
use crescendo_lang::ast;

use crate::context::{Ctx, Outcome};
use crate::model::ClaimPlan;
use crate::scope::Scope;
use crate::values::{self, Evaluator, Quantity};

/// Compute a value item (after the views and values it uses: `order.rs`).
pub(crate) fn define_value(cx: &mut Ctx, scope: &mut Scope, v: &ast::ValueDecl) {
    let name = &v.name.name;
    if scope.values.spans.contains_key(name) || name == "conclusion" {
        let d = cx.at(
            "duplicate-name",
            format!("a value named `{name}` is already defined"),
            v.name.span.clone(),
            "defined again here",
        );
        let d = match scope.values.spans.get(name) {
            Some(prev) => d.also(cx.src, prev.clone(), "first defined here"),
            None => d.note("`conclusion` always quotes the story's conclusion"),
        };
        cx.report(d);
        return;
    }
    let mut deps = BTreeSet::new();
    values::names_in(&v.expr, &mut deps);
    let result = scope.evaluator(cx.src).eval(&v.expr);
    let values = &mut scope.values;
    values.spans.insert(name.clone(), v.name.span.clone());
    values.deps.insert(name.clone(), deps);
    values.exprs.insert(name.clone(), v.expr.clone());
    match result {
        Ok(q) => {
            values.by_name.insert(name.clone(), q);
        }
        Err(ds) => {
            let _ = cx.extend(ds);
            values.broken.insert(name.clone());
        }
    }
}

/// Check a claim. A claim that does not hold adds its error to
/// `failed_claims`; the plan keeps it with the value names it rests on.
pub(crate) fn check_claim(
    cx: &mut Ctx,
    scope: &Scope,
    c: &ast::ClaimDecl,
    failed_claims: &mut Vec<Diagnostic>,
) -> Outcome<(ClaimPlan, BTreeSet<String>)> {
    let mut shown = Vec::new();
    let evaluator = scope.evaluator(cx.src);
    let margin = margin(&evaluator, &c.condition);
    let holds = match evaluator.condition(&c.condition, &mut shown) {
        Ok(h) => h,
        Err(d) => {
            cx.extend(d)?;
            return Err(cx.already_reported());
        }
    };
    let condition = cx
        .src
        .text
        .get(c.condition.span())
        .unwrap_or("")
        .trim()
        .to_string();
    let mut names = BTreeSet::new();
    values::names_in(&c.condition, &mut names);
    let depends = scope.values.closure(&names);
    if !holds {
        let mut d = cx
            .at(
                "claim-false",
                format!("the data no longer supports: \"{}\"", c.sentence.value),
                c.condition.span(),
                "this is false",
            )
            .also(cx.src, c.sentence.span.clone(), "the sentence it protects");
        for line in &shown {
            d = d.note(line.clone());
        }
        for n in &depends {
            if let Some(q) = scope.values.by_name.get(n) {
                d = d.note(format!("{n} = {}", q.figure()));
            }
        }
        failed_claims.push(d.help(
            "change the sentence, or check the new data; `--draft` builds anyway and marks the frames that depend on it",
        ));
    }
    // A frame rests on the claim when its texts use a value the claim
    // names (directly or through other values).
    Ok((
        ClaimPlan {
            sentence: c.sentence.value.clone(),
            condition,
            holds,
            detail: shown,
            margin,
            rests_on: depends.iter().cloned().collect(),
        },
        names,
    ))
}

/// How much room a claim has before it flips, as a share (see
/// `ClaimPlan::margin`): the smallest room of its comparisons when it is
/// one comparison or comparisons joined by `and`; `None` for `or`, `not`,
/// texts and times, and when a side is zero (no scale to measure against).
fn margin(ev: &Evaluator, c: &ast::Expr) -> Option<f64> {
    use ast::{BinOp, Expr};
    let number = |e: &Expr| match ev.eval(e) {
        Ok(Quantity::Number(n)) if n.is_finite() => Some(n),
        _ => None,
    };
    match c {
        Expr::Chain { first, rest, .. } if rest.iter().all(|l| l.op == BinOp::And) => {
            let mut least = margin(ev, first)?;
            for link in rest {
                least = least.min(margin(ev, &link.operand)?);
            }
            Some(least)
        }
        Expr::Compare {
            op, left, right, ..
        } => {
            let (a, b) = (number(left)?, number(right)?);
            if b == 0.0 {
                return None;
            }
            match op {
                BinOp::Gt | BinOp::Ge => Some((a - b) / b.abs()),
                BinOp::Lt | BinOp::Le => Some((b - a) / b.abs()),
                _ => None,
            }
        }
        Expr::About {
            left,
            right,
            tolerance,
            ..
        } => {
            let (a, b) = (number(left)?, number(right)?);
            let allowed = if tolerance.relative {
                tolerance.amount * b.abs()
            } else {
                tolerance.amount
            };
            (allowed > 0.0).then(|| (allowed - (a - b).abs()) / allowed)
        }
        _ => None,
    }
}
