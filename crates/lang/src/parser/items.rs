//! Top-level items: the header, data sources, views, values, claims and
//! frames (whose parts are read by the other phases).

use pest::iterators::Pair;

use super::{children, internal, nth, Conv, Res, Rule};
use crate::ast::*;

impl Conv<'_> {
    /// `year "FY"`, `quarter "Q"` or `half "H"`.
    fn fiscal_name(&mut self, pair: Pair<Rule>) -> Res<FiscalName> {
        let span = self.span_of(&pair);
        let mut it = children(pair);
        let part = match it.next().map(|p| p.as_rule()) {
            Some(Rule::kw_year) => FiscalPart::Year,
            Some(Rule::kw_quarter) => FiscalPart::Quarter,
            Some(Rule::kw_half) => FiscalPart::Half,
            _ => return Err(internal(&span)),
        };
        let text = self.string(it.next().ok_or_else(|| internal(&span))?);
        Ok(FiscalName { part, text, span })
    }

    pub(super) fn item(&mut self, pair: Pair<Rule>) -> Res<Item> {
        let (span, rule, mut inner) = self.open(pair);
        fn last<'i>(inner: &mut Vec<Pair<'i, Rule>>, span: &Span) -> Res<Pair<'i, Rule>> {
            inner.pop().ok_or_else(|| internal(span))
        }
        let part = |i: usize| nth(&inner, i, &span);
        Ok(match rule {
            Rule::title_item => Item::Title(self.text_item(last(&mut inner, &span)?, &span)),
            Rule::byline_item => Item::Byline(self.text_item(last(&mut inner, &span)?, &span)),
            Rule::source_item => Item::Source(self.text_item(last(&mut inner, &span)?, &span)),
            Rule::conclusion_item => {
                Item::Conclusion(self.text_item(last(&mut inner, &span)?, &span))
            }
            Rule::accent_item => Item::Accent(self.str_item(last(&mut inner, &span)?, &span)),
            Rule::style_item => Item::Style(self.str_item(last(&mut inner, &span)?, &span)),
            Rule::locale_item => Item::Locale(self.str_item(last(&mut inner, &span)?, &span)),
            Rule::fiscal_item => Item::Fiscal {
                month: self.ident(last(&mut inner, &span)?),
                span,
            },
            Rule::fiscal_names_item => Item::FiscalNames(FiscalNamesDecl {
                names: inner
                    .into_iter()
                    .filter(|p| p.as_rule() == Rule::fiscal_name)
                    .map(|p| self.fiscal_name(p))
                    .collect::<Res<Vec<_>>>()?,
                span,
            }),
            Rule::plugin_item => {
                let mut it = inner.into_iter().skip(2);
                let path = self.string(it.next().ok_or_else(|| internal(&span))?);
                let _as = it.next();
                let alias = self.ident(it.next().ok_or_else(|| internal(&span))?);
                let pin = it.nth(1).map(|p| self.string(p));
                Item::Plugin(PluginDecl {
                    path,
                    alias,
                    pin,
                    span,
                })
            }
            Rule::allow_item => Item::Allow(self.allow_decl(inner, span)?),
            Rule::theme_item => Item::Theme {
                name: self.ident(inner.remove(1)),
                span,
            },
            Rule::data_item => Item::Data(self.data_item(inner, span)?),
            Rule::view_item => Item::View(ViewDecl {
                name: self.ident(part(1)?),
                input: self.ident(part(2)?),
                steps: (inner[3..].iter())
                    .map(|p| self.step(p.clone()))
                    .collect::<Res<_>>()?,
                span,
            }),
            Rule::compare_item => {
                let key = self.ident(inner.remove(1));
                let measure = self.ident(inner.remove(2));
                Item::Compare(CompareDecl { key, measure, span })
            }
            Rule::focus_item => Item::Focus {
                names: inner
                    .into_iter()
                    .filter(|p| p.as_rule() == Rule::string)
                    .map(|p| self.string(p))
                    .collect(),
                span,
            },
            Rule::value_item => Item::Value(ValueDecl {
                name: self.ident(part(1)?),
                expr: self.expr(part(2)?)?,
                span,
            }),
            Rule::claim_item => Item::Claim(ClaimDecl {
                condition: self.expr(part(1)?)?,
                sentence: self.string(part(2)?),
                span,
            }),
            Rule::frame_item => Item::Frame(FrameDecl {
                headline: self.text(part(1)?),
                stmts: (inner[2..].iter())
                    .map(|p| self.frame_stmt(p.clone()))
                    .collect::<Res<_>>()?,
                span,
            }),
            _ => return Err(internal(&span)),
        })
    }

    fn text_item(&mut self, string: Pair<Rule>, span: &Span) -> TextItem {
        TextItem {
            text: self.text(string),
            span: span.clone(),
        }
    }

    fn str_item(&mut self, string: Pair<Rule>, span: &Span) -> StrItem {
        StrItem {
            text: self.string(string),
            span: span.clone(),
        }
    }

    pub(super) fn allow_decl(&mut self, inner: Vec<Pair<Rule>>, span: Span) -> Res<AllowDecl> {
        let mut it = inner.into_iter().skip(1);
        let rule = self.ident(it.next().ok_or_else(|| internal(&span))?);
        let reason = self.string(it.next().ok_or_else(|| internal(&span))?);
        Ok(AllowDecl { rule, reason, span })
    }

    /// `data NAME from SOURCE [missing ...] [thousands ...] [decimal ...] [{ columns }]`.
    fn data_item(&mut self, inner: Vec<Pair<Rule>>, span: Span) -> Res<DataDecl> {
        let mut it = inner.into_iter().skip(1);
        let name = self.ident(it.next().ok_or_else(|| internal(&span))?);
        let _from = it.next();
        let source = it.next().ok_or_else(|| internal(&span))?;
        let (file, database) = if source.as_rule() == Rule::db_source {
            self.db_source(source).ok_or_else(|| internal(&span))?
        } else {
            (self.string(source), None)
        };
        let mut decl = DataDecl {
            name,
            file,
            database,
            span,
            missing: None,
            thousands: None,
            decimal: None,
            sheet: None,
            cells: None,
            columns: Vec::new(),
        };
        for p in it {
            match p.as_rule() {
                rule @ (Rule::sheet_clause
                | Rule::cells_clause
                | Rule::thousands_clause
                | Rule::decimal_clause) => {
                    let s = children(p)
                        .find(|q| q.as_rule() == Rule::string)
                        .map(|q| Box::new(self.string(q)));
                    let clause = match rule {
                        Rule::sheet_clause => &mut decl.sheet,
                        Rule::cells_clause => &mut decl.cells,
                        Rule::thousands_clause => &mut decl.thousands,
                        _ => &mut decl.decimal,
                    };
                    *clause = s;
                }
                Rule::missing_clause => {
                    decl.missing = Some(
                        children(p)
                            .filter(|q| q.as_rule() == Rule::string)
                            .map(|q| self.string(q))
                            .collect(),
                    )
                }
                Rule::column_block => {
                    for c in children(p) {
                        let (cspan, _, parts) = self.open(c);
                        decl.columns.push(ColumnDecl {
                            name: self.ident(nth(&parts, 0, &cspan)?),
                            ty: self.ident(nth(&parts, 1, &cspan)?),
                            span: cspan,
                        });
                    }
                }
                _ => {}
            }
        }
        Ok(decl)
    }

    /// A `db_source`: the string that names the table or holds the query
    /// (for messages), and the source itself.
    fn db_source(&mut self, pair: Pair<Rule>) -> Option<(Str, Option<DatabaseSource>)> {
        let span = self.span_of(&pair);
        let mut it = children(pair);
        let what = it.next()?;
        let (file, from) = match what.as_rule() {
            Rule::db_table => {
                let strings: Vec<Str> = children(what)
                    .filter(|p| p.as_rule() == Rule::string)
                    .map(|p| self.string(p))
                    .collect();
                match strings.as_slice() {
                    [name] => (
                        name.clone(),
                        DbFrom::Table {
                            schema: None,
                            name: name.clone(),
                        },
                    ),
                    [schema, name] => (
                        name.clone(),
                        DbFrom::Table {
                            schema: Some(schema.clone()),
                            name: name.clone(),
                        },
                    ),
                    _ => return None,
                }
            }
            _ => {
                let q = self.string(children(what).find(|p| p.as_rule() == Rule::string)?);
                (q.clone(), DbFrom::Query(q))
            }
        };
        let mut env = None;
        let mut order = Vec::new();
        for p in it {
            match p.as_rule() {
                Rule::ident => env = Some(self.ident(p)),
                Rule::db_order => order.extend(
                    children(p)
                        .filter(|q| q.as_rule() == Rule::ident)
                        .map(|q| self.ident(q)),
                ),
                _ => {}
            }
        }
        Some((
            file,
            Some(DatabaseSource {
                from,
                env: env?,
                order,
                span,
            }),
        ))
    }
}
