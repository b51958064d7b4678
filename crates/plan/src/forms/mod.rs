//! Chart forms. Each built-in form (line, bars, dots, scatter, pie, table)
//! has one planner behind [`form::FormPlanner`], with the table of options
//! it accepts; `draw` starts a chart a plugin draws.

mod bars;
mod dots;
mod form;
mod grid;
mod line;
mod options;
mod orientation;
mod parts;
mod pie;
mod plugin;
mod scatter;
mod spec;
mod table;
mod writing;

use crescendo_lang::ast::{ChartForm, ChartStmt, CompareDecl};

use crate::context::{Ctx, Outcome};
use crate::rows::schema_of;
use crate::sequence::SeqState;
use crate::tables::Tables;
use form::FormPlanner;
use options::Opt;
use spec::SpecInput;

pub(crate) use plugin::draw;

/// The table of options of a built-in chart form (in the order messages
/// list them), and its planner.
fn form(form: ChartForm) -> (&'static [Opt], &'static dyn FormPlanner) {
    match form {
        ChartForm::Line => (line::OPTIONS, &line::Line),
        ChartForm::Bars => (bars::OPTIONS, &bars::Bars),
        ChartForm::Dots => (dots::OPTIONS, &dots::Dots),
        ChartForm::Scatter => (scatter::OPTIONS, &scatter::Scatter),
        ChartForm::Pie => (pie::OPTIONS, &pie::Pie),
        ChartForm::Table => (table::OPTIONS, &table::Table),
    }
}

/// `line VIEW: ...` (or another form): the chart a new sequence starts
/// from, every item in context. `compare` gives the default key and
/// measure columns.
pub(crate) fn start(
    cx: &mut Ctx,
    tables: &Tables,
    compare: Option<&CompareDecl>,
    c: &ChartStmt,
) -> Outcome<SeqState> {
    let named = tables.named(cx, &c.view)?;
    let (accepted, planner) = form(c.form);
    let chosen = options::choose(cx, c.form.keyword(), accepted, &c.opts)?;
    let input = SpecInput {
        c,
        view: c.view.name.clone(),
        table: &named.table,
        schema: schema_of(&named.table),
        rest: named.rest.clone(),
        counts: &named.counts,
        chosen,
        compare,
        tables,
    };
    let spec = planner.spec(cx, &input)?;
    if spec.rows() == 0 {
        return Err(cx.error_with_help(
            "empty-view",
            format!("`{}` has no rows to draw", spec.table_name),
            c.view.span.clone(),
            "empty",
            "check the view's `keep` conditions against the data",
        ));
    }
    planner.chart(cx, &spec, c)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crescendo_lang::ast::OptName;

    /// Every option belongs to some form, and no form lists one twice.
    #[test]
    fn option_tables_are_well_formed() {
        let forms = [
            ChartForm::Line,
            ChartForm::Bars,
            ChartForm::Dots,
            ChartForm::Scatter,
            ChartForm::Pie,
            ChartForm::Table,
        ];
        let mut seen = Vec::new();
        for f in forms {
            let table = form(f).0;
            for (i, o) in table.iter().enumerate() {
                assert!(
                    !table[..i].iter().any(|p| p.name == o.name),
                    "{f:?} lists {:?} twice",
                    o.name
                );
                seen.push(o.name);
            }
        }
        for o in [
            OptName::X,
            OptName::Y,
            OptName::Series,
            OptName::Category,
            OptName::Value,
            OptName::Ordered,
            OptName::Horizontal,
            OptName::Vertical,
            OptName::Stack,
            OptName::Group,
            OptName::Label,
            OptName::Fit,
            OptName::Heading,
        ] {
            assert!(seen.contains(&o), "no form takes {o:?}");
        }
    }
}
