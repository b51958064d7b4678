//! The first `keep` of every view over a Parquet data item, resolved
//! against the file's columns, so that row groups no view can keep are
//! not decoded (`crescendo_data::parquet::load_parquet_skipping`).

use std::fs::File;
use std::sync::Arc;

use crescendo_data::{parquet, ColType, Columns, CsvSpec, Expr};
use crescendo_diag::Source;
use crescendo_lang::ast;

use crate::rows::{At, Schema};

/// The conditions, or an empty list when skipping is not safe: a view
/// that does not start with `keep`, a condition that does not resolve, or
/// an undeclared text column the story reads (its type is inferred from
/// the rows read).
pub(crate) fn first_keeps(
    src: &Arc<Source>,
    spec: &CsvSpec,
    file: &File,
    keep: &Columns,
    views: Option<&Vec<ast::ViewDecl>>,
) -> Vec<Expr> {
    let (Some(views), Some(types)) = (views, parquet::column_types(file)) else {
        return Vec::new();
    };
    let declared = |n: &str| spec.declared.iter().find(|(d, _)| d == n).map(|(_, t)| *t);
    let mut schema: Schema = Vec::new();
    for (name, ty) in types {
        let read = keep.keeps(&name) || declared(&name).is_some();
        let ty = match (ty, declared(&name)) {
            (Some(ColType::Text), None) if read => return Vec::new(),
            (Some(t), Some(d)) if t == d => t,
            (Some(t), None) => t,
            // a declared type the file's type does not decide
            _ => ColType::Text,
        };
        schema.push((name, ty));
    }
    let mut out = Vec::new();
    for v in views {
        let Some(ast::StepAst::Keep { expr, .. }) = v.steps.first() else {
            return Vec::new();
        };
        let mut quiet = Vec::new();
        match At::new(src, &schema, "in the file").condition(expr, &mut quiet) {
            Some(e) if quiet.is_empty() => out.push(e),
            _ => return Vec::new(),
        }
    }
    out
}
