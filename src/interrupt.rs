//! What happens on an interrupt (SIGINT, Ctrl-C): every temporary output
//! still being written is removed, so that previous outputs stay as they
//! were and nothing half-written is left, and the process exits with
//! code 130 (128 + SIGINT), as shells expect.
//!
//! Outputs register their temporary paths here while they are being
//! written ([`AtomicDir`](crate::atomic::AtomicDir),
//! [`AtomicFile`](crate::atomic::AtomicFile)); the handler deletes what
//! is registered at the moment the signal arrives.

use std::path::{Path, PathBuf};
use std::sync::Mutex;

static PENDING: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

/// The exit code after an interrupt.
pub const EXIT_CODE: i32 = 130;

/// Installs the handler; later calls do nothing.
pub fn install() {
    let _ = ctrlc::set_handler(|| {
        let pending = PENDING.lock().map(|p| p.clone()).unwrap_or_default();
        for path in pending {
            if path.is_dir() {
                let _ = std::fs::remove_dir_all(&path);
            } else {
                let _ = std::fs::remove_file(&path);
            }
        }
        eprintln!("lexiclade: interrupted; nothing was written");
        std::process::exit(EXIT_CODE);
    });
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
