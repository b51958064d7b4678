//! From a parsed story to a [`DeckPlan`], phase by phase: the header and
//! the conventions, the data and view items, values and plugins in story
//! order; then claims, then the frames; then the house style.

use std::path::Path;
use std::sync::Arc;

use crescendo_data::files::OpenError;
use crescendo_diag::{has_errors, Diagnostic, Source};
use crescendo_lang::ast::{self, Item};

use crate::anchors::Anchors;
use crate::context::Ctx;
use crate::header::{self, Header};
use crate::io::{Disk, Io};
use crate::loading::{LoadReport, Loader};
use crate::model::*;
use crate::options::Options;
use crate::order::{self, Def};
use crate::plugins::{self, Plugins};
use crate::scope::Scope;
use crate::{claims, frames, sources};

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
    pub plugins: Plugins,
    /// The SQL the database sources ran, with rows and bytes received.
    pub sql: Vec<crescendo_sql::Explained>,
    /// How the data items were read, and the cache entries used.
    pub report: LoadReport,
}

/// The result of planning: the plan, or every error found.
pub type PlanResult = Result<Planned, Vec<Diagnostic>>;

/// Parse, resolve, load and plan a story. `story_dir` is the folder data
/// paths are relative to. Reads the story's files from disk, without a
/// cache (see [`plan_story_with`]). Returns the plan and its warnings, or
/// all errors.
pub fn plan_story(src: &Arc<Source>, story_dir: &Path, options: &Options) -> PlanResult {
    plan_story_with(src, story_dir, options, &mut Disk::new(options))
}

/// [`plan_story`], reading everything through `io`.
pub fn plan_story_with(
    src: &Arc<Source>,
    story_dir: &Path,
    options: &Options,
    io: &mut dyn Io,
) -> PlanResult {
    let (story, mut diags) = crescendo_lang::parse(src);
    diags.extend(crate::limits::story(src, &story, &options.limits));
    if has_errors(&diags) {
        return Err(diags);
    }
    let (locale, fiscal_start) = header::read_conventions(src, &story, &mut diags);
    let names = crate::fiscal_names::read(
        src,
        &story,
        locale.as_deref(),
        fiscal_start.is_some(),
        &mut diags,
    );
    let conventions =
        crescendo_data::locale::Conventions::named(locale.as_deref(), fiscal_start, names);
    let mut cx = Ctx::new(src, story_dir, options, io, diags);
    // every drawn string, numbers included, in the story's locale
    let mut planned = crescendo_data::locale::scoped(conventions, || run(&mut cx, &story));
    planned.plan.locale = locale;
    planned.plan.fiscal_start = fiscal_start;
    let diags = cx.into_diagnostics();
    if has_errors(&diags) {
        return Err(diags);
    }
    planned.warnings = diags;
    Ok(planned)
}

/// Plan the items of a parsed story.
fn run(cx: &mut Ctx, story: &ast::StoryAst) -> Planned {
    let mut anchors = Anchors {
        end: cx.src.text.len()..cx.src.text.len(),
        ..Anchors::default()
    };
    let mut scope = Scope::default();
    // what streams, what is read, and within which limits
    let mut loader = Loader::prepare(story, crate::limits::read_limits(&cx.options.limits));
    let mut h = Header::default();
    let (frame_items, claim_items) =
        items(cx, story, (&mut scope, &mut loader), &mut h, &mut anchors);
    sources::check_named(cx, story);
    h.check_compare(cx, &scope.tables);
    let texts = h.texts(cx, &mut scope);
    if frame_items.is_empty() {
        let end = cx.src.text.len();
        let d = cx
            .at(
                "no-frames",
                "the story has no frames",
                end..end,
                "the story ends here",
            )
            .help("add `frame \"Headline\" { line VIEW: x COLUMN, y COLUMN }`");
        cx.report(d);
    }
    let mut failed_claims = Vec::new();
    let mut claim_plans = Vec::new();
    let mut failed = Vec::new();
    for c in claim_items {
        if let Ok((cp, deps)) = claims::check_claim(cx, &scope, c, &mut failed_claims) {
            if !cp.holds {
                failed.push((cp.sentence.clone(), deps));
            }
            claim_plans.push(cp);
        }
    }
    anchors.title = h.title.as_ref().map(|t| t.span.clone());
    anchors.conclusion = h.conclusion.as_ref().map(|t| t.span.clone());
    anchors.source = h.source.as_ref().map(|t| t.span.clone());
    anchors.byline = h.byline.as_ref().map(|t| t.span.clone());
    let with = (
        texts.source.as_ref(),
        failed.as_slice(),
        claim_plans.as_slice(),
    );
    let frames = frames::plan_frames(cx, &scope, &h, &frame_items, with, &mut anchors);
    let style = h.style.as_ref().and_then(|s| house_style(cx, s));
    let plan = DeckPlan {
        title: texts.title,
        byline: texts.byline,
        source: texts.source.map(|s| s.text),
        theme: texts.theme,
        conclusion: texts.conclusion.map(|c| c.text),
        accent: h.accent.clone(),
        style,
        values: scope
            .values
            .by_name
            .iter()
            .filter(|(k, _)| k.as_str() != "conclusion")
            .map(|(k, v)| (k.clone(), v.figure()))
            .collect(),
        exact: scope
            .values
            .by_name
            .iter()
            .filter_map(|(k, v)| match v {
                crate::values::Quantity::Number(x) if x.is_finite() => Some((k.clone(), *x)),
                _ => None,
            })
            .collect(),
        claims: claim_plans,
        frames,
        locale: None,
        fiscal_start: None,
    };
    Planned {
        plan,
        source: Arc::clone(cx.src),
        anchors,
        warnings: Vec::new(),
        failed_claims,
        plugins: std::mem::take(&mut scope.plugins),
        sql: loader.sql,
        report: loader.report,
    }
}

/// Walk the items in story order: the header, data, views, values and
/// plugins take effect as they come; frames and claims are returned for
/// later.
fn items<'s>(
    cx: &mut Ctx,
    story: &'s ast::StoryAst,
    (scope, loader): (&mut Scope, &mut Loader),
    h: &mut Header,
    anchors: &mut Anchors,
) -> (Vec<&'s ast::FrameDecl>, Vec<&'s ast::ClaimDecl>) {
    let mut frames = Vec::new();
    let mut claims = Vec::new();
    let mut defs = Vec::new();
    for item in &story.items {
        if h.take(cx, item, anchors) {
            continue;
        }
        match item {
            Item::Data(d) => sources::data_item(cx, loader, &mut scope.tables, d),
            Item::View(_) | Item::Value(_) => defs.extend(Def::of(item)),
            Item::Claim(c) => claims.push(c),
            Item::Plugin(d) => {
                if let Err(r) = plugins::use_plugin(cx, &mut scope.plugins, d) {
                    scope.failed_plugins.insert(d.alias.name.clone(), r);
                }
            }
            Item::Frame(f) => frames.push(f),
            _ => {}
        }
    }
    // views and values once every data item is read, each after what it
    // uses (`order.rs`: forward references allowed, circles refused)
    let (ordered, circles) = order::order(cx, &defs);
    for (name, (def, reported)) in circles {
        match def {
            Def::View(_) => {
                scope.tables.broken.insert(name, reported);
            }
            Def::Value(v) => {
                scope.values.spans.insert(name.clone(), v.name.span.clone());
                scope.values.broken.insert(name);
            }
        }
    }
    for def in ordered {
        match def {
            Def::View(v) => sources::view_item(cx, &mut scope.tables, v),
            Def::Value(v) => claims::define_value(cx, scope, v),
        }
    }
    (frames, claims)
}

/// `style "house.toml"`: the house style, read and checked.
fn house_style(cx: &mut Ctx, file: &ast::Str) -> Option<crate::style::HouseStyle> {
    let path = cx.confined(file, "house style").ok()?;
    let text = match cx.io.read_text(cx.dir, &path) {
        Ok(t) => t,
        Err(OpenError::Outside { real }) => {
            let why = format!(
                "`{}` is outside the story's folder ({})",
                file.value,
                real.display()
            );
            let d = crate::paths::outside(cx.src, file.span.clone(), "house style", &why);
            cx.report(d);
            return None;
        }
        Err(OpenError::Io(e)) => {
            let d = cx
                .at(
                    "style-file",
                    format!("cannot read the house style `{}`: {e}", path.display()),
                    file.span.clone(),
                    "named here",
                )
                .help("the path is relative to the story file");
            cx.report(d);
            return None;
        }
    };
    let style_src = Source::file(path.display().to_string(), text);
    match crate::style::parse(&style_src, &file.value) {
        Ok(s) => Some(s),
        Err(d) => {
            let _ = cx.extend(d);
            None
        }
    }
}
