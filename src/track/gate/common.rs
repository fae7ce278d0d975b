//! The workload's common move: between two runs of unchanged code whole workloads move
//! together, so with three or more designs a point is judged against the median move of its
//! workload's points as well (see [`common_mode`]), and confirmation and the time growth
//! calls are rechecked afterwards.

use super::points::confirm;
use super::{Call, CommonMode, PointGate, WorkloadGate};

/// How many robust spreads a point must stand out from its workload's common move.
pub const COMMON_MODE_SPREADS: f64 = 3.0;

/// Between two runs of unchanged code on a shared machine whole workloads move together —
/// their designs run one after another in one process and share its memory, caches and
/// neighbours, which the small CPU-bound drift probe does not see — and single points
/// scatter by more than their own samples show (measured here: three default catalog
/// sweeps of the same build gave 8 to 33 confirmed regressions between pairs). With three
/// or more designs, a workload's points are therefore also judged against the workload's
/// common move: a point is a change only when, divided by the median ratio of all the
/// workload's points, it still passes the threshold and stands out by
/// [`COMMON_MODE_SPREADS`] robust spreads. The common move itself is reported, not judged:
/// a change that slows every design alike (a library upgrade) shows there, so keep a design
/// the change cannot touch in a workload meant to gate such changes. Confirmation is
/// recomputed afterwards.
pub fn common_mode(wg: &mut WorkloadGate, designs: usize, threshold: f64) {
    if designs < 3 || wg.points.len() < 3 {
        return;
    }
    let judged = |p: &PointGate| p.normalised_ratio.unwrap_or(p.ratio).ln();
    let mut logs: Vec<f64> = wg.points.iter().map(judged).filter(|x| x.is_finite()).collect();
    if logs.len() < 3 {
        return;
    }
    logs.sort_by(f64::total_cmp);
    let med = crate::fit::sample::quantile_sorted(&logs, 0.5);
    let mut dev: Vec<f64> = logs.iter().map(|x| (x - med).abs()).collect();
    dev.sort_by(f64::total_cmp);
    let spread = 1.4826 * crate::fit::sample::quantile_sorted(&dev, 0.5);
    wg.common_mode = Some(CommonMode { ratio: med.exp(), spread });
    let bar = (1.0 + threshold).ln().max(COMMON_MODE_SPREADS * spread);
    for p in wg.points.iter_mut() {
        let stands_out = (judged(p) - med).abs() > bar;
        if matches!(p.call, Call::Regression | Call::Improvement) && !stands_out {
            p.call = Call::Unclear;
        }
    }
    // Each design's points are contiguous, in size order (as `compare` pushes them).
    let mut start = 0;
    while start < wg.points.len() {
        let end = (start..wg.points.len()).find(|&i| wg.points[i].design != wg.points[start].design).unwrap_or(wg.points.len());
        confirm(&mut wg.points[start..end]);
        start = end;
    }
    // A time growth call needs its design's largest size to agree (see `compare`): recheck
    // it against the calls as they are now.
    for g in wg.growth.iter_mut().filter(|g| g.metric == "time" && matches!(g.call, Call::Regression | Call::Improvement)) {
        let largest = wg.points.iter().filter(|p| p.design == g.design).max_by_key(|p| p.rows);
        if !largest.is_some_and(|p| p.call == g.call && p.confirmed) {
            g.call = Call::Same;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(design: &str, rows: u64, ratio: f64) -> PointGate {
        PointGate {
            design: design.into(),
            rows,
            base_median_ns: 1e6,
            new_median_ns: 1e6 * ratio,
            ratio,
            shift: Some(ratio),
            ratio_low: None,
            ratio_high: None,
            normalised_ratio: None,
            normalised_by: None,
            p_value: Some(1e-6),
            call: if ratio > 1.1 { Call::Regression } else { Call::Same },
            confirmed: ratio > 1.1,
            busy: false,
            small_only: false,
        }
    }

    fn workload(ratios: &[(&str, f64)]) -> WorkloadGate {
        let mut points = Vec::new();
        for (d, r) in ratios {
            for rows in [1_000, 4_000, 16_000, 64_000] {
                // A little scatter, the same in every design: ±2%.
                let wobble = 1.0 + 0.02 * ((rows / 1000) % 3) as f64 - 0.02;
                points.push(point(d, rows, r * wobble));
            }
        }
        WorkloadGate {
            workload: "w".into(),
            threshold: 0.1,
            points,
            growth: vec![],
            missing: vec![],
            unmatched_designs: vec![],
            common_mode: None,
            axis: None,
        }
    }

    #[test]
    fn a_move_shared_by_every_design_is_reported_not_judged() {
        let mut w = workload(&[("a", 1.3), ("b", 1.3), ("c", 1.3)]);
        common_mode(&mut w, 3, 0.1);
        assert!(w.points.iter().all(|p| p.call == Call::Unclear && !p.confirmed), "{:?}", w.points);
        let cm = w.common_mode.expect("common mode");
        assert!((cm.ratio - 1.3).abs() < 0.03, "{cm:?}");
    }

    #[test]
    fn one_design_slower_than_its_workload_stays_a_regression() {
        let mut w = workload(&[("a", 1.0), ("b", 1.0), ("c", 1.5), ("d", 1.0)]);
        common_mode(&mut w, 4, 0.1);
        for p in &w.points {
            let want = if p.design == "c" { Call::Regression } else { Call::Same };
            assert_eq!(p.call, want, "{p:?}");
        }
        assert!(w.points.iter().filter(|p| p.design == "c").all(|p| p.confirmed));
    }

    #[test]
    fn fewer_than_three_designs_are_left_alone() {
        let mut w = workload(&[("a", 1.3), ("b", 1.3)]);
        common_mode(&mut w, 2, 0.1);
        assert!(w.common_mode.is_none());
        assert!(w.points.iter().all(|p| p.call == Call::Regression));
    }
}
