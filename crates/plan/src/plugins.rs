//! Plugins in a story: `use plugin "path" as NAME [sha256 "…"]` loads a
//! chart-form plugin explicitly (never from a search path), and
//! `draw NAME[.FORM] VIEW: option COLUMN, ...` starts a chart it draws.

use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;
use std::sync::Arc;

use crescendo_data::{time, ColType, Value};
use crescendo_diag::{closest, Diagnostic};
use crescendo_lang::ast::{DrawStmt, PluginDecl};
use crescendo_plugin::host::{Plugin, Verified, NOT_LOADED};
use crescendo_plugin::{Area, Cell, Column, Request, Texts, ABI_VERSION};

use crate::anchors::FrameAnchors;
use crate::build::{display, Planner, SeqState};
use crate::model::*;
use crate::resolve::{self, schema_of};

/// The plugins a story loaded, by the name the story gave them.
pub type Plugins = BTreeMap<String, Arc<Plugin>>;

impl Planner<'_> {
    /// `use plugin ...`: load and check a plugin.
    pub(crate) fn use_plugin(
        &mut self,
        d: &PluginDecl,
        dir: &Path,
        refuse: bool,
        plugins: &mut Plugins,
    ) {
        if plugins.contains_key(&d.alias.name) {
            self.error(
                "duplicate-name",
                format!("a plugin named `{}` is already loaded", d.alias.name),
                d.alias.span.clone(),
                "second one here",
            );
            return;
        }
        if refuse {
            self.error(
                "plugin-refused",
                format!(
                    "plugin `{}` is not loaded: plugins are refused (--no-plugins)",
                    d.alias.name
                ),
                d.path.span.clone(),
                "refused",
            )
            .help = Some("build without --no-plugins if you trust this plugin".into());
            return;
        }
        // Open the file once and check where it really lies, what it holds
        // and its pin; then load exactly those bytes, or (when only
        // inspecting) nothing at all.
        let path = dir.join(&d.path.value);
        let allow = self.options.allow_paths.clone();
        let inside =
            |real: &Path| crate::paths::confine(dir, &real.to_string_lossy(), &allow).is_ok();
        let pin = d.pin.as_ref().map(|p| p.value.as_str());
        let inspect = self.options.inspect_plugins;
        let plugin = Verified::read(&path, pin, &inside).and_then(|v| {
            if inspect {
                Ok(Plugin::inspected(v))
            } else {
                Plugin::load_verified(v)
            }
        });
        match plugin {
            Ok(p) => {
                plugins.insert(d.alias.name.clone(), Arc::new(p));
            }
            Err(e) => {
                let span = match (&e, &d.pin) {
                    (crescendo_plugin::host::PluginError::ChecksumMismatch { .. }, Some(pin)) => {
                        pin.span.clone()
                    }
                    _ => d.path.span.clone(),
                };
                let diag = self.error(
                    "plugin",
                    format!(
                        "cannot use plugin `{}` ({}): {e}",
                        d.alias.name,
                        path.display()
                    ),
                    span,
                    "this plugin",
                );
                diag.notes.push(
                    "plugins are native code running with your rights; load only ones you trust"
                        .into(),
                );
            }
        }
    }

    /// `draw NAME[.FORM] VIEW: ...`: the state of a new sequence.
    pub(crate) fn draw(&mut self, d: &DrawStmt, plugins: &Plugins) -> Option<SeqState> {
        let Some(plugin) = plugins.get(&d.plugin.name) else {
            let mut diag = Diagnostic::error(
                "unknown-name",
                format!("no plugin named `{}`", d.plugin.name),
            )
            .at(
                self.src,
                d.plugin.span.clone(),
                "not loaded with `use plugin`",
            );
            if let Some(s) = closest(&d.plugin.name, plugins.keys().map(String::as_str)) {
                diag = diag.help(format!("did you mean `{s}`?"));
            } else {
                diag = diag.help(format!(
                    "add `use plugin \"path/to/plugin\" as {}` to the story",
                    d.plugin.name
                ));
            }
            self.diags.push(diag);
            return None;
        };
        let info = plugin.info().clone();
        let form = match &d.form {
            // an inspected plugin's forms are unknown: take the story's word
            _ if !plugin.is_loaded() => {
                d.form.as_ref().map_or_else(String::new, |f| f.name.clone())
            }
            Some(f) if info.forms.contains(&f.name) => f.name.clone(),
            Some(f) => {
                let mut diag = Diagnostic::error(
                    "unknown-name",
                    format!("plugin `{}` has no form `{}`", d.plugin.name, f.name),
                )
                .at(self.src, f.span.clone(), "unknown form")
                .note(format!("its forms: {}", info.forms.join(", ")));
                if let Some(s) = closest(&f.name, info.forms.iter().map(String::as_str)) {
                    diag = diag.help(format!("did you mean `{s}`?"));
                }
                self.diags.push(diag);
                return None;
            }
            None if info.forms.len() == 1 => info.forms[0].clone(),
            None => {
                self.error(
                    "chart-option",
                    format!(
                        "plugin `{}` draws several forms: {}",
                        d.plugin.name,
                        info.forms.join(", ")
                    ),
                    d.plugin.span.clone(),
                    "which one?",
                )
                .help = Some(format!(
                    "write `draw {}.FORM {}: ...`",
                    d.plugin.name, d.view.name
                ));
                return None;
            }
        };
        // an inspected plugin is named by the story, its version unknown
        let (plugin_name, plugin_version) = if plugin.is_loaded() {
            (info.name.clone(), info.version.clone())
        } else {
            (d.plugin.name.clone(), NOT_LOADED.to_string())
        };
        let named = self.tables.get(self.src, &d.view, self.diags)?;
        let table = named.table.clone();
        let schema = schema_of(&table);
        let place = format!("in `{}`", d.view.name);
        let mut options = BTreeMap::new();
        for (k, v) in &d.opts {
            resolve::column(self.src, &schema, &place, v, self.diags)?;
            if options.insert(k.name.clone(), v.name.clone()).is_some() {
                self.error(
                    "chart-option",
                    format!("`{}` is given twice", k.name),
                    k.span.clone(),
                    "again here",
                );
                return None;
            }
        }
        let rows = table.columns.first().map_or(0, |c| c.values.len());
        if rows == 0 {
            self.error(
                "empty-view",
                format!("`{}` has no rows to draw", d.view.name),
                d.view.span.clone(),
                "empty",
            );
            return None;
        }
        let columns: Vec<Column> = table
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
            .collect();
        // The items the story can show, hide and spotlight: the values of the
        // `category` option's column, else of the first text column.
        let key = options.get("category").cloned().or_else(|| {
            table
                .columns
                .iter()
                .find(|c| c.ty == ColType::Text)
                .map(|c| c.name.clone())
        });
        let mut names: Vec<String> = Vec::new();
        if let Some(col) = key
            .as_ref()
            .and_then(|k| table.columns.iter().find(|c| c.name == *k))
        {
            let mut seen = BTreeSet::new();
            for v in &col.values {
                let n = display(&v);
                if seen.insert(n.clone()) {
                    names.push(n);
                }
            }
        }
        Some(SeqState {
            chart: Chart::Plugin(PluginChart {
                plugin: d.plugin.name.clone(),
                plugin_name,
                plugin_version,
                form: form.clone(),
                request: Request {
                    abi_version: ABI_VERSION,
                    form,
                    options,
                    columns,
                    roles: BTreeMap::new(),
                    hidden: Vec::new(),
                    texts: Texts::default(),
                    area: Area {
                        width: 0.0,
                        height: 0.0,
                    },
                    label_size: 16.0,
                },
            }),
            names,
            hidden: BTreeSet::new(),
            spotlight: BTreeSet::new(),
            x_title: None,
            y_title: None,
            view_name: d.view.name.clone(),
            key_name: key.unwrap_or_default(),
            cells: BTreeSet::new(),
            measure_name: String::new(),
            anchors: FrameAnchors {
                chart: d.span.clone(),
                view: d.view.name.clone(),
                ..FrameAnchors::default()
            },
        })
    }
}
