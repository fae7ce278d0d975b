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
//! - **other processes' share of the machine** (decides): the CPU time the whole machine
//!   spent busy (`/proc/stat`: user, nice, system, irq, softirq and the time a hypervisor
//!   gave to other guests, "steal") minus this process's own (`/proc/self/stat`, all its
//!   threads), over the machine's total, from the start of a design's sampling at a size
//!   to its end. The probe alone misses contention: it runs for a few microseconds right
//!   after a wake-up, which the scheduler favours, so a catalog swept beside a compiler
//!   (load 2 per core) kept a probe share of 1.00 at every point. On a quiet machine the
//!   others' share is a few percent (daemons), up to about 0.3 at times on this project's
//!   virtual machine (steal, kernel threads); above [`OTHERS_SHARE_CEILING`] the point is
//!   busy. Ticks are 10 ms, so windows under [`OTHERS_MIN_TICKS`] of machine time say
//!   nothing; program designs run in a process of their own, so theirs is not judged;
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
//! A newcomer must know: only the probe's share and the others' share mark a point as measured on a busy machine
//! (`Disturbance::busy`); such points never decide a growth class or a verdict. Bimodality
//! is reported as a property of the point, since a design can be bimodal on a quiet machine.

use crate::results::Disturbance;

/// Below this share of a core the probe was kept waiting: the machine was busy.
pub const PROBE_SHARE_FLOOR: f64 = 0.85;

/// Above this share of the machine's CPU time used by other processes (or other guests of
/// the hypervisor), a point is busy. One process competing for one of 2 cores reads 0.5 or
/// more; three quiet catalog sweeps read up to 0.29 at a few sizes (the hypervisor's steal
/// and kernel threads), so the ceiling sits between them (it was 0.25, which marked 28
/// points of those quiet sweeps busy).
pub const OTHERS_SHARE_CEILING: f64 = 0.35;

/// Fewest clock ticks of machine time (cores × 10 ms ticks) a window needs before the others'
/// share is judged: 50 ticks is a quarter of a second on 2 cores.
pub const OTHERS_MIN_TICKS: u64 = 50;

pub use super::clock::thread_cpu_ns;

/// CPU ticks of the whole machine (busy and total) and of this process, read together.
#[derive(Debug, Clone, Copy)]
pub struct CpuSnapshot {
    busy: u64,
    total: u64,
    own: u64,
}

/// The machine's and this process's CPU ticks now (Linux; None elsewhere or unreadable).
pub fn cpu_snapshot() -> Option<CpuSnapshot> {
    let stat = std::fs::read_to_string("/proc/stat").ok()?;
    let (busy, total) = machine_ticks(stat.lines().next()?)?;
    let own = own_ticks(&std::fs::read_to_string("/proc/self/stat").ok()?)?;
    Some(CpuSnapshot { busy, total, own })
}

/// (busy, total) ticks from the `cpu` line of `/proc/stat`: user nice system idle iowait irq
/// softirq steal (guest time is already inside user and nice).
fn machine_ticks(line: &str) -> Option<(u64, u64)> {
    let mut f = line.split_whitespace();
    if f.next()? != "cpu" {
        return None;
    }
    let v: Vec<u64> = f.take(8).map(|x| x.parse().ok()).collect::<Option<_>>()?;
    if v.len() < 8 {
        return None;
    }
    let busy = v[0] + v[1] + v[2] + v[5] + v[6] + v[7];
    Some((busy, busy + v[3] + v[4]))
}

/// utime + stime of `/proc/self/stat` (fields 14 and 15; the name in parentheses may hold
/// spaces, so fields are counted after its closing parenthesis).
fn own_ticks(stat: &str) -> Option<u64> {
    let rest = &stat[stat.rfind(')')? + 1..];
    let f: Vec<&str> = rest.split_whitespace().collect();
    // After ')': field 3 (state) is f[0], so field 14 is f[11] and 15 is f[12].
    Some(f.get(11)?.parse::<u64>().ok()? + f.get(12)?.parse::<u64>().ok()?)
}

/// Share of the machine's CPU time that other processes used between two snapshots; None
/// when the window is too short to say ([`OTHERS_MIN_TICKS`]).
pub fn others_share(from: CpuSnapshot, to: CpuSnapshot) -> Option<f64> {
    let total = to.total.checked_sub(from.total)?;
    if total < OTHERS_MIN_TICKS {
        return None;
    }
    let busy = to.busy.saturating_sub(from.busy);
    let own = to.own.saturating_sub(from.own);
    Some((busy.saturating_sub(own) as f64 / total as f64).clamp(0.0, 1.0))
}

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
/// the process's involuntary switches per second of sampling, and other processes' share of
/// the machine over the design's sampling.
pub fn assess(probe: &[(f64, f64)], switches_per_s: Option<f64>, others: Option<f64>) -> Disturbance {
    let wall: f64 = probe.iter().map(|p| p.0).sum();
    let cpu: f64 = probe.iter().map(|p| p.1).sum();
    let share = (wall > 0.0 && cpu > 0.0).then(|| (cpu / wall).min(1.0));
    let mut reasons = Vec::new();
    if share.is_some_and(|s| s < PROBE_SHARE_FLOOR) {
        reasons.push("probe-share".to_string());
    }
    if others.is_some_and(|o| o > OTHERS_SHARE_CEILING) {
        reasons.push("other-processes".to_string());
    }
    Disturbance {
        probe_cpu_share: share,
        switches_per_s,
        others_share: others,
        load_per_core: load_per_core(),
        memory_probe_ns: None,
        files_probe_ns: None,
        busy: !reasons.is_empty(),
        reasons,
        machine_slow: None,
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
        let quiet = assess(&[(100.0, 99.0), (100.0, 98.0)], Some(3.0), Some(0.02));
        assert!(!quiet.busy, "{quiet:?}");
        let busy = assess(&[(100.0, 60.0), (100.0, 55.0)], Some(3.0), None);
        assert!(busy.busy && busy.reasons == ["probe-share"], "{busy:?}");
        // The process's own worker threads preempt one another: not a busy machine.
        let own_threads = assess(&[(100.0, 99.0)], Some(200_000.0), Some(0.03));
        assert!(!own_threads.busy);
        let thread = thread_cpu_ns();
        assert!(thread > 0);
    }

    #[test]
    fn other_processes_taking_the_machine_mark_the_point_busy() {
        // Field layout from proc(5) (Linux man-pages): "cpu user nice system idle iowait irq
        // softirq steal guest guest_nice"; /proc/[pid]/stat fields 14 utime, 15 stime.
        let (b0, t0) = machine_ticks("cpu  1000 10 200 5000 30 0 5 15 0 0").unwrap();
        assert_eq!((b0, t0), (1230, 6260));
        let (b1, t1) = machine_ticks("cpu  1300 10 260 5080 30 0 5 55 0 0").unwrap();
        let own = |u: u64, s: u64| own_ticks(&format!("4242 (frame cost) R 1 2 3 4 5 6 7 8 9 10 {u} {s} 0 0 20 0 3 0 99")).unwrap();
        assert_eq!(own(100, 20), 120);
        // 400 busy ticks of 480; 150 of them this process's: others 250/480.
        let s0 = CpuSnapshot { busy: b0, total: t0, own: own(100, 20) };
        let s1 = CpuSnapshot { busy: b1, total: t1, own: own(220, 50) };
        let share = others_share(s0, s1).unwrap();
        assert!((share - 250.0 / 480.0).abs() < 1e-12, "{share}");
        let d = assess(&[(100.0, 100.0)], None, Some(share));
        assert!(!assess(&[(100.0, 100.0)], None, Some(0.29)).busy, "a quiet machine's steal and kernel threads");
        assert!(d.busy && d.reasons == ["other-processes"], "{d:?}");
        // A window of a few ticks says nothing.
        let short = CpuSnapshot { busy: b0 + 10, total: t0 + 12, own: own(100, 20) };
        assert_eq!(others_share(s0, short), None);
        assert!(machine_ticks("cpu0 1 2 3 4 5 6 7 8").is_none());
        // This machine: a snapshot reads, and this test process's own time is counted.
        if let Some(now) = cpu_snapshot() {
            assert!(now.total >= now.busy && now.busy >= 1);
        }
    }
}
