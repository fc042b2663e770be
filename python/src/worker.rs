//! A job on a worker thread while the calling thread waits with the GIL
//! released: every 100 ms it takes the GIL back to check Python's signals
//! (a keyboard interrupt asks the job to stop at its next step and raises
//! at once) and to write the job's progress lines to `sys.stderr` (so they
//! show in notebooks too). A panic on the worker becomes a `RuntimeError`,
//! never a crash of the interpreter.

use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::{channel, RecvTimeoutError, Sender};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use pyo3::exceptions::PyRuntimeError;
use pyo3::prelude::*;

use patchwise::job::{JobError, JobObserver};

/// A stage under way: its name, steps, and the next tenth to report.
struct Stage {
    what: String,
    total: usize,
    done: usize,
    next_tenth: usize,
    start: Instant,
}

/// The observer of a job run from Python: progress lines (when asked) go
/// to the waiting thread, which prints them; the cancel flag is set by a
/// keyboard interrupt.
struct Relay {
    progress: bool,
    lines: Mutex<Sender<String>>,
    cancel: AtomicBool,
    stage: Mutex<Option<Stage>>,
}

impl Relay {
    fn say(&self, text: String) {
        if self.progress {
            if let Ok(tx) = self.lines.lock() {
                let _ = tx.send(text);
            }
        }
    }
}

impl JobObserver for Relay {
    fn note(&self, message: &str) {
        self.say(format!("patchwise: {message}"));
    }

    fn stage_start(&self, what: &str, total: usize) {
        self.say(format!("patchwise: {what} ({total} steps)"));
        if let Ok(mut s) = self.stage.lock() {
            *s = Some(Stage {
                what: what.to_string(),
                total,
                done: 0,
                next_tenth: 1,
                start: Instant::now(),
            });
        }
    }

    fn stage_advance(&self, n: usize) {
        let mut line = None;
        if let Ok(mut guard) = self.stage.lock() {
            if let Some(s) = guard.as_mut() {
                s.done += n;
                if s.total > 0 && s.done * 10 >= s.next_tenth * s.total && s.next_tenth < 10 {
                    s.next_tenth = s.done * 10 / s.total + 1;
                    line = Some(format!(
                        "patchwise: {} {} %",
                        s.what,
                        100 * s.done / s.total
                    ));
                }
            }
        }
        if let Some(line) = line {
            self.say(line);
        }
    }

    fn stage_end(&self) {
        let ended = self.stage.lock().ok().and_then(|mut s| s.take());
        if let Some(s) = ended {
            self.say(format!(
                "patchwise: {} done in {:.1} s",
                s.what,
                s.start.elapsed().as_secs_f64()
            ));
        }
    }

    fn cancelled(&self) -> bool {
        self.cancel.load(Ordering::Relaxed)
    }
}

/// Write `line` to Python's `sys.stderr` (ignoring a stream that fails).
fn print_line(py: Python<'_>, line: &str) {
    if let Ok(stderr) = py.import("sys").and_then(|sys| sys.getattr("stderr")) {
        let _ = stderr.call_method1("write", (format!("{line}\n"),));
        let _ = stderr.call_method0("flush");
    }
}

/// Run `work` on a worker thread; wait for it with the GIL released.
pub fn run_job<T, F>(py: Python<'_>, progress: bool, work: F) -> PyResult<T>
where
    T: Send + 'static,
    F: FnOnce(&dyn JobObserver) -> Result<T, JobError> + Send + 'static,
{
    let (line_tx, line_rx) = channel::<String>();
    let relay = Arc::new(Relay {
        progress,
        lines: Mutex::new(line_tx),
        cancel: AtomicBool::new(false),
        stage: Mutex::new(None),
    });
    let (done_tx, done_rx) = channel();
    // Waited on with the GIL released, which asks for a shareable receiver.
    let done_rx = Mutex::new(done_rx);
    let worker_relay = Arc::clone(&relay);
    std::thread::Builder::new()
        .name("patchwise job".to_string())
        .spawn(move || {
            let outcome = work(worker_relay.as_ref());
            let _ = done_tx.send(outcome);
        })
        .map_err(|e| PyRuntimeError::new_err(format!("starting the job's thread: {e}")))?;
    loop {
        let got = py.detach(|| match done_rx.lock() {
            Ok(rx) => rx.recv_timeout(Duration::from_millis(100)),
            Err(_) => Err(RecvTimeoutError::Disconnected),
        });
        for line in line_rx.try_iter() {
            print_line(py, &line);
        }
        match got {
            Ok(outcome) => return outcome.map_err(super::job_error),
            Err(RecvTimeoutError::Timeout) => {
                if let Err(e) = py.check_signals() {
                    // The job stops at its next step and writes nothing.
                    relay.cancel.store(true, Ordering::Relaxed);
                    return Err(e);
                }
            }
            Err(RecvTimeoutError::Disconnected) => return Err(PyRuntimeError::new_err(
                "the job's thread stopped without a result (an internal error; please report it)",
            )),
        }
    }
}
