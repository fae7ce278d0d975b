//! `gate RUN --pair OLD:NEW`: two designs of one sweep compared as baseline and change.
//!
//! Between two sweeps the machine itself moves — here memory-bound steps moved ±20–30%
//! between back-to-back sweeps of unchanged code — so a change of 15% at one size cannot be
//! told from it (see `points::confirm`). Two designs measured in the same sweep are sampled
//! in interleaved rounds (A B A B …) and share every move of the machine: the same step
//! twice, one copy slowed by 15% (`slowdown: 15%`), measured ×1.13 to ×1.18 slower at every
//! size from 4k to 256k rows in each of three sweeps. Put the old and the new version of a
//! step side by side (two program designs running two checkouts, two environments, or two
//! recipes) and gate the one against the other.
//!
//! The rules are the gate's between runs, without what only two runs need: each size's
//! ratio of medians NEW/OLD, its Hodges–Lehmann interval and the rank test; a change beyond
//! the threshold and significant is a regression (or an improvement); busy points are
//! judged too (both designs saw the same contention); a change counts when a neighbouring size agrees and, with four sizes or more,
//! it reaches the largest size or holds at most sizes; growth compared as between
//! runs. No probe correction (both designs saw the same machine) and no common move (there
//! is one pair).

use super::points::{confirm, judge, status, Pair};
use super::{growth, Call, GateOptions, GateReport, MissingPoint, PointGate, WorkloadGate, DEFAULT_THRESHOLD};
use crate::results::reader::{RunResults, WorkloadResults};
use crate::track::stats::{hodges_lehmann_ratio_ci, mann_whitney, Method};

/// Compare design `new` with design `old` in every workload of `run` that has both.
pub fn compare_pair(run: &RunResults, old: &str, new: &str, opts: &GateOptions) -> GateReport {
    let id = run.run.as_ref().map(|h| h.run_id.clone()).unwrap_or_default();
    let mut report = GateReport {
        baseline_run: id.clone(),
        new_run: id,
        pair: Some((old.to_string(), new.to_string())),
        ..Default::default()
    };
    for w in &run.workloads {
        let has = |d: &str| w.header.designs.iter().any(|x| x.name == d);
        let lacking: Vec<&str> = [old, new].into_iter().filter(|d| !has(d)).collect();
        if !lacking.is_empty() {
            report.unmatched_workloads.push(format!("{} (no design {})", w.header.workload, lacking.iter().map(|d| format!("`{d}`")).collect::<Vec<_>>().join(" or ")));
            continue;
        }
        report.add(compare_in(w, old, new, opts));
    }
    report
}

fn compare_in(w: &WorkloadResults, old: &str, new: &str, opts: &GateOptions) -> WorkloadGate {
    let threshold = opts.threshold.or(w.header.gate_threshold).unwrap_or(DEFAULT_THRESHOLD);
    let mut wg = WorkloadGate {
        workload: w.header.workload.clone(),
        threshold,
        points: vec![],
        growth: vec![],
        missing: vec![],
        unmatched_designs: vec![],
        common_mode: None,
        axis: w.header.axis.clone(),
        moves: vec![],
        history: None,
        recheck: None,
    };
    let mut sizes: Vec<u64> = w.points.iter().filter(|p| p.design == old || p.design == new).map(|p| p.rows).collect();
    sizes.sort_unstable();
    sizes.dedup();
    let mut common: Vec<Pair> = Vec::new();
    for n in sizes {
        let b = w.point(old, n).and_then(|p| p.measured.as_ref());
        let m = w.point(new, n).and_then(|p| p.measured.as_ref());
        match (b, m) {
            (Some(b), Some(m)) => common.push((n, b, m)),
            _ => wg.missing.push(MissingPoint { design: new.to_string(), rows: n, baseline: status(w, old, n), new: status(w, new, n) }),
        }
    }
    for &(n, b, m) in &common {
        let ratio = m.median_ns / b.median_ns;
        let ci = hodges_lehmann_ratio_ci(&b.samples_ns, &m.samples_ns, 0.95).ok();
        let p = mann_whitney(&m.samples_ns, &b.samples_ns, Method::Auto).ok().map(|t| t.p_two_sided);
        // A busy machine is judged through, unlike between runs: the two designs were
        // sampled in alternating rounds and saw the same contention (the 15% slowdown above,
        // swept beside another sweep: ×1.11 to ×1.16 at four sizes of five; the same step
        // twice: ×0.97 to ×1.08). The flag is kept and shown.
        let busy = b.is_busy() || m.is_busy();
        // Samples in two groups: the median is unstable however they were sampled.
        let split = b.bimodal || m.bimodal;
        let call = match judge(ratio, &[], p, threshold, opts.alpha) {
            Call::Regression | Call::Improvement if split => Call::Unclear,
            c => c,
        };
        wg.points.push(PointGate {
            design: new.to_string(),
            rows: n,
            base_median_ns: b.median_ns,
            new_median_ns: m.median_ns,
            ratio,
            shift: ci.map(|c| c.1),
            ratio_low: ci.map(|c| c.0),
            ratio_high: ci.map(|c| c.2),
            normalised_ratio: None,
            normalised_by: None,
            memory_ratio: None,
            files_ratio: None,
            files_moved: false,
            size_move: None,
            p_value: p,
            q_value: None,
            call,
            confirmed: false,
            small_only: false,
            busy,
            split,
        });
    }
    super::points::false_discoveries(&mut wg.points, opts.alpha);
    confirm(&mut wg.points);
    if let Some(rise) = opts.growth_rise {
        if let Some(g) = growth::time_growth(new, &common, &wg.points, rise, threshold) {
            wg.growth.push(g);
        }
    }
    if let Some(g) = growth::memory_growth(new, &common) {
        wg.growth.push(g);
    }
    // Busy points count: both designs saw the same contention.
    wg.moves = super::design_moves(&wg, true);
    wg
}
