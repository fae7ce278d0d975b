//! A last resort against a runaway run: one that overruns its point budget by far (a
//! parameter that makes a step loop for hours, say) cannot be stopped from inside, because
//! the design runs on the sweep's own thread and polars' threads.
//!
//! The runner arms the watchdog around every untimed and timed run ([`arm`]); a background
//! thread checks every 50 ms. When an armed run passes its limit, the thread appends a
//! failed point with the reason to `points.jsonl` (one `O_APPEND` write of a whole line; the
//! sweep's thread is inside the run, not writing), prints where the run is, and ends the
//! process with [`crate::exit::RUN_FAILED`]. This is the in-process sweep's guard
//! (`sweep --in-process`, and library users): by default `sweep` measures in a child
//! process ([`super::supervise`]), where [`arm`] also tells the parent, which kills a
//! runaway child and goes on with the sweep. Cost when nothing runs away, outside the timed region: arming and
//! disarming take two uncontended mutex operations and no allocation (names are given once
//! per workload with [`names`]); the thread wakes every 50 ms and allocates nothing.

use crate::results::{PointRecord, Record, SkipCause, SkipInfo};
use std::io::Write;
use std::path::PathBuf;
use std::sync::{Mutex, OnceLock};
use std::time::{Duration, Instant};

struct Armed {
    design: usize,
    rows: u64,
    what: &'static str,
    started: Instant,
    limit: Duration,
}

struct Shared {
    points: Mutex<Option<PathBuf>>,
    /// The workload being swept and its design names, by index.
    names: Mutex<(String, Vec<String>)>,
    armed: Mutex<Option<Armed>>,
}

static SHARED: OnceLock<Shared> = OnceLock::new();

fn shared() -> &'static Shared {
    SHARED.get_or_init(|| {
        std::thread::Builder::new()
            .name("framecost-watchdog".into())
            .spawn(watch)
            .ok();
        Shared { points: Mutex::new(None), names: Mutex::new((String::new(), Vec::new())), armed: Mutex::new(None) }
    })
}

/// The longest one run may take before the watchdog ends the sweep: twice the point budget,
/// and at least the budget plus 5 s (so short budgets are not cut by scheduling noise).
pub fn limit_for(per_point_s: f64) -> Duration {
    Duration::from_secs_f64((per_point_s * 2.0).max(per_point_s + 5.0).min(86_400.0 * 14.0))
}

/// Tell the watchdog which `points.jsonl` to append a failed point to.
pub fn start(points: PathBuf) {
    if let Ok(mut p) = shared().points.lock() {
        *p = Some(points);
    }
}

/// The workload about to be swept and its designs (indices are what [`arm`] takes).
pub fn names(workload: &str, designs: Vec<String>) {
    if let Ok(mut n) = shared().names.lock() {
        *n = (workload.to_string(), designs);
    }
}

/// Disarms when dropped.
pub struct Guard(());

impl Drop for Guard {
    fn drop(&mut self) {
        super::worker::disarmed();
        if let Some(s) = SHARED.get() {
            if let Ok(mut a) = s.armed.lock() {
                *a = None;
            }
        }
    }
}

/// Watch one run (or sample, or set-up step) of design number `design` (see [`names`]); a
/// failure is recorded at `rows` (a size of the sweep). Does nothing until [`start`] named
/// a results file, so library users and tests are never ended by it.
pub fn arm(design: usize, rows: u64, what: &'static str, limit: Duration) -> Guard {
    // A measuring child tells its parent, which enforces the limit by killing it.
    super::worker::armed(design, rows, limit, what);
    let s = shared();
    if let Ok(mut a) = s.armed.lock() {
        *a = Some(Armed { design, rows, what, started: Instant::now(), limit });
    }
    Guard(())
}

fn watch() {
    loop {
        std::thread::sleep(Duration::from_millis(50));
        let Some(s) = SHARED.get() else { continue };
        let over = match s.armed.lock() {
            Ok(a) => a.as_ref().filter(|a| a.started.elapsed() > a.limit).map(|a| (a.design, a.rows, a.what, a.started.elapsed(), a.limit)),
            Err(_) => None,
        };
        let Some((index, rows, what, took, limit)) = over else { continue };
        let path = s.points.lock().ok().and_then(|p| p.clone());
        let Some(path) = path else { continue };
        let (workload, design) = match s.names.lock() {
            Ok(n) => (n.0.clone(), n.1.get(index).cloned().unwrap_or_else(|| format!("design {index}"))),
            Err(_) => (String::new(), format!("design {index}")),
        };
        let cause = SkipCause::Runaway { during: what.to_string(), ran_ns: took.as_nanos() as f64, limit_ns: limit.as_nanos() as f64, stopped: false };
        let mut point = PointRecord { workload, design: design.clone(), rows, measured: None, skipped: Some(SkipInfo::failed(cause)), setup_ns: None };
        // The runaway's words name no swept value, so the axis is not needed.
        crate::results::cause::fill_detail(&mut point, None);
        let detail = point.skipped.as_ref().map(|s| s.detail.clone()).unwrap_or_default();
        let rec = Record::Point(point);
        if let Ok(line) = serde_json::to_string(&rec) {
            if let Ok(mut f) = std::fs::OpenOptions::new().append(true).open(&path) {
                let _ = f.write_all(format!("{line}\n").as_bytes());
                let _ = f.sync_data();
            }
        }
        eprintln!("\nframecost sweep: `{}` at {rows} rows: {detail}", crate::units::escaped(&design));
        if let Some(dir) = path.parent() {
            eprintln!("framecost sweep: the points measured so far are in {}; `framecost report {}` draws them", dir.display(), dir.display());
        }
        // _exit: no destructors or exit handlers race the threads still inside the run.
        // SAFETY: ends the process; nothing after it runs.
        unsafe { libc::_exit(crate::exit::RUN_FAILED) };
    }
}
