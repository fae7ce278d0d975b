//! The clock: how fine it is and what reading it costs, measured at start.
//!
//! Samples are batched until the clock's own cost is under 1% of a sample, so the
//! calibration decides the smallest sample the runner may take.

use std::time::Instant;
pub use crate::results::schema::ClockInfo;

/// Measure the clock. Takes a few milliseconds.
pub fn calibrate() -> ClockInfo {
    let reported = reported_resolution_ns();
    // Read cost: many reads back to back, timed as a whole; best of 5 rounds.
    let reads = 20_000u32;
    let mut best = f64::INFINITY;
    for _ in 0..5 {
        let t0 = Instant::now();
        let mut last = t0;
        for _ in 0..reads {
            last = std::hint::black_box(Instant::now());
        }
        let per = last.duration_since(t0).as_nanos() as f64 / reads as f64;
        best = best.min(per);
    }
    // Smallest visible step.
    let mut step = f64::INFINITY;
    let mut prev = Instant::now();
    for _ in 0..20_000 {
        let now = Instant::now();
        let d = now.duration_since(prev).as_nanos() as f64;
        if d > 0.0 {
            step = step.min(d);
        }
        prev = now;
    }
    if !step.is_finite() {
        step = reported.max(1.0);
    }
    ClockInfo { reported_resolution_ns: reported, observed_step_ns: step, read_cost_ns: best.max(0.1) }
}

fn reported_resolution_ns() -> f64 {
    let mut ts = libc::timespec { tv_sec: 0, tv_nsec: 0 };
    // SAFETY: clock_getres writes into the timespec we own.
    let rc = unsafe { libc::clock_getres(libc::CLOCK_MONOTONIC, &mut ts) };
    if rc == 0 {
        ts.tv_sec as f64 * 1e9 + ts.tv_nsec as f64
    } else {
        1.0
    }
}

/// CPU time used by the whole process so far (all threads), in ns.
pub fn process_cpu_ns() -> u64 {
    cpu_clock_ns(libc::CLOCK_PROCESS_CPUTIME_ID)
}

/// CPU time used by the calling thread so far, in ns.
pub fn thread_cpu_ns() -> u64 {
    cpu_clock_ns(libc::CLOCK_THREAD_CPUTIME_ID)
}

/// A CPU-time clock (Unix `clock_gettime`) in ns, 0 where unavailable.
fn cpu_clock_ns(clock: libc::clockid_t) -> u64 {
    let mut ts = libc::timespec { tv_sec: 0, tv_nsec: 0 };
    // SAFETY: clock_gettime writes into the timespec we own.
    let rc = unsafe { libc::clock_gettime(clock, &mut ts) };
    if rc == 0 {
        ts.tv_sec as u64 * 1_000_000_000 + ts.tv_nsec as u64
    } else {
        0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn calibration_is_sane() {
        let c = calibrate();
        assert!(c.read_cost_ns > 0.0 && c.read_cost_ns < 100_000.0, "{c:?}");
        assert!(c.observed_step_ns >= 1.0, "{c:?}");
        // The 1% rule: two reads are at most 1% of the shortest sample.
        assert!(2.0 * c.read_cost_ns <= 0.01 * c.min_sample_ns() + 1e-9);
        // With swept caches the floor is lower (batches would mix cold and warm runs), but
        // the clock reads still cost under 1%.
        assert!(2.0 * c.read_cost_ns <= 0.01 * c.cold_min_sample_ns() + 1e-9);
        assert!(c.cold_min_sample_ns() <= c.min_sample_ns());
    }

    #[test]
    fn cpu_clock_advances_with_work() {
        let a = process_cpu_ns();
        let mut x = 0u64;
        for i in 0..20_000_000u64 {
            x = x.wrapping_add(std::hint::black_box(i));
        }
        std::hint::black_box(x);
        assert!(process_cpu_ns() > a);
    }
}
