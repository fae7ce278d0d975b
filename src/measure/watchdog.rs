//! A last resort against a runaway run: one that overruns its point budget by far (a
//! parameter that makes a step loop for hours, say) cannot be stopped from inside, because
//! the design runs on the sweep's own thread and polars' threads.
//!
//! The runner arms the watchdog around every untimed and timed run ([`arm`]); a background
//! thread checks every 50 ms. When an armed run passes its limit, the thread appends a
//! failed point with the reason to `points.jsonl` (one `O_APPEND` write of a whole line; the
//! sweep's thread is inside the run, not writing), prints where the run is, and ends the
//! process with [`crate::exit::RUN_FAILED`]. The sweep does not go on after that: measuring
//! in a child process the parent can kill would allow it, at the cost of building each
//! table once per design. Cost when nothing runs away: two mutex operations per sample.

use crate::results::{PointRecord, Record, SkipInfo, SkipReason};
use std::io::Write;
use std::path::PathBuf;
use std::sync::{Mutex, OnceLock};
use std::time::{Duration, Instant};

struct Armed {
    workload: String,
    design: String,
    rows: u64,
    what: String,
    started: Instant,
    limit: Duration,
}

struct Shared {
    points: Mutex<Option<PathBuf>>,
    armed: Mutex<Option<Armed>>,
}

static SHARED: OnceLock<Shared> = OnceLock::new();

fn shared() -> &'static Shared {
    SHARED.get_or_init(|| {
        std::thread::Builder::new()
            .name("framecost-watchdog".into())
            .spawn(watch)
            .ok();
        Shared { points: Mutex::new(None), armed: Mutex::new(None) }
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

/// Disarms when dropped.
pub struct Guard(());

impl Drop for Guard {
    fn drop(&mut self) {
        if let Some(s) = SHARED.get() {
            if let Ok(mut a) = s.armed.lock() {
                *a = None;
            }
        }
    }
}

/// Watch one run (or sample, or set-up step) of `design`; a failure is recorded at `rows`
/// (a size of the sweep). Does nothing until [`start`] named a results file (so library
/// users and tests are never ended by it).
pub fn arm(workload: &str, design: &str, rows: u64, what: impl Into<String>, limit: Duration) -> Guard {
    let s = shared();
    if s.points.lock().map(|p| p.is_none()).unwrap_or(true) {
        return Guard(());
    }
    if let Ok(mut a) = s.armed.lock() {
        *a = Some(Armed { workload: workload.to_string(), design: design.to_string(), rows, what: what.into(), started: Instant::now(), limit });
    }
    Guard(())
}

fn watch() {
    loop {
        std::thread::sleep(Duration::from_millis(50));
        let Some(s) = SHARED.get() else { continue };
        let over = match s.armed.lock() {
            Ok(a) => a.as_ref().filter(|a| a.started.elapsed() > a.limit).map(|a| {
                (a.workload.clone(), a.design.clone(), a.rows, a.what.clone(), a.started.elapsed(), a.limit)
            }),
            Err(_) => None,
        };
        let Some((workload, design, rows, what, took, limit)) = over else { continue };
        let detail = format!(
            "{what} ran for {}, past its limit of {} (twice the point budget, at least the budget + 5 s), and could not be stopped from inside; the sweep was ended here",
            crate::present::units::time_ns(took.as_nanos() as f64),
            crate::present::units::time_ns(limit.as_nanos() as f64)
        );
        let rec = Record::Point(PointRecord {
            workload,
            design: design.clone(),
            rows,
            measured: None,
            skipped: Some(SkipInfo { reason: SkipReason::Failed, predicted_ns: None, predicted_bytes: None, detail: detail.clone() }),
        });
        let path = s.points.lock().ok().and_then(|p| p.clone());
        if let (Some(path), Ok(line)) = (&path, serde_json::to_string(&rec)) {
            if let Ok(mut f) = std::fs::OpenOptions::new().append(true).open(path) {
                let _ = f.write_all(format!("{line}\n").as_bytes());
                let _ = f.sync_data();
            }
        }
        eprintln!("\nframecost sweep: `{}` at {rows} rows: {detail}", crate::present::units::escaped(&design));
        if let Some(dir) = path.as_ref().and_then(|p| p.parent()) {
            eprintln!("framecost sweep: the points measured so far are in {}; `framecost report {}` draws them", dir.display(), dir.display());
        }
        // _exit: no destructors or exit handlers race the threads still inside the run.
        // SAFETY: ends the process; nothing after it runs.
        unsafe { libc::_exit(crate::exit::RUN_FAILED) };
    }
}
