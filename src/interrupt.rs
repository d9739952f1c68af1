//! What happens on an interrupt or a request to stop (SIGINT or Ctrl-C,
//! SIGTERM, SIGHUP): every temporary output still being written is
//! removed, so that previous outputs stay as they were and nothing
//! half-written is left, and the process exits with 128 plus the signal's
//! number, as shells expect (130, 143 and 129).
//!
//! Outputs register their temporary paths here while they are being
//! written ([`AtomicDir`](crate::atomic::AtomicDir),
//! [`AtomicFile`](crate::atomic::AtomicFile)); the handler deletes what
//! is registered at the moment the signal arrives. An output being moved
//! into place holds [`hold`] meanwhile, and the handler waits for it: the
//! commit either finishes or never starts, and the handler never deletes
//! a temporary path that briefly holds the previous output.
//!
//! On Unix the handler is a `sigaction` handler that only writes the
//! signal's number into a pipe (the one thing a signal handler may safely
//! do); a thread reading the pipe does the cleanup. A SIGHUP that was
//! ignored when the process started (`nohup`) stays ignored. Elsewhere
//! only Ctrl-C is handled.

use std::path::{Path, PathBuf};
use std::sync::{Mutex, MutexGuard};

static PENDING: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

/// Held while an output is moved into place and while the handler
/// cleans up, so that the two never overlap.
static COMMIT: Mutex<()> = Mutex::new(());

/// The exit code after SIGINT (128 + 2).
pub const EXIT_CODE: i32 = 130;

/// The exit code after a signal: 128 plus its number, as shells report a
/// process that a signal ended.
pub fn exit_code(signal: i32) -> i32 {
    128 + signal
}

/// Installs the handler; later calls do nothing.
pub fn install() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(imp::install);
}

/// Removes every registered path, prints one line and exits with
/// `128 + signal`.
fn clean_up_and_exit(signal: i32, name: &str) -> ! {
    // Wait for a commit in progress; keep the lock until the exit, so
    // that no commit starts after the cleanup.
    let _commit = COMMIT.lock().unwrap_or_else(|e| e.into_inner());
    let pending = PENDING.lock().map(|p| p.clone()).unwrap_or_default();
    for path in pending {
        match std::fs::symlink_metadata(&path) {
            Ok(meta) if meta.is_dir() => {
                let _ = std::fs::remove_dir_all(&path);
            }
            Ok(_) => {
                let _ = std::fs::remove_file(&path);
            }
            Err(_) => {}
        }
    }
    eprintln!(
        "lexiclade: stopped by {name}; unfinished outputs were removed, \
         earlier ones left as they were"
    );
    std::process::exit(exit_code(signal));
}

/// Keeps the handler from running until the guard is dropped (it waits).
pub fn hold() -> MutexGuard<'static, ()> {
    COMMIT.lock().unwrap_or_else(|e| e.into_inner())
}

/// Registers a temporary path until the returned guard is dropped.
pub fn register(path: &Path) -> Registration {
    if let Ok(mut p) = PENDING.lock() {
        p.push(path.to_path_buf());
    }
    Registration { path: path.to_path_buf() }
}

/// Keeps a temporary path registered; unregisters it on drop.
pub struct Registration {
    path: PathBuf,
}

impl Drop for Registration {
    fn drop(&mut self) {
        if let Ok(mut p) = PENDING.lock() {
            if let Some(k) = p.iter().position(|q| q == &self.path) {
                p.swap_remove(k);
            }
        }
    }
}

#[cfg(unix)]
mod imp {
    use std::sync::atomic::{AtomicI32, Ordering};

    /// The pipe's writing end, for the signal handler.
    static WRITE_END: AtomicI32 = AtomicI32::new(-1);

    /// The signals handled, with the names the message gives them.
    const SIGNALS: [(libc::c_int, &str); 3] = [
        (libc::SIGINT, "an interrupt (SIGINT)"),
        (libc::SIGTERM, "SIGTERM"),
        (libc::SIGHUP, "SIGHUP"),
    ];

    /// The signal handler: writes the signal's number into the pipe and
    /// nothing else (write(2) is async-signal-safe), keeping `errno`.
    extern "C" fn on_signal(signal: libc::c_int) {
        let saved = std::io::Error::last_os_error().raw_os_error();
        let byte = signal as u8;
        let fd = WRITE_END.load(Ordering::Relaxed);
        // SAFETY: `fd` is the pipe's writing end, open for the process's
        // life; `byte` outlives the call.
        unsafe {
            libc::write(fd, (&byte as *const u8).cast(), 1);
        }
        if let Some(code) = saved {
            set_errno(code);
        }
    }

    #[cfg(any(target_os = "linux", target_os = "android"))]
    fn set_errno(code: libc::c_int) {
        // SAFETY: the calling thread's errno location is always valid.
        unsafe { *libc::__errno_location() = code }
    }

    #[cfg(any(target_os = "macos", target_os = "ios", target_os = "freebsd"))]
    fn set_errno(code: libc::c_int) {
        // SAFETY: the calling thread's errno location is always valid.
        unsafe { *libc::__error() = code }
    }

    #[cfg(not(any(
        target_os = "linux",
        target_os = "android",
        target_os = "macos",
        target_os = "ios",
        target_os = "freebsd"
    )))]
    fn set_errno(_code: libc::c_int) {}

    pub fn install() {
        let mut fds = [0 as libc::c_int; 2];
        // SAFETY: `fds` has room for the two descriptors.
        if unsafe { libc::pipe(fds.as_mut_ptr()) } != 0 {
            return;
        }
        for fd in fds {
            // SAFETY: plain descriptor flag calls on descriptors we own.
            unsafe {
                libc::fcntl(fd, libc::F_SETFD, libc::FD_CLOEXEC);
            }
        }
        WRITE_END.store(fds[1], Ordering::Relaxed);
        let read_end = fds[0];
        let spawned = std::thread::Builder::new()
            .name("signals".into())
            .spawn(move || loop {
                let mut byte = 0u8;
                // SAFETY: reads one byte into `byte` from our pipe.
                let n = unsafe {
                    libc::read(read_end, (&mut byte as *mut u8).cast(), 1)
                };
                if n == 1 {
                    let signal = libc::c_int::from(byte);
                    let name = SIGNALS
                        .iter()
                        .find(|(s, _)| *s == signal)
                        .map_or("a signal", |(_, n)| n);
                    super::clean_up_and_exit(signal, name);
                }
                if n == 0 {
                    return;
                }
            });
        if spawned.is_err() {
            return;
        }
        for (signal, _) in SIGNALS {
            // SAFETY: `action` is fully initialised before use; the
            // handler only calls async-signal-safe functions.
            unsafe {
                let mut old: libc::sigaction = std::mem::zeroed();
                if signal == libc::SIGHUP
                    && libc::sigaction(signal, std::ptr::null(), &mut old) == 0
                    && old.sa_sigaction == libc::SIG_IGN
                {
                    // Started under `nohup`: keep ignoring it.
                    continue;
                }
                let mut action: libc::sigaction = std::mem::zeroed();
                let handler: extern "C" fn(libc::c_int) = on_signal;
                action.sa_sigaction = handler as libc::sighandler_t;
                action.sa_flags = libc::SA_RESTART;
                libc::sigemptyset(&mut action.sa_mask);
                libc::sigaction(signal, &action, std::ptr::null_mut());
            }
        }
    }
}

#[cfg(not(unix))]
mod imp {
    pub fn install() {
        let _ = ctrlc::set_handler(|| {
            super::clean_up_and_exit(2, "an interrupt (Ctrl-C)")
        });
    }
}
