//! `draw NAME[.FORM] VIEW: option COLUMN, ...`: a chart a plugin draws. The
//! plan carries the request the plugin will get: the view's columns, the
//! options, and (per frame) the roles of its items.

use std::collections::{BTreeMap, BTreeSet};

use crescendo_data::{time, ColType, Table, Value};
use crescendo_diag::closest;
use crescendo_lang::ast::DrawStmt;
use crescendo_plugin::{Area, Cell, Column, OptionDecl, Request, Texts, ABI_VERSION};
use crescendo_plugin_host::{Plugin, NOT_LOADED};

use crate::anchors::FrameAnchors;
use crate::context::{Ctx, Outcome};
use crate::labels::display;
use crate::model::*;
use crate::rows::{self, schema_of};
use crate::scope::Scope;
use crate::sequence::SeqState;

/// `draw NAME[.FORM] VIEW: ...`: the state of a new sequence.
pub(crate) fn draw(cx: &mut Ctx, scope: &Scope, d: &DrawStmt) -> Outcome<SeqState> {
    let (tables, plugins) = (&scope.tables, &scope.plugins);
    let Some(plugin) = plugins.get(&d.plugin.name) else {
        if let Some(&reported) = scope.failed_plugins.get(&d.plugin.name) {
            // its `use plugin` line failed and said why
            return Err(reported);
        }
        let mut diag = cx.at(
            "unknown-name",
            format!("no plugin named `{}`", d.plugin.name),
            d.plugin.span.clone(),
            "not loaded with `use plugin`",
        );
        diag = match closest(&d.plugin.name, plugins.keys().map(String::as_str)) {
            Some(s) => diag.help(format!("did you mean `{s}`?")),
            None => diag.help(format!(
                "add `use plugin \"path/to/plugin\" as {}` to the story",
                d.plugin.name
            )),
        };
        return Err(cx.report(diag));
    };
    let info = plugin.info().clone();
    let form = form(cx, plugin, d)?;
    // an inspected plugin is named by the story, its version unknown
    let (plugin_name, plugin_version) = if plugin.is_loaded() {
        (info.name.clone(), info.version.clone())
    } else {
        (d.plugin.name.clone(), NOT_LOADED.to_string())
    };
    let named = tables.named(cx, &d.view)?;
    let table = &named.table;
    let options = options(cx, table, d)?;
    if let Some(declared) = plugin.info().options.get(&form) {
        check_declared(cx, table, d, &form, declared)?;
    }
    if table.columns.first().map_or(0, |c| c.values.len()) == 0 {
        return Err(cx.error(
            "empty-view",
            format!("`{}` has no rows to draw", d.view.name),
            d.view.span.clone(),
            "empty",
        ));
    }
    // The items the story can show, hide and spotlight: the values of the
    // `category` option's column, else of the first text column.
    let key = options.get("category").cloned().or_else(|| {
        table
            .columns
            .iter()
            .find(|c| c.ty == ColType::Text)
            .map(|c| c.name.clone())
    });
    let names = key
        .as_ref()
        .and_then(|k| table.columns.iter().find(|c| c.name == *k))
        .map(|col| {
            let mut seen = BTreeSet::new();
            col.values
                .iter()
                .map(|v| display(&v))
                .filter(|n| seen.insert(n.clone()))
                .collect()
        })
        .unwrap_or_default();
    let chart = Chart::Plugin(PluginChart {
        plugin: d.plugin.name.clone(),
        plugin_name,
        plugin_version,
        form: form.clone(),
        request: Request {
            abi_version: ABI_VERSION,
            form,
            options,
            columns: columns(table),
            roles: BTreeMap::new(),
            hidden: Vec::new(),
            texts: Texts::default(),
            area: Area {
                width: 0.0,
                height: 0.0,
            },
            label_size: 16.0,
            writing: Box::new(super::writing::of(table)),
        },
    });
    Ok(SeqState {
        names,
        view_name: d.view.name.clone(),
        key_name: key.unwrap_or_default(),
        anchors: FrameAnchors {
            chart: d.span.clone(),
            view: d.view.name.clone(),
            ..FrameAnchors::default()
        },
        ..SeqState::new(chart)
    })
}

/// The plugin's form the statement names (or its only one). An inspected
/// plugin's forms are unknown: the story's word is taken.
fn form(cx: &mut Ctx, plugin: &Plugin, d: &DrawStmt) -> Outcome<String> {
    let info = plugin.info();
    match &d.form {
        _ if !plugin.is_loaded() => {
            Ok(d.form.as_ref().map_or_else(String::new, |f| f.name.clone()))
        }
        Some(f) if info.forms.contains(&f.name) => Ok(f.name.clone()),
        Some(f) => {
            let diag = cx
                .at(
                    "unknown-name",
                    format!("plugin `{}` has no form `{}`", d.plugin.name, f.name),
                    f.span.clone(),
                    "unknown form",
                )
                .among(&f.name, "its forms", info.forms.iter().map(String::as_str));
            Err(cx.report(diag))
        }
        None if info.forms.len() == 1 => Ok(info.forms[0].clone()),
        None => {
            let diag = cx
                .at(
                    "chart-option",
                    format!(
                        "plugin `{}` draws several forms: {}",
                        d.plugin.name,
                        info.forms.join(", ")
                    ),
                    d.plugin.span.clone(),
                    "which one?",
                )
                .help(format!(
                    "write `draw {}.FORM {}: ...`",
                    d.plugin.name, d.view.name
                ));
            Err(cx.report(diag))
        }
    }
}

/// The statement's options: option name → a column of the view.
fn options(cx: &mut Ctx, table: &Table, d: &DrawStmt) -> Outcome<BTreeMap<String, String>> {
    let schema = schema_of(table);
    let place = format!("in `{}`", d.view.name);
    let at = rows::At::new(cx.src, &schema, &place);
    let mut options = BTreeMap::new();
    for (k, v) in &d.opts {
        cx.collect(|diags| at.column(v, diags))?;
        if options.insert(k.name.clone(), v.name.clone()).is_some() {
            return Err(cx.error(
                "chart-option",
                format!("`{}` is given twice", k.name),
                k.span.clone(),
                "again here",
            ));
        }
    }
    Ok(options)
}

/// The statement's options against the ones the plugin's form declares:
/// each known, each required one given, each naming a column of a kind it
/// takes. All problems of the statement are reported at once.
fn check_declared(
    cx: &mut Ctx,
    table: &Table,
    d: &DrawStmt,
    form: &str,
    declared: &[OptionDecl],
) -> Outcome<()> {
    let cp = cx.checkpoint();
    let names: Vec<&str> = declared.iter().map(|o| o.name.as_str()).collect();
    let listing = declared
        .iter()
        .map(|o| {
            let mut s = format!("`{}`", o.name);
            if o.required {
                s.push_str(" (required)");
            }
            if !o.about.is_empty() {
                s.push_str(&format!(": {}", o.about));
            }
            s
        })
        .collect::<Vec<_>>()
        .join("; ");
    let of_form = format!("the `{form}` form of plugin `{}`", d.plugin.name);
    // a required option suggested for a misspelt one is not reported again
    let mut suggested = Vec::new();
    for (k, v) in &d.opts {
        let Some(decl) = declared.iter().find(|o| o.name == k.name) else {
            let mut diag = cx
                .at(
                    "chart-option",
                    format!("{of_form} takes no option `{}`", k.name),
                    k.span.clone(),
                    "unknown option",
                )
                .note(format!("its options: {listing}"));
            if let Some(s) = closest(&k.name, names.iter().copied()) {
                diag = diag.help(format!("did you mean `{s}`?"));
                suggested.push(s.to_string());
            }
            cx.report(diag);
            continue;
        };
        let kind = table
            .columns
            .iter()
            .find(|c| c.name == v.name)
            .map(|c| c.ty.name());
        if let Some(kind) =
            kind.filter(|k| !decl.kinds.is_empty() && !decl.kinds.iter().any(|d| d == k))
        {
            let diag = cx
                .at(
                    "chart-option",
                    format!(
                        "option `{}` takes a {} column; `{}` is a {kind} column",
                        k.name,
                        decl.kinds.join(" or "),
                        v.name
                    ),
                    v.span.clone(),
                    format!("a {kind} column"),
                )
                .help(format!(
                    "name a {} column of `{}`",
                    decl.kinds.join(" or "),
                    d.view.name
                ));
            cx.report(diag);
        }
    }
    for o in declared
        .iter()
        .filter(|o| o.required && !suggested.contains(&o.name))
    {
        if !d.opts.iter().any(|(k, _)| k.name == o.name) {
            let about = if o.about.is_empty() {
                String::new()
            } else {
                format!(" ({})", o.about)
            };
            let diag = cx
                .at(
                    "chart-option",
                    format!("{of_form} needs the option `{}`{about}", o.name),
                    d.span.clone(),
                    format!("no `{}` here", o.name),
                )
                .help(format!("add `{} COLUMN` after `{}:`", o.name, d.view.name));
            cx.report(diag);
        }
    }
    cx.errors_since(cp)
}

/// The view's columns as the plugin gets them.
fn columns(table: &Table) -> Vec<Column> {
    table
        .columns
        .iter()
        .map(|c| Column {
            name: c.name.clone(),
            kind: c.ty.name().to_string(),
            cells: c
                .values
                .iter()
                .map(|v| match v {
                    Value::Missing => Cell::Missing,
                    Value::Number(n) => Cell::Number(n),
                    Value::Text(t) => Cell::Text(t),
                    Value::Month(m) => Cell::Text(time::month_iso(m)),
                    Value::Date(x) => Cell::Text(time::date_iso(x)),
                    Value::Year(y) => Cell::Text(y.to_string()),
                })
                .collect(),
        })
        .collect()
}
