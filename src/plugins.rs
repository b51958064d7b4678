//! `crescendo plugins`: list the plugins a story names. Without
//! `--load-plugins` nothing is loaded, so no plugin code runs: each file is
//! opened, checked against the allowed folders, hashed and compared with
//! its pin. With it, each plugin is loaded (from a private copy of the
//! bytes just hashed) and asked for its name, version and forms.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use crate::cli::{DataArgs, LimitArgs};
use crate::planning::load_plan;

pub fn run(story: &Path, allow_paths: Vec<PathBuf>, load_plugins: bool, color: bool) -> ExitCode {
    let none = DataArgs {
        data: Vec::new(),
        no_plugins: false,
        claims_footnote: false,
        inspect_plugins: !load_plugins,
        explain_plans: false,
        connections: Vec::new(),
        statement_timeout: 60.0,
        allow_paths,
        limits: LimitArgs::default(),
    };
    match load_plan(story, &none, None, color) {
        Ok(p) => {
            if p.plugins.is_empty() {
                say!("{} loads no plugins", story.display());
            }
            for (alias, plugin) in &p.plugins {
                let i = plugin.info();
                if plugin.is_loaded() {
                    say!(
                        "{alias}: {} {} (plugin ABI {}), forms: {}",
                        i.name,
                        i.version,
                        i.abi_version,
                        i.forms.join(", ")
                    );
                } else {
                    say!("{alias}: not loaded (--load-plugins runs its code to ask for its forms)");
                }
                say!("  {}", i.path.display());
                if plugin.real_path() != i.path {
                    say!("  file {}", plugin.real_path().display());
                }
                say!(
                    "  sha256 {}{}",
                    i.sha256,
                    if plugin.pinned() {
                        " (pinned by the story)"
                    } else {
                        " (not pinned)"
                    }
                );
            }
            ExitCode::SUCCESS
        }
        Err(code) => code,
    }
}
