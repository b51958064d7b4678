//! Walking the syntax tree. Implement [`Visit`] and override the methods
//! for the nodes of interest; each default method walks into the node's
//! children through the matching `walk_*` function, which an override can
//! call to keep walking. Every name (`Ident`), string (`Str`), text, view
//! step, frame statement, selection and expression is reached, including
//! the quoted values inside texts.
//!
//! The walk recurses once per level of the tree, whose depth the parser
//! caps (operators of one level form one chain, walked in a loop).

use crate::ast::*;

/// A visitor over the syntax tree; see the module documentation.
pub trait Visit<'a> {
    fn visit_item(&mut self, item: &'a Item) {
        walk_item(self, item)
    }
    fn visit_data(&mut self, data: &'a DataDecl) {
        walk_data(self, data)
    }
    /// Where a database item reads from (its connection variable and its
    /// `in order of` columns).
    fn visit_database(&mut self, db: &'a DatabaseSource) {
        walk_database(self, db)
    }
    fn visit_step(&mut self, step: &'a StepAst) {
        walk_step(self, step)
    }
    fn visit_frame_stmt(&mut self, stmt: &'a FrameStmt) {
        walk_frame_stmt(self, stmt)
    }
    fn visit_chart(&mut self, chart: &'a ChartStmt) {
        walk_chart(self, chart)
    }
    fn visit_draw(&mut self, draw: &'a DrawStmt) {
        walk_draw(self, draw)
    }
    fn visit_expr(&mut self, expr: &'a Expr) {
        walk_expr(self, expr)
    }
    fn visit_selection(&mut self, selection: &'a Selection) {
        walk_selection(self, selection)
    }
    fn visit_text(&mut self, text: &'a Text) {
        walk_text(self, text)
    }
    fn visit_ident(&mut self, _ident: &'a Ident) {}
    fn visit_str(&mut self, _s: &'a Str) {}
}

/// Visit every item of a story, in order.
pub fn walk_story<'a, V: Visit<'a> + ?Sized>(v: &mut V, story: &'a StoryAst) {
    for item in &story.items {
        v.visit_item(item);
    }
}

pub fn walk_item<'a, V: Visit<'a> + ?Sized>(v: &mut V, item: &'a Item) {
    match item {
        Item::Title(t) | Item::Byline(t) | Item::Source(t) | Item::Conclusion(t) => {
            v.visit_text(&t.text)
        }
        Item::Accent(t) | Item::Style(t) | Item::Locale(t) => v.visit_str(&t.text),
        Item::Theme { name, .. } => v.visit_ident(name),
        Item::Fiscal { month, .. } => v.visit_ident(month),
        Item::FiscalNames(FiscalNamesDecl { names, .. }) => {
            for n in names {
                v.visit_str(&n.text);
            }
        }
        Item::Data(d) => v.visit_data(d),
        Item::View(view) => {
            v.visit_ident(&view.name);
            v.visit_ident(&view.input);
            for step in &view.steps {
                v.visit_step(step);
            }
        }
        Item::Compare(c) => {
            v.visit_ident(&c.key);
            v.visit_ident(&c.measure);
        }
        Item::Focus { names, .. } => names.iter().for_each(|n| v.visit_str(n)),
        Item::Value(value) => {
            v.visit_ident(&value.name);
            v.visit_expr(&value.expr);
        }
        Item::Claim(c) => {
            v.visit_expr(&c.condition);
            v.visit_str(&c.sentence);
        }
        Item::Allow(a) => walk_allow(v, a),
        Item::Plugin(p) => {
            v.visit_str(&p.path);
            v.visit_ident(&p.alias);
            if let Some(pin) = &p.pin {
                v.visit_str(pin);
            }
        }
        Item::Frame(f) => {
            v.visit_text(&f.headline);
            for stmt in &f.stmts {
                v.visit_frame_stmt(stmt);
            }
        }
    }
}

fn walk_allow<'a, V: Visit<'a> + ?Sized>(v: &mut V, a: &'a AllowDecl) {
    v.visit_ident(&a.rule);
    v.visit_str(&a.reason);
}

pub fn walk_data<'a, V: Visit<'a> + ?Sized>(v: &mut V, d: &'a DataDecl) {
    v.visit_ident(&d.name);
    match &d.database {
        Some(db) => v.visit_database(db),
        None => v.visit_str(&d.file),
    }
    for s in d.sheet.iter().chain(&d.cells).map(|s| &**s) {
        v.visit_str(s);
    }
    for m in d.missing.iter().flatten() {
        v.visit_str(m);
    }
    for c in &d.columns {
        v.visit_ident(&c.name);
        v.visit_ident(&c.ty);
    }
}

pub fn walk_database<'a, V: Visit<'a> + ?Sized>(v: &mut V, db: &'a DatabaseSource) {
    match &db.from {
        DbFrom::Table { schema, name } => {
            if let Some(s) = schema {
                v.visit_str(s);
            }
            v.visit_str(name);
        }
        DbFrom::Query(q) => v.visit_str(q),
    }
    v.visit_ident(&db.env);
    for o in &db.order {
        v.visit_ident(o);
    }
}

pub fn walk_step<'a, V: Visit<'a> + ?Sized>(v: &mut V, step: &'a StepAst) {
    match step {
        StepAst::Keep { expr, .. } => v.visit_expr(expr),
        StepAst::By {
            keys, aggregates, ..
        } => {
            keys.iter().for_each(|k| v.visit_ident(k));
            for a in aggregates {
                v.visit_ident(&a.name);
                v.visit_ident(&a.func);
                if let Some(c) = &a.column {
                    v.visit_ident(c);
                }
            }
        }
        StepAst::Add { name, expr, .. } => {
            v.visit_ident(name);
            v.visit_expr(expr);
        }
        StepAst::Sort { keys, .. } => keys.iter().for_each(|k| v.visit_ident(&k.column)),
        StepAst::Top { key, by, rest, .. } => {
            v.visit_ident(key);
            v.visit_ident(by);
            if let Some(r) = rest {
                v.visit_str(r);
            }
        }
        StepAst::Columns { names, .. } => names.iter().for_each(|n| v.visit_ident(n)),
    }
}

pub fn walk_frame_stmt<'a, V: Visit<'a> + ?Sized>(v: &mut V, stmt: &'a FrameStmt) {
    match stmt {
        FrameStmt::Chart(c) => v.visit_chart(c),
        FrameStmt::Draw(d) => v.visit_draw(d),
        FrameStmt::AxisTitle { text, .. }
        | FrameStmt::Takeaway { text, .. }
        | FrameStmt::Notes { text, .. } => v.visit_text(text),
        FrameStmt::Reference { value, text, .. } => {
            walk_position(v, value);
            v.visit_text(text);
        }
        FrameStmt::Show { targets, .. }
        | FrameStmt::Hide { targets, .. }
        | FrameStmt::Spotlight { targets, .. } => walk_targets(v, targets),
        FrameStmt::Range { .. }
        | FrameStmt::LabelEnds { .. }
        | FrameStmt::Gridlines { .. }
        | FrameStmt::Footnote { .. } => {}
        FrameStmt::Allow(a) => walk_allow(v, a),
        FrameStmt::Figure { text, caption, .. } => {
            v.visit_text(text);
            v.visit_text(caption);
        }
        FrameStmt::Split(s) => {
            v.visit_ident(&s.key);
            if let Some(by) = &s.by {
                v.visit_ident(by);
            }
            s.order.iter().for_each(|o| v.visit_str(o));
        }
        FrameStmt::Unfold { order, .. } => order.iter().for_each(|o| v.visit_str(o)),
        FrameStmt::Cite { value, .. } => v.visit_ident(value),
        FrameStmt::Callout { at, on, text, .. } => {
            walk_position(v, at);
            if let Some(on) = on {
                v.visit_str(on);
            }
            v.visit_text(text);
        }
        FrameStmt::Moment {
            at, until, text, ..
        } => {
            walk_position(v, at);
            if let Some(u) = until {
                walk_position(v, u);
            }
            v.visit_text(text);
        }
        FrameStmt::Band { from, to, text, .. } => {
            walk_position(v, from);
            walk_position(v, to);
            if let Some(t) = text {
                v.visit_text(t);
            }
        }
    }
}

fn walk_position<'a, V: Visit<'a> + ?Sized>(v: &mut V, p: &'a Position) {
    match p {
        Position::Text(s) => v.visit_str(s),
        Position::Value(e) => v.visit_expr(e),
        Position::Number { .. } => {}
    }
}

fn walk_targets<'a, V: Visit<'a> + ?Sized>(v: &mut V, targets: &'a Targets) {
    match targets {
        Targets::All(_) | Targets::None(_) | Targets::Focus(_) => {}
        Targets::Names(names) => names.iter().for_each(|n| v.visit_str(n)),
        Targets::Cells(cells) => {
            for (name, column) in cells {
                v.visit_str(name);
                v.visit_ident(column);
            }
        }
    }
}

pub fn walk_chart<'a, V: Visit<'a> + ?Sized>(v: &mut V, chart: &'a ChartStmt) {
    v.visit_ident(&chart.view);
    for o in &chart.opts {
        if let Some(c) = &o.column {
            v.visit_ident(c);
        }
    }
}

pub fn walk_draw<'a, V: Visit<'a> + ?Sized>(v: &mut V, draw: &'a DrawStmt) {
    v.visit_ident(&draw.plugin);
    if let Some(f) = &draw.form {
        v.visit_ident(f);
    }
    v.visit_ident(&draw.view);
    for (option, column) in &draw.opts {
        v.visit_ident(option);
        v.visit_ident(column);
    }
}

/// Visit the children of an expression (operands, the names it uses, the
/// arguments of a call); a chain's operands in a loop.
pub fn walk_expr<'a, V: Visit<'a> + ?Sized>(v: &mut V, expr: &'a Expr) {
    match expr {
        Expr::Name(i) => v.visit_ident(i),
        Expr::Number { .. } => {}
        Expr::Text(s) => v.visit_str(s),
        Expr::Neg { expr, .. } | Expr::Not { expr, .. } => v.visit_expr(expr),
        Expr::Chain { first, rest, .. } => {
            v.visit_expr(first);
            for link in rest {
                v.visit_expr(&link.operand);
            }
        }
        Expr::Compare { left, right, .. } | Expr::About { left, right, .. } => {
            v.visit_expr(left);
            v.visit_expr(right);
        }
        Expr::In { expr, list, .. } => {
            v.visit_expr(expr);
            list.iter().for_each(|x| v.visit_expr(x));
        }
        Expr::Call { func, args, .. } => {
            v.visit_ident(func);
            for a in args {
                match a {
                    CallArg::Selection(s) => v.visit_selection(s),
                    CallArg::Value(x) => v.visit_expr(x),
                }
            }
        }
    }
}

pub fn walk_selection<'a, V: Visit<'a> + ?Sized>(v: &mut V, s: &'a Selection) {
    v.visit_ident(&s.view);
    if let Some(c) = &s.column {
        v.visit_ident(c);
    }
    if let Some(b) = &s.by {
        v.visit_ident(b);
    }
    if let Some(f) = &s.filter {
        v.visit_expr(f);
    }
}

/// Visit the expressions a text quotes.
pub fn walk_text<'a, V: Visit<'a> + ?Sized>(v: &mut V, text: &'a Text) {
    for part in &text.template.parts {
        if let TextPart::Quote { expr, .. } = part {
            v.visit_expr(expr);
        }
    }
}
