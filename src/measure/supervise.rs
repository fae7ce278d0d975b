//! The parent side of an isolated sweep: each workload is measured by a child process (the
//! same `framecost sweep` command line, told what to do by [`super::worker::Order`]) that
//! this module can kill and start again, so a runaway design becomes one failed point and
//! the sweep goes on.
//!
//! - **Runaways.** The child reports every run it starts and the run's limit (twice the
//!   point budget, at least the budget + 5 s: [`super::watchdog::limit_for`]); when a run
//!   passes it, the parent kills the child's process group.
//! - **Memory.** The child's `RLIMIT_DATA` is set to the memory a size may count on when it
//!   starts (never above a limit the user set): a step that allocates past it fails its
//!   allocation and the child aborts instead of the kernel's out-of-memory killer choosing
//!   a victim on the machine.
//! - **Where it was.** When the child ends abnormally (killed, aborted, crashed), the records
//!   of the size it was on are cut from `points.jsonl`, the design it was running is written
//!   there as a failed point with the reason, and a new child resumes at that size without
//!   it. When no design was running (the table for a size could not be built), every design
//!   fails at that size.
//! - **Signals.** The child has a process group of its own; the parent forwards the first
//!   Ctrl-C or SIGTERM as SIGTERM (the child stops at its next safe point and keeps its
//!   points) and a second one as SIGKILL ([`super::interrupt`]); a parent killed outright
//!   takes the child with it (`PR_SET_PDEATHSIG`).
//! - **Temp files.** The child's `TMPDIR` is a folder the parent removes at the end, so even
//!   a killed child leaves nothing behind.
//!
//! Cost: one process start, one reading of the spec and one warm-up lap per workload (and
//! per restart), and a short pipe write around each run — outside every timed region.

use super::runner::{Outcome, Progress, RunError};
use super::worker::{Event, Order, Resume};
use crate::plan::Plan;
use crate::results::writer::{RunWriter, WriteError};
use crate::results::{ClockInfo, EquivalenceStatus, Record, SkipCause, SkipInfo, SkipReason};
use std::io::Read;
use std::os::unix::process::{CommandExt, ExitStatusExt};
use std::path::Path;
use std::time::{Duration, Instant};

/// The run a child was inside when it was last heard from.
#[derive(Debug, Clone)]
struct Armed {
    design: usize,
    size: u64,
    limit: Duration,
    what: String,
    since: Instant,
}

/// What the parent saw of one child.
#[derive(Debug, Default)]
struct Watched {
    size: Option<u64>,
    armed: Option<Armed>,
    /// The parent killed it for overrunning `armed`'s limit, after this long.
    runaway: Option<Duration>,
}

/// Measure workload `index` (`plan`) in child processes, resuming after abnormal ends, and
/// return what its sweep ended with. `out`'s results are read back from disk afterwards.
pub fn sweep(plan: &Plan, index: usize, clock: &ClockInfo, out: &mut RunWriter, progress: &dyn Progress) -> Result<Outcome, RunError> {
    let dir = out.dir().to_path_buf();
    let points = dir.join("points.jsonl");
    let start = std::fs::metadata(&points).map(|m| m.len()).map_err(|e| io_error(&points, e))?;
    let temp = crate::patterns::storage::TempFolder::create().map_err(|e| io_error(&points, e))?;
    let began = Instant::now();
    let mut resume: Option<Resume> = None;
    let mut restarts = 0;
    let result = loop {
        let allowance = allowance();
        let order = Order {
            dir: dir.clone(),
            workload: index,
            spec_hash: plan.spec_hash.clone(),
            fd: -1,
            clock: *clock,
            allowance: Some(allowance),
            resume: resume.clone(),
        };
        let (status, seen) = run_child(plan, order, temp.path(), progress).map_err(|e| io_error(&points, e))?;
        if status.success() {
            break Ok(false);
        }
        match status.code() {
            Some(crate::exit::INTERRUPTED) => break Ok(true),
            Some(crate::exit::WRITE_FAILED) => {
                break Err(RunError::Write(io_error(
                    &points,
                    std::io::Error::other("the measuring process could not write its results (its message is above)"),
                )))
            }
            Some(c @ (crate::exit::BAD_INPUT | crate::exit::RUN_FAILED)) => {
                break Err(RunError::Stopped { workload: plan.name.clone(), code: c })
            }
            _ => {}
        }
        if super::interrupt::requested() {
            // Killed by the second Ctrl-C, or ended while stopping: keep what is written.
            break Ok(true);
        }
        restarts += 1;
        if restarts > plan.designs.len() + 1 {
            break Err(RunError::Lost { workload: plan.name.clone(), restarts, last: cause(&status, &seen, allowance) });
        }
        let pos = seen
            .armed
            .as_ref()
            .map(|a| a.size)
            .or(seen.size)
            // The extra size past the planned ones (`extra.rs`) resumes past them.
            .and_then(|s| plan.sizes.iter().position(|&x| x == s).or_else(|| (Some(s) == super::extra::next_size(plan)).then_some(plan.sizes.len())))
            .or(resume.as_ref().map(|r| r.from))
            .unwrap_or(0);
        let kept = cut_from(&points, start, plan, pos).map_err(|e| io_error(&points, e))?;
        progress.rewound(kept);
        let info = SkipInfo::failed(cause(&status, &seen, allowance));
        let why = crate::results::cause::worded(&cause(&status, &seen, allowance), crate::results::Axis(plan.axis.as_ref()));
        let mut failed = resume.take().filter(|r| r.from == pos).map(|r| r.failed).unwrap_or_default();
        match &seen.armed {
            Some(a) if a.design < plan.designs.len() => failed.push((a.design, info)),
            // Nothing was running: the size itself could not be prepared.
            _ => failed.extend((0..plan.designs.len()).filter(|i| !failed.iter().any(|f| f.0 == *i)).map(|i| (i, info.clone())).collect::<Vec<_>>()),
        }
        if seen.armed.is_none() {
            eprintln!(
                "\nframecost sweep: `{}` at {}: {}; every design fails there, going on",
                crate::units::escaped(&plan.name),
                plan.axis_point(plan.sizes.get(pos).copied().or_else(|| super::extra::next_size(plan)).unwrap_or(0)),
                why
            );
        }
        if let Some(a) = &seen.armed {
            let who = plan.designs.get(a.design).map(|d| d.name.as_str()).unwrap_or("?");
            eprintln!(
                "\nframecost sweep: `{}` design `{}` at {}: {}; going on without it",
                crate::units::escaped(&plan.name),
                crate::units::escaped(who),
                plan.axis_point(a.size),
                why
            );
        }
        resume = Some(Resume { from: pos, elapsed_s: began.elapsed().as_secs_f64(), failed });
    };
    drop(temp);
    out.reload().map_err(RunError::Write)?;
    let interrupted = result?;
    Ok(outcome_of(out, plan, interrupted))
}

fn io_error(path: &Path, source: std::io::Error) -> WriteError {
    WriteError::Io { path: path.display().to_string(), source }
}

/// The counts of a workload's sweep, from its records as written.
fn outcome_of(out: &RunWriter, plan: &Plan, interrupted: bool) -> Outcome {
    let mut o = Outcome { interrupted, ..Outcome::default() };
    if let Some(w) = out.results.workload(&plan.name) {
        for p in &w.points {
            match (&p.measured, &p.skipped) {
                (Some(_), _) => o.measured += 1,
                (None, Some(s)) if s.reason == SkipReason::Failed => o.failures += 1,
                _ => o.skipped += 1,
            }
        }
        o.mismatches = w.comparisons.iter().filter(|c| c.equivalence.status == EquivalenceStatus::Mismatch).count();
    }
    o
}

/// The environment variable that caps a measuring child's memory (MiB), below what the
/// machine has available: to rehearse a design that outgrows its memory, or to keep a
/// sweep to part of a shared machine.
pub const MEMORY_ENV: &str = "FRAMECOST_CHILD_MIB";

/// The memory a child may allocate: what a size may count on now plus what this process
/// already holds (about what a child holds before it builds a table), never above a data
/// limit already set, nor above [`MEMORY_ENV`].
fn allowance() -> u64 {
    let cap = std::env::var(MEMORY_ENV).ok().and_then(|v| v.trim().parse::<u64>().ok()).filter(|&m| m > 0).map(|m| m.saturating_mul(1 << 20));
    let room = super::memory::memory_limit().bytes;
    let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    let held = super::memory::status_bytes(&status, "VmData:").unwrap_or(0);
    let natural = room.saturating_add(held).max(256 << 20);
    cap.map_or(natural, |c| c.min(natural))
}

/// Start one child, relay its progress, enforce its runs' limits, and wait for it.
fn run_child(plan: &Plan, mut order: Order, temp: &Path, progress: &dyn Progress) -> std::io::Result<(std::process::ExitStatus, Watched)> {
    let mut fds = [0i32; 2];
    // SAFETY: pipe2 fills the two descriptors we own; both are close-on-exec for now.
    if unsafe { libc::pipe2(fds.as_mut_ptr(), libc::O_CLOEXEC) } != 0 {
        return Err(std::io::Error::last_os_error());
    }
    let (read_fd, write_fd) = (fds[0], fds[1]);
    order.fd = write_fd;
    let allowance = order.allowance;
    let text = serde_json::to_string(&order).map_err(std::io::Error::other)?;
    let exe = std::env::current_exe()?;
    let mut cmd = std::process::Command::new(exe);
    cmd.args(std::env::args_os().skip(1)).env(super::worker::ENV, text).env("TMPDIR", temp).stdin(std::process::Stdio::null()).process_group(0);
    // SAFETY: between fork and exec only async-signal-safe calls: fcntl, prctl, getrlimit,
    // setrlimit.
    unsafe {
        cmd.pre_exec(move || {
            // The writing end stays open across exec in the child only.
            libc::fcntl(write_fd, libc::F_SETFD, 0);
            // A parent killed outright (SIGKILL) takes its measuring child with it.
            libc::prctl(libc::PR_SET_PDEATHSIG, libc::SIGKILL);
            if let Some(bytes) = allowance {
                let mut rl: libc::rlimit = std::mem::zeroed();
                if libc::getrlimit(libc::RLIMIT_DATA, &mut rl) == 0 && (rl.rlim_cur == libc::RLIM_INFINITY || rl.rlim_cur > bytes as libc::rlim_t) {
                    rl.rlim_cur = if rl.rlim_max == libc::RLIM_INFINITY { bytes as libc::rlim_t } else { rl.rlim_max.min(bytes as libc::rlim_t) };
                    libc::setrlimit(libc::RLIMIT_DATA, &rl);
                }
            }
            Ok(())
        });
    }
    let spawned = cmd.spawn();
    // SAFETY: our copy of the writing end; the child has its own.
    unsafe { libc::close(write_fd) };
    // SAFETY: from here on `pipe` owns the reading end and closes it.
    let mut pipe = unsafe { <std::fs::File as std::os::fd::FromRawFd>::from_raw_fd(read_fd) };
    let mut child = spawned?;
    let pid = child.id() as i32;
    super::interrupt::set_child(pid);
    let mut seen = Watched::default();
    let mut pending: Vec<u8> = Vec::new();
    let mut buf = [0u8; 4096];
    loop {
        let mut pfd = libc::pollfd { fd: read_fd, events: libc::POLLIN, revents: 0 };
        // SAFETY: one pollfd we own.
        let ready = unsafe { libc::poll(&mut pfd, 1, 100) };
        if ready > 0 {
            match pipe.read(&mut buf) {
                Ok(0) => break,
                Ok(n) => {
                    pending.extend_from_slice(&buf[..n]);
                    while let Some(end) = pending.iter().position(|&b| b == b'\n') {
                        let line: Vec<u8> = pending.drain(..=end).collect();
                        if let Some(ev) = super::worker::parse(String::from_utf8_lossy(&line).trim_end()) {
                            relay(plan, ev, &mut seen, progress);
                        }
                    }
                }
                Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
                Err(_) => break,
            }
        }
        if seen.runaway.is_none() {
            if let Some(a) = &seen.armed {
                if a.since.elapsed() > a.limit {
                    seen.runaway = Some(a.since.elapsed());
                    // SAFETY: signals the child's own process group.
                    unsafe { libc::kill(-pid, libc::SIGKILL) };
                }
            }
        }
    }
    let status = child.wait()?;
    super::interrupt::set_child(0);
    Ok((status, seen))
}

/// Act on one line from the child.
fn relay(plan: &Plan, ev: Event, seen: &mut Watched, progress: &dyn Progress) {
    match ev {
        Event::Size(s) => seen.size = Some(s),
        Event::Armed { design, size, limit_ms, what } => {
            seen.armed = Some(Armed { design, size, limit: Duration::from_millis(limit_ms), what, since: Instant::now() });
        }
        Event::Disarmed => seen.armed = None,
        Event::Point { design, size, samples } => {
            let name = plan.designs.get(design).map(|d| d.name.as_str()).unwrap_or("?");
            progress.point(&plan.name, size, design, name, samples);
        }
        Event::Done => progress.point_done(),
        Event::Rewound(kept) => progress.rewound(kept),
    }
}

/// Why a child ended, in numbers, for the failed point: a runaway it was stopped for, or
/// how it ended (signal or exit code) and what it was doing.
fn cause(status: &std::process::ExitStatus, seen: &Watched, allowance: u64) -> SkipCause {
    if let (Some(took), Some(a)) = (seen.runaway, &seen.armed) {
        return SkipCause::Runaway { during: a.what.clone(), ran_ns: took.as_nanos() as f64, limit_ns: a.limit.as_nanos() as f64, stopped: true };
    }
    SkipCause::Lost { during: seen.armed.as_ref().map(|a| a.what.clone()), signal: status.signal(), code: status.code(), allowed_bytes: allowance }
}

/// Cut `points.jsonl` back to the records written before size number `pos` of this
/// workload (records of other workloads before `start` are never touched). A line that
/// does not parse — one the child was writing when it died — ends what is kept.
/// Returns how many of the workload's points are kept.
fn cut_from(points: &Path, start: u64, plan: &Plan, pos: usize) -> std::io::Result<usize> {
    let bytes = std::fs::read(points)?;
    let from = (start as usize).min(bytes.len());
    let mut keep = from;
    let mut kept_points = 0;
    for line in bytes[from..].split_inclusive(|&b| b == b'\n') {
        if line.last() != Some(&b'\n') {
            break;
        }
        let at_or_after = |rows: u64| plan.sizes.iter().position(|&s| s == rows).is_none_or(|k| k >= pos);
        let rec = serde_json::from_slice::<Record>(line);
        let later = match &rec {
            Ok(Record::Point(p)) => p.workload == plan.name && at_or_after(p.rows),
            Ok(Record::Table(t)) => t.workload == plan.name && at_or_after(t.rows),
            Ok(Record::Comparison(c)) => c.workload == plan.name && at_or_after(c.rows),
            Ok(_) => false,
            Err(_) => true,
        };
        if later {
            break;
        }
        if matches!(&rec, Ok(Record::Point(p)) if p.workload == plan.name) {
            kept_points += 1;
        }
        keep += line.len();
    }
    let f = std::fs::OpenOptions::new().write(true).open(points)?;
    f.set_len(keep as u64)?;
    f.sync_all()?;
    Ok(kept_points)
}
