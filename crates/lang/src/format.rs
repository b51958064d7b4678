//! The canonical layout of a story file (`crescendo fmt`).
//!
//! The formatter prints the syntax tree, one `match` arm per item and per
//! frame statement (the matches are exhaustive, so a new statement does not
//! compile until it has a layout). Names, numbers and strings are copied from
//! the source text by their spans, so a literal is never rewritten (`0.50`
//! stays `0.50`); only blank space, line breaks, `;`, redundant parentheses
//! and defaults (`ascending`) change.
//!
//! Comments are not in the tree (`COMMENT` is a silent pest rule): they are
//! found again in the source text and placed by position — a comment on its
//! own line stays on its own line before the next item or statement, a
//! comment after code stays at the end of that line. Line breaks after commas
//! in lists are kept (long lists stay readable); blank lines between items
//! and statements are kept, at most one in a row.
//!
//! Layout: two spaces per level (frame statements, column declarations,
//! view steps as `  | step`), four for the continuation of a list, one space
//! around `=` and binary operators, none before `,` and `:`, two spaces
//! before a trailing comment, exactly one line break at the end of the file.
//!
//! Every result is checked before it is returned: it must parse to the same
//! tree (spans aside) and keep every comment, in order; otherwise the
//! formatter returns an error instead of a changed story.

use std::sync::Arc;

use crescendo_diag::{Diagnostic, Source};

use crate::ast::*;
use crate::parser::parse;

/// Format a story. On a syntax error returns the parser's located
/// diagnostics (and formats nothing).
pub fn format_source(source: &Arc<Source>) -> Result<String, Vec<Diagnostic>> {
    let (ast, diags) = parse(source);
    if !diags.is_empty() {
        return Err(diags);
    }
    let text = source.text.as_str();
    let mut p = Printer::new(text);
    p.story(&ast);
    let out = p.finish();
    // The safety net: never hand back a story that means something else.
    let again = Source::file(source.name.clone(), out.clone());
    let (ast2, diags2) = parse(&again);
    let same_tree = diags2.is_empty() && same_shape(&ast, &ast2);
    let same_comments = comments(text)
        .iter()
        .map(|r| text[r.clone()].trim_end())
        .eq(comments(&out).iter().map(|r| out[r.clone()].trim_end()));
    if !same_tree || !same_comments {
        return Err(vec![Diagnostic::error(
            "fmt-internal",
            "the formatter could not keep this story's meaning or comments; the file is left as it is",
        )
        .at(source, 0..0, "formatting stopped here")
        .note("this is a bug in crescendo fmt: please report it with the story")]);
    }
    Ok(out)
}

/// Format story text (named `<story>` in diagnostics).
pub fn format_story(text: &str) -> Result<String, Vec<Diagnostic>> {
    format_source(&Source::file("<story>", text))
}

/// True when two trees are the same apart from their spans (source
/// positions): what `parse(format(s))` must give back.
pub fn same_shape(a: &StoryAst, b: &StoryAst) -> bool {
    strip_spans(&format!("{a:?}")) == strip_spans(&format!("{b:?}"))
}

/// The `Debug` text of a tree with every `start..end` range blanked out.
pub fn strip_spans(debug: &str) -> String {
    let b = debug.as_bytes();
    let mut out = String::with_capacity(debug.len());
    let mut i = 0;
    while i < b.len() {
        if b[i].is_ascii_digit() && (i == 0 || !b[i - 1].is_ascii_alphanumeric()) {
            let mut j = i;
            while j < b.len() && b[j].is_ascii_digit() {
                j += 1;
            }
            if debug[j..].starts_with("..") {
                let mut k = j + 2;
                while k < b.len() && b[k].is_ascii_digit() {
                    k += 1;
                }
                if k > j + 2 {
                    out.push('_');
                    i = k;
                    continue;
                }
            }
            out.push_str(&debug[i..j]);
            i = j;
            continue;
        }
        let ch = debug[i..].chars().next().unwrap_or(' ');
        out.push(ch);
        i += ch.len_utf8().max(1);
    }
    out
}

/// Byte ranges of the comments of a story (from `#` to the end of the line,
/// without the line break); a `#` inside a string is not a comment.
pub fn comments(text: &str) -> Vec<std::ops::Range<usize>> {
    let b = text.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        match b[i] {
            b'"' => {
                i += 1;
                while i < b.len() && b[i] != b'"' && b[i] != b'\n' {
                    if b[i] == b'\\' {
                        i += 1;
                    }
                    i += 1;
                }
                i += 1;
            }
            b'#' => {
                let start = i;
                while i < b.len() && b[i] != b'\n' {
                    i += 1;
                }
                let end = if i > start && b[i - 1] == b'\r' {
                    i - 1
                } else {
                    i
                };
                out.push(start..end);
            }
            _ => i += 1,
        }
    }
    out
}

/// Indentation of one level.
const INDENT: &str = "  ";
/// Extra indentation of a list continued on the next line.
const CONTINUE: &str = "    ";

// Precedence levels of expressions (higher binds tighter).
const P_OR: u8 = 1;
const P_AND: u8 = 2;
const P_NOT: u8 = 3;
const P_CMP: u8 = 4;
const P_SUM: u8 = 5;
const P_MUL: u8 = 6;
const P_NEG: u8 = 7;
const P_ATOM: u8 = 8;

struct Printer<'a> {
    src: &'a str,
    comments: Vec<std::ops::Range<usize>>,
    /// The next comment not yet printed.
    next: usize,
    out: String,
    /// Indentation of the current line (levels).
    level: usize,
    /// Where the last printed source node ended (for blank-line detection).
    last_end: usize,
}

impl<'a> Printer<'a> {
    fn new(src: &'a str) -> Self {
        Printer {
            src,
            comments: comments(src),
            next: 0,
            out: String::new(),
            level: 0,
            last_end: 0,
        }
    }

    fn finish(mut self) -> String {
        self.leading(self.src.len(), true);
        let trimmed = self.out.trim_end().len();
        self.out.truncate(trimmed);
        if !self.out.is_empty() {
            self.out.push('\n');
        }
        self.out
    }

    fn s(&mut self, text: &str) {
        self.out.push_str(text);
    }

    /// Copy a node's source text (a name, a number, a string with quotes).
    fn raw(&mut self, span: &Span) {
        let t = self.src.get(span.clone()).unwrap_or("");
        self.out.push_str(t);
    }

    fn indent(&mut self) {
        for _ in 0..self.level {
            self.out.push_str(INDENT);
        }
    }

    fn newline(&mut self) {
        let trimmed = self.out.trim_end_matches([' ', '\t']).len();
        self.out.truncate(trimmed);
        self.out.push('\n');
    }

    /// True when the source between `from` and `to` has a blank line
    /// outside comments.
    fn blank_between(&self, from: usize, to: usize) -> bool {
        has_empty_line(self.src.get(from.min(to)..to).unwrap_or(""))
    }

    /// Print the comments that start before `pos` on lines of their own,
    /// at the current indentation; keep one blank line where the source had
    /// one. When `blank_before_node` is set, also a blank line between the
    /// last comment and the node at `pos` if the source had one.
    fn leading(&mut self, pos: usize, blank_before_node: bool) {
        while let Some(c) = self.comments.get(self.next).cloned() {
            if c.start >= pos {
                break;
            }
            if !self.out.is_empty() && self.blank_between(self.last_end, c.start) {
                self.ensure_blank_line();
            }
            self.indent();
            let text = self.src[c.clone()].trim_end().to_string();
            self.s(&text);
            self.newline();
            self.last_end = c.end;
            self.next += 1;
        }
        if blank_before_node && !self.out.is_empty() && self.blank_between(self.last_end, pos) {
            self.ensure_blank_line();
        }
    }

    fn ensure_blank_line(&mut self) {
        if !self.out.ends_with("\n\n") && !self.out.ends_with("{\n") {
            if !self.out.ends_with('\n') {
                self.newline();
            }
            self.out.push('\n');
        }
    }

    /// Print at the end of the current line the comments that start inside
    /// the node ending at `end`, and a comment that follows it on the same
    /// source line with nothing but `;`, `,` or blank space between (a
    /// comment after later code on that line belongs to that code).
    fn trailing(&mut self, end: usize) {
        let line_end = self.src[end.min(self.src.len())..]
            .find('\n')
            .map_or(self.src.len(), |o| end + o);
        let mut first = true;
        while let Some(c) = self.comments.get(self.next).cloned() {
            let inside = c.start < end;
            let follows = c.start < line_end
                && self.src[end.min(c.start)..c.start]
                    .chars()
                    .all(|ch| matches!(ch, ' ' | '\t' | ';' | ','));
            if !inside && !follows {
                break;
            }
            // a second comment inside the node goes on its own line
            self.comment(&c, first);
            first = false;
        }
        self.last_end = self.last_end.max(end);
    }

    /// Write the next comment, `c`: after two spaces on the current line
    /// when it is the `first` there, else on a line of its own.
    fn comment(&mut self, c: &std::ops::Range<usize>, first: bool) {
        if first {
            self.s("  ");
        } else {
            self.newline();
            self.indent();
            self.s(CONTINUE);
        }
        let text = self.src[c.clone()].trim_end().to_string();
        self.s(&text);
        self.next += 1;
    }

    /// Between two elements of a list: `sep` (e.g. `,`), then a line break
    /// if the source had one between them (with any comments there kept at
    /// the end of the line), else a space.
    fn gap(&mut self, sep: &str, prev_end: usize, next_start: usize, space: bool) {
        self.s(sep);
        let gap = self.src.get(prev_end..next_start).unwrap_or("");
        if gap.contains('\n') {
            self.trailing_until(next_start);
            self.newline();
            self.indent();
            self.s(CONTINUE);
        } else if space {
            self.s(" ");
        }
    }

    /// Comments before `pos`, kept on the current line (only one fits: the
    /// others go on lines of their own).
    fn trailing_until(&mut self, pos: usize) {
        let mut first = true;
        while let Some(c) = self.comments.get(self.next).cloned() {
            if c.start >= pos {
                break;
            }
            self.comment(&c, first);
            first = false;
        }
    }

    // ------------------------------------------------------------ items

    fn story(&mut self, ast: &StoryAst) {
        for item in &ast.items {
            let span = item.span().clone();
            self.leading(span.start, true);
            self.item(item);
            self.trailing(span.end);
            self.newline();
        }
    }

    fn text_item(&mut self, keyword: &str, t: &TextItem) {
        self.s(keyword);
        self.s(" ");
        self.raw(&t.text.span);
    }

    fn item(&mut self, item: &Item) {
        match item {
            Item::Title(t) => self.text_item("story", t),
            Item::Byline(t) => self.text_item("byline", t),
            Item::Source(t) => self.text_item("source", t),
            Item::Conclusion(t) => self.text_item("conclusion", t),
            Item::Accent(t) => self.text_item("accent", t),
            Item::Style(t) => self.text_item("style", t),
            Item::Locale(t) => self.text_item("locale", t),
            Item::Fiscal { month, .. } => {
                self.s("fiscal year starts ");
                self.raw(&month.span);
            }
            Item::Theme { name, .. } => {
                self.s("theme ");
                self.raw(&name.span);
            }
            Item::Data(d) => self.data(d),
            Item::View(v) => self.view(v),
            Item::Compare(c) => {
                self.s("compare ");
                self.raw(&c.key.span);
                self.s(" by ");
                self.raw(&c.measure.span);
            }
            Item::Focus { names, .. } => {
                self.s("focus ");
                self.strs(names);
            }
            Item::Value(v) => {
                self.s("value ");
                self.raw(&v.name.span);
                self.s(" = ");
                self.vexpr(&v.expr, 0);
            }
            Item::Claim(c) => {
                self.s("claim ");
                self.vcond(&c.condition, 0);
                self.s(" ");
                self.raw(&c.sentence.span);
            }
            Item::Allow(a) => self.allow(a),
            Item::Plugin(p) => {
                self.s("use plugin ");
                self.raw(&p.path.span);
                self.s(" as ");
                self.raw(&p.alias.span);
                if let Some(pin) = &p.pin {
                    self.s(" sha256 ");
                    self.raw(&pin.span);
                }
            }
            Item::Frame(f) => self.frame(f),
        }
    }

    fn allow(&mut self, a: &AllowDecl) {
        self.s("allow ");
        self.raw(&a.rule.span);
        self.s(" ");
        self.raw(&a.reason.span);
    }

    /// `"A", "B", ...` keeping the author's line breaks.
    fn strs(&mut self, names: &[Str]) {
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
            columns,
            database,
            span: _,
        } = d;
        self.s("data ");
        self.raw(&name.span);
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
                        self.s("query ");
                        self.raw(&q.span);
                    }
                }
                self.s(" via ");
                self.raw(&env.span);
                if !order.is_empty() {
                    self.s(" in order of ");
                    self.idents(order);
                }
            }
        }
        if let Some(missing) = missing {
            self.s(" missing ");
            self.strs(missing);
        }
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
        self.s(": ");
        self.raw(&c.ty.span);
    }

    fn view(&mut self, v: &ViewDecl) {
        self.s("view ");
        self.raw(&v.name.span);
        self.s(" = ");
        self.raw(&v.input.span);
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
                self.expr(expr, 0);
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
                    self.s(" = ");
                    self.raw(&a.func.span);
                    self.s("(");
                    if let Some(c) = &a.column {
                        self.raw(&c.span);
                    }
                    self.s(")");
                }
            }
            StepAst::Add { name, expr, .. } => {
                self.s("add ");
                self.raw(&name.span);
                self.s(" = ");
                self.expr(expr, 0);
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
                self.s(" ");
                self.raw(&key.span);
                self.s(" by ");
                self.raw(&by.span);
                if let Some(r) = rest {
                    self.s(" rest ");
                    self.raw(&r.span);
                }
            }
            StepAst::Columns { names, .. } => {
                self.s("columns ");
                self.idents(names);
            }
        }
    }

    // ------------------------------------------------------------ frames

    fn frame(&mut self, f: &FrameDecl) {
        self.s("frame ");
        self.raw(&f.headline.span);
        let open = self.src[f.headline.span.end..]
            .find('{')
            .map_or(f.headline.span.end, |o| f.headline.span.end + o);
        let close = f.span.end.saturating_sub(1);
        let has_comment = self
            .comments
            .get(self.next)
            .is_some_and(|c| c.start < close);
        if f.stmts.is_empty() && !has_comment {
            self.s(" {}");
            self.last_end = f.span.end;
            return;
        }
        self.s(" {");
        self.trailing(open + 1);
        self.newline();
        self.level += 1;
        let mut first = true;
        for st in &f.stmts {
            let sp = frame_stmt_span(st);
            self.leading(sp.start, !first);
            first = false;
            self.indent();
            self.frame_stmt(st);
            self.trailing(sp.end);
            self.newline();
        }
        self.leading(close, false);
        self.level -= 1;
        self.indent();
        self.s("}");
        self.last_end = f.span.end;
    }

    fn targets(&mut self, t: &Targets) {
        match t {
            Targets::All(_) => self.s("all"),
            Targets::None(_) => self.s("none"),
            Targets::Focus(_) => self.s("focus"),
            Targets::Names(names) => self.strs(names),
            Targets::Cells(cells) => {
                for (i, (name, col)) in cells.iter().enumerate() {
                    if i > 0 {
                        self.gap(",", cells[i - 1].1.span.end, name.span.start, true);
                    }
                    self.raw(&name.span);
                    self.s(" in ");
                    self.raw(&col.span);
                }
            }
        }
    }

    /// The source word `index` (0-based, split at blank space) of a
    /// one-line statement: numbers the tree keeps only as values.
    fn word(&mut self, span: &Span, index: usize) {
        let text = self.src.get(span.clone()).unwrap_or("");
        let w = text.split_whitespace().nth(index).unwrap_or("");
        let w = w.to_string();
        self.s(&w);
    }

    fn position(&mut self, p: &Position) {
        self.raw(&p.span());
    }

    fn frame_stmt(&mut self, st: &FrameStmt) {
        match st {
            FrameStmt::Chart(c) => {
                self.s(c.form.keyword());
                self.s(" ");
                self.raw(&c.view.span);
                for (i, o) in c.opts.iter().enumerate() {
                    if i == 0 {
                        self.s(": ");
                    } else {
                        self.gap(",", c.opts[i - 1].span.end, o.span.start, true);
                    }
                    self.s(o.name.keyword());
                    if let Some(col) = &o.column {
                        self.s(" ");
                        self.raw(&col.span);
                    }
                }
            }
            FrameStmt::Draw(d) => {
                self.s("draw ");
                self.raw(&d.plugin.span);
                if let Some(form) = &d.form {
                    self.s(".");
                    self.raw(&form.span);
                }
                self.s(" ");
                self.raw(&d.view.span);
                for (i, (opt, col)) in d.opts.iter().enumerate() {
                    if i == 0 {
                        self.s(": ");
                    } else {
                        self.gap(",", d.opts[i - 1].1.span.end, opt.span.start, true);
                    }
                    self.raw(&opt.span);
                    self.s(" ");
                    self.raw(&col.span);
                }
            }
            FrameStmt::AxisTitle { axis, text, .. } => {
                self.s(axis_kw(*axis));
                self.s(" title ");
                self.raw(&text.span);
            }
            FrameStmt::Show { targets, .. } => {
                self.s("show ");
                self.targets(targets);
            }
            FrameStmt::Hide { targets, .. } => {
                self.s("hide ");
                self.targets(targets);
            }
            FrameStmt::Spotlight { targets, .. } => {
                self.s("spotlight ");
                self.targets(targets);
            }
            FrameStmt::Takeaway { text, .. } => {
                self.s("takeaway ");
                self.raw(&text.span);
            }
            FrameStmt::Notes { text, .. } => {
                self.s("notes ");
                self.raw(&text.span);
            }
            FrameStmt::Range { axis, span, .. } => {
                self.s(axis_kw(*axis));
                self.s(" range ");
                self.word(span, 2);
                self.s(" to ");
                self.word(span, 4);
            }
            FrameStmt::Allow(a) => self.allow(a),
            FrameStmt::Figure { text, caption, .. } => {
                self.s("figure ");
                self.raw(&text.span);
                self.s(" ");
                self.raw(&caption.span);
            }
            FrameStmt::Split(s) => {
                self.s("split ");
                self.raw(&s.key.span);
                match s.descending {
                    Some(true) => self.s(" descending"),
                    Some(false) => self.s(" ascending"),
                    None => {}
                }
                if let Some(by) = &s.by {
                    self.s(" by ");
                    self.raw(&by.span);
                }
                if !s.order.is_empty() {
                    self.s(" order ");
                    self.strs(&s.order);
                }
                if s.trim {
                    self.s(" trim");
                }
                if s.free {
                    self.s(" free");
                }
            }
            FrameStmt::Unfold { order, .. } => {
                self.s("unfold");
                if !order.is_empty() {
                    self.s(" ");
                    self.strs(order);
                }
            }
            FrameStmt::Callout { at, on, text, .. } => {
                self.s("callout ");
                self.position(at);
                if let Some(on) = on {
                    self.s(" on ");
                    self.raw(&on.span);
                }
                self.s(" ");
                self.raw(&text.span);
            }
            FrameStmt::Band { from, to, text, .. } => {
                self.s("band ");
                self.position(from);
                self.s(" to ");
                self.position(to);
                if let Some(t) = text {
                    self.s(" ");
                    self.raw(&t.span);
                }
            }
            FrameStmt::Reference { text, span, .. } => {
                self.s("reference ");
                self.word(span, 1);
                self.s(" ");
                self.raw(&text.span);
            }
            FrameStmt::LabelEnds { .. } => self.s("label ends"),
            FrameStmt::Gridlines { on, .. } => {
                self.s(if *on { "gridlines" } else { "gridlines off" })
            }
        }
    }

    // ------------------------------------------------------------ expressions

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

    /// A row expression; parenthesised when it binds looser than `min`.
    fn expr(&mut self, e: &Expr, min: u8) {
        let prec = expr_prec(e);
        let paren = prec < min;
        self.open(paren);
        match e {
            Expr::Column(i) => self.raw(&i.span),
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
            Expr::Binary {
                op, left, right, ..
            } => {
                let (l, r) = binary_sides(*op);
                self.expr(left, l);
                self.s(" ");
                self.s(op.symbol());
                self.s(" ");
                self.expr(right, r);
            }
            Expr::In {
                expr,
                list,
                negated,
                ..
            } => {
                self.expr(expr, P_SUM);
                self.s(if *negated { " not in (" } else { " in (" });
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
        }
        self.close(paren);
    }

    fn vexpr(&mut self, e: &VExpr, min: u8) {
        let prec = vexpr_prec(e);
        let paren = prec < min;
        self.open(paren);
        match e {
            VExpr::Number { span, .. } => self.raw(span),
            VExpr::Name(i) => self.raw(&i.span),
            VExpr::Neg { expr, .. } => {
                self.s("-");
                self.vexpr(expr, P_NEG);
            }
            VExpr::Binary {
                op, left, right, ..
            } => {
                let (l, r) = binary_sides(*op);
                self.vexpr(left, l);
                self.s(" ");
                self.s(op.symbol());
                self.s(" ");
                self.vexpr(right, r);
            }
            VExpr::Call { func, args, .. } => {
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
                        CallArg::Value(v) => self.vexpr(v, 0),
                    }
                }
                self.s(")");
            }
        }
        self.close(paren);
    }

    fn selection(&mut self, s: &Selection) {
        self.raw(&s.view.span);
        if let Some(c) = &s.column {
            self.s(".");
            self.raw(&c.span);
        }
        if let Some(by) = &s.by {
            self.s(" by ");
            self.raw(&by.span);
        }
        if let Some(f) = &s.filter {
            self.s(" where ");
            self.expr(f, 0);
        }
    }

    fn vcond(&mut self, c: &VCond, min: u8) {
        let prec = match c {
            VCond::Or { .. } => P_OR,
            VCond::And { .. } => P_AND,
            VCond::Not { .. } => P_NOT,
            VCond::Compare { .. } | VCond::About { .. } => P_CMP,
        };
        let paren = prec < min;
        self.open(paren);
        match c {
            VCond::Compare {
                op, left, right, ..
            } => {
                self.vexpr(left, 0);
                self.s(" ");
                self.s(op.symbol());
                self.s(" ");
                self.vexpr(right, 0);
            }
            VCond::About {
                left,
                right,
                tolerance,
                ..
            } => {
                self.vexpr(left, 0);
                self.s(" about ");
                self.vexpr(right, 0);
                self.s(" within ");
                self.raw(&tolerance.span);
            }
            VCond::And { left, right, .. } => {
                self.vcond(left, P_AND);
                self.s(" and ");
                self.vcond(right, P_NOT);
            }
            VCond::Or { left, right, .. } => {
                self.vcond(left, P_OR);
                self.s(" or ");
                self.vcond(right, P_AND);
            }
            VCond::Not { cond, .. } => {
                self.s("not ");
                self.vcond(cond, P_NOT);
            }
        }
        self.close(paren);
    }
}

/// True when `gap` contains a line with nothing but blank space between two
/// line breaks.
fn has_empty_line(gap: &str) -> bool {
    let parts: Vec<&str> = gap.split('\n').collect();
    parts.len() >= 3
        && parts[1..parts.len() - 1]
            .iter()
            .any(|l| l.trim().is_empty())
}

fn axis_kw(a: AxisName) -> &'static str {
    match a {
        AxisName::X => "x",
        AxisName::Y => "y",
    }
}

/// Minimum precedence of the left and right operand of a binary operator
/// (operators are left-associative; comparisons do not chain).
fn binary_sides(op: BinOp) -> (u8, u8) {
    match op {
        BinOp::Or => (P_OR, P_AND),
        BinOp::And => (P_AND, P_NOT),
        BinOp::Add | BinOp::Sub => (P_SUM, P_MUL),
        BinOp::Mul | BinOp::Div => (P_MUL, P_NEG),
        BinOp::Eq | BinOp::Ne | BinOp::Lt | BinOp::Le | BinOp::Gt | BinOp::Ge => (P_SUM, P_SUM),
    }
}

fn expr_prec(e: &Expr) -> u8 {
    match e {
        Expr::Column(_) | Expr::Number { .. } | Expr::Text(_) => P_ATOM,
        Expr::Neg { .. } => P_NEG,
        Expr::Not { .. } => P_NOT,
        Expr::In { .. } => P_CMP,
        Expr::Binary { op, .. } => match op {
            BinOp::Or => P_OR,
            BinOp::And => P_AND,
            BinOp::Add | BinOp::Sub => P_SUM,
            BinOp::Mul | BinOp::Div => P_MUL,
            _ => P_CMP,
        },
    }
}

fn vexpr_prec(e: &VExpr) -> u8 {
    match e {
        VExpr::Number { .. } | VExpr::Name(_) | VExpr::Call { .. } => P_ATOM,
        VExpr::Neg { .. } => P_NEG,
        VExpr::Binary { op, .. } => match op {
            BinOp::Mul | BinOp::Div => P_MUL,
            _ => P_SUM,
        },
    }
}

/// The span of a frame statement.
pub fn frame_stmt_span(st: &FrameStmt) -> Span {
    match st {
        FrameStmt::Chart(c) => c.span.clone(),
        FrameStmt::Draw(d) => d.span.clone(),
        FrameStmt::Split(s) => s.span.clone(),
        FrameStmt::Allow(a) => a.span.clone(),
        FrameStmt::AxisTitle { span, .. }
        | FrameStmt::Show { span, .. }
        | FrameStmt::Hide { span, .. }
        | FrameStmt::Spotlight { span, .. }
        | FrameStmt::Takeaway { span, .. }
        | FrameStmt::Notes { span, .. }
        | FrameStmt::Range { span, .. }
        | FrameStmt::Figure { span, .. }
        | FrameStmt::Unfold { span, .. }
        | FrameStmt::Callout { span, .. }
        | FrameStmt::Band { span, .. }
        | FrameStmt::Reference { span, .. }
        | FrameStmt::LabelEnds { span }
        | FrameStmt::Gridlines { span, .. } => span.clone(),
    }
}
