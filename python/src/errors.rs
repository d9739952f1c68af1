//! Errors as Python exceptions, and long work that releases the
//! interpreter and stops on Ctrl-C.

use std::{
    any::Any,
    io::ErrorKind,
    panic::{catch_unwind, resume_unwind, AssertUnwindSafe},
    path::PathBuf,
    sync::{
        atomic::{AtomicBool, Ordering},
        Condvar, Mutex,
    },
    time::Duration,
};

use pyo3::{
    exceptions::{
        PyFileExistsError, PyFileNotFoundError, PyIsADirectoryError,
        PyNotADirectoryError, PyOSError, PyPermissionError, PyRuntimeError,
        PyValueError,
    },
    prelude::*,
};

/// An error as the command reports it: one line, the error and its
/// causes, outermost first (the command prints this after
/// `lexiclade: `). A failure to open, read or write a file becomes an
/// `OSError` (of the subclass its kind calls for), anything else a
/// `ValueError`.
pub fn to_py(err: impl Into<anyhow::Error>) -> PyErr {
    let err: anyhow::Error = err.into();
    let message = format!("{err:#}").replace('\n', " ");
    let io = err
        .chain()
        .find_map(|cause| cause.downcast_ref::<std::io::Error>())
        .map(std::io::Error::kind);
    match io {
        Some(ErrorKind::NotFound) => PyFileNotFoundError::new_err(message),
        Some(ErrorKind::PermissionDenied) => {
            PyPermissionError::new_err(message)
        }
        Some(ErrorKind::AlreadyExists) => PyFileExistsError::new_err(message),
        Some(ErrorKind::IsADirectory) => PyIsADirectoryError::new_err(message),
        Some(ErrorKind::NotADirectory) => {
            PyNotADirectoryError::new_err(message)
        }
        Some(_) => PyOSError::new_err(message),
        None => PyValueError::new_err(message),
    }
}

/// An error of an output that exists: the command's message, with the
/// keyword argument in place of its flag, as a `FileExistsError`; other
/// errors as [`to_py`] makes them.
pub fn output_error(err: anyhow::Error) -> PyErr {
    let message = format!("{err:#}");
    if message.contains("(use --force to replace it)") {
        let message = message.replace("--force", "force=True");
        return PyFileExistsError::new_err(message);
    }
    to_py(err)
}

/// A `ValueError` with `message`.
pub fn value_error(message: impl Into<String>) -> PyErr {
    PyValueError::new_err(message.into())
}

/// The payload of the unwinding that stops work on Ctrl-C; raised with
/// [`resume_unwind`], so the panic hook never runs and nothing is printed.
struct Interrupted;

/// Set when the user pressed Ctrl-C; the work polls it from the progress
/// callbacks the libraries call now and then.
#[derive(Default)]
pub struct Stop(AtomicBool);

impl Stop {
    /// Unwinds out of the library call if the work is to stop. Call it
    /// only from progress callbacks of the work given to [`interruptible`]
    /// on the thread it runs on.
    pub fn check(&self) {
        if self.0.load(Ordering::Relaxed) {
            resume_unwind(Box::new(Interrupted));
        }
    }
}

/// How often the calling thread looks for Ctrl-C while work runs.
const POLL: Duration = Duration::from_millis(50);

/// Runs `work` on a thread of its own with the interpreter released, so
/// that other Python threads run meanwhile. The calling thread checks for
/// signals every [`POLL`]; on Ctrl-C the work's next call of
/// [`Stop::check`] ends it, and the `KeyboardInterrupt` is raised here.
pub fn interruptible<T: Send>(
    py: Python<'_>,
    work: impl FnOnce(&Stop) -> T + Send,
) -> PyResult<T> {
    let stop = Stop::default();
    let done = (Mutex::new(false), Condvar::new());
    let wait = |timeout: Option<Duration>| -> bool {
        let (lock, signal) = &done;
        let guard = lock.lock().unwrap_or_else(|e| e.into_inner());
        let guard = match timeout {
            Some(t) => {
                signal
                    .wait_timeout_while(guard, t, |finished| !*finished)
                    .unwrap_or_else(|e| e.into_inner())
                    .0
            }
            None => signal
                .wait_while(guard, |finished| !*finished)
                .unwrap_or_else(|e| e.into_inner()),
        };
        *guard
    };
    std::thread::scope(|scope| {
        let worker = scope.spawn(|| {
            let result = catch_unwind(AssertUnwindSafe(|| work(&stop)));
            let (lock, signal) = &done;
            *lock.lock().unwrap_or_else(|e| e.into_inner()) = true;
            signal.notify_all();
            result
        });
        let mut interrupt = None;
        while !py.detach(|| wait(Some(POLL))) {
            if let Err(e) = py.check_signals() {
                stop.0.store(true, Ordering::Relaxed);
                py.detach(|| wait(None));
                interrupt = Some(e);
                break;
            }
        }
        let result = worker.join().unwrap_or_else(|payload| Err(payload));
        match (result, interrupt) {
            // Stopped, or finished just before it could be: the user
            // asked to stop either way.
            (Ok(_), Some(e)) => Err(e),
            (Err(payload), Some(e)) if payload.is::<Interrupted>() => Err(e),
            (Ok(value), None) => Ok(value),
            (Err(payload), _) => Err(PyRuntimeError::new_err(format!(
                "internal error: {}",
                panic_text(&payload)
            ))),
        }
    })
}

fn panic_text(payload: &Box<dyn Any + Send>) -> String {
    if let Some(s) = payload.downcast_ref::<&str>() {
        s.to_string()
    } else if let Some(s) = payload.downcast_ref::<String>() {
        s.clone()
    } else {
        "a panic".to_string()
    }
}

/// One path (a `str` or an `os.PathLike`) or a sequence of them.
pub fn path_list(obj: &Bound<'_, PyAny>) -> PyResult<Vec<PathBuf>> {
    if let Ok(one) = obj.extract::<PathBuf>() {
        return Ok(vec![one]);
    }
    obj.extract::<Vec<PathBuf>>()
}

/// The paths joined as the command lists them in messages.
pub fn display_list(paths: &[PathBuf]) -> String {
    paths
        .iter()
        .map(|p| p.display().to_string())
        .collect::<Vec<_>>()
        .join(", ")
}
