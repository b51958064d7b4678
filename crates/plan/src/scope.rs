//! What the story's items defined, as the frames see it: its tables, its
//! values and its plugins.

use std::collections::BTreeMap;
use std::sync::Arc;

use crescendo_diag::Source;
use crescendo_lang::ast::Text;

use crate::context::{Ctx, Reported};
use crate::plugins::Plugins;
use crate::tables::Tables;
use crate::values::{self, Evaluator, Resolved, Values};

/// Every table, value and plugin of a story.
#[derive(Default)]
pub(crate) struct Scope {
    pub(crate) tables: Tables,
    pub(crate) values: Values,
    pub(crate) plugins: Plugins,
    /// Plugins whose `use plugin` failed (already reported), so a `draw`
    /// naming one is not reported again as unknown.
    pub(crate) failed_plugins: BTreeMap<String, Reported>,
}

impl Scope {
    /// Evaluates value expressions against this scope.
    pub(crate) fn evaluator<'a>(&'a self, src: &'a Arc<Source>) -> Evaluator<'a> {
        Evaluator {
            src,
            tables: &self.tables,
            values: &self.values,
        }
    }

    /// A story text with its quoted values resolved; reports what does not
    /// resolve.
    pub(crate) fn text(&self, cx: &mut Ctx, s: &Text) -> Resolved {
        let mut d = Vec::new();
        let r = values::resolve_text(&self.evaluator(cx.src), s, &mut d);
        // a text that does not resolve fails its frame or item, which
        // checks for errors itself
        let _ = cx.extend(d);
        if r.template.is_some() {
            // with its quoted values filled in, a text may pass the limit
            let limits = &cx.options.limits;
            if let Some(e) = crate::limits::expanded_text(cx.src, &s.span, &r.text, limits) {
                cx.report_once(e);
            }
        }
        r
    }
}
