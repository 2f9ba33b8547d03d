//! A [`Progress`] that calls a Python function, throttled.
//!
//! The library reports from the thread that runs the call and, in sweeps,
//! from worker threads, all while the interpreter lock is released. Each
//! report re-acquires the lock only when it is due: at the start and end of
//! a stage, and otherwise at most once per [`INTERVAL`]. The first exception
//! the callback raises is kept, further calls are skipped, and the exception
//! is raised once the library call returns (the library has no way to stop
//! a run half-way, so the run finishes first).

use std::sync::Mutex;
use std::time::{Duration, Instant};

use network_core::progress::Progress;
use pyo3::prelude::*;

/// Least time between two calls of the callback within a stage.
const INTERVAL: Duration = Duration::from_millis(100);

struct Stage {
    name: String,
    total: u64,
    done: u64,
    last_call: Option<Instant>,
}

/// Calls `callback(stage: str, done: int, total: int)`.
pub struct PyProgress {
    callback: Option<Py<PyAny>>,
    stage: Mutex<Stage>,
    error: Mutex<Option<PyErr>>,
}

impl PyProgress {
    /// A reporter calling `callback`, or a silent one for `None`.
    pub fn new(callback: Option<Py<PyAny>>) -> PyProgress {
        PyProgress {
            callback,
            stage: Mutex::new(Stage {
                name: String::new(),
                total: 0,
                done: 0,
                last_call: None,
            }),
            error: Mutex::new(None),
        }
    }

    /// Raises the first exception the callback raised, if any.
    pub fn take_error(&self) -> PyResult<()> {
        match self.error.lock() {
            Ok(mut e) => e.take().map_or(Ok(()), Err),
            Err(_) => Ok(()),
        }
    }

    fn failed(&self) -> bool {
        self.error.lock().map_or(true, |e| e.is_some())
    }

    /// Calls back with the stage's state when `force` or when due.
    fn report(&self, update: impl FnOnce(&mut Stage), force: bool) {
        let Some(cb) = &self.callback else { return };
        if self.failed() {
            return;
        }
        let (name, done, total) = {
            let Ok(mut s) = self.stage.lock() else { return };
            update(&mut s);
            let now = Instant::now();
            let due = force
                || s.last_call
                    .is_none_or(|t| now.duration_since(t) >= INTERVAL);
            if !due {
                return;
            }
            s.last_call = Some(now);
            (s.name.clone(), s.done, s.total)
        };
        Python::attach(|py| {
            if let Err(e) = cb.call1(py, (name, done, total))
                && let Ok(mut slot) = self.error.lock()
                && slot.is_none()
            {
                *slot = Some(e);
            }
        });
    }
}

impl Progress for PyProgress {
    fn start(&self, stage: &str, total: u64) {
        self.report(
            |s| {
                s.name = stage.to_string();
                s.total = total;
                s.done = 0;
            },
            true,
        );
    }

    fn advance(&self, delta: u64) {
        self.report(|s| s.done = s.done.saturating_add(delta), false);
    }

    fn finish(&self) {
        self.report(
            |s| {
                if s.total > 0 {
                    s.done = s.total;
                }
            },
            true,
        );
    }
}
