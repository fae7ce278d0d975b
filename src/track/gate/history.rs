//! The gate against a history of earlier runs (`gate BASELINE NEW --history DIR`).
//!
//! Between two separate sweeps of unchanged code a design can move by more than a realistic
//! slowdown: each run has its own state (memory, files, neighbours) that a design answers in
//! its own way, and two runs cannot tell that from a change of the code. Measured on nine
//! catalog sweeps of unchanged code over two sessions (4 December, a 2-core Xeon): the
//! two-run gate failed 10 of 63 ordered pairings (on `ipc-per-parcel` ×1.4–×1.6, `window`
//! ×1.2–×1.5, `binary-search` ×1.2–×1.4, `hash-index-prebuilt` ×1.2–×1.3, a column build
//! ×1.2 at two sizes, a self-join ×1.11 over its sizes: each time one run out of line). A
//! history of runs of the baseline's code shows how far each design wanders by itself, and
//! a change is called only beyond that.
//!
//! For one workload with at least [`MIN_RUNS`] history runs (the baseline among them), over
//! the points measured cleanly (not busy, not split) in the new run and every history run:
//!
//! - `μ` = each point's mean log median over the history runs;
//! - a run's **common move** = the median over the workload's points of its log median
//!   minus `μ` (the run's own state, shared by its designs);
//! - a run's **effect** at a point = log median − `μ` − its common move; a design's effect is
//!   the mean of its points' (three sizes or more);
//! - `s` = the standard deviation of the history runs' effects (design or point), `k` runs;
//! - the bar = the larger of ln(1 + threshold) and `t(0.995, k−1) · s · √(1 + 1/k)` (a
//!   99.5% one-sided prediction bound for one more run of the same code);
//! - a design is **slower than its history** when its effect in the new run passes the bar,
//!   all its sizes but at most one moved that way (one size far out can carry a mean: an
//!   unchanged row-by-row split ×1.8 at its largest size in one sweep, ×1.11 over its five
//!   sizes, its other four ×0.92–×1.03), and its raw medians rose on average (no
//!   correction turns medians that did not rise into a slowdown); faster alike;
//! - a point or design change found against the baseline alone stands only where the
//!   history agrees: a point whose effect stays within its own bar, or a design move the
//!   history does not call, is `unclear` (the text says the history holds it).
//!
//! The same judgement serves `gate --recheck N` from the other side ([`Side::New`]): the
//! runs are the new run and its workloads swept again, the run judged is the baseline, and
//! its effect is turned round so that a slower new code still reads as a regression. There
//! it only confirms or clears the designs the baseline alone called ([`suspects`]), at the
//! one-sided level [`RECHECK_LEVEL`]. Measured (`benches/gate-recheck.py`) on 56 ordered
//! pairings of eight unchanged catalog sweeps of one session and 40 pairings of those
//! against five with `build-once` slowed 15%, each new run with four others of its own code
//! as its resweeps: 16 of 56 unchanged pairings failed against the baseline alone, none
//! with the recheck; the slowdown was caught in 20 of 40, and 19 with the recheck; other
//! designs called beside it went from 8 of 40 to none. With fourteen unchanged sweeps of
//! three sessions (182 pairings, 70 slowed): 39 failed alone, 8 with the recheck; caught 29
//! and 25; others called beside it in 11 and 0. A baseline sweep that was itself out of
//! line can still read as a change: before the two-design common move below, one unchanged
//! pairing kept failing that way (a window query its baseline's sweep ran ×1.2–×1.5 faster
//! than the other sweeps did).
//!
//! Measured (`benches/gate-history.py`) on fourteen catalog sweeps of unchanged code over
//! two sessions and five with row-growth's `build-once` slowed by `slowdown: 15%`: against
//! the baseline alone 39 of 182 unchanged pairings failed and the slowdown was caught in 29
//! of 70 pairings (other designs called beside it in 11); each run against a history of the
//! 13 or 14 others, 1 of 14 unchanged runs failed (`binary-search` ×1.11 and
//! `ipc-per-parcel`, one sweep out of line) and 5 of 5 slowed ones were caught (another
//! design called beside it in 1). The rules were set on the first sixteen sweeps; of three
//! made after, against the twelve before them, the two unchanged passed and the slowed one
//! failed on an unchanged design (`partitions-loop` ×1.10) with `build-once` just under the
//! bar (×1.094 against ×1.10). Shorter histories (offline, on the first eleven): with 7
//! runs 10 of 72 unchanged choices failed, 63 of 72 slowed caught; with 5, 79 of 504 and
//! 100 of 252. Keep eight or more runs.

use super::{common, Call, GateReport, WorkloadGate};
use crate::results::reader::{RunResults, WorkloadResults};
use serde::{Deserialize, Serialize};

/// Fewest history runs (baseline included) for a workload to be judged against them.
pub const MIN_RUNS: usize = 5;
/// One-sided level of the prediction bound.
pub const LEVEL: f64 = 0.995;
/// One-sided level of the bound when the runs are the new code's (`--recheck`): each design
/// the baseline alone called is asked once, not every design of every workload.
pub const RECHECK_LEVEL: f64 = 0.975;
/// Fewest sizes a design's effect is averaged over.
pub const MIN_SIZES: usize = 3;

/// What the history said about one workload.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub struct History {
    /// History runs with this workload (the baseline among them).
    pub runs: usize,
    /// With `--recheck` when the baseline's workload was swept again too ([`judge_both`]):
    /// its runs, the baseline among them (`runs` then counts the new code's). 0 otherwise.
    #[serde(default, skip_serializing_if = "is_zero")]
    pub baseline_runs: usize,
    /// Each design's effect in the new run against its history.
    pub moves: Vec<HistoryMove>,
    /// Points whose change against the baseline the history's spread holds (design, size).
    pub held: Vec<(String, u64)>,
}

/// The resweeps of `gate --recheck N`.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub struct RecheckSummary {
    /// Runs of the new code asked for per workload, the new run among them.
    pub runs: usize,
    /// Workloads judged against their resweeps.
    pub workloads: Vec<String>,
    /// Resweeps made now (earlier ones kept in the new run's `rechecks/` are reused).
    pub swept: usize,
    /// Workloads that would have failed but could not be swept again, with the reason.
    pub not_rechecked: Vec<(String, String)>,
    /// Where the resweeps are.
    pub folder: String,
    /// Resweeps of the baseline's workloads made now, from the text the baseline recorded
    /// (kept in the baseline's `rechecks/`), when both runs were made by this framecost build.
    #[serde(default)]
    pub baseline_swept: usize,
    /// Why the baseline's workloads were not swept again, when they were not.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub baseline_not_swept: Option<String>,
}

/// One design's move against its history.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct HistoryMove {
    pub design: String,
    pub sizes: usize,
    /// Sizes whose effect went the same way as the mean: all but at most one for a call.
    #[serde(default)]
    pub same_way: usize,
    /// exp(effect in the new run): its time relative to the history's mean, after the
    /// run's common move.
    pub ratio: f64,
    /// exp(bar): how far the ratio must be from ×1 to be called.
    pub bar: f64,
    /// exp(s): the history runs' own spread of the effect.
    pub spread: f64,
    /// Geometric mean of the new run's raw medians over the history's means.
    pub raw_ratio: f64,
    pub call: Call,
}

fn is_zero(n: &usize) -> bool {
    *n == 0
}

pub(super) fn mean(v: &[f64]) -> f64 {
    v.iter().sum::<f64>() / v.len() as f64
}

pub(super) fn sd(v: &[f64]) -> f64 {
    let m = mean(v);
    (v.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (v.len() as f64 - 1.0)).sqrt()
}

/// A run's common move over a workload's points (`moved[i]`: log median − the history's
/// mean at point i, of design `designs[i]`): the median over the points, which one design
/// of three or more cannot carry. With two designs a median lies between them, so one
/// design slowed by ×3 read as ×1.5 slower and the other ×0.7 faster (measured, a recheck
/// of a build step made three times the work); there, as for the gate against the baseline
/// alone (`common::least_moved`), the smaller of the two designs' median moves when both
/// went the same way, and none when they went opposite ways.
pub(super) fn common_move(designs: &[&str], moved: &[f64]) -> f64 {
    let median = |v: &[f64]| crate::fit::sample::median(v).unwrap_or(0.0);
    let mut names: Vec<&str> = designs.to_vec();
    names.dedup();
    if names.len() != 2 {
        return median(moved);
    }
    let of = |d: &str| median(&designs.iter().zip(moved).filter(|(n, _)| **n == d).map(|(_, v)| *v).collect::<Vec<_>>());
    common::shared_move(of(names[0]), of(names[1])).unwrap_or(0.0)
}

/// The log median of a clean point.
pub(super) fn clean(w: &WorkloadResults, design: &str, rows: u64) -> Option<f64> {
    let m = w.point(design, rows)?.measured.as_ref()?;
    (!m.is_busy() && !m.bimodal && m.median_ns > 0.0).then(|| m.median_ns.ln())
}

/// Judge every workload of `report` that has enough history runs as well (module doc), and
/// recount the report.
pub fn judge(report: &mut GateReport, history: &[&RunResults], new: &RunResults) {
    for wg in report.workloads.iter_mut() {
        let Some(nw) = new.workloads.iter().find(|w| w.header.workload == wg.workload) else { continue };
        let hs: Vec<&WorkloadResults> = history
            .iter()
            .filter_map(|r| r.workloads.iter().find(|w| w.header.workload == wg.workload && w.header.axis == nw.header.axis))
            .collect();
        if hs.len() >= MIN_RUNS {
            let out = judge_workload(wg, &hs, nw, Side::Baseline);
            wg.history = Some(out);
        }
    }
    report.recount();
}

/// Whose code the runs of a history are: the baseline's (`--history`: the new run is judged
/// against them) or the new run's (`--recheck`: the new run's workloads swept again, and
/// the baseline judged against them, with the sign turned so that a slower new code still
/// reads as a regression).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    Baseline,
    New,
}

/// The indices of each design's points in `designs` (one name per point, a design's points
/// contiguous), for the designs with at least [`MIN_SIZES`] of them.
pub(super) fn by_design<'a>(designs: &[&'a str]) -> Vec<(&'a str, Vec<usize>)> {
    let mut names = designs.to_vec();
    names.dedup();
    names.into_iter().map(|name| (name, (0..designs.len()).filter(|&i| designs[i] == name).collect::<Vec<_>>())).filter(|(_, idx)| idx.len() >= MIN_SIZES).collect()
}

/// The designs a recheck asks about: those the baseline alone (or the baseline's history)
/// called slower, at confirmed sizes, across their sizes or in growth. A recheck confirms or
/// clears these; it calls nothing new. Asking about more designs catches more and fails
/// more unchanged code, because a baseline sweep out of line on some design reads as a
/// slowdown of the new code, and the recheck, with only the new code at hand, cannot tell
/// (`benches/gate-recheck.py`, 14 unchanged and 5 slowed catalog sweeps: these suspects
/// failed 8 of 182 unchanged pairings and caught 25 of 70 slowed ones; adding designs
/// slower over all their sizes by more than the threshold, with the interval past half of
/// it and the raw medians risen, 17 and 44; adding every design whose move passed the
/// threshold, on the first eight and five, 11 of 56 and 31 of 40 against 0 and 19).
pub fn suspects(wg: &WorkloadGate) -> Vec<String> {
    let mut v: Vec<String> = wg.points.iter().filter(|p| p.call == Call::Regression && p.confirmed).map(|p| p.design.clone()).collect();
    v.extend(wg.moves.iter().filter(|m| m.call == Call::Regression).map(|m| m.design.clone()));
    v.extend(wg.growth.iter().filter(|g| g.call == Call::Regression).map(|g| g.design.clone()));
    v.extend(wg.history.iter().flat_map(|h| &h.moves).filter(|m| m.call == Call::Regression).map(|m| m.design.clone()));
    v.sort();
    v.dedup();
    v
}

/// The designs a recheck asks about: `asked` (the suspects) and the improvements the
/// baseline alone called, which it may clear too.
pub(super) fn asked_with_improvements(wg: &WorkloadGate, mut asked: Vec<String>) -> Vec<String> {
    asked.extend(wg.moves.iter().filter(|m| m.call == Call::Improvement).map(|m| m.design.clone()));
    asked.extend(wg.points.iter().filter(|p| p.call == Call::Improvement && p.confirmed).map(|p| p.design.clone()));
    asked
}

/// Points called against the baseline alone stand only where `beyond` (None: no runs at
/// that point) says the runs agree; the others become `unclear` and are listed as held.
pub(super) fn hold_points(wg: &mut WorkloadGate, out: &mut History, beyond: &dyn Fn(&str, u64, Call) -> Option<bool>) {
    for p in wg.points.iter_mut().filter(|p| matches!(p.call, Call::Regression | Call::Improvement)) {
        if beyond(&p.design, p.rows, p.call) == Some(false) {
            p.call = Call::Unclear;
            out.held.push((p.design.clone(), p.rows));
        }
    }
    common::reconfirm(wg);
}

/// A design's call from its effect (log, above 0 slower), the bar it must pass, its raw
/// move and whether all its sizes but one moved the same way; only designs asked about.
pub(super) fn design_call(asked: bool, effect: f64, bar: f64, raw: f64, steady: bool) -> Call {
    if !asked || effect.abs() <= bar {
        Call::Same
    } else if effect > 0.0 && raw > 0.0 && steady {
        Call::Regression
    } else if effect < 0.0 && raw < 0.0 && steady {
        Call::Improvement
    } else {
        Call::Unclear
    }
}

/// A design moved over its sizes against the baseline alone stands only where `out` calls
/// it the same way; with `history_too`, so does a design a history called (a recheck beside
/// a history).
pub(super) fn demote_unsupported(wg: &mut WorkloadGate, out: &History, history_too: bool) {
    let unsupported = |design: &str, call: Call| matches!(call, Call::Regression | Call::Improvement) && !out.moves.iter().any(|h| h.design == design && h.call == call);
    for m in wg.moves.iter_mut().filter(|m| unsupported(&m.design, m.call)) {
        m.call = Call::Unclear;
    }
    if history_too {
        for m in wg.history.iter_mut().flat_map(|h| h.moves.iter_mut()).filter(|m| unsupported(&m.design, m.call)) {
            m.call = Call::Unclear;
        }
    }
}

/// Judge one workload's calls against runs of one side's code, `judged` being a run of the
/// other side (module doc); the calls against the baseline alone that the runs do not
/// support become `unclear`.
pub fn judge_workload(wg: &mut WorkloadGate, hs: &[&WorkloadResults], judged: &WorkloadResults, side: Side) -> History {
    let nw = judged;
    // Effects are read as the new code's change: the judged run's own for a history of the
    // baseline's code, turned round for a history of the new code.
    let sign = if side == Side::Baseline { 1.0 } else { -1.0 };
    let k = hs.len();
    // Points clean in the new run and in every history run: (design, rows, new, history).
    let mut keys: Vec<(String, u64, f64, Vec<f64>)> = Vec::new();
    for p in &wg.points {
        let Some(v) = clean(nw, &p.design, p.rows) else { continue };
        let h: Option<Vec<f64>> = hs.iter().map(|w| clean(w, &p.design, p.rows)).collect();
        if let Some(h) = h {
            keys.push((p.design.clone(), p.rows, v, h));
        }
    }
    if keys.len() < MIN_SIZES {
        return History { runs: k, ..Default::default() };
    }
    let mu: Vec<f64> = keys.iter().map(|(_, _, _, h)| mean(h)).collect();
    let designs: Vec<&str> = keys.iter().map(|key| key.0.as_str()).collect();
    let common_new = common_move(&designs, &keys.iter().zip(&mu).map(|(key, m)| key.2 - m).collect::<Vec<_>>());
    let common_h: Vec<f64> = (0..k).map(|j| common_move(&designs, &keys.iter().zip(&mu).map(|(key, m)| key.3[j] - m).collect::<Vec<_>>())).collect();
    let eff_new: Vec<f64> = keys.iter().zip(&mu).map(|(key, m)| sign * (key.2 - m - common_new)).collect();
    let eff_h: Vec<Vec<f64>> = keys.iter().zip(&mu).map(|(key, m)| (0..k).map(|j| key.3[j] - m - common_h[j]).collect()).collect();
    let level = if side == Side::Baseline { LEVEL } else { RECHECK_LEVEL };
    let t = crate::fit::dist::student_t_quantile(level, (k - 1) as f64).unwrap_or(f64::INFINITY);
    // A recheck confirms or clears the designs the baseline alone called, and nothing else.
    let flagged = if side == Side::New { asked_with_improvements(wg, suspects(wg)) } else { Vec::new() };
    let floor = (1.0 + wg.threshold).ln();
    let bar = |s: f64| floor.max(t * s * (1.0 + 1.0 / k as f64).sqrt());
    let mut out = History { runs: k, ..Default::default() };

    // Points: a change against the baseline stands only beyond its own history's bar.
    hold_points(wg, &mut out, &|design, rows, call| {
        let i = keys.iter().position(|key| key.0 == design && key.1 == rows)?;
        let e = eff_new[i];
        Some(e.abs() > bar(sd(&eff_h[i])) && (e > 0.0) == (call == Call::Regression))
    });

    // Designs: the mean effect over their sizes.
    for (name, idx) in by_design(&designs) {
        let e = mean(&idx.iter().map(|&i| eff_new[i]).collect::<Vec<_>>());
        let per_run: Vec<f64> = (0..k).map(|j| mean(&idx.iter().map(|&i| eff_h[i][j]).collect::<Vec<_>>())).collect();
        let s = sd(&per_run);
        let raw = sign * mean(&idx.iter().map(|&i| keys[i].2 - mu[i]).collect::<Vec<_>>());
        let b = bar(s);
        // A change of the code moves every size; one size far out (a point ×1.8 in one
        // run) can carry the mean alone.
        let same_way = idx.iter().filter(|&&i| eff_new[i] != 0.0 && (eff_new[i] > 0.0) == (e > 0.0)).count();
        let steady = same_way + 1 >= idx.len();
        let asked = side == Side::Baseline || flagged.iter().any(|f| f == name);
        let call = design_call(asked, e, b, raw, steady);
        out.moves.push(HistoryMove { design: name.to_string(), sizes: idx.len(), same_way, ratio: e.exp(), bar: b.exp(), spread: s.exp(), raw_ratio: raw.exp(), call });
    }
    // A design moved over its sizes against the baseline alone stands only where its history
    // calls it the same way; with both a history and a recheck, a design the history called
    // stands only where the recheck calls it too.
    demote_unsupported(wg, &out, side == Side::New);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The common move by hand: with two designs, what both moved (the smaller move when
    /// they agree, none when they do not); with three, the median over the points.
    #[test]
    fn two_designs_share_only_what_both_moved() {
        let d = ["a", "a", "a", "b", "b", "b"];
        let one_moved = [3f64.ln(); 3].iter().chain(&[0.0; 3]).copied().collect::<Vec<_>>();
        assert_eq!(common_move(&d, &one_moved), 0.0);
        let both = [0.3, 0.3, 0.3, 0.1, 0.1, 0.1];
        assert!((common_move(&d, &both) - 0.1).abs() < 1e-12);
        let apart = [0.3, 0.3, 0.3, -0.1, -0.1, -0.1];
        assert_eq!(common_move(&d, &apart), 0.0);
        let three = ["a", "a", "b", "b", "c", "c"];
        let moved = [1.0, 1.0, 0.1, 0.1, 0.0, 0.0];
        assert!((common_move(&three, &moved) - 0.1).abs() < 1e-12);
    }

    /// Hand check of the bar: five history runs whose effects have a standard deviation of
    /// 0.02; t(0.995, 4) = 4.604 (any t table); √(1 + 1/5) = 1.0954; so the bar is
    /// 4.604 × 0.02 × 1.0954 = 0.1009, just above ln 1.10 = 0.0953.
    #[test]
    fn the_bar_is_a_prediction_bound_for_one_more_run() {
        let t = crate::fit::dist::student_t_quantile(LEVEL, 4.0).unwrap();
        assert!((t - 4.604).abs() < 1e-3, "{t}");
        let runs = [0.02, -0.02, 0.0, 0.02, -0.02];
        let s = sd(&runs);
        // Sample SD (n − 1): the deviations 0.02, 0.02, 0, 0.02, 0.02 give √(0.0016 / 4) = 0.02.
        assert!((s - 0.02).abs() < 1e-12, "{s}");
        let bar = (1.10f64).ln().max(t * s * (1.2f64).sqrt());
        assert!((bar - 0.1009).abs() < 2e-4, "{bar}");
    }
}
