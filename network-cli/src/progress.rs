//! Progress bars for the library's progress callback.

use std::sync::Mutex;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use network_core::progress::Progress;

/// One bar per library stage, drawn on standard error; nothing when quiet.
/// Warnings ([`Bars::warn`]) go to standard error even when quiet; results
/// go to standard output (the commands print them).
pub struct Bars {
    quiet: bool,
    bar: Mutex<Option<ProgressBar>>,
}

impl Bars {
    /// Bars, or silence when `quiet`.
    pub fn new(quiet: bool) -> Bars {
        Bars {
            quiet,
            bar: Mutex::new(None),
        }
    }

    /// Prints a progress line to standard error unless quiet, above any
    /// bar.
    pub fn note(&self, msg: &str) {
        if self.quiet {
            return;
        }
        self.line(msg);
    }

    /// Prints a warning to standard error, quiet or not, above any bar.
    pub fn warn(&self, msg: &str) {
        self.line(&format!("warning: {msg}"));
    }

    fn line(&self, msg: &str) {
        match self.bar.lock().ok().and_then(|b| b.clone()) {
            Some(b) => b.println(msg),
            None => eprintln!("{msg}"),
        }
    }
}

impl Progress for Bars {
    fn start(&self, stage: &str, total: u64) {
        if self.quiet {
            return;
        }
        let bar = if total > 0 {
            ProgressBar::new(total)
        } else {
            ProgressBar::new_spinner()
        };
        bar.set_draw_target(ProgressDrawTarget::stderr());
        let style = ProgressStyle::with_template(
            "{prefix:>12} [{bar:32}] {pos}/{len} {elapsed_precise} (eta {eta})",
        )
        .unwrap_or_else(|_| ProgressStyle::default_bar())
        .progress_chars("=> ");
        bar.set_style(style);
        bar.set_prefix(stage.to_string());
        if let Ok(mut b) = self.bar.lock() {
            if let Some(old) = b.take() {
                old.finish_and_clear();
            }
            *b = Some(bar);
        }
    }

    fn advance(&self, delta: u64) {
        if let Ok(b) = self.bar.lock()
            && let Some(bar) = b.as_ref()
        {
            bar.inc(delta);
        }
    }

    fn finish(&self) {
        if let Ok(mut b) = self.bar.lock()
            && let Some(bar) = b.take()
        {
            bar.finish_and_clear();
        }
    }
}
