//! Temporary files and folders that must not outlive an interrupted run, and the
//! interruption flag itself.
//!
//! Every temporary output (a `.part` file beside an output, the typst build folder) is
//! registered here while it exists. When the command line receives SIGINT or SIGTERM it
//! sets [`request_interrupt`]; the long waits (the typst child) watch [`interrupted`]
//! and stop, so that the ordinary drop of the temporaries removes them. If the main
//! thread does not finish soon, [`remove_all`] removes whatever is still registered
//! before the process exits.

use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicI32, AtomicU64, Ordering};
use std::sync::Mutex;

static NEXT: AtomicU64 = AtomicU64::new(1);
static SIGNAL: AtomicI32 = AtomicI32::new(0);
static REGISTRY: Mutex<Vec<(u64, PathBuf, bool)>> = Mutex::new(Vec::new());

/// A registered temporary path; dropping it removes the registration (not the path:
/// its owner removes that).
#[derive(Debug)]
pub struct Registered(u64);

impl Drop for Registered {
    fn drop(&mut self) {
        if let Ok(mut r) = REGISTRY.lock() {
            r.retain(|(id, _, _)| *id != self.0);
        }
    }
}

/// Register a temporary file (`is_dir` false) or folder to be removed if the run is
/// interrupted before its owner removes or keeps it.
pub fn register(path: &Path, is_dir: bool) -> Registered {
    let id = NEXT.fetch_add(1, Ordering::Relaxed);
    if let Ok(mut r) = REGISTRY.lock() {
        r.push((id, path.to_path_buf(), is_dir));
    }
    Registered(id)
}

/// Record that the run was asked to stop by `signal` (its number, e.g. 2 for SIGINT).
pub fn request_interrupt(signal: i32) {
    SIGNAL.store(signal, Ordering::SeqCst);
}

/// The signal that asked the run to stop, if any.
pub fn interrupted() -> Option<i32> {
    match SIGNAL.load(Ordering::SeqCst) {
        0 => None,
        s => Some(s),
    }
}

/// Remove every registered temporary path (best effort); used when the process must
/// exit without unwinding.
pub fn remove_all() {
    let entries: Vec<(u64, PathBuf, bool)> = match REGISTRY.lock() {
        Ok(mut r) => std::mem::take(&mut *r),
        Err(_) => return,
    };
    for (_, p, is_dir) in entries {
        let _ = if is_dir {
            std::fs::remove_dir_all(&p)
        } else {
            std::fs::remove_file(&p)
        };
    }
}

/// The paths registered now (for tests and diagnostics).
pub fn registered() -> Vec<PathBuf> {
    REGISTRY
        .lock()
        .map(|r| r.iter().map(|(_, p, _)| p.clone()).collect())
        .unwrap_or_default()
}
