//! Where a value came from: the rows of a view its function was computed
//! from, or the two values a ratio or a difference compares. Read from the
//! value's definition, so it follows the data on every build.

use crescendo_data::{Table, Value};
use crescendo_lang::ast::{BinOp, CallArg, Expr, Selection};

use std::sync::Arc;

use crescendo_diag::Source;

use crate::rows::{self, schema_of};
use crate::scope::Scope;

/// How deep a value may be defined through other values before the search
/// stops (the expression nesting cap of the language is the same).
const DEPTH: usize = 48;

/// The evidence of a value.
#[derive(Clone, Debug)]
pub(crate) enum Prov {
    /// A function of a selection of a view's rows.
    Rows(Picked),
    /// A ratio or a difference of two values (`a / b`, `a - b`,
    /// `ratio(a, b)`; literals around them, as in `a / b - 1`, aside).
    Pair(Box<Prov>, Box<Prov>),
}

/// The rows a selection picked.
#[derive(Clone, Debug)]
pub(crate) struct Picked {
    pub(crate) func: String,
    pub(crate) view: String,
    /// Row numbers in the view's table, in `by` order when `by` is given.
    pub(crate) rows: Vec<usize>,
    /// The measured column and the `by` column, by index.
    pub(crate) column: Option<usize>,
    pub(crate) by: Option<usize>,
}

/// Why a value has no evidence to draw.
pub(crate) enum NoProv {
    /// Arithmetic of numbers written in the story.
    Literal,
    /// A selection that does not resolve (already reported when the value
    /// was defined).
    Broken,
}

/// The evidence of expression `e`.
pub(crate) fn of(at: (&Scope, &Arc<Source>), e: &Expr, depth: usize) -> Result<Prov, NoProv> {
    if depth > DEPTH {
        return Err(NoProv::Broken);
    }
    let scope = at.0;
    match e {
        Expr::Name(id) => match scope.values.exprs.get(&id.name) {
            Some(def) => of(at, def, depth + 1),
            None => Err(NoProv::Broken),
        },
        Expr::Neg { expr, .. } => of(at, expr, depth + 1),
        Expr::Call { func, args, .. } => match (func.name.as_str(), args.as_slice()) {
            ("ratio", [CallArg::Value(a), CallArg::Value(b)]) => pair(at, a, b, depth),
            (f, [CallArg::Selection(s)]) => pick(at, f, s).map(Prov::Rows),
            _ => Err(NoProv::Broken),
        },
        Expr::Chain { first, rest, .. } if !e.is_condition() => {
            // the operands that come from rows; literals (`- 1`, `* 100`)
            // only scale or shift the figure
            let mut found = Vec::new();
            let operands = std::iter::once((None, first.as_ref()))
                .chain(rest.iter().map(|l| (Some(l.op), &l.operand)));
            for (op, x) in operands {
                match of(at, x, depth + 1) {
                    Ok(p) => found.push((op, p)),
                    Err(NoProv::Literal) => {}
                    Err(NoProv::Broken) => return Err(NoProv::Broken),
                }
            }
            match found.len() {
                0 => Err(NoProv::Literal),
                1 => Ok(found.remove(0).1),
                2 if matches!(found[1].0, Some(BinOp::Div | BinOp::Sub)) => {
                    let (_, b) = found.remove(1);
                    let (_, a) = found.remove(0);
                    Ok(Prov::Pair(Box::new(a), Box::new(b)))
                }
                _ => Err(NoProv::Broken),
            }
        }
        Expr::Number { .. } => Err(NoProv::Literal),
        _ => Err(NoProv::Broken),
    }
}

fn pair(at: (&Scope, &Arc<Source>), a: &Expr, b: &Expr, depth: usize) -> Result<Prov, NoProv> {
    let (a, b) = (of(at, a, depth + 1), of(at, b, depth + 1));
    match (a, b) {
        (Ok(a), Ok(b)) => Ok(Prov::Pair(Box::new(a), Box::new(b))),
        (Ok(one), Err(NoProv::Literal)) | (Err(NoProv::Literal), Ok(one)) => Ok(one),
        (Err(NoProv::Literal), Err(NoProv::Literal)) => Err(NoProv::Literal),
        _ => Err(NoProv::Broken),
    }
}

/// The rows selection `s` picks (the same rule as the value functions: the
/// `where` filter through the view engine, then `by` order, rows without a
/// position skipped).
fn pick((scope, src): (&Scope, &Arc<Source>), func: &str, s: &Selection) -> Result<Picked, NoProv> {
    let named = scope
        .tables
        .by_name
        .get(&s.view.name)
        .ok_or(NoProv::Broken)?;
    let table: &Table = &named.table;
    let schema = schema_of(table);
    let find = |name: &str| table.columns.iter().position(|c| c.name == name);
    let column = match &s.column {
        Some(c) => Some(find(&c.name).ok_or(NoProv::Broken)?),
        None => None,
    };
    let by = match &s.by {
        Some(b) => Some(find(&b.name).ok_or(NoProv::Broken)?),
        None => None,
    };
    let n = table.columns.first().map_or(0, |c| c.values.len());
    let mut picked: Vec<usize> = match &s.filter {
        None => (0..n).collect(),
        Some(f) => {
            let mut diags = Vec::new();
            let cond = rows::At::new(src, &schema, "")
                .condition(f, &mut diags)
                .ok_or(NoProv::Broken)?;
            rows::kept_rows(table, cond)
        }
    };
    if let Some(bi) = by {
        let col = &table.columns[bi].values;
        picked.retain(|r| position(&col.value(*r)).is_some());
        picked.sort_by(|a, b| {
            let pa = position(&col.value(*a)).unwrap_or(f64::INFINITY);
            let pb = position(&col.value(*b)).unwrap_or(f64::INFINITY);
            pa.total_cmp(&pb)
        });
    }
    Ok(Picked {
        func: func.to_string(),
        view: s.view.name.clone(),
        rows: picked,
        column,
        by,
    })
}

/// A cell's place along an axis (numbers and times).
pub(crate) fn position(v: &Value) -> Option<f64> {
    match v {
        Value::Number(n) => Some(*n),
        Value::Date(d) | Value::Month(d) | Value::Year(d) => Some(f64::from(*d)),
        _ => None,
    }
}
