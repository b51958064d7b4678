//! From a parsed story to a [`DeckPlan`]: header, data, views, then the
//! frames with their build-up state.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};
use std::sync::Arc;

use crescendo_data::{format, time, ColType, Table, Value};
use crescendo_diag::{closest, has_errors, Diagnostic, Source};
use crescendo_lang::ast::{
    self, AxisName, ChartForm, ChartStmt, FrameStmt, Ident, Item, OptName, Str, Targets, Text,
};

use crate::anchors::{Allowance, Anchors, FrameAnchors};
use crate::model::*;
use crate::resolve::{self, schema_of, Named, Tables};
use crate::scale;
use crate::values::{self, Evaluator, Values};

/// How to plan a story.
#[derive(Clone, Debug, Default)]
pub struct Options {
    /// `--data NAME=FILE`: read data item NAME from FILE instead of the file
    /// the story names (this month's export, without editing the story).
    pub data: BTreeMap<String, PathBuf>,
    /// `--no-plugins`: refuse every `use plugin`.
    pub no_plugins: bool,
    /// Check each plugin's path, file and pin, but load none, so no plugin
    /// code runs (`plan` and `plugins` without `--load-plugins`). A frame a
    /// plugin draws is planned with the form the story names (if any), the
    /// story's name for the plugin and the version `(not loaded)`.
    pub inspect_plugins: bool,
    /// Folder of the view cache (see `loading.rs`); `None`: no cache.
    pub cache: Option<PathBuf>,
    /// How database sources are reached (`--connection`, the statement
    /// timeout).
    pub database: crate::database::DbOptions,
    /// `--allow-path DIR`: folders outside the story's own folder tree that
    /// the story may read data, house styles and plugins from.
    pub allow_paths: Vec<PathBuf>,
    /// Input, row, frame and text limits (see `limits.rs`).
    pub limits: crate::limits::Limits,
}

/// A successful plan: the deck, its warnings, and one error per claim that
/// does not hold. A build stops on failed claims unless it is a draft; the
/// frames whose texts depend on a failed claim carry a notice.
pub struct Planned {
    pub plan: DeckPlan,
    /// The story source the anchors point into.
    pub source: Arc<Source>,
    /// Where each part of the plan was said in the story.
    pub anchors: Anchors,
    pub warnings: Vec<Diagnostic>,
    pub failed_claims: Vec<Diagnostic>,
    /// The plugins the story loaded, by the name it gave them.
    pub plugins: crate::plugins::Plugins,
    /// The SQL the database sources ran, with rows and bytes received.
    pub sql: Vec<crescendo_sql::Explained>,
}

/// The result of planning: the plan, or every error found.
pub type PlanResult = Result<Planned, Vec<Diagnostic>>;

/// Parse, resolve, load and plan a story. `story_dir` is the folder data
/// paths are relative to. Returns the plan and its warnings, or all errors.
pub fn plan_story(src: &Arc<Source>, story_dir: &Path, options: &Options) -> PlanResult {
    let (story, mut diags) = crescendo_lang::parse(src);
    diags.extend(crate::limits::story(src, &story, &options.limits));
    if has_errors(&diags) {
        return Err(diags);
    }
    let mut failed_claims = Vec::new();
    let mut anchors = Anchors {
        end: src.text.len()..src.text.len(),
        ..Anchors::default()
    };
    let mut plugins = crate::plugins::Plugins::new();
    let (locale, fiscal_start) = read_conventions(src, &story, &mut diags);
    let conventions = crescendo_data::locale::Conventions::of(locale.as_deref(), fiscal_start);
    let planner = Planner::new(src, story_dir, options, &mut diags, &mut failed_claims);
    let sql = Arc::clone(&planner.tables.sql);
    let plan = crescendo_data::locale::scoped(conventions, || {
        planner.run(&story, &mut anchors, &mut plugins)
    })
    .map(|mut plan| {
        plan.locale = locale;
        plan.fiscal_start = fiscal_start;
        plan
    });
    let sql = sql
        .lock()
        .map(|mut s| std::mem::take(&mut *s))
        .unwrap_or_default();
    if has_errors(&diags) {
        Err(diags)
    } else {
        match plan {
            Some(plan) => Ok(Planned {
                plugins: std::mem::take(&mut plugins),
                plan,
                source: Arc::clone(src),
                anchors,
                warnings: diags,
                failed_claims,
                sql,
            }),
            None => Err(vec![Diagnostic::error(
                "internal",
                "the story produced no plan",
            )]),
        }
    }
}

/// The story's `locale` and `fiscal year starts` statements, checked: an
/// unknown locale or month, or a statement given twice, is an error.
fn read_conventions(
    src: &Arc<Source>,
    story: &ast::StoryAst,
    diags: &mut Vec<Diagnostic>,
) -> (Option<String>, Option<u32>) {
    let mut locale: Option<(String, ast::Span)> = None;
    let mut fiscal: Option<(u32, ast::Span)> = None;
    for item in &story.items {
        match item {
            Item::Locale(t) => {
                if let Some((_, first)) = &locale {
                    diags.push(
                        Diagnostic::error("duplicate", "the story sets its locale twice")
                            .at(src, t.span.clone(), "second one here")
                            .also(src, first.clone(), "first one here"),
                    );
                    continue;
                }
                match crescendo_data::locale::Locale::new(&t.text.value) {
                    Ok(l) => locale = Some((l.tag().to_string(), t.span.clone())),
                    Err(message) => diags.push(
                        Diagnostic::error("bad-locale", message)
                            .at(src, t.text.span.clone(), "not a locale crescendo knows")
                            .help("write a language and region tag, e.g. `locale \"de-DE\"`, `locale \"fr-FR\"` or `locale \"en-IN\"`"),
                    ),
                }
            }
            Item::Fiscal { month, span } => {
                if let Some((_, first)) = &fiscal {
                    diags.push(
                        Diagnostic::error("duplicate", "the story says twice when its year starts")
                            .at(src, span.clone(), "second one here")
                            .also(src, first.clone(), "first one here"),
                    );
                    continue;
                }
                match time::month_from_name(&month.name) {
                    Some(m) => fiscal = Some((m, span.clone())),
                    None => diags.push(
                        Diagnostic::error("bad-month", format!("`{}` is not a month", month.name))
                            .at(src, month.span.clone(), "expected a month's name")
                            .help("write the month in English, e.g. `fiscal year starts July` or `fiscal year starts Apr`"),
                    ),
                }
            }
            _ => {}
        }
    }
    (
        locale.map(|(l, _)| l),
        fiscal.map(|(m, _)| m).filter(|&m| m != 1),
    )
}

pub(crate) struct Planner<'a> {
    pub(crate) src: &'a Arc<Source>,
    pub(crate) dir: &'a Path,
    pub(crate) options: &'a Options,
    pub(crate) diags: &'a mut Vec<Diagnostic>,
    pub(crate) failed_claims: &'a mut Vec<Diagnostic>,
    pub(crate) tables: Tables,
    pub(crate) values: Values,
    /// Plugins loaded so far (`use plugin`).
    pub(crate) plugins: crate::plugins::Plugins,
    /// The current sequence has no chart because its chart statement failed
    /// (or the deck starts without one) and that was reported: the frames
    /// that build on it are skipped without blaming each of them again.
    pub(crate) chart_failed: bool,
}

/// A frame's resolved texts and what they depend on.
#[derive(Default)]
struct FrameTexts {
    quoted: BTreeMap<String, String>,
    templates: BTreeMap<String, String>,
    depends: BTreeSet<String>,
}

impl FrameTexts {
    fn add(&mut self, field: &str, r: &values::Resolved) {
        for (k, v) in &r.quoted {
            self.quoted.entry(k.clone()).or_insert_with(|| v.clone());
        }
        if let Some(t) = &r.template {
            self.templates.insert(field.to_string(), t.clone());
        }
        self.depends.extend(r.depends.iter().cloned());
    }
}

/// Header values with where they were set (to report duplicates).
#[derive(Default)]
struct Header {
    title: Option<Text>,
    byline: Option<Text>,
    source: Option<Text>,
    theme: Option<Ident>,
    conclusion: Option<Text>,
    compare: Option<ast::CompareDecl>,
    focus: Option<Vec<Str>>,
    accent: Option<String>,
    style: Option<Str>,
}

/// `#RRGGBB`.
fn is_hex_colour(s: &str) -> bool {
    s.len() == 7 && s.starts_with('#') && s[1..].chars().all(|c| c.is_ascii_hexdigit())
}

/// A resolved chart statement: the table and the columns playing each role.
pub(crate) struct ChartSpec {
    pub(crate) form: ChartForm,
    pub(crate) table_name: String,
    pub(crate) table: Table,
    /// Line: x; bars: category.
    pub(crate) x: usize,
    /// Line: y; bars: value.
    pub(crate) y: usize,
    pub(crate) series: Option<usize>,
    pub(crate) ordered: bool,
    /// Label of a folded "other" row, drawn last among sorted bars.
    pub(crate) rest: Option<String>,
    /// `horizontal` or `vertical` given explicitly.
    pub(crate) orientation: Option<Orientation>,
    /// The measure is a count of rows (for the small-counts rule).
    pub(crate) measure_is_count: bool,
    /// Parts of bars (`stack`/`group`), series of dots, labels of points.
    pub(crate) extra: Option<usize>,
    /// `stack COL` or `group COL`.
    pub(crate) parts_mode: Option<PartsMode>,
    /// `fit` on a scatter.
    pub(crate) fit: bool,
}

/// The build-up state carried from frame to frame within a sequence.
pub(crate) struct SeqState {
    pub(crate) chart: Chart,
    /// Every series or bar name in the chart, in display order.
    pub(crate) names: Vec<String>,
    pub(crate) hidden: BTreeSet<String>,
    pub(crate) spotlight: BTreeSet<String>,
    pub(crate) x_title: Option<values::Resolved>,
    pub(crate) y_title: Option<values::Resolved>,
    pub(crate) view_name: String,
    pub(crate) key_name: String,
    /// Spotlighted table cells: (row key, column title).
    pub(crate) cells: BTreeSet<(String, String)>,
    /// The measure column's name (`split ... by` must name it).
    pub(crate) measure_name: String,
    /// Where things were said, for the lint.
    pub(crate) anchors: FrameAnchors,
}

pub(crate) fn display(v: &Value) -> String {
    match v {
        Value::Missing => "(missing)".to_string(),
        Value::Number(n) => format::number(*n, None),
        Value::Text(t) => t.clone(),
        Value::Date(d) => time::date_iso(*d),
        Value::Month(m) => time::month_label(*m),
        Value::Year(y) => y.to_string(),
    }
}

pub(crate) fn position(v: &Value) -> Option<f64> {
    match v {
        Value::Number(n) => Some(*n),
        Value::Date(d) | Value::Month(d) | Value::Year(d) => Some(f64::from(*d)),
        _ => None,
    }
}

/// Turn an identifier like `riders_per_trip` into "Riders per trip".
pub(crate) fn humanize(name: &str) -> String {
    let s = name.replace('_', " ");
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().collect::<String>() + c.as_str(),
        None => s,
    }
}

/// File-name-safe slug of a headline: `[a-z0-9-]`, at most 48 characters.
pub fn slug(headline: &str) -> String {
    let mut out = String::new();
    for c in headline.chars().flat_map(char::to_lowercase) {
        if c.is_ascii_alphanumeric() {
            out.push(c);
        } else if !out.ends_with('-') && !out.is_empty() {
            out.push('-');
        }
    }
    let mut out = out.trim_end_matches('-').to_string();
    if out.len() > 48 {
        out.truncate(48);
        if let Some(i) = out.rfind('-').filter(|&i| i >= 24) {
            out.truncate(i);
        }
        out = out.trim_end_matches('-').to_string();
    }
    if out.is_empty() {
        "frame".to_string()
    } else {
        out
    }
}

impl<'a> Planner<'a> {
    fn new(
        src: &'a Arc<Source>,
        dir: &'a Path,
        options: &'a Options,
        diags: &'a mut Vec<Diagnostic>,
        failed_claims: &'a mut Vec<Diagnostic>,
    ) -> Self {
        Planner {
            src,
            dir,
            options,
            diags,
            failed_claims,
            tables: Tables::default(),
            values: Values::default(),
            plugins: crate::plugins::Plugins::new(),
            chart_failed: false,
        }
    }

    /// Resolve the quoted values of a text.
    pub(crate) fn text(&mut self, s: &Text) -> values::Resolved {
        let ev = Evaluator {
            src: self.src,
            tables: &self.tables,
            values: &self.values,
        };
        let mut d = Vec::new();
        let r = values::resolve_text(&ev, s, &mut d);
        self.diags.extend(d);
        if r.template.is_some() {
            let over =
                crate::limits::expanded_text(self.src, &s.span, &r.text, &self.options.limits);
            // a text planned again (a carried title, an unfolded frame) is
            // reported once
            if let Some(e) = over.filter(|e| {
                !self
                    .diags
                    .iter()
                    .any(|x| x.message == e.message && x.location() == e.location())
            }) {
                self.diags.push(e);
            }
        }
        r
    }

    fn value(&mut self, v: &ast::ValueDecl, later: &BTreeSet<String>) {
        let name = &v.name.name;
        if self.values.spans.contains_key(name) || name == "conclusion" {
            let d = Diagnostic::error(
                "duplicate-name",
                format!("a value named `{name}` is already defined"),
            )
            .at(self.src, v.name.span.clone(), "defined again here");
            let d = match self.values.spans.get(name) {
                Some(prev) => d.also(self.src, prev.clone(), "first defined here"),
                None => d.note("`conclusion` always quotes the story's conclusion"),
            };
            self.diags.push(d);
            return;
        }
        let mut deps = BTreeSet::new();
        values::names_in(&v.expr, &mut deps);
        let result = Evaluator {
            src: self.src,
            tables: &self.tables,
            values: &self.values,
        }
        .eval(&v.expr);
        self.values.spans.insert(name.clone(), v.name.span.clone());
        self.values.deps.insert(name.clone(), deps);
        match result {
            Ok(q) => {
                self.values.by_name.insert(name.clone(), q);
            }
            Err(mut ds) => {
                for d in &mut ds {
                    let missing = d
                        .message
                        .strip_prefix("no value named `")
                        .and_then(|m| m.strip_suffix('`'))
                        .map(str::to_string);
                    if let Some(missing) = missing.filter(|m| later.contains(m)) {
                        d.help = Some(format!(
                            "`{missing}` is defined further down: move this value below it"
                        ));
                    }
                }
                self.diags.extend(ds);
                self.values.broken.insert(name.clone());
            }
        }
    }

    fn claim(&mut self, c: &ast::ClaimDecl) -> Option<(ClaimPlan, BTreeSet<String>)> {
        let ev = Evaluator {
            src: self.src,
            tables: &self.tables,
            values: &self.values,
        };
        let mut shown = Vec::new();
        let holds = match ev.condition(&c.condition, &mut shown) {
            Ok(h) => h,
            Err(d) => {
                self.diags.extend(d);
                return None;
            }
        };
        let condition = self
            .src
            .text
            .get(c.condition.span())
            .unwrap_or("")
            .trim()
            .to_string();
        let mut names = BTreeSet::new();
        values::names_in(&c.condition, &mut names);
        let depends = self.values.closure(&names);
        if !holds {
            let mut d = Diagnostic::error(
                "claim-false",
                format!("the data no longer supports: \"{}\"", c.sentence.value),
            )
            .at(self.src, c.condition.span(), "this is false")
            .also(
                self.src,
                c.sentence.span.clone(),
                "the sentence it protects",
            );
            for line in &shown {
                d = d.note(line.clone());
            }
            for n in &depends {
                if let Some(q) = self.values.by_name.get(n) {
                    d = d.note(format!("{n} = {}", q.figure()));
                }
            }
            self.failed_claims.push(d.help(
                "change the sentence, or check the new data; `--draft` builds anyway and marks the frames that depend on it",
            ));
        }
        // A frame rests on the claim when its texts use a value the claim
        // names (directly or through other values).
        Some((
            ClaimPlan {
                sentence: c.sentence.value.clone(),
                condition,
                holds,
                detail: shown,
            },
            names,
        ))
    }

    pub(crate) fn error(
        &mut self,
        code: &'static str,
        msg: impl Into<String>,
        span: ast::Span,
        label: &str,
    ) -> &mut Diagnostic {
        self.diags
            .push(Diagnostic::error(code, msg).at(self.src, span, label.to_string()));
        let last = self.diags.len() - 1;
        &mut self.diags[last]
    }

    /// May the story read `file` (a path it wrote)? Reports a located
    /// error when the path leaves the story's folder tree (see `paths.rs`).
    fn confined(&mut self, file: &ast::Str, what: &str) -> bool {
        match crate::paths::confine(self.dir, &file.value, &self.options.allow_paths) {
            Ok(_) => true,
            Err(why) => {
                let d = crate::paths::outside(self.src, file.span.clone(), what, &why);
                self.diags.push(d);
                false
            }
        }
    }

    /// Is the data file of `d` within the size limit? Reports it if not.
    fn within_limits(&mut self, d: &ast::DataDecl, replacement: Option<&Path>) -> bool {
        let path = match replacement {
            Some(p) => p.to_path_buf(),
            None => self.dir.join(&d.file.value),
        };
        match crate::limits::file_size(&path, &self.options.limits) {
            Ok(()) => true,
            Err(why) => {
                self.error("limit", why, d.file.span.clone(), "this file");
                false
            }
        }
    }

    fn set_once<T: Clone>(&mut self, slot: &mut Option<T>, value: T, span: &ast::Span, what: &str) {
        if slot.is_some() {
            self.error(
                "duplicate",
                format!("the story sets its {what} twice"),
                span.clone(),
                "second one here",
            )
            .help = Some("keep one".into());
        } else {
            *slot = Some(value);
        }
    }

    fn run(
        mut self,
        story: &ast::StoryAst,
        anchors: &mut Anchors,
        plugins: &mut crate::plugins::Plugins,
    ) -> Option<DeckPlan> {
        self.tables.db = self.options.database.clone();
        self.tables.within = crate::paths::within(self.dir, &self.options.allow_paths);
        self.tables.limits = crate::limits::read_limits(&self.options.limits);
        self.tables.prepare(story, self.options.cache.as_deref()); // streaming + cache
        let mut h = Header::default();
        let mut frames = Vec::new();
        let mut claims = Vec::new();
        // Value names not defined yet, to explain uses before definitions.
        let mut later_values: BTreeSet<String> = story
            .items
            .iter()
            .filter_map(|i| match i {
                Item::Value(v) => Some(v.name.name.clone()),
                _ => None,
            })
            .collect();
        for item in &story.items {
            match item {
                Item::Title(t) => {
                    self.set_once(&mut h.title, t.text.clone(), &t.span, "title (`story`)")
                }
                Item::Byline(t) => self.set_once(&mut h.byline, t.text.clone(), &t.span, "byline"),
                Item::Source(t) => {
                    self.set_once(&mut h.source, t.text.clone(), &t.span, "source note")
                }
                Item::Conclusion(t) => {
                    self.set_once(&mut h.conclusion, t.text.clone(), &t.span, "conclusion")
                }
                Item::Theme { name, span } => {
                    self.set_once(&mut h.theme, name.clone(), span, "theme")
                }
                Item::Compare(c) => {
                    self.set_once(&mut h.compare, c.clone(), &c.span, "comparison (`compare`)")
                }
                Item::Focus { names, span } => {
                    self.set_once(&mut h.focus, names.clone(), span, "focus")
                }
                Item::Data(d) => {
                    if self.check_unique_table(&d.name) {
                        let replacement = self.options.data.get(&d.name.name).map(PathBuf::as_path);
                        // `--data` names a file on purpose; the story may not
                        let allowed = replacement.is_some() || self.confined(&d.file, "data file");
                        let allowed = allowed && self.within_limits(d, replacement);
                        let loaded = if allowed {
                            self.tables
                                .load(self.src, self.dir, d, replacement, self.diags)
                        } else {
                            None
                        };
                        let loaded = loaded.filter(|t| {
                            let checked = crate::limits::table(t, &self.options.limits);
                            if let Err(why) = &checked {
                                self.error("limit", why.clone(), d.file.span.clone(), "this file");
                            }
                            checked.is_ok()
                        });
                        match loaded {
                            Some(table) => {
                                self.tables.by_name.insert(
                                    d.name.name.clone(),
                                    Named {
                                        table,
                                        decl: d.span.clone(),
                                        is_data: true,
                                        rest: None,
                                        root: d.name.name.clone(),
                                        counts: BTreeSet::new(),
                                    },
                                );
                            }
                            None => self.tables.broken.push(d.name.name.clone()),
                        }
                    }
                }
                Item::View(v) => {
                    if self.check_unique_table(&v.name) {
                        let built = match self.tables.get(self.src, &v.input, self.diags) {
                            Some(input) => {
                                resolve::build_view(self.src, v, &self.tables, input, self.diags)
                                    .map(|(t, r, c)| (t, r, c, input.root.clone()))
                            }
                            None => None,
                        };
                        match built {
                            Some((table, rest, counts, root)) => {
                                self.tables.by_name.insert(
                                    v.name.name.clone(),
                                    Named {
                                        table,
                                        decl: v.span.clone(),
                                        is_data: false,
                                        rest,
                                        root,
                                        counts,
                                    },
                                );
                            }
                            None => self.tables.broken.push(v.name.name.clone()),
                        }
                    }
                }
                Item::Value(v) => {
                    later_values.remove(&v.name.name);
                    self.value(v, &later_values);
                }
                Item::Claim(c) => claims.push(c),
                Item::Plugin(d) if !self.confined(&d.path, "plugin") => {}
                Item::Plugin(d) => {
                    let mut loaded = std::mem::take(&mut self.plugins);
                    self.use_plugin(d, self.dir, self.options.no_plugins, &mut loaded);
                    self.plugins = loaded;
                }
                Item::Style(t) => {
                    anchors.style = Some(t.text.span.clone());
                    let text = t.text.clone();
                    self.set_once(&mut h.style, text, &t.span, "house style (`style`)")
                }
                Item::Allow(a) => anchors.allows.push(Allowance {
                    rule: a.rule.name.clone(),
                    rule_span: a.rule.span.clone(),
                    reason: a.reason.value.clone(),
                }),
                Item::Accent(t) => {
                    if h.accent.is_some() {
                        self.error(
                            "duplicate",
                            "the story sets its accent twice",
                            t.span.clone(),
                            "second one here",
                        );
                    } else if !is_hex_colour(&t.text.value) {
                        self.error(
                            "bad-colour",
                            format!("`{}` is not a colour", t.text.value),
                            t.text.span.clone(),
                            "expected #RRGGBB",
                        )
                        .help = Some(
                            "write the colour as six hex digits, e.g. `accent \"#1D5FA8\"`".into(),
                        );
                    } else {
                        h.accent = Some(t.text.value.to_ascii_uppercase());
                        anchors.accent = Some(t.text.span.clone());
                    }
                }
                Item::Frame(f) => frames.push(f),
                // read before planning (`read_conventions`)
                Item::Locale(_) | Item::Fiscal { .. } => {}
            }
        }
        for name in self.options.data.keys() {
            let known = story
                .items
                .iter()
                .any(|i| matches!(i, Item::Data(d) if d.name.name == *name));
            if !known {
                let names: Vec<&str> = story
                    .items
                    .iter()
                    .filter_map(|i| match i {
                        Item::Data(d) => Some(d.name.name.as_str()),
                        _ => None,
                    })
                    .collect();
                let mut d = Diagnostic::error(
                    "unknown-name",
                    format!("`--data {name}=...` names no data item of this story"),
                )
                .at(self.src, 0..0, "in this story")
                .note(format!("data items: {}", names.join(", ")));
                if let Some(s) = closest(name, names.iter().copied()) {
                    d = d.help(format!("did you mean `{s}`?"));
                }
                self.diags.push(d);
            }
        }
        for name in self.options.database.connections.keys() {
            let known = story.items.iter().any(
                |i| matches!(i, Item::Data(d) if d.name.name == *name && d.database.is_some()),
            );
            if !known {
                let names: Vec<&str> = story
                    .items
                    .iter()
                    .filter_map(|i| match i {
                        Item::Data(d) if d.database.is_some() => Some(d.name.name.as_str()),
                        _ => None,
                    })
                    .collect();
                let mut d = Diagnostic::error(
                    "unknown-name",
                    format!("`--connection {name}=...` names no database data item of this story"),
                )
                .at(self.src, 0..0, "in this story");
                d = if names.is_empty() {
                    d.note("no data item of this story reads a database")
                } else {
                    d.note(format!("database data items: {}", names.join(", ")))
                };
                if let Some(s) = closest(name, names.iter().copied()) {
                    d = d.help(format!("did you mean `{s}`?"));
                }
                self.diags.push(d);
            }
        }
        if let Some(c) = &h.compare {
            // Columns of a failed item are unknown: do not guess.
            if self.tables.broken.is_empty() {
                self.check_compare_column(&c.key);
                self.check_compare_column(&c.measure);
            }
        }
        // Header texts may quote values; the conclusion can be quoted as
        // `{conclusion}` everywhere.
        let conclusion = h.conclusion.clone().map(|c| self.text(&c));
        if let Some(c) = &conclusion {
            self.values
                .by_name
                .insert("conclusion".into(), values::Quantity::Text(c.text.clone()));
            self.values
                .deps
                .insert("conclusion".into(), c.depends.clone());
        }
        let source_text = h.source.clone().map(|s| self.text(&s));
        let byline = h.byline.clone().map(|b| self.text(&b).text);
        let title = match h.title.clone() {
            Some(t) => self.text(&t).text,
            None => {
                self.diags.push(
                    Diagnostic::error("missing-title", "the story has no title")
                        .at(self.src, 0..0, "expected `story \"...\"` in this file")
                        .help(
                            "add a line like `story \"Riders grew fastest on the Harbour Loop\"`",
                        ),
                );
                String::new()
            }
        };
        let theme = match &h.theme {
            None => THEMES[0].to_string(),
            Some(t) if THEMES.contains(&t.name.as_str()) => t.name.clone(),
            Some(t) => {
                let s = closest(&t.name, THEMES.iter().copied());
                let d = self.error(
                    "unknown-theme",
                    format!("unknown theme `{}`", t.name),
                    t.span.clone(),
                    "not a built-in theme",
                );
                d.notes
                    .push(format!("built-in themes: {}", THEMES.join(", ")));
                if let Some(s) = s {
                    d.help = Some(format!("did you mean `{s}`?"));
                }
                String::new()
            }
        };
        if frames.is_empty() {
            self.diags.push(
                Diagnostic::error("no-frames", "the story has no frames")
                    .at(
                        self.src,
                        self.src.text.len()..self.src.text.len(),
                        "the story ends here",
                    )
                    .help("add `frame \"Headline\" { line VIEW: x COLUMN, y COLUMN }`"),
            );
        }
        let mut claim_plans = Vec::new();
        let mut failed: Vec<(String, BTreeSet<String>)> = Vec::new();
        for c in claims {
            if let Some((cp, deps)) = self.claim(c) {
                if !cp.holds {
                    failed.push((cp.sentence.clone(), deps));
                }
                claim_plans.push(cp);
            }
        }
        anchors.title = h.title.as_ref().map(|t| t.span.clone());
        anchors.conclusion = h.conclusion.as_ref().map(|t| t.span.clone());
        anchors.source = h.source.as_ref().map(|t| t.span.clone());
        let source = source_text.as_ref().map(|s| s.text.clone());
        let mut planned = Vec::new();
        let mut state: Option<SeqState> = None;
        let mut sequence = 0;
        for (i, f) in frames.iter().enumerate() {
            let mut texts = FrameTexts::default();
            if let Some(s) = &source_text {
                texts.add("source", s);
            }
            let mut fa = FrameAnchors::default();
            let number = planned.len() + 1;
            let _ = i;
            for mut fp in self
                .frame(
                    &h,
                    f,
                    number,
                    &mut state,
                    &mut sequence,
                    &source,
                    &mut texts,
                    &mut fa,
                )
                .unwrap_or_default()
            {
                anchors.frames.push(fa.clone());
                for (sentence, deps) in &failed {
                    if deps.iter().any(|d| texts.depends.contains(d)) {
                        fp.notices
                            .push(format!("Draft: the data does not support \"{sentence}\""));
                    }
                }
                fp.quoted = texts.quoted.clone();
                fp.templates = texts.templates.clone();
                planned.push(fp);
            }
        }
        *plugins = std::mem::take(&mut self.plugins);
        Some(DeckPlan {
            title,
            byline,
            source,
            theme,
            conclusion: conclusion.map(|c| c.text),
            accent: h.accent.clone(),
            style: h
                .style
                .as_ref()
                .filter(|s| self.confined(s, "house style"))
                .and_then(|s| {
                    crate::style::load(self.src, self.dir, s, &self.tables.within, self.diags)
                }),
            values: self
                .values
                .by_name
                .iter()
                .filter(|(k, _)| k.as_str() != "conclusion")
                .map(|(k, v)| (k.clone(), v.figure()))
                .collect(),
            claims: claim_plans,
            frames: planned,
            locale: None,
            fiscal_start: None,
        })
    }

    fn check_unique_table(&mut self, name: &Ident) -> bool {
        if let Some(prev) = self.tables.by_name.get(&name.name) {
            let prev = prev.decl.clone();
            let kind = if self.tables.by_name[&name.name].is_data {
                "data"
            } else {
                "view"
            };
            self.diags.push(
                Diagnostic::error(
                    "duplicate-name",
                    format!("`{}` is already defined", name.name),
                )
                .at(self.src, name.span.clone(), "defined again here")
                .also(self.src, prev, format!("first defined here as {kind}")),
            );
            return false;
        }
        true
    }

    /// Charts fall back to the columns `compare` names, and skip them where
    /// a view lacks them; a name no table has at all is a typo that would
    /// otherwise be ignored without a word.
    fn check_compare_column(&mut self, id: &Ident) {
        let columns: BTreeSet<&str> = self
            .tables
            .by_name
            .values()
            .flat_map(|n| n.table.columns.iter().map(|c| c.name.as_str()))
            .collect();
        if columns.contains(id.name.as_str()) {
            return;
        }
        let help =
            closest(&id.name, columns.iter().copied()).map(|s| format!("did you mean `{s}`?"));
        let d = self.error(
            "unknown-column",
            format!("no data or view has a column named `{}`", id.name),
            id.span.clone(),
            "unknown column",
        );
        d.notes
            .push("`compare KEY by MEASURE` names columns of the views the frames draw".into());
        d.help = help;
    }

    #[allow(clippy::too_many_arguments)]
    fn frame(
        &mut self,
        h: &Header,
        f: &ast::FrameDecl,
        number: usize,
        state: &mut Option<SeqState>,
        sequence: &mut usize,
        source: &Option<String>,
        texts: &mut FrameTexts,
        fa: &mut FrameAnchors,
    ) -> Option<Vec<FramePlan>> {
        let mut takeaway: Option<String> = None;
        let mut notes: Option<String> = None;
        let mut unfold: Option<(Vec<Str>, ast::Span)> = None;
        let before = self.diags.len();
        for (k, stmt) in f.stmts.iter().enumerate() {
            match stmt {
                FrameStmt::Chart(c) => {
                    if k > 0 {
                        self.error(
                            "chart-order",
                            "the chart statement must come first in its frame",
                            c.span.clone(),
                            "move this to the top of the frame",
                        )
                        .help = Some("the other statements of a frame apply to its chart".into());
                        *state = None;
                        self.chart_failed = true;
                        return None;
                    }
                    let Some(new) = self
                        .chart_spec(h, c)
                        .and_then(|spec| self.new_sequence(spec, c))
                    else {
                        // The frames after this one build on this chart, not
                        // on the previous sequence's.
                        *state = None;
                        self.chart_failed = true;
                        return None;
                    };
                    *state = Some(new);
                    self.chart_failed = false;
                    *sequence += 1;
                }
                FrameStmt::Draw(d) => {
                    if k > 0 {
                        self.error(
                            "chart-order",
                            "the chart statement must come first in its frame",
                            d.span.clone(),
                            "move this to the top of the frame",
                        );
                        *state = None;
                        self.chart_failed = true;
                        return None;
                    }
                    let loaded = std::mem::take(&mut self.plugins);
                    let new = self.draw(d, &loaded);
                    self.plugins = loaded;
                    let Some(new) = new else {
                        *state = None;
                        self.chart_failed = true;
                        return None;
                    };
                    *state = Some(new);
                    self.chart_failed = false;
                    *sequence += 1;
                }
                FrameStmt::Figure {
                    text,
                    caption,
                    span,
                } => {
                    let first = !f.stmts[..k]
                        .iter()
                        .any(|s| matches!(s, FrameStmt::Figure { .. }));
                    if first {
                        if k > 0 {
                            self.error(
                                "chart-order",
                                "figures must come first in their frame",
                                span.clone(),
                                "move this to the top of the frame",
                            );
                            *state = None;
                            self.chart_failed = true;
                            return None;
                        }
                        *state = Some(SeqState {
                            chart: Chart::Figures(FigureChart {
                                figures: Vec::new(),
                            }),
                            names: Vec::new(),
                            hidden: BTreeSet::new(),
                            spotlight: BTreeSet::new(),
                            x_title: None,
                            y_title: None,
                            view_name: String::new(),
                            key_name: "figure".into(),
                            cells: BTreeSet::new(),
                            measure_name: String::new(),
                            anchors: FrameAnchors {
                                chart: span.clone(),
                                ..FrameAnchors::default()
                            },
                        });
                        *sequence += 1;
                        self.chart_failed = false;
                    }
                    let figure = self.text(text);
                    let label = self.text(caption);
                    texts.add("figure", &figure);
                    texts.add("caption", &label);
                    let Some(SeqState {
                        chart: Chart::Figures(fc),
                        ..
                    }) = state.as_mut()
                    else {
                        return None;
                    };
                    if fc.figures.len() == 2 {
                        self.error(
                            "figures",
                            "a frame holds at most two figures",
                            span.clone(),
                            "a third figure",
                        )
                        .help =
                            Some("one figure is the message; a second may compare with it".into());
                        return None;
                    }
                    fc.figures.push(Figure {
                        text: figure.text,
                        caption: label.text,
                        role: Role::Focus,
                    });
                }
                other => {
                    let Some(st) = state.as_mut() else {
                        if !self.chart_failed {
                            self.error(
                                "no-chart",
                                "this frame has no chart to apply its statements to",
                                f.headline.span.clone(),
                                "first frame without a chart",
                            )
                            .help = Some(
                                "start the first frame with `line VIEW: ...` or `bars VIEW: ...`"
                                    .into(),
                            );
                            self.chart_failed = true;
                        }
                        return None;
                    };
                    match other {
                        FrameStmt::AxisTitle { axis, text, span } => {
                            let r = self.text(text);
                            match axis {
                                AxisName::X => {
                                    st.x_title = Some(r);
                                    st.anchors.x_title = Some(span.clone());
                                }
                                AxisName::Y => {
                                    st.y_title = Some(r);
                                    st.anchors.y_title = Some(span.clone());
                                }
                            }
                        }
                        FrameStmt::Allow(a) => fa.allows.push(Allowance {
                            rule: a.rule.name.clone(),
                            rule_span: a.rule.span.clone(),
                            reason: a.reason.value.clone(),
                        }),
                        FrameStmt::Range {
                            axis,
                            from,
                            to,
                            span,
                        } => {
                            if *axis == AxisName::X {
                                self.error(
                                    "axis-range",
                                    "only the measure's axis can be given a range",
                                    span.clone(),
                                    "x range",
                                )
                                .help = Some(
                                    "write `y range FROM to TO`; x axes always span the data"
                                        .into(),
                                );
                                return None;
                            }
                            set_range(self, st, *from, *to, span)?;
                        }
                        FrameStmt::Takeaway { text, span } => {
                            fa.takeaway = Some(span.clone());
                            let r = self.text(text);
                            texts.add("takeaway", &r);
                            if takeaway.replace(r.text).is_some() {
                                self.error(
                                    "duplicate",
                                    "this frame has two takeaways",
                                    span.clone(),
                                    "second takeaway",
                                );
                            }
                        }
                        FrameStmt::Notes { text, span } => {
                            fa.notes = Some(span.clone());
                            let r = self.text(text);
                            texts.add("notes", &r);
                            if notes.replace(r.text).is_some() {
                                self.error(
                                    "duplicate",
                                    "this frame has two notes",
                                    span.clone(),
                                    "second notes",
                                );
                            }
                        }
                        FrameStmt::Show { targets, span } => {
                            let names = self.targets(h, st, targets, span, "show")?;
                            for n in names {
                                st.hidden.remove(&n);
                            }
                        }
                        FrameStmt::Hide { targets, span } => {
                            let names = self.targets(h, st, targets, span, "hide")?;
                            for n in names {
                                st.spotlight.remove(&n);
                                st.hidden.insert(n);
                            }
                        }
                        FrameStmt::Spotlight { targets, span } => {
                            st.anchors.spotlight = Some(span.clone());
                            if let Targets::All(s) = targets {
                                self.error(
                                    "spotlight-all",
                                    "a spotlight on everything highlights nothing",
                                    s.clone(),
                                    "",
                                )
                                .help = Some("use `spotlight none` to remove the spotlight".into());
                                return None;
                            }
                            if let Targets::Cells(cells) = targets {
                                st.cells = self.table_cells(st, cells)?;
                                st.spotlight.clear();
                                continue;
                            }
                            let names = self.targets(h, st, targets, span, "spotlight")?;
                            // A spotlight shows what it lights.
                            for n in &names {
                                st.hidden.remove(n);
                            }
                            st.spotlight = names.into_iter().collect();
                        }
                        FrameStmt::Split(sp) => {
                            self.split(st, sp)?;
                            st.anchors.split = Some(sp.span.clone());
                        }
                        FrameStmt::Callout { at, on, text, span } => {
                            self.callout(st, at, on, text, span)?
                        }
                        FrameStmt::Band {
                            from,
                            to,
                            text,
                            span,
                        } => self.band(st, from, to, text, span)?,
                        FrameStmt::Reference { value, text, span } => {
                            self.reference(st, *value, text, span)?
                        }
                        FrameStmt::LabelEnds { span } => self.label_ends(st, span)?,
                        FrameStmt::Gridlines { on, span } => self.gridlines(st, *on, span)?,
                        FrameStmt::Unfold { order, span } => {
                            if unfold.replace((order.clone(), span.clone())).is_some() {
                                self.error(
                                    "duplicate",
                                    "this frame unfolds twice",
                                    span.clone(),
                                    "second unfold",
                                );
                                return None;
                            }
                        }
                        FrameStmt::Chart(_) | FrameStmt::Figure { .. } | FrameStmt::Draw(_) => {}
                    }
                }
            }
        }
        if self.diags.len() > before {
            return None;
        }
        let Some(st) = state.as_ref() else {
            if !self.chart_failed {
                self.error(
                    "no-chart",
                    "this frame has no chart",
                    f.headline.span.clone(),
                    "first frame without a chart",
                )
                .help =
                    Some("start the first frame with `line VIEW: ...` or `bars VIEW: ...`".into());
                self.chart_failed = true;
            }
            return None;
        };
        if let Some(t) = &st.x_title {
            texts.add("x_title", t);
        }
        if let Some(t) = &st.y_title {
            texts.add("y_title", t);
        }
        let headline = self.text(&f.headline);
        texts.add("headline", &headline);
        let per_frame = std::mem::take(fa);
        *fa = FrameAnchors {
            frame: f.span.clone(),
            headline: f.headline.span.clone(),
            takeaway: per_frame.takeaway,
            notes: per_frame.notes,
            allows: per_frame.allows,
            ..st.anchors.clone()
        };
        // `unfold`: one frame per hidden item, each showing one more.
        let steps: Vec<Vec<String>> = match &unfold {
            None => vec![Vec::new()],
            Some((order, span)) => {
                let items: Vec<String> = if order.is_empty() {
                    st.names
                        .iter()
                        .filter(|n| st.hidden.contains(*n))
                        .cloned()
                        .collect()
                } else {
                    let mut items = Vec::new();
                    for o in order {
                        if !st.names.contains(&o.value) {
                            let d = self.error(
                                "unknown-series",
                                format!("nothing named \"{}\" to unfold in this chart", o.value),
                                o.span.clone(),
                                "not in this chart",
                            );
                            if let Some(c) = closest(&o.value, st.names.iter().map(String::as_str))
                            {
                                d.help = Some(format!("did you mean \"{c}\"?"));
                            }
                            return None;
                        }
                        items.push(o.value.clone());
                    }
                    items
                };
                if items.is_empty() {
                    self.error(
                        "unfold",
                        "nothing is hidden, so there is nothing to unfold",
                        span.clone(),
                        "nothing to unfold",
                    )
                    .help = Some("hide the series first (`hide all`), then unfold them".into());
                    return None;
                }
                (1..=items.len()).map(|k| items[..k].to_vec()).collect()
            }
        };
        let st = state.as_mut()?;
        let mut out = Vec::new();
        for shown in steps {
            for n in &shown {
                st.hidden.remove(n);
            }
            let chart = apply_state(st);
            let description = describe(&chart, &st.key_name, takeaway.as_deref());
            // The slug comes from the headline as written, so file names stay
            // the same when the quoted numbers change.
            out.push(FramePlan {
                number: number + out.len(),
                slug: slug(&f.headline.value),
                sequence: *sequence,
                headline: headline.text.clone(),
                takeaway: takeaway.clone(),
                notes: notes.clone(),
                source: source.clone(),
                description,
                quoted: BTreeMap::new(),
                templates: BTreeMap::new(),
                notices: Vec::new(),
                chart,
            });
        }
        Some(out)
    }

    /// A chart's measure must be a number column; otherwise report it, with
    /// the data row that made the column text when there is one.
    fn number_column(
        &mut self,
        view: &str,
        schema: &resolve::Schema,
        col: (usize, ColType),
        span: ast::Span,
        what: &str,
    ) -> Option<()> {
        if col.1 == ColType::Number {
            return Some(());
        }
        let why = self.tables.why_text(view, &schema[col.0].0);
        let d = self.error(
            "chart-type",
            format!(
                "{what} must be a number column, but `{}` is {}",
                schema[col.0].0,
                col.1.name()
            ),
            span,
            "not a number",
        );
        d.notes.extend(why);
        None
    }

    /// Resolve `spotlight "Row" in column, ...` against a table.
    fn table_cells(
        &mut self,
        st: &SeqState,
        cells: &[(Str, Ident)],
    ) -> Option<BTreeSet<(String, String)>> {
        let Chart::Table(t) = &st.chart else {
            let span = cells.first().map_or(0..0, |c| c.1.span.clone());
            self.error(
                "targets",
                "single cells can only be spotlighted in a table",
                span,
                "not a table",
            );
            return None;
        };
        let mut out = BTreeSet::new();
        for (row, col) in cells {
            if col.name.is_empty() {
                self.error(
                    "targets",
                    "spotlight either rows or cells, not both in one statement",
                    row.span.clone(),
                    "a whole row",
                );
                return None;
            }
            if !st.names.contains(&row.value) {
                let d = self.error(
                    "unknown-series",
                    format!("no row \"{}\" in this table", row.value),
                    row.span.clone(),
                    "not a row of this table",
                );
                if let Some(c) = closest(&row.value, st.names.iter().map(String::as_str)) {
                    d.help = Some(format!("did you mean \"{c}\"?"));
                }
                return None;
            }
            let title = humanize(&col.name);
            if !t.columns.iter().any(|c| c.title == title) {
                self.error(
                    "unknown-column",
                    format!("this table has no column `{}`", col.name),
                    col.span.clone(),
                    "not a column of this table",
                );
                return None;
            }
            out.insert((row.value.clone(), title));
        }
        Some(out)
    }

    /// Resolve the names of a show/hide/spotlight statement.
    fn targets(
        &mut self,
        h: &Header,
        st: &SeqState,
        targets: &Targets,
        span: &ast::Span,
        verb: &str,
    ) -> Option<Vec<String>> {
        let what = if matches!(st.chart, Chart::Bars(_)) {
            "bar"
        } else {
            "series"
        };
        let wanted: Vec<Str> = match targets {
            Targets::Cells(cells) => {
                let span = cells.first().map_or(span.clone(), |c| c.1.span.clone());
                self.error(
                    "targets",
                    format!("`{verb}` takes whole {what}s; single cells can only be spotlighted in a table"),
                    span,
                    "a cell",
                );
                return None;
            }
            Targets::All(_) => return Some(st.names.clone()),
            Targets::None(s) => {
                if verb == "spotlight" {
                    return Some(Vec::new());
                }
                self.error(
                    "targets",
                    format!("`{verb} none` does nothing"),
                    s.clone(),
                    "",
                )
                .help = Some(format!("name the {what} to {verb}, or write `{verb} all`"));
                return None;
            }
            Targets::Focus(s) => match &h.focus {
                Some(f) => f.clone(),
                None => {
                    self.error(
                        "no-focus",
                        "the story has no focus to refer to",
                        s.clone(),
                        "`focus` used here",
                    )
                    .help = Some("add a top-level line like `focus \"Harbour Loop\"`, or name the series here".into());
                    return None;
                }
            },
            Targets::Names(n) => n.clone(),
        };
        let mut out = Vec::new();
        let mut ok = true;
        for w in &wanted {
            if st.names.contains(&w.value) {
                out.push(w.value.clone());
            } else {
                ok = false;
                let mut d = Diagnostic::error(
                    "unknown-series",
                    format!(
                        "no {what} named \"{}\" in this chart (`{}` by `{}`)",
                        w.value, st.view_name, st.key_name
                    ),
                )
                .at(
                    self.src,
                    w.span.clone(),
                    format!("not a {what} of this chart"),
                )
                .also(self.src, span.clone(), format!("in this `{verb}`"));
                if let Some(s) = closest(&w.value, st.names.iter().map(String::as_str)) {
                    d = d.help(format!("did you mean \"{s}\"?"));
                } else {
                    let shown: Vec<String> = st
                        .names
                        .iter()
                        .take(12)
                        .map(|n| format!("\"{n}\""))
                        .collect();
                    d = d.note(format!("the chart has: {}", shown.join(", ")));
                }
                self.diags.push(d);
            }
        }
        ok.then_some(out)
    }

    fn chart_spec(&mut self, h: &Header, c: &ChartStmt) -> Option<ChartSpec> {
        let named = self.tables.get(self.src, &c.view, self.diags)?;
        let (table, rest, counts) = (
            named.table.clone(),
            named.rest.clone(),
            named.counts.clone(),
        );
        let schema = schema_of(&table);
        let view = c.view.name.clone();
        let form_name = c.form.keyword();
        let allowed: &[OptName] = match c.form {
            ChartForm::Line => &[OptName::X, OptName::Y, OptName::Series],
            ChartForm::Bars => &[
                OptName::Category,
                OptName::Value,
                OptName::Ordered,
                OptName::Horizontal,
                OptName::Vertical,
                OptName::Stack,
                OptName::Group,
            ],
            ChartForm::Dots => &[
                OptName::Category,
                OptName::Value,
                OptName::Series,
                OptName::Ordered,
            ],
            ChartForm::Scatter => &[OptName::X, OptName::Y, OptName::Label, OptName::Fit],
            ChartForm::Pie => &[OptName::Category, OptName::Value],
            ChartForm::Table => &[],
        };
        let mut chosen: Vec<(OptName, Option<&Ident>)> = Vec::new();
        let mut ok = true;
        for o in &c.opts {
            if !allowed.contains(&o.name) {
                let names: Vec<&str> = allowed.iter().map(|a| a.keyword()).collect();
                self.error(
                    "chart-option",
                    format!("`{}` is not an option of {form_name}", o.name.keyword()),
                    o.span.clone(),
                    "not allowed here",
                )
                .notes
                .push(format!("{form_name} takes: {}", names.join(", ")));
                ok = false;
                continue;
            }
            if chosen.iter().any(|(n, _)| *n == o.name) {
                self.error(
                    "chart-option",
                    format!("`{}` is given twice", o.name.keyword()),
                    o.span.clone(),
                    "again here",
                );
                ok = false;
                continue;
            }
            let needs_column = !matches!(
                o.name,
                OptName::Ordered | OptName::Horizontal | OptName::Vertical | OptName::Fit
            );
            match (&o.column, needs_column) {
                (None, true) => {
                    self.error(
                        "chart-option",
                        format!("`{}` needs a column name", o.name.keyword()),
                        o.span.clone(),
                        "which column?",
                    );
                    ok = false;
                }
                (Some(col), false) => {
                    self.error(
                        "chart-option",
                        format!("`{}` takes no column", o.name.keyword()),
                        col.span.clone(),
                        "remove this",
                    );
                    ok = false;
                }
                _ => chosen.push((o.name, o.column.as_ref())),
            }
        }
        if !ok {
            return None;
        }
        let given = |n: OptName| chosen.iter().find(|(k, _)| *k == n).and_then(|(_, c)| *c);
        let compare_key = h.compare.as_ref().map(|c| &c.key);
        let compare_measure = h.compare.as_ref().map(|c| &c.measure);
        let has = |id: &Ident| schema.iter().any(|(n, _)| *n == id.name);
        let in_view = format!("in `{view}`");
        let lookup =
            |me: &mut Self, id: &Ident| resolve::column(me.src, &schema, &in_view, id, me.diags);
        match c.form {
            ChartForm::Line => {
                let x = match given(OptName::X) {
                    Some(id) => lookup(self, id)?,
                    None => {
                        let times: Vec<usize> = schema
                            .iter()
                            .enumerate()
                            .filter(|(_, (_, t))| t.is_time())
                            .map(|(i, _)| i)
                            .collect();
                        if times.len() != 1 {
                            self.error(
                                "chart-option",
                                "which column runs along x?",
                                c.span.clone(),
                                "no `x` given",
                            )
                            .help = Some(format!("write `line {view}: x COLUMN, ...`"));
                            return None;
                        }
                        (times[0], schema[times[0]].1)
                    }
                };
                // A line over text categories is allowed but linted
                // (`line-over-categories`): the line implies an order.
                let y = match given(OptName::Y).or(compare_measure.filter(|m| has(m))) {
                    Some(id) => lookup(self, id)?,
                    None => {
                        self.error(
                            "chart-option",
                            "which column is the measure?",
                            c.span.clone(),
                            "no `y` given",
                        )
                        .help = Some(format!(
                            "write `line {view}: y COLUMN`, or declare `compare KEY by MEASURE`"
                        ));
                        return None;
                    }
                };
                let span = given(OptName::Y).map_or(c.span.clone(), |i| i.span.clone());
                self.number_column(&view, &schema, y, span, "the measure")?;
                let series = match given(OptName::Series).or(compare_key.filter(|k| has(k))) {
                    Some(id) => Some(lookup(self, id)?.0),
                    None => None,
                };
                Some(ChartSpec {
                    form: c.form,
                    table_name: view,
                    table,
                    x: x.0,
                    y: y.0,
                    series,
                    ordered: true,
                    rest,
                    orientation: None,
                    measure_is_count: counts.contains(&schema[y.0].0),
                    extra: None,
                    parts_mode: None,
                    fit: false,
                })
            }
            ChartForm::Table => Some(ChartSpec {
                form: c.form,
                table_name: view,
                table,
                x: 0,
                y: 0,
                series: None,
                ordered: true,
                rest,
                orientation: None,
                measure_is_count: false,
                extra: None,
                parts_mode: None,
                fit: false,
            }),
            ChartForm::Scatter => {
                let pick = |me: &mut Self, n: OptName, what: &str| -> Option<(usize, ColType)> {
                    match given(n) {
                        Some(id) => lookup(me, id),
                        None => {
                            me.error(
                                "chart-option",
                                format!("which column runs along {what}?"),
                                c.span.clone(),
                                "",
                            )
                            .help = Some(format!("write `scatter {view}: x COLUMN, y COLUMN`"));
                            None
                        }
                    }
                };
                let x = pick(self, OptName::X, "x")?;
                let y = pick(self, OptName::Y, "y")?;
                for (col, opt) in [(x, OptName::X), (y, OptName::Y)] {
                    if !(col.1 == ColType::Number || col.1.is_time()) {
                        let span = given(opt).map_or(c.span.clone(), |i| i.span.clone());
                        let why = self.tables.why_text(&view, &schema[col.0].0);
                        let d = self.error(
                            "chart-type",
                            format!(
                                "a scatter places numbers, but `{}` is {}",
                                schema[col.0].0,
                                col.1.name()
                            ),
                            span,
                            "not a number",
                        );
                        d.notes.extend(why);
                        return None;
                    }
                }
                let label = match given(OptName::Label) {
                    Some(id) => Some(lookup(self, id)?.0),
                    None => None,
                };
                Some(ChartSpec {
                    form: c.form,
                    table_name: view,
                    table,
                    x: x.0,
                    y: y.0,
                    series: None,
                    ordered: true,
                    rest,
                    orientation: None,
                    measure_is_count: false,
                    extra: label,
                    parts_mode: None,
                    fit: chosen.iter().any(|(n, _)| *n == OptName::Fit),
                })
            }
            ChartForm::Bars | ChartForm::Dots | ChartForm::Pie => {
                let cat = match given(OptName::Category).or(compare_key.filter(|k| has(k))) {
                    Some(id) => lookup(self, id)?,
                    None => {
                        self.error(
                            "chart-option",
                            "which column holds the categories?",
                            c.span.clone(),
                            "no `category` given",
                        )
                        .help = Some(format!(
                            "write `{form_name} {view}: category COLUMN, value COLUMN`"
                        ));
                        return None;
                    }
                };
                let val = match given(OptName::Value).or(compare_measure.filter(|m| has(m))) {
                    Some(id) => lookup(self, id)?,
                    None => {
                        self.error(
                            "chart-option",
                            "which column holds the values?",
                            c.span.clone(),
                            "no `value` given",
                        )
                        .help = Some(format!(
                            "write `{form_name} {view}: category COLUMN, value COLUMN`"
                        ));
                        return None;
                    }
                };
                let span = given(OptName::Value).map_or(c.span.clone(), |i| i.span.clone());
                self.number_column(&view, &schema, val, span, "bar values")?;
                let ordinal = cat.1.is_time() || cat.1 == ColType::Number;
                Some(ChartSpec {
                    form: c.form,
                    table_name: view,
                    table,
                    x: cat.0,
                    y: val.0,
                    series: None,
                    rest,
                    ordered: ordinal || chosen.iter().any(|(n, _)| *n == OptName::Ordered),
                    orientation: chosen.iter().rev().find_map(|(n, _)| match n {
                        OptName::Horizontal => Some(Orientation::Horizontal),
                        OptName::Vertical => Some(Orientation::Vertical),
                        _ => None,
                    }),
                    measure_is_count: counts.contains(&schema[val.0].0),
                    extra: match given(OptName::Stack)
                        .or(given(OptName::Group))
                        .or(given(OptName::Series))
                    {
                        Some(id) => Some(lookup(self, id)?.0),
                        None => None,
                    },
                    parts_mode: if given(OptName::Stack).is_some() {
                        Some(PartsMode::Stacked)
                    } else if given(OptName::Group).is_some() {
                        Some(PartsMode::Grouped)
                    } else {
                        None
                    },
                    fit: false,
                })
            }
        }
    }

    /// Build the chart (all series, all roles context) for a new sequence.
    fn new_sequence(&mut self, spec: ChartSpec, c: &ChartStmt) -> Option<SeqState> {
        let is_plain_bars = c.form == ChartForm::Bars && spec.parts_mode.is_none();
        if !(c.form == ChartForm::Line || is_plain_bars) {
            return self.new_form(spec, c);
        }
        let t = &spec.table;
        let xcol = &t.columns[spec.x];
        let ycol = &t.columns[spec.y];
        if t.columns.first().is_none_or(|c| c.values.is_empty()) {
            self.error(
                "empty-view",
                format!("`{}` has no rows to draw", spec.table_name),
                c.view.span.clone(),
                "empty",
            )
            .help = Some("check the view's `keep` conditions against the data".into());
            return None;
        }
        match spec.form {
            ChartForm::Line => {
                let mut names: Vec<String> = Vec::new();
                let mut series: Vec<Series> = Vec::new();
                // Exact x values (`-0.0` counted as `0.0`): rounding them to a
                // grid would merge distinct points or overflow for large x.
                let mut seen: BTreeSet<(String, u64)> = BTreeSet::new();
                let mut categories: Vec<String> = Vec::new();
                let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
                let (mut ylo, mut yhi) = (f64::INFINITY, f64::NEG_INFINITY);
                for r in 0..xcol.values.len() {
                    let name = match spec.series {
                        Some(s) => display(&t.columns[s].values.value(r)),
                        None => humanize(&ycol.name),
                    };
                    let x = if xcol.ty == ColType::Text {
                        // Text categories sit at 0, 1, 2, ... in order of
                        // first appearance.
                        let label = display(&xcol.values.value(r));
                        match categories.iter().position(|c| *c == label) {
                            Some(i) => i as f64,
                            None => {
                                categories.push(label);
                                (categories.len() - 1) as f64
                            }
                        }
                    } else {
                        match position(&xcol.values.value(r)) {
                            Some(x) => x,
                            None => continue,
                        }
                    };
                    let y = match &ycol.values.value(r) {
                        Value::Number(v) => Some(*v),
                        _ => None,
                    };
                    if !seen.insert((name.clone(), (x + 0.0).to_bits())) {
                        self.error(
                            "duplicate-point",
                            format!(
                                "a line needs one value per x and series, but `{}` has several rows for \"{}\" at {}",
                                spec.table_name,
                                name,
                                display(&xcol.values.value(r))
                            ),
                            c.span.clone(),
                            "in this chart",
                        )
                        .help = Some(format!(
                            "group the view first, e.g. `| by {}{}: ...`",
                            xcol.name,
                            spec.series.map_or(String::new(), |s| format!(", {}", t.columns[s].name))
                        ));
                        return None;
                    }
                    lo = lo.min(x);
                    hi = hi.max(x);
                    if let Some(y) = y {
                        ylo = ylo.min(y);
                        yhi = yhi.max(y);
                    }
                    let idx = match names.iter().position(|n| *n == name) {
                        Some(i) => i,
                        None => {
                            names.push(name.clone());
                            series.push(Series {
                                label: name.clone(),
                                name,
                                role: Role::Context,
                                points: Vec::new(),
                            });
                            names.len() - 1
                        }
                    };
                    series[idx].points.push(Point { x, y });
                }
                if !ylo.is_finite() {
                    self.error(
                        "empty-view",
                        format!(
                            "`{}` has no values of `{}` to draw",
                            spec.table_name, ycol.name
                        ),
                        c.span.clone(),
                        "nothing to draw",
                    );
                    return None;
                }
                for s in &mut series {
                    s.points.sort_by(|a, b| a.x.total_cmp(&b.x));
                }
                let scale_kind = match xcol.ty {
                    ColType::Month => ScaleKind::Months,
                    ColType::Date => ScaleKind::Days,
                    ColType::Year => ScaleKind::Years,
                    ColType::Text => ScaleKind::Categories,
                    ColType::Number => ScaleKind::Linear,
                };
                let x = match scale_kind {
                    ScaleKind::Linear => scale::linear_axis(lo, hi, false, None),
                    ScaleKind::Categories => Axis {
                        title: None,
                        scale: ScaleKind::Categories,
                        domain: [0.0, (categories.len().max(2) - 1) as f64],
                        ticks: categories
                            .iter()
                            .enumerate()
                            .map(|(i, c)| Tick {
                                value: i as f64,
                                label: c.clone(),
                            })
                            .collect(),
                        grid: false,
                    },
                    k => scale::time_axis(k, lo, hi, None),
                };
                let y = scale::linear_axis(ylo, yhi, false, Some(humanize(&ycol.name)));
                Some(SeqState {
                    chart: Chart::Line(LineChart {
                        x,
                        y,
                        series,
                        annotations: Vec::new(),
                        end_labels: false,
                    }),
                    names,
                    hidden: BTreeSet::new(),
                    spotlight: BTreeSet::new(),
                    x_title: None,
                    y_title: None,
                    cells: BTreeSet::new(),
                    measure_name: ycol.name.clone(),
                    view_name: spec.table_name.clone(),
                    key_name: spec
                        .series
                        .map_or(ycol.name.clone(), |s| t.columns[s].name.clone()),
                    anchors: FrameAnchors {
                        chart: c.span.clone(),
                        view: spec.table_name.clone(),
                        measure_is_count: spec.measure_is_count,
                        x_is_text: xcol.ty == ColType::Text,
                        ..FrameAnchors::default()
                    },
                })
            }
            _ => {
                let mut rows: Vec<(String, Option<f64>, usize)> = Vec::new();
                for r in 0..xcol.values.len() {
                    let label = display(&xcol.values.value(r));
                    if rows.iter().any(|(l, _, _)| *l == label) {
                        self.error(
                            "duplicate-point",
                            format!(
                                "bars need one row per category, but `{}` has several rows for \"{}\"",
                                spec.table_name, label
                            ),
                            c.span.clone(),
                            "in this chart",
                        )
                        .help = Some(format!("group the view first, e.g. `| by {}: ...`", xcol.name));
                        return None;
                    }
                    let v = match &ycol.values.value(r) {
                        Value::Number(v) => Some(*v),
                        _ => None,
                    };
                    rows.push((label, v, r));
                }
                if spec.ordered {
                    if xcol.ty.is_time() || xcol.ty == ColType::Number {
                        rows.sort_by(|a, b| {
                            let pa = position(&xcol.values.value(a.2)).unwrap_or(f64::INFINITY);
                            let pb = position(&xcol.values.value(b.2)).unwrap_or(f64::INFINITY);
                            pa.total_cmp(&pb)
                        });
                    }
                } else {
                    // Largest first; missing values last; ties keep data order.
                    rows.sort_by(|a, b| match (a.1, b.1) {
                        (Some(x), Some(y)) => y.total_cmp(&x),
                        (Some(_), None) => std::cmp::Ordering::Less,
                        (None, Some(_)) => std::cmp::Ordering::Greater,
                        (None, None) => std::cmp::Ordering::Equal,
                    });
                    // The folded "other" row is not a category to rank.
                    if let Some(rest) = &spec.rest {
                        if let Some(i) = rows.iter().position(|r| r.0 == *rest) {
                            let r = rows.remove(i);
                            rows.push(r);
                        }
                    }
                }
                let vals: Vec<f64> = rows.iter().filter_map(|r| r.1).collect();
                if vals.is_empty() {
                    self.error(
                        "empty-view",
                        format!(
                            "`{}` has no values of `{}` to draw",
                            spec.table_name, ycol.name
                        ),
                        c.span.clone(),
                        "nothing to draw",
                    );
                    return None;
                }
                let lo = vals.iter().copied().fold(f64::INFINITY, f64::min);
                let hi = vals.iter().copied().fold(f64::NEG_INFINITY, f64::max);
                let value =
                    scale::linear_axis(lo.min(0.0), hi.max(0.0), true, Some(humanize(&ycol.name)));
                let longest = rows.iter().map(|r| r.0.chars().count()).max().unwrap_or(0);
                // Long names, or many of them, read better down the side
                // than squeezed under narrow bars (common practice); time
                // keeps running left to right.
                let orientation = match spec.orientation {
                    Some(o) => o,
                    None if !xcol.ty.is_time()
                        && (longest * rows.len() > 110 || longest > 24 || rows.len() > 12) =>
                    {
                        Orientation::Horizontal
                    }
                    None => Orientation::Vertical,
                };
                let step = value
                    .ticks
                    .get(1)
                    .zip(value.ticks.first())
                    .map_or(1.0, |(b, a)| b.value - a.value);
                let decimals = decimals_for(step);
                let bars = rows
                    .iter()
                    .map(|(label, v, _)| Bar {
                        label: label.clone(),
                        value: *v,
                        value_label: v.map_or_else(
                            || "no data".to_string(),
                            |v| format::number(round_to(v, decimals), None),
                        ),
                        role: Role::Context,
                    })
                    .collect();
                Some(SeqState {
                    names: rows.iter().map(|r| r.0.clone()).collect(),
                    chart: Chart::Bars(BarChart {
                        orientation,
                        category_title: None,
                        value,
                        bars,
                    }),
                    hidden: BTreeSet::new(),
                    spotlight: BTreeSet::new(),
                    x_title: None,
                    y_title: None,
                    cells: BTreeSet::new(),
                    measure_name: ycol.name.clone(),
                    view_name: spec.table_name.clone(),
                    key_name: xcol.name.clone(),
                    anchors: FrameAnchors {
                        chart: c.span.clone(),
                        view: spec.table_name.clone(),
                        measure_is_count: spec.measure_is_count,
                        x_is_text: xcol.ty == ColType::Text,
                        ordered: c
                            .opts
                            .iter()
                            .find(|o| o.name == OptName::Ordered)
                            .map(|o| o.span.clone()),
                        orientation: c
                            .opts
                            .iter()
                            .rev()
                            .find(|o| matches!(o.name, OptName::Horizontal | OptName::Vertical))
                            .map(|o| o.span.clone()),
                        ..FrameAnchors::default()
                    },
                })
            }
        }
    }
}

/// `y range FROM to TO`: fix the measure's axis for the rest of the
/// sequence. The data must fit inside it; ticks are chosen within it.
fn set_range(
    p: &mut Planner,
    st: &mut SeqState,
    from: f64,
    to: f64,
    span: &ast::Span,
) -> Option<()> {
    if from >= to {
        p.error(
            "axis-range",
            format!(
                "the range must rise: {} to {}",
                format::number(from, None),
                format::number(to, None)
            ),
            span.clone(),
            "empty range",
        );
        return None;
    }
    let (axis, values): (&mut Axis, Vec<f64>) = match &mut st.chart {
        Chart::Line(l) => {
            let v = l
                .series
                .iter()
                .flat_map(|s| s.points.iter().filter_map(|p| p.y))
                .collect();
            (&mut l.y, v)
        }
        Chart::Bars(b) => {
            let v = b.bars.iter().filter_map(|b| b.value).collect();
            (&mut b.value, v)
        }
        _ => {
            p.error(
                "axis-range",
                "only line and bar charts take `y range`",
                span.clone(),
                "not for this chart",
            );
            return None;
        }
    };
    let lo = values.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if lo < from || hi > to {
        p.error(
            "axis-range",
            format!(
                "the range {} to {} would cut off data: the values run from {} to {}",
                format::number(from, None),
                format::number(to, None),
                format::number(lo, None),
                format::number(hi, None)
            ),
            span.clone(),
            "data outside this range",
        )
        .help = Some("widen the range, or leave it out to fit the axis to the data".into());
        return None;
    }
    let fitted = scale::linear_axis(from, to, false, axis.title.clone());
    axis.ticks = fitted
        .ticks
        .into_iter()
        .filter(|t| t.value >= from - 1e-9 * (to - from) && t.value <= to + 1e-9 * (to - from))
        .collect();
    axis.domain = [from, to];
    st.anchors.range = Some(span.clone());
    Some(())
}

/// A text alternative for a frame, generated from the data: the chart form,
/// what the axes show, the series, the range and direction of the
/// spotlighted series, and the takeaway.
fn describe(chart: &Chart, key: &str, takeaway: Option<&str>) -> String {
    let tick_label = |axis: &Axis, v: f64| -> String {
        match axis.scale {
            ScaleKind::Months => time::month_label(v.round() as i32),
            ScaleKind::Days => time::date_iso(v.round() as i32),
            ScaleKind::Years => format!("{}", v.round() as i64),
            ScaleKind::Categories => axis
                .ticks
                .iter()
                .find(|t| (t.value - v).abs() < 1e-9)
                .map_or_else(String::new, |t| t.label.clone()),
            ScaleKind::Linear => format::number(v, None),
        }
    };
    let fig = |v: f64| format::number(round_to(v, 2), None);
    let mut out = String::new();
    match chart {
        Chart::Line(l) => {
            let measure = l.y.title.clone().unwrap_or_else(|| "the measure".into());
            let shown: Vec<&Series> = l.series.iter().filter(|s| s.role != Role::Hidden).collect();
            out.push_str(&format!(
                "Line chart of {} from {} to {}",
                measure.to_lowercase(),
                tick_label(&l.x, l.x.domain[0]),
                tick_label(&l.x, l.x.domain[1])
            ));
            if l.series.len() > 1 {
                let names: Vec<&str> = shown.iter().map(|s| s.name.as_str()).collect();
                out.push_str(&format!(", one line per {key}: {}", names.join(", ")));
            }
            out.push('.');
            for s in shown.iter().filter(|s| s.role == Role::Focus) {
                let pts: Vec<(f64, f64)> = s
                    .points
                    .iter()
                    .filter_map(|p| p.y.map(|y| (p.x, y)))
                    .collect();
                if let (Some(first), Some(last)) = (pts.first(), pts.last()) {
                    let peak = pts
                        .iter()
                        .copied()
                        .fold(*first, |a, b| if b.1 > a.1 { b } else { a });
                    let direction = if last.1 > first.1 {
                        "rose"
                    } else if last.1 < first.1 {
                        "fell"
                    } else {
                        "ended level"
                    };
                    out.push_str(&format!(
                        " Highlighted: {} {direction} from {} in {} to {} in {}, with a high of {} in {}.",
                        s.name,
                        fig(first.1),
                        tick_label(&l.x, first.0),
                        fig(last.1),
                        tick_label(&l.x, last.0),
                        fig(peak.1),
                        tick_label(&l.x, peak.0)
                    ));
                }
            }
        }
        Chart::Bars(b) => {
            let measure = b
                .value
                .title
                .clone()
                .unwrap_or_else(|| "the measure".into());
            let shown: Vec<String> = b
                .bars
                .iter()
                .filter(|x| x.role != Role::Hidden)
                .map(|x| {
                    format!(
                        "{} {}{}",
                        x.label,
                        x.value_label,
                        if x.role == Role::Focus {
                            " (highlighted)"
                        } else {
                            ""
                        }
                    )
                })
                .collect();
            out.push_str(&format!(
                "Bar chart of {} by {key}, {} bars: {}.",
                measure.to_lowercase(),
                shown.len(),
                shown.join("; ")
            ));
        }
        other => out.push_str(&describe_more(other, key)),
    }
    if let Some(t) = takeaway {
        out.push_str(&format!(" Takeaway: {t}"));
    }
    out
}

/// Decimals needed to show multiples of `step` exactly (0.25 → 2).
pub(crate) fn decimals_for(step: f64) -> usize {
    let mut d = 0;
    let mut s = step.abs();
    while d < 6 && (s - s.round()).abs() > 1e-9 * s.max(1.0) {
        s *= 10.0;
        d += 1;
    }
    d
}

pub(crate) fn round_to(v: f64, decimals: usize) -> f64 {
    let p = 10f64.powi(decimals as i32);
    (v * p).round() / p
}

/// The chart of the current frame: roles from the visibility and spotlight.
fn apply_state(st: &SeqState) -> Chart {
    let visible = st.names.iter().filter(|n| !st.hidden.contains(*n)).count();
    let role = |name: &str| {
        if st.hidden.contains(name) {
            Role::Hidden
        } else if st.spotlight.contains(name)
            || (st.spotlight.is_empty() && st.names.len() == 1 && visible == 1)
        {
            Role::Focus
        } else {
            Role::Context
        }
    };
    let x_title = st.x_title.as_ref().map(|t| t.text.clone());
    let y_title = st.y_title.as_ref().map(|t| t.text.clone());
    let mut chart = apply_roles(&st.chart, &role, &x_title, &y_title, &st.cells);
    if let Chart::Plugin(p) = &mut chart {
        // A plugin gets the role of every item it may draw.
        p.request.roles = st
            .names
            .iter()
            .filter_map(|n| {
                let r = match role(n) {
                    Role::Focus => crescendo_plugin::Role::Focus,
                    Role::Context => crescendo_plugin::Role::Context,
                    Role::Hidden => return None,
                };
                Some((n.clone(), r))
            })
            .collect();
        p.request.hidden = st
            .names
            .iter()
            .filter(|n| st.hidden.contains(*n))
            .cloned()
            .collect();
    }
    chart
}

/// Set roles (by series, bar, part, row, slice or panel name) and axis
/// titles on a chart.
fn apply_roles(
    chart: &Chart,
    role: &dyn Fn(&str) -> Role,
    x_title: &Option<String>,
    y_title: &Option<String>,
    cells: &BTreeSet<(String, String)>,
) -> Chart {
    let set = |slot: &mut Option<String>, t: &Option<String>| {
        if t.is_some() {
            *slot = t.clone();
        }
    };
    match chart {
        Chart::Line(l) => {
            let mut l = l.clone();
            set(&mut l.x.title, x_title);
            set(&mut l.y.title, y_title);
            for s in &mut l.series {
                s.role = role(&s.name);
            }
            Chart::Line(l)
        }
        Chart::Bars(b) => {
            let mut b = b.clone();
            set(&mut b.category_title, x_title);
            set(&mut b.value.title, y_title);
            for bar in &mut b.bars {
                bar.role = role(&bar.label);
            }
            Chart::Bars(b)
        }
        Chart::Parts(p) => {
            let mut p = p.clone();
            set(&mut p.category_title, x_title);
            set(&mut p.value.title, y_title);
            for part in &mut p.parts {
                part.role = role(&part.name);
            }
            Chart::Parts(p)
        }
        Chart::Dots(d) => {
            let mut d = d.clone();
            set(&mut d.category_title, x_title);
            set(&mut d.value.title, y_title);
            if d.series.len() > 1 {
                for s in &mut d.series {
                    s.role = role(&s.name);
                }
            } else {
                for r in &mut d.rows {
                    r.role = role(&r.label);
                }
            }
            Chart::Dots(d)
        }
        Chart::Scatter(sc) => {
            let mut sc = sc.clone();
            set(&mut sc.x.title, x_title);
            set(&mut sc.y.title, y_title);
            for p in &mut sc.points {
                p.role = role(&p.label);
            }
            Chart::Scatter(sc)
        }
        Chart::Figures(f) => Chart::Figures(f.clone()),
        Chart::Plugin(p) => {
            let mut p = p.clone();
            p.request.texts.x_title = x_title.clone();
            p.request.texts.y_title = y_title.clone();
            Chart::Plugin(p)
        }
        Chart::Table(t) => {
            let mut t = t.clone();
            for row in &mut t.rows {
                let key = row.cells.first().cloned().unwrap_or_default();
                row.role = role(&key);
                row.focus_cell = t
                    .columns
                    .iter()
                    .position(|c| cells.contains(&(key.clone(), c.title.clone())));
            }
            Chart::Table(t)
        }
        Chart::Pie(p) => {
            let mut p = p.clone();
            for s in &mut p.slices {
                s.role = role(&s.label);
            }
            Chart::Pie(p)
        }
        Chart::Panels(pc) => {
            let mut pc = pc.clone();
            for panel in &mut pc.panels {
                let r = role(&panel.title);
                panel.role = r;
                // inside a panel, its own series takes the panel's role
                let inner = |_: &str| r;
                panel.chart = apply_roles(&panel.chart, &inner, x_title, y_title, cells);
            }
            Chart::Panels(pc)
        }
    }
}

/// Text alternatives of the other chart forms.
fn describe_more(chart: &Chart, key: &str) -> String {
    let lit = |r: Role| {
        if r == Role::Focus {
            " (highlighted)"
        } else {
            ""
        }
    };
    let measure = |a: &Axis| {
        a.title
            .clone()
            .unwrap_or_else(|| "the measure".into())
            .to_lowercase()
    };
    match chart {
        Chart::Line(_) | Chart::Bars(_) => String::new(),
        Chart::Parts(p) => {
            let kind = match p.mode {
                PartsMode::Stacked => "Stacked bar chart",
                PartsMode::Grouped => "Grouped bar chart",
            };
            let parts: Vec<String> = p
                .parts
                .iter()
                .filter(|x| x.role != Role::Hidden)
                .map(|x| format!("{}{}", x.name, lit(x.role)))
                .collect();
            let cats: Vec<String> = p
                .categories
                .iter()
                .map(|c| format!("{} {}", c.label, c.total_label))
                .collect();
            format!(
                "{kind} of {}, {} categories split by {key} into {}. Totals: {}.",
                measure(&p.value),
                p.categories.len(),
                parts.join(", "),
                cats.join("; ")
            )
        }
        Chart::Dots(d) => {
            let rows: Vec<String> = d
                .rows
                .iter()
                .filter(|r| r.role != Role::Hidden)
                .map(|r| {
                    let vs: Vec<String> = r
                        .values
                        .iter()
                        .map(|v| {
                            v.map_or_else(
                                || "no data".into(),
                                |v| format::number(round_to(v, 2), None),
                            )
                        })
                        .collect();
                    format!("{} {}{}", r.label, vs.join(" / "), lit(r.role))
                })
                .collect();
            format!("Dot plot of {}: {}.", measure(&d.value), rows.join("; "))
        }
        Chart::Scatter(s) => {
            let mut out = format!(
                "Scatter of {} against {}, {} points",
                measure(&s.y),
                measure(&s.x),
                s.points.len()
            );
            if let Some(f) = &s.fit {
                out.push_str(&format!(
                    "; fitted line rises {} per unit{}",
                    format::number(round_to(f.slope, 3), None),
                    f.r.map_or(String::new(), |r| format!(
                        ", correlation {}",
                        format::number(round_to(r, 2), None)
                    ))
                ));
            }
            let focus: Vec<&str> = s
                .points
                .iter()
                .filter(|p| p.role == Role::Focus)
                .map(|p| p.label.as_str())
                .collect();
            if !focus.is_empty() {
                out.push_str(&format!("; highlighted: {}", focus.join(", ")));
            }
            out.push('.');
            out
        }
        Chart::Figures(f) => {
            let figs: Vec<String> = f
                .figures
                .iter()
                .map(|x| format!("{}: {}", x.text, x.caption))
                .collect();
            format!(
                "Key figure{}: {}.",
                if figs.len() == 1 { "" } else { "s" },
                figs.join("; ")
            )
        }
        Chart::Table(t) => {
            let cols: Vec<&str> = t.columns.iter().map(|c| c.title.as_str()).collect();
            let focus: Vec<&str> = t
                .rows
                .iter()
                .filter(|r| r.role == Role::Focus || r.focus_cell.is_some())
                .filter_map(|r| r.cells.first().map(String::as_str))
                .collect();
            let mut out = format!(
                "Table of {} rows with columns {}",
                t.rows.len(),
                cols.join(", ")
            );
            if !focus.is_empty() {
                out.push_str(&format!("; highlighted: {}", focus.join(", ")));
            }
            out.push('.');
            out
        }
        Chart::Pie(p) => {
            let slices: Vec<String> = p
                .slices
                .iter()
                .filter(|s| s.role != Role::Hidden)
                .map(|s| format!("{} {}{}", s.label, s.share_label, lit(s.role)))
                .collect();
            format!("Pie chart of shares by {key}: {}.", slices.join("; "))
        }
        Chart::Plugin(p) => format!(
            "Chart drawn by the plugin {} {} (form {}).",
            p.plugin_name, p.plugin_version, p.form
        ),
        Chart::Panels(pc) => {
            let panels: Vec<String> = pc
                .panels
                .iter()
                .filter(|p| p.role != Role::Hidden)
                .map(|p| format!("{}{}", p.title, lit(p.role)))
                .collect();
            format!(
                "Small multiples, one panel per {key} on {}: {}.",
                if pc.common_scale {
                    "one common scale"
                } else {
                    "separate scales"
                },
                panels.join(", ")
            )
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn slugs_are_file_safe_and_bounded() {
        assert_eq!(
            slug("Riders on three routes since 2019"),
            "riders-on-three-routes-since-2019"
        );
        assert_eq!(slug("  Ünïcode & «quotes» — 2.3×!  "), "n-code-quotes-2-3");
        assert_eq!(slug("???"), "frame");
        let long = slug(
            "The Harbour Loop now carries more than twice the riders of the Bay Line every month",
        );
        assert!(long.len() <= 48, "{long}");
        assert!(!long.ends_with('-'));
    }

    #[test]
    fn humanize_names() {
        assert_eq!(humanize("riders_per_trip"), "Riders per trip");
    }

    /// Plan `story` against a fresh folder holding `data.csv`.
    fn plan_with(tag: &str, story: &str, csv: &str) -> PlanResult {
        let dir = std::env::temp_dir().join(format!("crescendo-plan-{}-{tag}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        std::fs::write(dir.join("data.csv"), csv).unwrap();
        let out = plan_story(&Source::file("t.cresc", story), &dir, &Options::default());
        let _ = std::fs::remove_dir_all(&dir);
        out
    }

    fn errors(result: PlanResult) -> Vec<Diagnostic> {
        match result {
            Ok(_) => Vec::new(),
            Err(d) => d.into_iter().filter(Diagnostic::is_error).collect(),
        }
    }

    const SALES: &str = "month,shop,sales\n2024-01,North,5\n2024-01,South,3\n\
                         2024-02,North,6\n2024-02,South,4\n";

    #[test]
    fn a_broken_chart_is_reported_once_not_in_every_frame_after_it() {
        // The chart names an unknown view: one error, and the frames that
        // build on it are not blamed for having no chart.
        let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                     frame \"a\" {\n  line sals: x month, y sales, series shop\n}\n\
                     frame \"b\" {\n  spotlight \"North\"\n}\n\
                     frame \"c\" {\n  hide \"South\"\n}\n";
        let errs = errors(plan_with("broken-chart", story, SALES));
        let codes: Vec<&str> = errs.iter().map(|d| d.code).collect();
        assert_eq!(codes, ["unknown-name"], "{errs:#?}");
    }

    #[test]
    fn frames_after_a_broken_chart_are_not_checked_against_the_chart_before() {
        // Frame "c" builds on the failed bars chart of frame "b"; checking it
        // against the line chart of frame "a" would report a bogus error.
        let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                     view totals = sales\n  | by shop: sales = sum(sales)\n\
                     frame \"a\" {\n  line sales: x month, y sales, series shop\n}\n\
                     frame \"b\" {\n  bars totals: category shop, value sale\n}\n\
                     frame \"c\" {\n  spotlight \"Sales\"\n}\n";
        let errs = errors(plan_with("stale-chart", story, SALES));
        let codes: Vec<&str> = errs.iter().map(|d| d.code).collect();
        assert_eq!(codes, ["unknown-column"], "{errs:#?}");
    }

    #[test]
    fn a_frame_without_a_chart_is_reported_once() {
        let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                     frame \"a\" {\n  hide \"South\"\n}\n\
                     frame \"b\" {\n  show all\n}\n";
        let errs = errors(plan_with("no-chart", story, SALES));
        assert_eq!(errs.len(), 1, "{errs:#?}");
        assert_eq!(errs[0].code, "no-chart");
        assert_eq!(errs[0].location().map(|l| l.1), Some(3));
    }

    #[test]
    fn distinct_large_or_close_x_values_are_not_duplicates() {
        // x values beyond i64::MAX / 1e6 and values closer than 1e-6 are
        // still distinct points.
        let story = "story \"s\"\ndata d from \"data.csv\"\n\
                     frame \"a\" {\n  line d: x at, y v\n}\n";
        for csv in [
            "at,v\n1e13,1\n2e13,2\n3e13,3\n",
            "at,v\n0.0000001,1\n0.0000002,2\n0.0000003,3\n",
        ] {
            let result = plan_with("big-x", story, csv);
            assert!(result.is_ok(), "{csv}: {:#?}", result.err());
        }
        // and a true duplicate is still found
        let errs = errors(plan_with("dup-x", story, "at,v\n1,1\n1,2\n"));
        assert_eq!(errs.len(), 1, "{errs:#?}");
        assert_eq!(errs[0].code, "duplicate-point");
    }

    #[test]
    fn a_misspelt_comparison_is_reported() {
        let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                     compare shops by sales\n\
                     frame \"a\" {\n  line sales: x month, y sales, series shop\n}\n";
        let errs = errors(plan_with("compare-typo", story, SALES));
        assert_eq!(errs.len(), 1, "{errs:#?}");
        assert_eq!(errs[0].code, "unknown-column");
        assert_eq!(errs[0].help.as_deref(), Some("did you mean `shop`?"));
        assert_eq!(errs[0].location(), Some(("t.cresc".into(), 3, 9)));
    }

    /// The `grid` flag of each frame's measure axis (of every panel's, for
    /// small multiples).
    fn grids(plan: &DeckPlan) -> Vec<Vec<bool>> {
        fn measure(chart: &Chart) -> Vec<bool> {
            match chart {
                Chart::Line(l) => vec![l.y.grid],
                Chart::Bars(b) => vec![b.value.grid],
                Chart::Parts(p) => vec![p.value.grid],
                Chart::Dots(d) => vec![d.value.grid],
                Chart::Scatter(s) => vec![s.y.grid],
                Chart::Panels(p) => p.panels.iter().flat_map(|x| measure(&x.chart)).collect(),
                _ => Vec::new(),
            }
        }
        plan.frames.iter().map(|f| measure(&f.chart)).collect()
    }

    #[test]
    fn gridlines_persist_through_the_sequence_until_turned_off() {
        let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                     view totals = sales\n  | by shop: sales = sum(sales)\n\
                     frame \"a\" {\n  line sales: x month, y sales, series shop\n}\n\
                     frame \"b\" {\n  gridlines\n}\n\
                     frame \"c\" {\n  spotlight \"North\"\n}\n\
                     frame \"d\" {\n  split shop\n}\n\
                     frame \"e\" {\n  gridlines off\n}\n\
                     frame \"f\" {\n  bars totals: category shop, value sales\n  gridlines\n}\n\
                     frame \"g\" {\n  dots totals: category shop, value sales\n}\n";
        let planned = plan_with("gridlines", story, SALES).unwrap_or_else(|d| panic!("{d:#?}"));
        assert_eq!(
            grids(&planned.plan),
            [
                vec![false],
                vec![true],
                vec![true],
                vec![true, true],
                vec![false, false],
                vec![true],
                vec![false],
            ]
        );
        // the lint finds the statement in effect
        let spans: Vec<Option<usize>> = planned
            .anchors
            .frames
            .iter()
            .map(|a| a.gridlines.as_ref().map(|s| s.start))
            .collect();
        let at = story.find("gridlines\n").unwrap();
        assert_eq!(spans[1..4], [Some(at), Some(at), Some(at)]);
        assert_eq!(spans[4], None);
        assert!(spans[5].is_some() && spans[6].is_none());
        // without gridlines the plan says nothing about them
        let json = serde_json::to_string(&planned.plan.frames[0]).unwrap();
        assert!(!json.contains("grid"), "{json}");
        let json = serde_json::to_string(&planned.plan.frames[1]).unwrap();
        assert!(json.contains("\"grid\":true"), "{json}");
    }

    #[test]
    fn gridlines_need_a_measure_axis() {
        let story = "story \"s\"\ndata sales from \"data.csv\"\n\
                     view totals = sales\n  | by shop: sales = sum(sales)\n\
                     frame \"a\" {\n  table totals\n  gridlines\n}\n\
                     frame \"b\" {\n  pie totals: category shop, value sales\n  gridlines off\n}\n";
        let errs = errors(plan_with("gridlines-table", story, SALES));
        let codes: Vec<&str> = errs.iter().map(|d| d.code).collect();
        assert_eq!(codes, ["gridlines", "gridlines"], "{errs:#?}");
        assert_eq!(errs[0].location(), Some(("t.cresc".into(), 7, 3)));
        assert!(errs[0].message.contains("a table"), "{}", errs[0].message);
        assert!(errs[1].message.contains("a pie"), "{}", errs[1].message);
        assert!(errs[0].help.is_some());
    }

    #[test]
    fn decimals_of_steps() {
        assert_eq!(decimals_for(0.25), 2);
        assert_eq!(decimals_for(50.0), 0);
        assert_eq!(decimals_for(0.1), 1);
    }
}
