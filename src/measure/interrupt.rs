//! Orderly interruption of a sweep: the first Ctrl-C (SIGINT) or SIGTERM asks the runner to
//! stop at its next safe point (between samples, never inside the timed region); a second
//! one ends the process at once with [`crate::exit::INTERRUPTED`].
//!
//! The handler only sets an atomic flag and writes a fixed message with `write(2)`, both
//! async-signal-safe; the runner polls [`requested`]. Installed by `sweep` only: the
//! read-back commands are short and keep the default behaviour.

use std::sync::atomic::{AtomicBool, AtomicI32, AtomicUsize, Ordering};

static STOP: AtomicBool = AtomicBool::new(false);
static SIGNALS: AtomicUsize = AtomicUsize::new(0);
/// The measuring child of an isolated sweep, if one runs ([`super::supervise`]).
static CHILD: AtomicI32 = AtomicI32::new(0);
/// A measuring child: the parent speaks to the user, the child says nothing.
static QUIET: AtomicBool = AtomicBool::new(false);

const FIRST: &[u8] = b"\nframecost: stopping at the next safe point and keeping every finished point (press Ctrl-C again to quit at once)\n";
const SECOND: &[u8] = b"\nframecost: quitting at once; the points written so far are kept\n";

extern "C" fn on_signal(_sig: libc::c_int) {
    let n = SIGNALS.fetch_add(1, Ordering::SeqCst);
    let child = CHILD.load(Ordering::SeqCst);
    let quiet = QUIET.load(Ordering::SeqCst);
    // SAFETY: write(2), kill(2) and _exit(2) are async-signal-safe; the buffers are static.
    unsafe {
        if n >= 1 {
            if child > 0 {
                libc::kill(-child, libc::SIGKILL);
            }
            if !quiet {
                libc::write(2, SECOND.as_ptr().cast(), SECOND.len());
            }
            libc::_exit(crate::exit::INTERRUPTED);
        }
        if child > 0 {
            // The child stops at its next safe point, as this process would.
            libc::kill(child, libc::SIGTERM);
        }
        if !quiet {
            libc::write(2, FIRST.as_ptr().cast(), FIRST.len());
        }
    }
    STOP.store(true, Ordering::SeqCst);
}

/// Route SIGINT and SIGTERM to the handler. Safe to call more than once.
pub fn install() {
    let handler: extern "C" fn(libc::c_int) = on_signal;
    for sig in [libc::SIGINT, libc::SIGTERM] {
        // SAFETY: a zeroed sigaction with a valid handler and an empty mask is well formed.
        unsafe {
            let mut sa: libc::sigaction = std::mem::zeroed();
            sa.sa_sigaction = handler as usize;
            libc::sigemptyset(&mut sa.sa_mask);
            sa.sa_flags = libc::SA_RESTART;
            libc::sigaction(sig, &sa, std::ptr::null_mut());
        }
    }
}

/// As [`install`], for a measuring child: no messages (its parent speaks to the user).
pub fn install_quiet() {
    QUIET.store(true, Ordering::SeqCst);
    install();
}

/// The measuring child the handler forwards signals to (0: none).
pub fn set_child(pid: i32) {
    CHILD.store(pid, Ordering::SeqCst);
}

/// True once a stop was asked for.
pub fn requested() -> bool {
    STOP.load(Ordering::Relaxed)
}

/// Ask for a stop from inside the program (tests, and the runner's own time limits).
pub fn request() {
    STOP.store(true, Ordering::SeqCst);
}
