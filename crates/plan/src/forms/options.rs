//! The options of a chart statement, checked against the table of options
//! its form accepts: an option the form does not take, one given twice, a
//! column missing or one too many are reported from the table, not from
//! code written per form.

use crescendo_diag::Diagnostic;
use crescendo_lang::ast::{ChartOpt, Ident, OptName, Span};

use crate::context::{Ctx, Outcome};

/// An option a form accepts, and whether it names a column (`x month`) or
/// stands alone (`ordered`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Opt {
    pub(crate) name: OptName,
    pub(crate) column: bool,
    /// Names a column and gives it a quoted text (`heading gdp "Output"`);
    /// may be given once per column.
    pub(crate) text: bool,
}

/// An option that names a column.
pub(crate) const fn column(name: OptName) -> Opt {
    Opt {
        name,
        column: true,
        text: false,
    }
}

/// An option that stands alone.
pub(crate) const fn flag(name: OptName) -> Opt {
    Opt {
        name,
        column: false,
        text: false,
    }
}

/// An option that gives a column a quoted text, once per column.
pub(crate) const fn column_text(name: OptName) -> Opt {
    Opt {
        name,
        column: true,
        text: true,
    }
}

/// The options a chart statement gave, each once, each allowed.
#[derive(Debug, Default)]
pub(crate) struct Chosen<'c> {
    given: Vec<(OptName, Option<&'c Ident>)>,
}

impl<'c> Chosen<'c> {
    /// The column given for option `name`.
    pub(crate) fn column(&self, name: OptName) -> Option<&'c Ident> {
        self.given
            .iter()
            .find(|(k, _)| *k == name)
            .and_then(|(_, c)| *c)
    }

    /// Was the option given?
    pub(crate) fn has(&self, name: OptName) -> bool {
        self.given.iter().any(|(k, _)| *k == name)
    }

    /// Of the options `names`, the one given last.
    pub(crate) fn last_of(&self, names: &[OptName]) -> Option<OptName> {
        self.given
            .iter()
            .rev()
            .map(|(k, _)| *k)
            .find(|k| names.contains(k))
    }
}

/// An error about the use of option `o` ("`NAME` WHAT"), at `span`.
fn misuse(cx: &Ctx, o: &ChartOpt, what: &str, span: &Span, label: &str) -> Diagnostic {
    let message = format!("`{}` {what}", o.name.keyword());
    cx.at("chart-option", message, span.clone(), label)
}

/// Check the options of a chart statement of form `form` against the
/// form's table `accepted`; reports every problem, then fails.
pub(crate) fn choose<'c>(
    cx: &mut Ctx,
    form: &str,
    accepted: &[Opt],
    opts: &'c [ChartOpt],
) -> Outcome<Chosen<'c>> {
    let cp = cx.checkpoint();
    let mut chosen = Chosen::default();
    for o in opts {
        let Some(rule) = accepted.iter().find(|a| a.name == o.name) else {
            let names: Vec<&str> = accepted.iter().map(|a| a.name.keyword()).collect();
            let what = format!("is not an option of {form}");
            let d = misuse(cx, o, &what, &o.span, "not allowed here")
                .note(format!("{form} takes: {}", names.join(", ")));
            cx.report(d);
            continue;
        };
        let again = if rule.text {
            let col = o.column.as_ref().map(|c| c.name.as_str());
            opts.iter()
                .take_while(|p| !std::ptr::eq(*p, o))
                .any(|p| p.name == o.name && p.column.as_ref().map(|c| c.name.as_str()) == col)
        } else {
            chosen.has(o.name)
        };
        if again {
            cx.report(misuse(cx, o, "is given twice", &o.span, "again here"));
            continue;
        }
        let d = match (&o.column, rule.column, &o.text, rule.text) {
            (None, true, ..) => misuse(cx, o, "needs a column name", &o.span, "which column?"),
            (Some(col), false, ..) => misuse(cx, o, "takes no column", &col.span, "remove this"),
            (_, _, None, true) => misuse(cx, o, "needs its text in quotes", &o.span, "which text?")
                .help(format!("write `{} COLUMN \"Text\"`", o.name.keyword())),
            (_, _, Some(t), false) => misuse(cx, o, "takes no text", &t.span, "remove this"),
            _ => {
                chosen.given.push((o.name, o.column.as_ref()));
                continue;
            }
        };
        cx.report(d);
    }
    cx.errors_since(cp)?;
    Ok(chosen)
}
