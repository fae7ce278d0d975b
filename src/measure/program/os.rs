//! The operating-system side of running a program: reading its lines with a length cap,
//! writing without dying of SIGPIPE, killing its process group, reading its memory and CPU
//! time from /proc, and making what it printed safe and short to show.

use std::io::{BufRead, BufReader, Read, Write};
use std::process::ChildStdin;
use std::sync::mpsc;
use super::MAX_LINE;
use std::time::Duration;

/// Read capped lines from a worker's stdout into a channel until it closes.
pub fn read_lines(stdout: std::process::ChildStdout, tx: mpsc::Sender<Result<String, String>>) {
    let mut r = BufReader::new(stdout);
    loop {
        let mut buf = Vec::new();
        match (&mut r).take(MAX_LINE).read_until(b'\n', &mut buf) {
            Ok(0) => return,
            Ok(n) => {
                if buf.last() != Some(&b'\n') && n as u64 >= MAX_LINE {
                    let _ = tx.send(Err(format!("the worker sent a line longer than {} MiB", MAX_LINE >> 20)));
                    return;
                }
                let line = String::from_utf8_lossy(&buf).trim().to_string();
                if line.is_empty() {
                    continue;
                }
                if tx.send(Ok(line)).is_err() {
                    return;
                }
            }
            Err(e) => {
                let _ = tx.send(Err(format!("could not read the worker's stdout: {e}")));
                return;
            }
        }
    }
}

/// Write to a child's stdin without dying of SIGPIPE when it has gone (framecost restores
/// the default SIGPIPE action so `| head` ends it quietly): the signal is blocked on this
/// thread for the write, and one it raised is taken back before unblocking.
pub fn write_no_sigpipe(w: &mut ChildStdin, bytes: &[u8]) -> std::io::Result<()> {
    // SAFETY: plain signal-mask calls on this thread with valid, initialised sets.
    unsafe {
        let mut block: libc::sigset_t = std::mem::zeroed();
        let mut old: libc::sigset_t = std::mem::zeroed();
        libc::sigemptyset(&mut block);
        libc::sigaddset(&mut block, libc::SIGPIPE);
        libc::pthread_sigmask(libc::SIG_BLOCK, &block, &mut old);
        let r = w.write_all(bytes).and_then(|_| w.flush());
        if r.as_ref().is_err_and(|e| e.kind() == std::io::ErrorKind::BrokenPipe) {
            let zero = libc::timespec { tv_sec: 0, tv_nsec: 0 };
            libc::sigtimedwait(&block, std::ptr::null_mut(), &zero);
        }
        libc::pthread_sigmask(libc::SIG_SETMASK, &old, std::ptr::null_mut());
        r
    }
}

pub fn kill_group(pid: i32) {
    if pid > 0 {
        // SAFETY: kill has no memory effects; a negative pid names the child's own group.
        unsafe {
            libc::kill(-pid, libc::SIGKILL);
        }
    }
}

/// A field of `/proc/PID/status` in KiB (`VmHWM:`, `VmRSS:`).
pub fn status_kib(pid: i32, field: &str) -> Option<u64> {
    let text = std::fs::read_to_string(format!("/proc/{pid}/status")).ok()?;
    text.lines().find(|l| l.starts_with(field))?.split_whitespace().nth(1)?.parse().ok()
}

/// CPU time of every thread of a process (ns), from `/proc/PID/task/*/schedstat`.
pub fn task_cpu_ns(pid: i32) -> Option<u64> {
    let mut total = 0u64;
    let mut any = false;
    for e in std::fs::read_dir(format!("/proc/{pid}/task")).ok()?.flatten() {
        if let Ok(t) = std::fs::read_to_string(e.path().join("schedstat")) {
            if let Some(ns) = t.split_whitespace().next().and_then(|x| x.parse::<u64>().ok()) {
                total += ns;
                any = true;
            }
        }
    }
    any.then_some(total)
}

pub fn exit_text(status: libc::c_int) -> String {
    if libc::WIFEXITED(status) {
        format!("the program exited with status {}", libc::WEXITSTATUS(status))
    } else if libc::WIFSIGNALED(status) {
        format!("the program was ended by signal {}", libc::WTERMSIG(status))
    } else {
        format!("the program ended with wait status {status}")
    }
}

pub fn secs(d: Duration) -> String {
    crate::units::time_ns(d.as_secs_f64() * 1e9)
}

/// Text from a child made safe to print: control characters replaced, length capped.
pub fn clean(s: &str, max: usize) -> String {
    let t: String = s.chars().map(|c| if c.is_control() { ' ' } else { c }).collect();
    if t.chars().count() > max {
        format!("{}…", t.chars().take(max).collect::<String>())
    } else {
        t
    }
}

/// The last `n` lines of a child's text, each cleaned and indented.
pub fn clean_lines(s: &str, n: usize) -> String {
    let lines: Vec<&str> = s.lines().filter(|l| !l.trim().is_empty()).collect();
    lines[lines.len().saturating_sub(n)..].iter().map(|l| format!("  | {}", clean(l, 300))).collect::<Vec<_>>().join("\n")
}

pub fn short(s: &str) -> String {
    clean(s, 160)
}
