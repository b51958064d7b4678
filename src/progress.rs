//! A progress bar for long loads (bytes read, rate, time left), drawn on
//! standard error only when it is a terminal; otherwise nothing is shown.

use std::io::IsTerminal;
use std::sync::Mutex;
use std::time::Duration;

use crescendo_data::progress::{set_sink, Event};
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// Files smaller than this load too fast for a bar to help.
const MIN_BYTES: u64 = 32 << 20;

/// Install the bar when standard error is a terminal.
pub fn install() {
    if !std::io::stderr().is_terminal() {
        return;
    }
    let bar: Mutex<Option<ProgressBar>> = Mutex::new(None);
    set_sink(Box::new(move |event| {
        let Ok(mut slot) = bar.lock() else { return };
        match event {
            Event::Begin { name, total } => {
                if total < MIN_BYTES {
                    return;
                }
                let style = ProgressStyle::with_template(
                    "{msg} {bar:30} {bytes}/{total_bytes} {bytes_per_sec} {eta} left",
                )
                .unwrap_or_else(|_| ProgressStyle::default_bar());
                let b = ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::stderr())
                    .with_style(style)
                    .with_message(format!("reading {}", crescendo_diag::terminal_safe(name)));
                b.enable_steady_tick(Duration::from_millis(200));
                *slot = Some(b);
            }
            Event::Advance(n) => {
                if let Some(b) = slot.as_ref() {
                    b.inc(n);
                }
            }
            Event::End => {
                if let Some(b) = slot.take() {
                    b.finish_and_clear();
                }
            }
        }
    }));
}
