//! The layout of items, data sources and view steps.

use super::Printer;
use crate::ast::*;

impl Printer<'_> {
    pub(super) fn story(&mut self, ast: &StoryAst) {
        for item in &ast.items {
            let span = item.span().clone();
            self.leading(span.start, true);
            self.item(item);
            self.trailing(span.end);
            self.newline();
        }
    }

    /// A keyword and the string after it.
    fn text_item(&mut self, keyword: &str, string: &Span) {
        self.s(keyword);
        self.s(" ");
        self.raw(string);
    }

    fn item(&mut self, item: &Item) {
        match item {
            Item::Title(t) => self.text_item("story", &t.text.span),
            Item::Byline(t) => self.text_item("byline", &t.text.span),
            Item::Source(t) => self.text_item("source", &t.text.span),
            Item::Conclusion(t) => self.text_item("conclusion", &t.text.span),
            Item::Accent(t) => self.text_item("accent", &t.text.span),
            Item::Style(t) => self.text_item("style", &t.text.span),
            Item::Locale(t) => self.text_item("locale", &t.text.span),
            Item::Fiscal { month, .. } => {
                self.put("fiscal year starts ", month);
            }
            Item::FiscalNames(FiscalNamesDecl { names, .. }) => {
                self.s("fiscal names ");
                for (i, n) in names.iter().enumerate() {
                    if i > 0 {
                        self.s(", ");
                    }
                    self.s(n.part.word());
                    self.put(" ", &n.text);
                }
            }
            Item::Theme { name, .. } => {
                self.put("theme ", name);
            }
            Item::Data(d) => self.data(d),
            Item::View(v) => self.view(v),
            Item::Compare(c) => {
                self.put("compare ", &c.key);
                self.put(" by ", &c.measure);
            }
            Item::Focus { names, .. } => {
                self.s("focus ");
                self.strs(names);
            }
            Item::Value(v) => {
                self.put("value ", &v.name);
                self.s(" = ");
                self.top_expr(&v.expr);
            }
            Item::Claim(c) => {
                self.s("claim ");
                self.top_expr(&c.condition);
                self.put(" ", &c.sentence);
            }
            Item::Allow(a) => self.allow(a),
            Item::Plugin(p) => {
                self.put("use plugin ", &p.path);
                self.put(" as ", &p.alias);
                self.opt(" sha256 ", p.pin.as_ref());
            }
            Item::Frame(f) => self.frame(f),
        }
    }

    pub(super) fn allow(&mut self, a: &AllowDecl) {
        self.put("allow ", &a.rule);
        self.put(" ", &a.reason);
    }

    /// `"A", "B", ...` keeping the author's line breaks.
    pub(super) fn strs(&mut self, names: &[Str]) {
        for (i, n) in names.iter().enumerate() {
            if i > 0 {
                self.gap(",", names[i - 1].span.end, n.span.start, true);
            }
            self.raw(&n.span);
        }
    }

    fn idents(&mut self, names: &[Ident]) {
        for (i, n) in names.iter().enumerate() {
            if i > 0 {
                self.gap(",", names[i - 1].span.end, n.span.start, true);
            }
            self.raw(&n.span);
        }
    }

    fn data(&mut self, d: &DataDecl) {
        // destructured in full: a new part of the statement does not
        // compile until it has a layout here
        let DataDecl {
            name,
            file,
            missing,
            thousands,
            decimal,
            columns,
            database,
            sheet,
            cells,
            span: _,
        } = d;
        self.put("data ", name);
        self.s(" from ");
        match database {
            None => self.raw(&file.span),
            Some(DatabaseSource {
                from,
                env,
                order,
                span: _,
            }) => {
                match from {
                    DbFrom::Table { schema, name } => {
                        self.s("table ");
                        if let Some(schema) = schema {
                            self.raw(&schema.span);
                            self.s(".");
                        }
                        self.raw(&name.span);
                    }
                    DbFrom::Query(q) => {
                        self.put("query ", q);
                    }
                }
                self.put(" via ", env);
                if !order.is_empty() {
                    self.s(" in order of ");
                    self.idents(order);
                }
            }
        }
        self.opt(" sheet ", sheet.as_deref());
        self.opt(" cells ", cells.as_deref());
        if let Some(missing) = missing {
            self.s(" missing ");
            self.strs(missing);
        }
        self.opt(" thousands ", thousands.as_deref());
        self.opt(" decimal ", decimal.as_deref());
        let (Some(first), Some(last)) = (columns.first(), columns.last()) else {
            return;
        };
        let (first, last) = (first.span.start, last.span.end);
        let open = self.src[..first].rfind('{').unwrap_or(first);
        let close = self.src[last..].find('}').map_or(last, |o| last + o);
        let multiline = self.src[open..close].contains('\n');
        if !multiline {
            self.s(" { ");
            for (i, c) in columns.iter().enumerate() {
                if i > 0 {
                    self.s(", ");
                }
                self.column(c);
            }
            self.s(" }");
            return;
        }
        self.s(" {");
        self.trailing(open + 1);
        self.newline();
        self.level += 1;
        for c in columns {
            self.leading(c.span.start, true);
            self.indent();
            self.column(c);
            // a comma after the declaration is dropped: line breaks separate
            let end = c.span.end;
            let after = self.src[end..].trim_start_matches([' ', '\t']);
            let end = if after.starts_with(',') {
                end + (self.src.len() - end - after.len()) + 1
            } else {
                end
            };
            self.trailing(end);
            self.newline();
        }
        self.leading(close, false);
        self.level -= 1;
        self.indent();
        self.s("}");
        self.last_end = close + 1;
    }

    fn column(&mut self, c: &ColumnDecl) {
        self.raw(&c.name.span);
        self.put(": ", &c.ty);
    }

    fn view(&mut self, v: &ViewDecl) {
        self.put("view ", &v.name);
        self.put(" = ", &v.input);
        self.last_end = v.input.span.end;
        self.level += 1;
        for step in &v.steps {
            let sp = step.span().clone();
            // the step's span starts after `|`
            let bar = self.src[..sp.start].rfind('|').unwrap_or(sp.start);
            self.trailing(self.last_end);
            self.newline();
            self.leading(bar, false);
            self.indent();
            self.s("| ");
            self.step(step);
            self.last_end = sp.end;
        }
        self.level -= 1;
    }

    fn step(&mut self, step: &StepAst) {
        match step {
            StepAst::Keep { expr, .. } => {
                self.s("keep ");
                self.top_expr(expr);
            }
            StepAst::By {
                keys, aggregates, ..
            } => {
                self.s("by ");
                self.idents(keys);
                let last_key = keys.last().map_or(0, |k| k.span.end);
                for (i, a) in aggregates.iter().enumerate() {
                    if i == 0 {
                        self.gap(":", last_key, a.span.start, true);
                    } else {
                        self.gap(",", aggregates[i - 1].span.end, a.span.start, true);
                    }
                    self.raw(&a.name.span);
                    self.put(" = ", &a.func);
                    self.s("(");
                    if let Some(c) = &a.column {
                        self.raw(&c.span);
                    }
                    self.s(")");
                }
            }
            StepAst::Add { name, expr, .. } => {
                self.put("add ", name);
                self.s(" = ");
                self.top_expr(expr);
            }
            StepAst::Sort { keys, .. } => {
                self.s("sort ");
                for (i, k) in keys.iter().enumerate() {
                    if i > 0 {
                        self.gap(",", keys[i - 1].span.end, k.span.start, true);
                    }
                    self.raw(&k.column.span);
                    if k.descending {
                        self.s(" descending");
                    }
                }
            }
            StepAst::Top {
                n_span,
                key,
                by,
                rest,
                ..
            } => {
                self.s("top ");
                self.raw(n_span);
                self.put(" ", key);
                self.put(" by ", by);
                self.opt(" rest ", rest.as_ref());
            }
            StepAst::Columns { names, .. } => {
                self.s("columns ");
                self.idents(names);
            }
        }
    }
}
