//! The planning context: the story being planned, how to plan it, the I/O
//! it may do, and the diagnostics found so far.
//!
//! A step that fails returns `Err(Reported)`. [`Reported`] can only be made
//! here, by putting an error into the context, so holding one proves that
//! the failure was reported: no step fails silently, and the steps after it
//! do not report it again.

use std::path::{Path, PathBuf};
use std::sync::Arc;

use crescendo_diag::{has_errors, Diagnostic, Source};
use crescendo_lang::ast::{Span, Str};

use crate::io::Io;
use crate::options::Options;

/// Proof that an error was reported: the context's diagnostics hold at
/// least one error. Only [`Ctx`] makes it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Reported {
    _proof: (),
}

/// The result of a planning step whose failure was reported.
pub(crate) type Outcome<T> = Result<T, Reported>;

/// A point in the list of diagnostics, to ask whether errors came after it.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Checkpoint(usize);

/// What every planning step may use: the story, the options, the I/O, and
/// where diagnostics go.
pub(crate) struct Ctx<'a> {
    pub(crate) src: &'a Arc<Source>,
    /// The folder the story's paths are relative to.
    pub(crate) dir: &'a Path,
    pub(crate) options: &'a Options,
    pub(crate) io: &'a mut dyn Io,
    diags: Vec<Diagnostic>,
}

impl<'a> Ctx<'a> {
    pub(crate) fn new(
        src: &'a Arc<Source>,
        dir: &'a Path,
        options: &'a Options,
        io: &'a mut dyn Io,
        diags: Vec<Diagnostic>,
    ) -> Self {
        Ctx {
            src,
            dir,
            options,
            io,
            diags,
        }
    }

    /// An error located in the story (not reported yet: add notes and help,
    /// then [`Ctx::report`] it).
    pub(crate) fn at(
        &self,
        code: &'static str,
        message: impl Into<String>,
        span: Span,
        label: impl Into<String>,
    ) -> Diagnostic {
        Diagnostic::error(code, message).at(self.src, span, label)
    }

    /// Report an error located in the story.
    pub(crate) fn error(
        &mut self,
        code: &'static str,
        message: impl Into<String>,
        span: Span,
        label: impl Into<String>,
    ) -> Reported {
        let d = self.at(code, message, span, label);
        self.report(d)
    }

    /// Report an error located in the story, with the one help line that
    /// says how to fix it.
    pub(crate) fn error_with_help(
        &mut self,
        code: &'static str,
        message: impl Into<String>,
        span: Span,
        label: impl Into<String>,
        help: impl Into<String>,
    ) -> Reported {
        let d = self.at(code, message, span, label).help(help);
        self.report(d)
    }

    /// Report an error.
    pub(crate) fn report(&mut self, d: Diagnostic) -> Reported {
        debug_assert!(d.is_error(), "{d:?} is not an error");
        let is_error = d.is_error();
        self.diags.push(d);
        if is_error {
            Reported { _proof: () }
        } else {
            self.already_reported()
        }
    }

    /// Report an error unless the same error (message and place) was
    /// reported already: a text planned again (a carried title, an
    /// unfolded frame) is reported once.
    pub(crate) fn report_once(&mut self, d: Diagnostic) -> Reported {
        let seen = self
            .diags
            .iter()
            .any(|x| x.message == d.message && x.location() == d.location());
        if seen {
            self.already_reported()
        } else {
            self.report(d)
        }
    }

    /// Add a warning.
    pub(crate) fn warn(&mut self, d: Diagnostic) {
        self.diags.push(d);
    }

    /// Add diagnostics from a stage that collects its own; `Err` when one
    /// of them is an error.
    pub(crate) fn extend(&mut self, ds: Vec<Diagnostic>) -> Outcome<()> {
        let failed = has_errors(&ds);
        self.diags.extend(ds);
        if failed {
            Err(Reported { _proof: () })
        } else {
            Ok(())
        }
    }

    /// Run a stage that reports into a list of diagnostics and answers
    /// `None` after a failure (reported now, or earlier for a name whose
    /// item failed).
    pub(crate) fn collect<T>(
        &mut self,
        stage: impl FnOnce(&mut Vec<Diagnostic>) -> Option<T>,
    ) -> Outcome<T> {
        let mut ds = Vec::new();
        let out = stage(&mut ds);
        self.absorb(ds, out)
    }

    /// Take what a stage that reports into a list of diagnostics gave:
    /// its diagnostics, and its answer (`None` after a failure, see
    /// [`Ctx::collect`]).
    pub(crate) fn absorb<T>(&mut self, ds: Vec<Diagnostic>, out: Option<T>) -> Outcome<T> {
        let reported = self.extend(ds);
        match out {
            Some(t) => Ok(t),
            None => reported.and_then(|()| Err(self.already_reported())),
        }
    }

    /// A failure whose error was reported before (a name whose item
    /// failed). Holds only when an error is in the list; otherwise the
    /// missing report is a defect of the planner, reported as one.
    pub(crate) fn already_reported(&mut self) -> Reported {
        if !has_errors(&self.diags) {
            self.diags.push(Diagnostic::error(
                "internal",
                "a step of the planner failed without saying why",
            ));
        }
        Reported { _proof: () }
    }

    /// The file a story names (its data, house style or a plugin), when
    /// the story may read it; reports a located error when the path leaves
    /// the folders it may read (see `paths.rs`).
    pub(crate) fn confined(&mut self, file: &Str, what: &str) -> Outcome<PathBuf> {
        match self.io.confine(self.dir, &file.value) {
            Ok(path) => Ok(path),
            Err(why) => {
                let d = crate::paths::outside(self.src, file.span.clone(), what, &why);
                Err(self.report(d))
            }
        }
    }

    pub(crate) fn checkpoint(&self) -> Checkpoint {
        Checkpoint(self.diags.len())
    }

    /// `Err` when an error was reported since `cp`.
    pub(crate) fn errors_since(&self, cp: Checkpoint) -> Outcome<()> {
        if has_errors(self.diags.get(cp.0..).unwrap_or_default()) {
            Err(Reported { _proof: () })
        } else {
            Ok(())
        }
    }

    /// Every diagnostic reported.
    pub(crate) fn into_diagnostics(self) -> Vec<Diagnostic> {
        self.diags
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::io::Disk;

    fn with_ctx(f: impl FnOnce(&mut Ctx)) -> Vec<Diagnostic> {
        let src = Source::file("t.cresc", "story \"s\"\n");
        let options = Options::default();
        let mut io = Disk::new(&options);
        let mut cx = Ctx::new(&src, Path::new("."), &options, &mut io, Vec::new());
        f(&mut cx);
        cx.into_diagnostics()
    }

    #[test]
    fn a_failure_without_a_report_becomes_an_internal_error() {
        let diags = with_ctx(|cx| {
            assert!(cx.collect(|_| None::<()>).is_err());
        });
        assert_eq!(diags.len(), 1);
        assert_eq!(diags[0].code, "internal");
    }

    #[test]
    fn a_reported_failure_is_not_reported_again() {
        let diags = with_ctx(|cx| {
            let cp = cx.checkpoint();
            assert!(cx.errors_since(cp).is_ok());
            let _ = cx.error("type", "bad", 0..5, "here");
            assert!(cx.errors_since(cp).is_err());
            let cp = cx.checkpoint();
            assert!(cx.errors_since(cp).is_ok());
            // a name whose item failed: the earlier error stands for it
            assert!(cx.collect(|_| None::<()>).is_err());
            let _ = cx.extend(vec![Diagnostic::warning("w", "only a warning")]);
            assert!(cx.errors_since(cp).is_ok());
        });
        let codes: Vec<&str> = diags.iter().map(|d| d.code).collect();
        assert_eq!(codes, ["type", "w"]);
    }
}
