//! Planning reads only through the I/O interface it is given: a view cache
//! kept in memory by the caller serves the second plan, the load report
//! comes back with the plan, and planning writes no file.

use std::collections::BTreeMap;
use std::fs::File;
use std::path::{Path, PathBuf};
use std::time::Duration;

use crescendo_data::files::{OpenError, ReadAt};
use crescendo_diag::Source;
use crescendo_plan::io::{Database, Disk, Io, PluginFile, ViewCache};
use crescendo_plan::{plan_story_with, Options};
use crescendo_plugin_host::{Plugin, PluginError};
use crescendo_sql::SessionError;

/// A view cache in memory; no plugins, no databases.
#[derive(Default)]
struct Memory {
    entries: BTreeMap<(String, String), Vec<u8>>,
    disk: Disk,
}

impl ViewCache for Memory {
    fn content_hash(&mut self, _: &Path, file: &File) -> std::io::Result<String> {
        crescendo_plan::cache::hash_reader(ReadAt::new(file, 0))
    }

    fn get(&self, kind: &str, key: &str) -> Option<Vec<u8>> {
        self.entries.get(&(kind.into(), key.into())).cloned()
    }

    fn put(&mut self, kind: &str, key: &str, json: Vec<u8>) {
        self.entries.insert((kind.into(), key.into()), json);
    }
}

#[allow(clippy::result_large_err)]
impl Io for Memory {
    fn confine(&self, dir: &Path, written: &str) -> Result<PathBuf, String> {
        self.disk.confine(dir, written)
    }
    fn file_len(&self, path: &Path) -> Option<u64> {
        self.disk.file_len(path)
    }
    fn open(&self, dir: Option<&Path>, path: &Path) -> Result<File, OpenError> {
        self.disk.open(dir, path)
    }
    fn load_plugin(&mut self, _: &PluginFile) -> Result<Plugin, PluginError> {
        Err(PluginError::Unreadable("no plugins here".into()))
    }
    fn env_var(&self, _: &str) -> Option<String> {
        None
    }
    fn connect(&mut self, _: &str, _: Duration) -> Result<Box<dyn Database>, SessionError> {
        Err(SessionError {
            message: "no databases here".into(),
            source_problem: false,
        })
    }
    fn cache(&mut self) -> Option<&mut dyn ViewCache> {
        Some(self)
    }
}

#[test]
fn the_view_cache_and_the_report_go_through_the_interface() {
    let dir = std::env::temp_dir().join(format!("crescendo-plan-io-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(
        dir.join("trips.csv"),
        "month,route,riders\n2024-01,A,5\n2024-01,B,3\n2024-02,A,6\n",
    )
    .unwrap();
    let story = Source::file(
        "t.cresc",
        "story \"s\"\ndata trips from \"trips.csv\"\n\
         view totals = trips\n  | by route: riders = sum(riders)\n\
         frame \"a\" {\n  bars totals: category route, value riders\n}\n",
    );
    let mut io = Memory::default();
    let first = plan_story_with(&story, &dir, &Options::default(), &mut io)
        .unwrap_or_else(|d| panic!("{d:#?}"));
    assert_eq!(first.report.streamed, ["trips"]);
    assert_eq!(first.report.computed_views, ["totals"]);
    assert!(first.report.cached_views.is_empty());
    // the cache holds the file's schema and the view's prefix, by key
    assert!(io.entries.keys().any(|(k, _)| k == "data"));
    assert!(io.entries.keys().any(|(k, _)| k == "views"));
    let second = plan_story_with(&story, &dir, &Options::default(), &mut io)
        .unwrap_or_else(|d| panic!("{d:#?}"));
    assert_eq!(second.report.cached_views, ["totals"]);
    assert!(second.report.computed_views.is_empty());
    assert_eq!(first.plan, second.plan);
    assert_eq!(first.report.cache_keys, second.report.cache_keys);
    // planning wrote nothing beside the story's data
    let files: Vec<String> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(files, ["trips.csv"]);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn plugins_and_databases_are_reached_through_the_interface() {
    let dir = std::env::temp_dir().join(format!("crescendo-plan-io2-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let story = Source::file(
        "t.cresc",
        "story \"s\"\nuse plugin \"libx.so\" as x\n\
         data d from table \"t\" via DB_URL\n\
         frame \"a\" {\n  table d\n}\n",
    );
    let errs = match plan_story_with(&story, &dir, &Options::default(), &mut Memory::default()) {
        Ok(_) => panic!("planned without a plugin or a database"),
        Err(d) => d,
    };
    let messages: Vec<&str> = errs.iter().map(|d| d.message.as_str()).collect();
    assert!(
        messages.iter().any(|m| m.contains("no plugins here")),
        "{messages:#?}"
    );
    // the environment is the interface's: DB_URL is "not set" there
    assert!(
        messages.iter().any(|m| m.contains("`DB_URL` is not set")),
        "{messages:#?}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}
