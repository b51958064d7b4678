//! Progress of long loads, for a display the command owns.
//!
//! The data crate only counts bytes; the `crescendo` command installs a sink
//! (a progress bar on a terminal) with [`set_sink`]. Without a sink every call
//! here is a no-op, so libraries and tests stay quiet.

use std::sync::OnceLock;

/// Report read bytes in steps of about this many.
pub const STEP: u64 = 1 << 20;

/// What a sink is told.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Event<'a> {
    /// A file of `total` bytes starts loading.
    Begin { name: &'a str, total: u64 },
    /// `bytes` more bytes were read (from any thread).
    Advance(u64),
    /// The load ended (successfully or not).
    End,
}

type Sink = Box<dyn Fn(Event<'_>) + Send + Sync>;

static SINK: OnceLock<Sink> = OnceLock::new();

/// Install the process-wide progress sink (the first call wins).
pub fn set_sink(sink: Sink) {
    let _ = SINK.set(sink);
}

pub(crate) fn advance(bytes: u64) {
    if let Some(s) = SINK.get() {
        s(Event::Advance(bytes));
    }
}

/// One load: `Begin` now, `End` when dropped.
pub(crate) struct Task(());

impl Task {
    pub(crate) fn begin(name: &str, total: u64) -> Task {
        if let Some(s) = SINK.get() {
            s(Event::Begin { name, total });
        }
        Task(())
    }
}

impl Drop for Task {
    fn drop(&mut self) {
        if let Some(s) = SINK.get() {
            s(Event::End);
        }
    }
}
