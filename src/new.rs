//! `crescendo new`: profile a CSV file and write a starter story.

use std::path::Path;
use std::process::ExitCode;

pub fn run(_data: &Path, _out: Option<&Path>, _force: bool, _color: bool) -> ExitCode {
    ExitCode::from(1)
}
