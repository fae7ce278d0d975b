//! One design's points compared size by size: which sizes both runs measured (and what the
//! others were), the ratio of medians with its Hodges–Lehmann interval, the correction for
//! the machine's own speed, the rank test, the call, and confirmation by a neighbouring size.

use super::{Call, MissingPoint, PointGate, WorkloadGate};
use crate::results::reader::WorkloadResults;
use crate::results::{Disturbance, Measured};
use crate::track::stats::{hodges_lehmann_ratio_ci, mann_whitney, Method};

/// How the machine's own speed differed between the runs, for runs without drift probes.
#[derive(Debug, Clone, Copy)]
pub(super) struct Machines {
    pub(super) differ: bool,
    /// new yardstick / baseline yardstick.
    pub(super) yardstick_ratio: Option<f64>,
    /// Both runs swept the caches the same way (buffer size and threads), so their memory
    /// probes are readings of the same thing.
    pub(super) same_sweep: bool,
}

/// A size both runs measured: (size, baseline, new).
pub(super) type Pair<'a> = (u64, &'a Measured, &'a Measured);

/// The sizes of `design` both runs measured, in order; every other size either run has is
/// recorded in `wg.missing` with what each run has there.
pub(super) fn matched<'a>(wg: &mut WorkloadGate, bw: &'a WorkloadResults, nw: &'a WorkloadResults, design: &str) -> Vec<Pair<'a>> {
    let mut sizes: Vec<u64> = bw.header.sizes.iter().chain(&nw.header.sizes).copied().collect();
    sizes.sort_unstable();
    sizes.dedup();
    let mut common: Vec<Pair<'a>> = Vec::new();
    for n in sizes {
        let b = bw.point(design, n).and_then(|p| p.measured.as_ref());
        let m = nw.point(design, n).and_then(|p| p.measured.as_ref());
        match (b, m) {
            (Some(b), Some(m)) => common.push((n, b, m)),
            _ => wg.missing.push(MissingPoint { design: design.to_string(), rows: n, baseline: status(bw, design, n), new: status(nw, design, n) }),
        }
    }
    common
}

/// One point compared: ratio, interval, the speed-corrected ratio, the rank test and the
/// call (confirmation comes after, over the design's points).
#[allow(clippy::too_many_arguments)]
pub(super) fn point_gate(design: &str, (n, b, m): Pair, bw: &WorkloadResults, nw: &WorkloadResults, machines: Machines, threshold: f64, alpha: f64) -> PointGate {
    let ratio = m.median_ns / b.median_ns;
    let ci = hodges_lehmann_ratio_ci(&b.samples_ns, &m.samples_ns, 0.95).ok();
    let probe = match (bw.comparison(n).and_then(|c| c.probe_ns), nw.comparison(n).and_then(|c| c.probe_ns)) {
        (Some(pb), Some(pn)) if pb > 0.0 && pn > 0.0 => Some(pn / pb),
        _ => None,
    };
    let (normalised, by) = match (probe, machines.differ, machines.yardstick_ratio) {
        (Some(pr), _, _) => (Some(ratio / pr), Some("drift probe".to_string())),
        (None, true, Some(y)) => (Some(ratio / y), Some("yardstick".to_string())),
        _ => (None, None),
    };
    // The memory's own speed: each design's samples follow a cache sweep whose duration
    // the run records (`Disturbance::memory_probe_ns`). Between two runs of unchanged code
    // on a shared machine memory moves where the CPU-bound drift probe does not (measured:
    // the probe's ratio between three sweeps of four workloads correlated with the designs'
    // at r = 0.56, 0.82 for the SQL self-join). Like the drift probe, it only explains a
    // change away (see `judge`).
    // Runs that swept differently (another buffer size, one thread or two) time different
    // sweeps: their ratio says nothing about the memory.
    let memory = probe_ratio(b, m, |d| d.memory_probe_ns).filter(|_| machines.same_sweep);
    // The rank test compares the samples after the same correction.
    let scale = normalised.map(|x| x / ratio).unwrap_or(1.0);
    let adjusted: Vec<f64> = m.samples_ns.iter().map(|v| v * scale).collect();
    let p = mann_whitney(&adjusted, &b.samples_ns, Method::Auto).ok().map(|t| t.p_two_sided);
    // A point measured on a busy machine in either run is never called: contention moves
    // one run's medians by more than a change of the code would (measured: a catalog run
    // beside other work failed the gate on 9 points of two workloads).
    let busy = b.is_busy() || m.is_busy();
    // Samples in two separate groups put the median in one group or the other from run to
    // run (measured: cross-column's `horizontal-arithmetic` at 32k rows, a median of 1.77 ms
    // between groups around 0.5 and 2 ms, ×4.27 the baseline's 0.41 ms: a "regression" of
    // unchanged code). The verdict keeps such points from deciding; so does the gate.
    let split = b.bimodal || m.bimodal;
    // Other work that rose between the runs at this point, below the busy mark, still slows
    // a step that uses both cores: back to back here, the SQL self-join workload's window
    // design measured ×1.57 to ×1.79 at five sizes when the others' share went from 0.00 to
    // 0.09–0.11 (its CPU over wall time fell from 1.1 to 0.8), with the same binary for SQL;
    // four group-count designs measured ×0.73 to ×0.82 when it fell from 0.13 to 0.00. A
    // change in the direction the others' share moved by `OTHERS_SHARE_MOVE` or more is not
    // called.
    let others = |x: &Measured| x.disturbance.as_ref().and_then(|d| d.others_share);
    let others_rise = match (others(b), others(m)) {
        (Some(ob), Some(om)) => om - ob,
        _ => 0.0,
    };
    // The file system's own speed, for designs that write files (`measure::files_probe`).
    let files = probe_ratio(b, m, |d| d.files_probe_ns);
    let call = judge(ratio, &[normalised, memory.map(|x| ratio / x)], p, threshold, alpha);
    let busier = match call {
        Call::Regression => others_rise >= OTHERS_SHARE_MOVE,
        Call::Improvement => -others_rise >= OTHERS_SHARE_MOVE,
        _ => false,
    };
    let busy = busy || busier;
    let files_moved = files.is_some_and(|f| moved_with(call, f));
    let call = match call {
        Call::Regression | Call::Improvement if busy || split || files_moved => Call::Unclear,
        c => c,
    };
    PointGate {
        design: design.to_string(),
        rows: n,
        base_median_ns: b.median_ns,
        new_median_ns: m.median_ns,
        ratio,
        shift: ci.map(|c| c.1 * scale),
        ratio_low: ci.map(|c| c.0 * scale),
        ratio_high: ci.map(|c| c.2 * scale),
        normalised_ratio: normalised,
        normalised_by: by,
        memory_ratio: memory,
        files_ratio: files,
        files_moved,
        size_move: None,
        p_value: p,
        q_value: None,
        call,
        confirmed: false,
        small_only: false,
        busy,
        split,
    }
}

/// How far the others' share of the machine (`Disturbance::others_share`) must move between
/// the runs at a point, in the direction of a change, for the change not to be called (the
/// busy mark itself is `measure::hygiene::OTHERS_SHARE_CEILING`).
pub const OTHERS_SHARE_MOVE: f64 = 0.08;

/// Confirmed sizes that make a change stand without the largest (with at least half of
/// the sizes compared called the same way, and none the other): see [`confirm`].
pub const MOST_SIZES_MIN: usize = 4;

/// Confirmation of one design's points (in size order): a regression or improvement is
/// confirmed when a neighbouring compared size made the same call, or the design was
/// compared at one size only. A change in the code shows at more than one size; run-to-run
/// noise of one point rarely repeats at the next (two independent tests).
///
/// With four or more sizes compared, a change must also reach the largest size that could
/// be judged (not busy, split or moved with the file system): a design slower at smaller
/// sizes only is reported as such and fails nothing. Runs of microseconds move most
/// between runs of unchanged code (measured: two back-to-back catalog sweeps, a 4k-row cast
/// at 6 µs in one and 20 µs in the other, "confirmed" at 4k and 16k rows while 64k and up
/// held), and a change that matters for the data that matters shows where the data is
/// large. Until 5 December one of the two largest sizes was enough; over 52 ordered
/// pairings of saved catalog sweeps of unchanged code (seven groups of back-to-back
/// sweeps) three failed on a bump at middle sizes that the largest did not share — a
/// row-wise design ×1.2 over its siblings at 64k and 256k rows and ×1.0 at 1M, a table-cell
/// read ×1.3–×1.7 at 8k–32k and not at 64k, a scan at 256 and 512 tags and not at 1024 —
/// while twenty pairings of a rehearsed 15% and 20% slowdown of row-growth's `build-once`
/// were caught alike under both rules (the growth check is separate and unaffected).
///
/// Unless the change holds at most sizes: confirmed at four sizes or more and at least half
/// of those compared, it stands even when the largest missed it. Memory on a shared
/// machine changes speed by ±20–30% between sweeps, and a slowdown of 15% then hides at
/// one size or another: `slowdown: 15%` on tiny-ledger's `build-once` was slower at 5–7 of
/// its 10 sizes in four of twelve pairings with unchanged baselines while one of its two
/// largest held; no pairing of unchanged code (twelve of tiny-ledger, twelve whole
/// catalogs) had a change at four sizes or more. Half the sizes also count when four of
/// them are confirmed and the rest of those called the same way stand alone, provided no
/// size went the other way (`tests/data/gate-runs/`).
pub(super) fn confirm(points: &mut [PointGate]) {
    let calls: Vec<Call> = points.iter().map(|p| p.call).collect();
    for (k, p) in points.iter_mut().enumerate() {
        let next_to = |j: Option<usize>| j.and_then(|j| calls.get(j)).is_some_and(|c| *c == p.call);
        p.confirmed = matches!(p.call, Call::Regression | Call::Improvement)
            && (calls.len() == 1 || next_to(k.checked_sub(1)) || next_to(Some(k + 1)));
    }
    let n = calls.len();
    if n >= 4 {
        for (call, other) in [(Call::Regression, Call::Improvement), (Call::Improvement, Call::Regression)] {
            let held = points.iter().filter(|p| p.call == call && p.confirmed).count();
            // Every size called this way, confirmed by a neighbour or not, with none called
            // the other way: between separate sweeps a 15% slowdown of one design passes the
            // threshold at some sizes and drowns in the machine's own move at others
            // (rehearsed: four confirmed sizes and two lone ones of ten, none faster, the
            // largest among them; no pairing of unchanged sweeps reached that: 32 of them,
            // of the rehearsal workload, two catalog triples and a catalog beside another).
            let called = points.iter().filter(|p| p.call == call).count();
            let against = points.iter().filter(|p| p.call == other).count();
            if held >= MOST_SIZES_MIN && (2 * held >= n || (2 * called >= n && against == 0)) {
                continue;
            }
            // The largest size that could be judged: busy, split and file-system points
            // cannot be called either way, so the one below them stands for it.
            let last = points.iter().rposition(|p| !p.busy && !p.split && !p.files_moved).unwrap_or(n - 1);
            if !points[last..].iter().any(|p| p.call == call && p.confirmed) {
                for p in points.iter_mut().filter(|p| p.call == call && p.confirmed) {
                    p.confirmed = false;
                    p.small_only = true;
                }
            }
        }
    }
}

/// The rank tests of a workload's points taken as one family: each point gets its
/// Benjamini–Hochberg q-value over all of them (`stats::fdr`), and a regression or
/// improvement whose q-value is not below `alpha` becomes `unclear`, as a point whose own
/// test is not significant. Returns whether any call changed (confirmation must then be
/// recomputed). Measured on saved sweeps: of 46 ordered pairings of unchanged catalog and
/// rehearsal sweeps, the one that failed the gate did so on a noisy design confirmed at two
/// neighbouring sizes with p = 0.021 and 0.031 (q = 0.10 and 0.11 among the workload's 28
/// points); every size confirmed in the 12 rehearsal pairings of a 15% slowdown kept its call
/// (the largest q among them 0.03).
pub(super) fn false_discoveries(points: &mut [PointGate], alpha: f64) -> bool {
    let p: Vec<f64> = points.iter().map(|x| x.p_value.unwrap_or(f64::NAN)).collect();
    let q = crate::track::stats::benjamini_hochberg(&p);
    let mut changed = false;
    for (x, q) in points.iter_mut().zip(q) {
        x.q_value = (!q.is_nan()).then_some(q);
        if matches!(x.call, Call::Regression | Call::Improvement) && !(q < alpha) {
            x.call = Call::Unclear;
            changed = true;
        }
    }
    changed
}

pub(super) fn status(w: &WorkloadResults, design: &str, rows: u64) -> String {
    match w.point(design, rows) {
        Some(p) if p.measured.is_some() => "measured".into(),
        Some(p) => format!("skipped: {}", p.skipped.as_ref().map(|s| s.reason.label()).unwrap_or("?")),
        None => "absent".into(),
    }
}

/// new / base of one probe at a point (`pick` reads it from a point's disturbance), when
/// both runs recorded a usable reading.
fn probe_ratio(b: &Measured, m: &Measured, pick: fn(&Disturbance) -> Option<f64>) -> Option<f64> {
    let read = |x: &Measured| x.disturbance.as_ref().and_then(pick).filter(|v| *v > 0.0 && v.is_finite());
    Some(read(m)? / read(b)?)
}

/// How far the files probe (`measure::files_probe`) must move between the runs at a point,
/// in the direction of a change, for a change of a design that writes files not to be
/// called. The probe cannot say how much of a design's time is the file system's: between
/// four quiet sweeps of storage here (5 December) it moved ×0.14 to ×7.2 at the same size
/// between two of them, alike for every design of a size, while the one-file-per-parcel
/// designs moved ×0.32 to ×3.1 with it and the one-file designs ×0.70 to ×1.43. Dividing by it would hide a real change of
/// a design the file system barely touches; so a probe move of a quarter or more, the same
/// way as the change, leaves the change shown and unjudged, as a busy point is. A quarter:
/// about 7% of `ipc-per-parcel`'s time at 2k rows in those sweeps, where it is most exposed
/// (about 6 ms more per ms of probe, over 15 ms of work).
pub const FILES_MOVE: f64 = 1.25;

/// The files probe moved by [`FILES_MOVE`] or more the way `call` goes (ratio `files`).
pub fn moved_with(call: Call, files: f64) -> bool {
    match call {
        Call::Regression => files >= FILES_MOVE,
        Call::Improvement => files <= 1.0 / FILES_MOVE,
        _ => false,
    }
}

/// The call on one point. `raw` is new/base as measured, `corrected` the same after each
/// machine-speed correction there is (the drift probe's, the memory probe's). A change is
/// called only when the raw ratio and every corrected one pass the threshold in the same
/// direction: a correction may explain a change away (the machine or its memory was
/// slower), but never turn equal medians into one.
pub(super) fn judge(raw: f64, corrected: &[Option<f64>], p: Option<f64>, threshold: f64, alpha: f64) -> Call {
    let significant = p.is_some_and(|p| p < alpha);
    let up = |r: f64| r > 1.0 + threshold;
    let down = |r: f64| r < 1.0 / (1.0 + threshold);
    let all = |f: &dyn Fn(f64) -> bool| f(raw) && corrected.iter().flatten().all(|c| f(*c));
    if all(&up) {
        if significant { Call::Regression } else { Call::Unclear }
    } else if all(&down) {
        if significant { Call::Improvement } else { Call::Unclear }
    } else {
        Call::Same
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(rows: u64, p: f64, call: Call) -> PointGate {
        PointGate {
            design: "d".into(),
            rows,
            base_median_ns: 1e6,
            new_median_ns: 1.3e6,
            ratio: 1.3,
            shift: None,
            ratio_low: None,
            ratio_high: None,
            normalised_ratio: None,
            normalised_by: None,
            memory_ratio: None,
            files_ratio: None,
            files_moved: false,
            size_move: None,
            p_value: Some(p),
            q_value: None,
            call,
            confirmed: false,
            small_only: false,
            busy: false,
            split: false,
        }
    }

    /// Six sizes: slower at the third to the fifth (confirmed by each other), not at the
    /// largest. Before 5 December the fifth, one of the two largest, was enough; now the
    /// largest must agree: reported, not failing. When the
    /// largest point was measured busy (it cannot be called), the one below it stands for it.
    #[test]
    fn a_change_must_reach_the_largest_size_that_could_be_judged() {
        let calls = [Call::Same, Call::Same, Call::Regression, Call::Regression, Call::Regression, Call::Same];
        let mut pts: Vec<PointGate> = calls.iter().enumerate().map(|(i, c)| point(1000 << i, 1e-6, *c)).collect();
        confirm(&mut pts);
        assert!(pts.iter().all(|p| !p.confirmed), "{pts:?}");
        assert!(pts[2..5].iter().all(|p| p.small_only), "{pts:?}");
        let mut busy_top: Vec<PointGate> = calls.iter().enumerate().map(|(i, c)| point(1000 << i, 1e-6, *c)).collect();
        busy_top[5].busy = true;
        busy_top[5].call = Call::Unclear;
        confirm(&mut busy_top);
        assert!(busy_top[2..5].iter().all(|p| p.confirmed && !p.small_only), "{busy_top:?}");
        // Reaching the largest: confirmed as before.
        let mut top: Vec<PointGate> = (0..6).map(|i| point(1000 << i, 1e-6, if i >= 3 { Call::Regression } else { Call::Same })).collect();
        confirm(&mut top);
        assert!(top[3..].iter().all(|p| p.confirmed) && top.iter().all(|p| !p.small_only), "{top:?}");
    }

    /// Ten tests: p = 0.001, 0.002, 0.021, 0.031 and six at 0.5. By hand (p·m/rank, then the
    /// running minimum from the top): q = 0.01, 0.01, 0.07, 0.0775 and 0.5 for the rest, so
    /// the two calls at p = 0.021 and 0.031 are unclear and the two below stay.
    #[test]
    fn calls_whose_q_value_is_not_below_alpha_become_unclear() {
        let mut pts: Vec<PointGate> = [0.001, 0.002, 0.021, 0.031].iter().enumerate().map(|(i, &p)| point(1000 << i, p, Call::Regression)).collect();
        pts.extend((4..10).map(|i| point(1000 << i, 0.5, Call::Same)));
        assert!(false_discoveries(&mut pts, 0.05));
        let calls: Vec<Call> = pts.iter().take(4).map(|p| p.call).collect();
        assert_eq!(calls, vec![Call::Regression, Call::Regression, Call::Unclear, Call::Unclear]);
        let q: Vec<f64> = pts.iter().map(|p| p.q_value.expect("q")).collect();
        for (got, want) in q.iter().zip([0.01, 0.01, 0.07, 0.0775, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5]) {
            assert!((got - want).abs() < 1e-12, "{q:?}");
        }
        // Nothing left to demote: no change reported.
        assert!(!false_discoveries(&mut pts, 0.05));
    }
}
