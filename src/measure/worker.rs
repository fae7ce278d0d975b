//! The measuring side of an isolated sweep. `framecost sweep` measures each workload in a
//! child process of its own (see [`super::supervise`]) so that a design that runs away —
//! loops for hours, allocates past the memory it was allowed, aborts — costs one failed
//! point instead of the whole sweep: the parent can kill the child and start another one
//! where it stopped.
//!
//! The child is the same `framecost sweep` command line with [`ENV`] set to an [`Order`]
//! (JSON): which workload, which run folder, the parent's clock calibration, and where to
//! resume. It writes its records to the run's `points.jsonl` like an in-process sweep, and
//! tells the parent where it is over a pipe, one short text line per event:
//!
//! | line | meaning |
//! |---|---|
//! | `S <size>` | a size of the sweep starts (its value: rows, or the swept axis's value) |
//! | `A <design> <size> <limit ms> <what>` | a run of design number `<design>` starts and may last `<limit ms>` |
//! | `a` | that run ended |
//! | `P <design> <size> <samples>` | progress of a point |
//! | `D` | a point is finished (measured, skipped or failed) |
//!
//! Lines are formatted into a stack buffer and written with one `write(2)`: nothing is
//! allocated, and none of it happens inside a timed region (the runner arms and reports
//! between runs).

use super::runner::Progress;
use crate::results::{ClockInfo, SkipInfo};
use std::io::Write;
use std::path::PathBuf;
use std::sync::atomic::{AtomicI32, Ordering};

/// The environment variable that makes `framecost sweep` a measuring child.
pub const ENV: &str = "FRAMECOST_WORKER";

/// What the parent asks one child to do.
#[derive(Debug, Clone, serde::Serialize, serde::Deserialize)]
pub struct Order {
    /// The run folder (its `points.jsonl` already holds the run's header).
    pub dir: PathBuf,
    /// Position of the workload among the command line's workloads.
    pub workload: usize,
    /// Its spec's hash as the parent read it: a file edited since is refused.
    pub spec_hash: String,
    /// The file descriptor of the pipe's writing end.
    pub fd: i32,
    /// The parent's clock calibration (the child does not calibrate again).
    pub clock: ClockInfo,
    /// The memory the child may use (bytes), set as its `RLIMIT_DATA` by the parent.
    pub allowance: Option<u64>,
    /// Where to start, when an earlier child of this workload ended abnormally.
    pub resume: Option<Resume>,
}

/// Where a workload's sweep starts again after its measuring process ended abnormally.
#[derive(Debug, Clone, Default, serde::Serialize, serde::Deserialize)]
pub struct Resume {
    /// Position in the plan's sizes of the size to start at; the records of this size and
    /// later ones were removed from `points.jsonl`, those of earlier sizes are kept.
    pub from: usize,
    /// Seconds the workload had already run (for its whole-run budget).
    pub elapsed_s: f64,
    /// Designs (by position) that failed at that size, with why: written there as failed
    /// points, and not run again at larger sizes.
    pub failed: Vec<(usize, SkipInfo)>,
}

/// The order in the environment, if this process is a measuring child.
pub fn order() -> Option<Result<Order, String>> {
    let text = std::env::var(ENV).ok()?;
    Some(serde_json::from_str(&text).map_err(|e| format!("{ENV} is not a measuring order: {e}")))
}

static FD: AtomicI32 = AtomicI32::new(-1);

/// Report over `fd` from now on. The descriptor is marked close-on-exec so that programs
/// the child starts (program designs) do not hold the pipe open after the child ends.
pub fn connect(fd: i32) {
    // SAFETY: fcntl on a descriptor number has no memory effects; a bad fd returns -1.
    unsafe {
        libc::fcntl(fd, libc::F_SETFD, libc::FD_CLOEXEC);
    }
    FD.store(fd, Ordering::SeqCst);
}

/// True when this process reports to a parent.
pub fn connected() -> bool {
    FD.load(Ordering::Relaxed) >= 0
}

/// Write one line to the parent, if there is one; nothing is allocated.
fn say(args: std::fmt::Arguments) {
    let fd = FD.load(Ordering::Relaxed);
    if fd < 0 {
        return;
    }
    let mut buf = [0u8; 256];
    let len = {
        let mut cur = &mut buf[..];
        if cur.write_fmt(args).is_err() {
            // Too long: keep what fitted and end the line.
            buf[255] = b'\n';
            256
        } else {
            256 - cur.len()
        }
    };
    let mut done = 0;
    while done < len {
        // SAFETY: writes from our own buffer; a broken pipe (the parent gone) returns -1.
        let n = unsafe { libc::write(fd, buf[done..len].as_ptr().cast(), len - done) };
        if n <= 0 {
            if n < 0 && std::io::Error::last_os_error().kind() == std::io::ErrorKind::Interrupted {
                continue;
            }
            return;
        }
        done += n as usize;
    }
}

/// A size starts.
pub fn size_started(size: u64) {
    say(format_args!("S {size}\n"));
}

/// A run of design `design` at `size` starts and may last `limit`.
pub fn armed(design: usize, size: u64, limit: std::time::Duration, what: &str) {
    say(format_args!("A {design} {size} {} {what}\n", limit.as_millis()));
}

/// The run armed last ended.
pub fn disarmed() {
    say(format_args!("a\n"));
}

/// Progress sent to the parent, which draws it.
pub struct PipeProgress;

impl Progress for PipeProgress {
    fn point(&self, _workload: &str, rows: u64, design: usize, _name: &str, samples: usize) {
        say(format_args!("P {design} {rows} {samples}\n"));
    }
    fn point_done(&self) {
        say(format_args!("D\n"));
    }
    fn rewound(&self, kept: usize) {
        say(format_args!("R {kept}\n"));
    }
}

/// One line the parent read, parsed.
#[derive(Debug, Clone, PartialEq)]
pub enum Event {
    Size(u64),
    Armed { design: usize, size: u64, limit_ms: u64, what: String },
    Disarmed,
    Point { design: usize, size: u64, samples: usize },
    Done,
    /// A size is measured again (`again.rs`): the workload keeps `kept` points.
    Rewound(usize),
}

/// Parse one line of the protocol; `None` for anything else.
pub fn parse(line: &str) -> Option<Event> {
    let mut it = line.splitn(5, ' ');
    let kind = it.next()?;
    let mut num = || it.next().and_then(|x| x.trim().parse::<u64>().ok());
    match kind.trim() {
        "S" => Some(Event::Size(num()?)),
        "A" => {
            let (design, size, limit_ms) = (num()? as usize, num()?, num()?);
            let what = it.next().unwrap_or("a run").trim().to_string();
            Some(Event::Armed { design, size, limit_ms, what })
        }
        "a" => Some(Event::Disarmed),
        "P" => Some(Event::Point { design: num()? as usize, size: num()?, samples: num()? as usize }),
        "D" => Some(Event::Done),
        "R" => Some(Event::Rewound(num()? as usize)),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_line_the_child_writes_parses_back() {
        assert_eq!(parse("S 4096"), Some(Event::Size(4096)));
        assert_eq!(parse("A 2 8192 5000 the first run"), Some(Event::Armed { design: 2, size: 8192, limit_ms: 5000, what: "the first run".into() }));
        assert_eq!(parse("a"), Some(Event::Disarmed));
        assert_eq!(parse("P 1 64 12"), Some(Event::Point { design: 1, size: 64, samples: 12 }));
        assert_eq!(parse("D"), Some(Event::Done));
        assert_eq!(parse("R 17"), Some(Event::Rewound(17)));
        assert_eq!(parse("A 1 x 5 y"), None);
        assert_eq!(parse(""), None);
    }
}
