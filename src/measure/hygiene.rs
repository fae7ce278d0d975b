//! Is the machine quiet enough to trust a point? Signals of a busy or unstable machine,
//! measured beside the designs, so a slow point is blamed on the machine and not on the
//! design.
//!
//! Signals, each cheap and taken between samples (never inside a timed region):
//! - **the probe's share of a core** (decides): the drift probe is single-threaded; the CPU
//!   time its thread got over the wall time it took, summed over a size's rounds. On a
//!   quiet machine it is 1.00 (measured here: every size of three workloads); when other
//!   processes compete for the cores the thread waits runnable and the share falls
//!   (measured: about 0.6 beside two compilers on 2 cores);
//! - **involuntary context switches** of this process per second of sampling
//!   (`getrusage`), recorded as information only: polars' own worker threads preempt one
//!   another on a small machine (measured here on a quiet machine: up to 200,000 per
//!   second for grouped work, 0 for single-threaded steps), so a high count says nothing
//!   about other processes;
//! - **the load average per core**, recorded as information (it includes this process and
//!   lags by a minute);
//! - **bimodal samples**: the sorted samples split at a gap of ×1.5 or more with at least
//!   15% of them on each side — the design itself or the machine switches between two
//!   regimes, so the median alone hides half the story.
//!
//! A newcomer must know: only the probe's share marks a point as measured on a busy machine
//! (`Disturbance::busy`); such points never decide a growth class or a verdict. Bimodality
//! is reported as a property of the point, since a design can be bimodal on a quiet machine.

use crate::results::Disturbance;

/// Below this share of a core the probe was kept waiting: the machine was busy.
pub const PROBE_SHARE_FLOOR: f64 = 0.85;

pub use super::clock::thread_cpu_ns;

/// Involuntary context switches of this process so far (Unix `getrusage`), 0 where
/// unavailable.
pub fn involuntary_switches() -> u64 {
    // SAFETY: getrusage fills the struct we own; zeroed is a valid rusage.
    let mut ru: libc::rusage = unsafe { std::mem::zeroed() };
    let rc = unsafe { libc::getrusage(libc::RUSAGE_SELF, &mut ru) };
    if rc == 0 {
        ru.ru_nivcsw.max(0) as u64
    } else {
        0
    }
}

/// Load average over the last minute per core (Linux `/proc/loadavg`).
pub fn load_per_core() -> Option<f64> {
    let text = std::fs::read_to_string("/proc/loadavg").ok()?;
    let one: f64 = text.split_whitespace().next()?.parse().ok()?;
    let cores = std::thread::available_parallelism().map(|n| n.get()).unwrap_or(1) as f64;
    Some(one / cores)
}

/// True when the sorted samples split at a gap of ×1.5 or more with at least 15% of the
/// samples on each side (module doc). Needs 8 samples.
pub fn bimodal(samples: &[f64]) -> bool {
    let mut s: Vec<f64> = samples.iter().copied().filter(|x| x.is_finite() && *x > 0.0).collect();
    if s.len() < 8 {
        return false;
    }
    s.sort_by(f64::total_cmp);
    let min_side = ((s.len() as f64) * 0.15).ceil() as usize;
    (min_side..=s.len() - min_side).any(|i| i > 0 && s[i] >= 1.5 * s[i - 1])
}

/// What a size's rounds say about the machine: the probe's (wall, thread CPU) times and
/// the process's involuntary switches per second of sampling.
pub fn assess(probe: &[(f64, f64)], switches_per_s: Option<f64>) -> Disturbance {
    let wall: f64 = probe.iter().map(|p| p.0).sum();
    let cpu: f64 = probe.iter().map(|p| p.1).sum();
    let share = (wall > 0.0 && cpu > 0.0).then(|| (cpu / wall).min(1.0));
    let mut reasons = Vec::new();
    if share.is_some_and(|s| s < PROBE_SHARE_FLOOR) {
        reasons.push("probe-share".to_string());
    }
    Disturbance {
        probe_cpu_share: share,
        switches_per_s,
        load_per_core: load_per_core(),
        busy: !reasons.is_empty(),
        reasons,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bimodal_needs_a_gap_with_both_sides_populated() {
        let mut two: Vec<f64> = vec![1.0; 10];
        two.extend(vec![5.0; 10]);
        assert!(bimodal(&two));
        let mut one_outlier: Vec<f64> = vec![1.0; 19];
        one_outlier.push(9.0);
        assert!(!bimodal(&one_outlier), "one stall is a tail, not a second mode");
        let smooth: Vec<f64> = (0..30).map(|i| 1.0 + i as f64 * 0.02).collect();
        assert!(!bimodal(&smooth));
        assert!(!bimodal(&[1.0, 5.0]));
    }

    #[test]
    fn a_probe_kept_waiting_marks_the_size_busy() {
        let quiet = assess(&[(100.0, 99.0), (100.0, 98.0)], Some(3.0));
        assert!(!quiet.busy, "{quiet:?}");
        let busy = assess(&[(100.0, 60.0), (100.0, 55.0)], Some(3.0));
        assert!(busy.busy && busy.reasons == ["probe-share"], "{busy:?}");
        // The process's own worker threads preempt one another: not a busy machine.
        let own_threads = assess(&[(100.0, 99.0)], Some(200_000.0));
        assert!(!own_threads.busy);
        let thread = thread_cpu_ns();
        assert!(thread > 0);
    }
}
