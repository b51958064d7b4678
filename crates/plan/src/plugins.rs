//! `use plugin "path" as NAME [sha256 "…"]`: a chart-form plugin loaded
//! explicitly (never from a search path), through the planner's I/O. The
//! charts plugins draw start with `draw` (see `forms/plugin.rs`).

use std::collections::BTreeMap;
use std::sync::Arc;

use crescendo_lang::ast::PluginDecl;
use crescendo_plugin_host::{Plugin, PluginError};

use crate::context::{Ctx, Outcome};
use crate::io::PluginFile;

/// The plugins a story loaded, by the name the story gave them.
pub type Plugins = BTreeMap<String, Arc<Plugin>>;

/// `use plugin ...`: load and check a plugin.
pub(crate) fn use_plugin(cx: &mut Ctx, plugins: &mut Plugins, d: &PluginDecl) -> Outcome<()> {
    let path = cx.confined(&d.path, "plugin")?;
    if plugins.contains_key(&d.alias.name) {
        return Err(cx.error(
            "duplicate-name",
            format!("a plugin named `{}` is already loaded", d.alias.name),
            d.alias.span.clone(),
            "second one here",
        ));
    }
    if cx.options.no_plugins {
        let r = cx
            .at(
                "plugin-refused",
                format!(
                    "plugin `{}` is not loaded: plugins are refused (--no-plugins)",
                    d.alias.name
                ),
                d.path.span.clone(),
                "refused",
            )
            .help("build without --no-plugins if you trust this plugin");
        return Err(cx.report(r));
    }
    let file = PluginFile {
        dir: cx.dir,
        path: &path,
        pin: d.pin.as_ref().map(|p| p.value.as_str()),
        inspect: cx.options.inspect_plugins,
    };
    match cx.io.load_plugin(&file) {
        Ok(p) => {
            plugins.insert(d.alias.name.clone(), Arc::new(p));
            Ok(())
        }
        Err(e) => {
            let span = match (&e, &d.pin) {
                (PluginError::ChecksumMismatch { .. }, Some(pin)) => pin.span.clone(),
                _ => d.path.span.clone(),
            };
            let r = cx
                .at(
                    "plugin",
                    format!(
                        "cannot use plugin `{}` ({}): {e}",
                        d.alias.name,
                        path.display()
                    ),
                    span,
                    "this plugin",
                )
                .note("plugins are native code running with your rights; load only ones you trust");
            Err(cx.report(r))
        }
    }
}
