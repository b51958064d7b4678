//! `crescendo plugins`: list the plugins a story loads.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use crate::cli::{DataArgs, LimitArgs};
use crate::planning::load_plan;

pub fn run(story: &Path, allow_paths: Vec<PathBuf>, color: bool) -> ExitCode {
    let none = DataArgs {
        data: Vec::new(),
        no_plugins: false,
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
                say!(
                    "{alias}: {} {} (plugin ABI {}), forms: {}\n  {}\n  sha256 {}",
                    i.name,
                    i.version,
                    i.abi_version,
                    i.forms.join(", "),
                    i.path.display(),
                    i.sha256
                );
            }
            ExitCode::SUCCESS
        }
        Err(code) => code,
    }
}
