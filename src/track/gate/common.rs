//! The workload's common move: between two runs of unchanged code whole workloads move
//! together, so a point is judged against its workload's common move as well — with three
//! or more designs the median move of the other designs at its own size (of all the
//! workload's points where fewer than two others were compared there), the smaller of the
//! two designs' moves with two (see [`common_mode`]) — and confirmation and the time growth
//! calls are rechecked afterwards.

use super::points::confirm;
use super::{Call, CommonMode, PointGate, WorkloadGate};

/// How many robust spreads a point must stand out from its workload's common move.
pub const COMMON_MODE_SPREADS: f64 = 3.0;

/// Between two runs of unchanged code on a shared machine whole workloads move together —
/// their designs run one after another in one process and share its memory, caches and
/// neighbours, which the small CPU-bound drift probe does not see — and single points
/// scatter by more than their own samples show (measured here: three default catalog
/// sweeps of the same build gave 8 to 33 confirmed regressions between pairs). A
/// workload's points are therefore also judged against the workload's common move: with
/// three or more designs, a point is a change only when, divided by its size's common move
/// ([`size_moves`]: the median ratio of the other designs at that size, or of all the
/// workload's points where fewer than [`SIZE_OTHERS_MIN`] others were compared there), it
/// still passes the threshold and stands out by [`COMMON_MODE_SPREADS`] robust spreads of
/// the points around their sizes' moves; with two designs, when divided by the smaller of
/// the two designs' moves (both the same way) it still passes the threshold.
///
/// Why each size's own move: the designs of a size are measured in the same minute on the
/// same tables, and between sweeps of unchanged code that shared move is most of what a
/// point does (`analyse::shift`: 77–80% of the variance of each point's log-distance from
/// its mean over three sweeps). Judged against the whole workload's median, the sizes'
/// moves widen the spread and so the bar: a design slowed 15–20% at every size hid in it.
/// Against their own sizes' moves (5 December; 20 pairings of row-growth sweeps with
/// `slowdown: 15%` or `20%` on `build-once` against five unchanged sweeps): 13 caught
/// against 8, nothing else flagged; 52 ordered pairings of saved catalog sweeps of
/// unchanged code: no more failures than before (see `points::confirm` for the rule that
/// then took them to none). The other designs only, so that a slowed design does not
/// carry its own size's move. The common move itself is reported, not judged:
/// a change that slows every design alike (a library upgrade) shows there, so keep a design
/// the change cannot touch in a workload meant to gate such changes. Confirmation is
/// recomputed afterwards.
pub fn common_mode(wg: &mut WorkloadGate, designs: usize, threshold: f64) {
    if designs < 2 || wg.points.len() < 3 {
        return;
    }
    let judged = |p: &PointGate| p.normalised_ratio.unwrap_or(p.ratio).ln();
    let (med, spread) = if designs == 2 {
        match least_moved(wg, &judged) {
            Some(m) => (m, 0.0),
            None => return,
        }
    } else {
        let mut logs: Vec<f64> = wg.points.iter().map(judged).filter(|x| x.is_finite()).collect();
        if logs.len() < 3 {
            return;
        }
        logs.sort_by(f64::total_cmp);
        let med = crate::fit::sample::quantile_sorted(&logs, 0.5);
        let moves = size_moves(wg, &judged);
        for (p, m) in wg.points.iter_mut().zip(&moves) {
            p.size_move = m.map(f64::exp);
        }
        // The spread is of each point around the others' move at its size, as it is judged.
        // Tried on 5 December and left: the spread around the size's median over all its
        // designs, the point's own among them. Narrower, it caught 16 of the 20 rehearsed
        // slowdowns instead of 13, but failed 6 of the 52 saved pairings of unchanged code
        // and 4 of 30 fresh ones, against none and one.
        let mut dev: Vec<f64> = wg.points.iter().map(|p| (judged(p) - centre(p, med)).abs()).filter(|x| x.is_finite()).collect();
        dev.sort_by(f64::total_cmp);
        (med, 1.4826 * crate::fit::sample::quantile_sorted(&dev, 0.5))
    };
    wg.common_mode = Some(CommonMode { ratio: med.exp(), spread });
    let bar = (1.0 + threshold).ln().max(COMMON_MODE_SPREADS * spread);
    for p in wg.points.iter_mut() {
        let stands_out = (judged(p) - centre(p, med)).abs() > bar;
        if matches!(p.call, Call::Regression | Call::Improvement) && !stands_out {
            p.call = Call::Unclear;
        }
    }
    reconfirm(wg);
}

/// The move (log) a point is judged against: its size's ([`PointGate::size_move`]), else the
/// workload's `common` (log).
pub(super) fn centre(p: &PointGate, common: f64) -> f64 {
    p.size_move.map_or(common, f64::ln)
}

/// Fewest other designs compared at a point's size for that size's own common move.
pub const SIZE_OTHERS_MIN: usize = 2;

/// Each point's size's common move (log): the median judged log-ratio of the other designs
/// compared at the same size, when there are [`SIZE_OTHERS_MIN`] or more; None otherwise
/// (the point is then judged against the workload's median).
fn size_moves(wg: &WorkloadGate, judged: &dyn Fn(&PointGate) -> f64) -> Vec<Option<f64>> {
    wg.points
        .iter()
        .map(|p| {
            let others: Vec<f64> = wg.points.iter().filter(|q| q.rows == p.rows && q.design != p.design).map(judged).filter(|x| x.is_finite()).collect();
            (others.len() >= SIZE_OTHERS_MIN).then(|| crate::fit::sample::median(&others).ok()).flatten()
        })
        .collect()
}

/// Confirmation recomputed for each design after calls were changed (its points are
/// contiguous, in size order, as `compare` pushes them), and each time growth call rechecked
/// against its design's largest size as it is now.
pub(super) fn reconfirm(wg: &mut WorkloadGate) {
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

/// The common move of a workload of two designs: when both designs' median moves (log of
/// the judged ratios over their sizes) go the same way, the smaller of the two — the move
/// both share at least. A median cannot separate "both moved" from "one moved" with two
/// designs; the smaller move can: a design that got slower while the other held keeps its
/// whole change (measured: the SQL engines workload, two designs, moved 1.11–1.36× between
/// back-to-back sweeps of unchanged code, both alike, and failed the gate).
fn least_moved(wg: &WorkloadGate, judged: &dyn Fn(&PointGate) -> f64) -> Option<f64> {
    let mut names: Vec<&str> = wg.points.iter().map(|p| p.design.as_str()).collect();
    names.dedup();
    let moves: Vec<f64> = names
        .iter()
        .filter_map(|d| {
            let mut v: Vec<f64> = wg.points.iter().filter(|p| p.design == *d).map(judged).filter(|x| x.is_finite()).collect();
            v.sort_by(f64::total_cmp);
            (!v.is_empty()).then(|| crate::fit::sample::quantile_sorted(&v, 0.5))
        })
        .collect();
    match moves[..] {
        [a, b] => shared_move(a, b),
        _ => None,
    }
}

/// What two designs' moves (logs) share: the smaller when both went the same way.
pub(super) fn shared_move(a: f64, b: f64) -> Option<f64> {
    (a * b > 0.0).then_some(if a.abs() < b.abs() { a } else { b })
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
            memory_ratio: None,
            files_ratio: None,
            files_moved: false,
            size_move: None,
            p_value: Some(1e-6),
            q_value: None,
            call: if ratio > 1.1 { Call::Regression } else { Call::Same },
            confirmed: ratio > 1.1,
            busy: false,
            split: false,
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
            moves: vec![],
            history: None,
            recheck: None,
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

    /// Every size moved its own way (×1.0 to ×1.25: what a shared machine does between two
    /// sweeps), the same for every design of a size; design `c` was also 20% slower at every
    /// size. Hand check against the whole workload's median, the rule before 5 December: the
    /// 20 log-ratios have median 0.1398 and robust spread 0.1236, so the bar is 3 spreads,
    /// 0.371, and `c` (0.043 to 0.266 above the median) hides in the sizes' moves. Against
    /// its own size's move (the other designs', exactly the size's), every other point
    /// sits on it and `c` 0.182 above (4 of 20 points): spread 0, bar ln 1.1 = 0.095, so `c`
    /// stands out at every size and nothing else does.
    #[test]
    fn a_design_is_judged_against_the_other_designs_at_its_own_size() {
        let size_move = |rows: u64| match rows {
            1_000 => 1.0,
            4_000 => 1.25,
            16_000 => 1.1,
            _ => 1.15,
        };
        let mut w = workload(&[]);
        for d in ["a", "b", "c", "d", "e"] {
            for rows in [1_000, 4_000, 16_000, 64_000] {
                let slowed = if d == "c" { 1.2 } else { 1.0 };
                w.points.push(point(d, rows, size_move(rows) * slowed));
            }
        }
        common_mode(&mut w, 5, 0.1);
        for p in &w.points {
            assert!((p.size_move.expect("four others at every size") - size_move(p.rows)).abs() < 1e-9, "{p:?}");
            if p.design == "c" {
                assert!(p.call == Call::Regression && p.confirmed, "{p:?}");
            } else {
                assert!(p.call != Call::Regression && !p.confirmed, "{p:?}");
            }
        }
        assert!(w.common_mode.expect("common move").spread.abs() < 1e-12);
    }

    #[test]
    fn a_size_with_fewer_than_two_other_designs_falls_back_to_the_workload_median() {
        let mut w = workload(&[("a", 1.0), ("b", 1.0), ("c", 1.0)]);
        w.points.retain(|p| p.rows != 64_000 || p.design == "c");
        common_mode(&mut w, 3, 0.1);
        assert!(w.points.iter().filter(|p| p.rows == 64_000).all(|p| p.size_move.is_none()));
        assert!(w.points.iter().filter(|p| p.rows < 64_000).all(|p| p.size_move.is_some()));
    }

    #[test]
    fn two_designs_that_moved_alike_are_reported_not_judged() {
        let mut w = workload(&[("a", 1.3), ("b", 1.25)]);
        common_mode(&mut w, 2, 0.1);
        let cm = w.common_mode.expect("common move");
        assert!((cm.ratio - 1.25).abs() < 0.03, "the smaller of the two moves: {cm:?}");
        assert!(w.points.iter().all(|p| p.call == Call::Unclear && !p.confirmed), "{:?}", w.points);
    }

    #[test]
    fn of_two_designs_the_one_that_moved_alone_stays_a_regression() {
        // b held (1.0 ± 2%), a got 30% slower: the common move is b's, a keeps its change.
        let mut w = workload(&[("a", 1.3), ("b", 1.0)]);
        common_mode(&mut w, 2, 0.1);
        assert!(w.points.iter().filter(|p| p.design == "a").all(|p| p.call == Call::Regression && p.confirmed), "{:?}", w.points);
        // Moves in opposite directions share nothing: no common move at all.
        let mut w = workload(&[("a", 1.3), ("b", 0.8)]);
        common_mode(&mut w, 2, 0.1);
        assert!(w.common_mode.is_none());
        assert!(w.points.iter().filter(|p| p.design == "a").all(|p| p.call == Call::Regression));
    }

    #[test]
    fn one_design_is_left_alone() {
        let mut w = workload(&[("a", 1.3)]);
        common_mode(&mut w, 1, 0.1);
        assert!(w.common_mode.is_none());
        assert!(w.points.iter().all(|p| p.call == Call::Regression));
    }
}
