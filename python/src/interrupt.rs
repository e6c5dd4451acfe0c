//! Long library calls off the GIL, interruptible by Ctrl-C.
//!
//! The work runs on a thread of its own while the calling thread, with the GIL released, waits
//! for it and checks for signals every [`POLL`]. On Ctrl-C the work's cancel flag is set (the
//! library calls that take a stop hook end at their next window or item) and
//! `KeyboardInterrupt` is raised at once; work that cannot stop finishes in the background and
//! its result is dropped.

use pyo3::prelude::*;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{mpsc, Arc, Mutex};
use std::time::Duration;

/// How often a waiting call looks for Ctrl-C: short enough to feel immediate.
pub(crate) const POLL: Duration = Duration::from_millis(50);

/// Set when the caller gave up; long work checks it between windows or items.
#[derive(Clone, Default)]
pub(crate) struct Cancel(Arc<AtomicBool>);

impl Cancel {
    pub(crate) fn is_set(&self) -> bool {
        self.0.load(Ordering::Relaxed)
    }

    pub(crate) fn set(&self) {
        self.0.store(true, Ordering::Relaxed);
    }
}

/// Runs `work` on its own thread with the GIL released and returns its result, or raises
/// `KeyboardInterrupt` (or whatever a signal handler raised) after setting its cancel flag.
pub(crate) fn run<T, F>(py: Python<'_>, work: F) -> PyResult<T>
where
    T: Send + 'static,
    F: FnOnce(&Cancel) -> T + Send + 'static,
{
    let cancel = Cancel::default();
    let (tx, rx) = mpsc::channel();
    let flag = cancel.clone();
    std::thread::Builder::new()
        .name("cagerank".into())
        .spawn(move || {
            // The receiver is gone only if the caller was interrupted: nothing to report.
            let _ = tx.send(work(&flag));
        })
        .map_err(|e| crate::error(format!("cannot start a worker thread: {e}")))?;
    match receive(py, &Mutex::new(rx)) {
        Err(e) => {
            cancel.set();
            Err(e)
        }
        Ok(None) => Err(stopped()),
        Ok(Some(value)) => Ok(value),
    }
}

/// Waits for the next message with the GIL released, checking for signals every [`POLL`]:
/// `Ok(None)` once every sender is gone, `Err` if a signal handler raised (Ctrl-C).
pub(crate) fn receive<T: Send>(
    py: Python<'_>,
    rx: &Mutex<mpsc::Receiver<T>>,
) -> PyResult<Option<T>> {
    loop {
        let got = py.detach(|| {
            rx.lock()
                .unwrap_or_else(|poisoned| poisoned.into_inner())
                .recv_timeout(POLL)
        });
        match got {
            Ok(value) => return Ok(Some(value)),
            Err(mpsc::RecvTimeoutError::Timeout) => py.check_signals()?,
            Err(mpsc::RecvTimeoutError::Disconnected) => return Ok(None),
        }
    }
}

/// The worker thread ended without an answer: it panicked.
pub(crate) fn stopped() -> PyErr {
    pyo3::exceptions::PyRuntimeError::new_err(
        "cagerank: the computation stopped unexpectedly (a bug: please report it)",
    )
}
