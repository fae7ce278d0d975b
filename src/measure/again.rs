//! A size measured again when the machine ran slower while it was measured.
//!
//! The drift probe (a fixed computation timed once per sampling round, beside the designs)
//! gives each size the machine's own speed. When a size's probe median is ×1.4 or more the
//! median over the workload's sizes, the designs' times there say more about the machine than
//! about them: read back, such points are marked and left out of classes and verdicts
//! (`results::reader::mark_slow_sizes`). Left out, they shrink the measured range, and the
//! class of a design measured over fewer sizes can change; so the sweep measures such a size
//! once more, at once, when its probe ran [`AGAIN_MARGIN`] of that limit or more (×1.33)
//! against the median of the sizes measured so far (three or more): its records are cut
//! from `points.jsonl`, what the designs had learned there is forgotten, and the size is
//! measured as if for the first time. Its comparison
//! record keeps the first attempt's probe ratio (`remeasured_after`). If the second attempt
//! is slow too, it is kept and marked when read, as any other.
//!
//! The second attempt is not charged to the workload's run budget (it would take the time
//! of the sizes after it, and shrink the range it is meant to keep); it is made only when
//! the first took at most [`AGAIN_SHARE`] of that budget. Over five quiet catalog sweeps
//! here, that cost 0–16 s per sweep.
//!
//! Below that ratio a size is kept, but the time a design took there is not read as its own
//! when admission predicts the next size: [`steadied`] divides it by the probe's ratio.

use super::admit::DesignState;
use super::runner::Outcome;
use crate::results::reader::RunResults;

/// A size is measured again from this share of the slow limit on: a little under it,
/// because the median the sweep sees while measuring moves as later sizes come in. In quiet
/// sweep U1 of 2026-12-05, row-growth's 16k rows stood at ×1.398 when it was measured and
/// at ×1.400 once every size was in, marked when read; the limit itself would have let it
/// pass. Over five quiet catalog sweeps, ×1.33 met 13 sizes (as a sweep sees them), whose
/// first attempts took 0–16 s per sweep.
pub const AGAIN_MARGIN: f64 = 0.95;

/// A size is measured again only when its first attempt took at most this share of the
/// workload's run budget (its points' `spent_s`).
pub const AGAIN_SHARE: f64 = 1.0 / 3.0;

/// What the sweep knew before a size: where `points.jsonl` ended and what the designs had
/// learned, to return to when the size is measured again.
pub struct Before {
    pub mark: u64,
    pub states: Vec<DesignState>,
    pub outcome: Outcome,
}

/// The ratio of `rows`' probe median to the median over the workload's sizes measured so
/// far, when it is at least [`AGAIN_MARGIN`] of the slow limit (three sizes or more with a
/// probe); None otherwise.
pub fn slow_now(results: &RunResults, workload: &str, rows: u64) -> Option<f64> {
    let probes = results.workload(workload)?.probes();
    crate::results::reader::slow_sizes(&probes, crate::results::reader::slow_probe() * AGAIN_MARGIN).into_iter().find(|s| s.0 == rows).map(|s| s.1)
}

/// Seconds the designs spent at `rows` (their points' `spent_s`).
pub fn spent_at(results: &RunResults, workload: &str, rows: u64) -> f64 {
    let Some(w) = results.workload(workload) else { return 0.0 };
    w.points.iter().filter(|p| p.rows == rows).filter_map(|p| p.measured.as_ref()).map(|m| m.spent_s).sum()
}

/// The workload's points kept in `results` (the progress count after a cut).
pub fn points_of(results: &RunResults, workload: &str) -> usize {
    results.workload(workload).map_or(0, |w| w.points.len())
}

/// The designs' histories with each size's median divided by how much slower than usual the
/// machine ran there: the probe's median at that size over its median across the workload's
/// sizes measured so far (three or more; the histories unchanged otherwise). Admission
/// predicts the next size from them (`admit::predict_ns`), so that a machine that ran slower
/// at one size does not keep a design out of the next. Why: in quiet sweep U3 of
/// 2026-12-05, row-growth's `extend-in-place` took 228.5 ms a run at 16k rows while the
/// probe there ran ×1.28 its usual time; predicted from it, a run at 32k would take 545 ms,
/// four runs 2.18 s over the 2 s point budget, and the design was not measured at 32k, as it
/// was in three other sweeps (336 ms a run there). Its class and its prediction at the
/// target changed with the range. A size where the machine ran faster is left as it was:
/// corrected upwards, W1's 216 ms at 16k rows (the probe at ×0.87, the machine speeding up
/// and staying fast) became a prediction of 506 ms at 32k, just over the budget, where the
/// time as measured gave 433 ms. A wrong "measure" costs at most the point budget, which
/// stops the sampling; a wrong "skip" loses the size.
pub fn steadied(states: &[DesignState], results: &RunResults, workload: &str) -> Vec<DesignState> {
    let mut out = states.to_vec();
    let Some(w) = results.workload(workload) else { return out };
    let probes = w.probes();
    if probes.len() < 3 {
        return out;
    }
    let usual = super::stats::median(&probes.iter().map(|p| p.1).collect::<Vec<_>>());
    for s in &mut out {
        for (rows, t) in &mut s.history {
            if let Some(p) = probes.iter().rev().find(|p| p.0 == *rows) {
                *t /= (p.1 / usual).max(1.0);
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::results::*;

    fn with_probes(probes: &[(u64, f64)]) -> RunResults {
        let plan = crate::spec::load_str("tiny.yaml", include_str!("../../tests/data/tiny.yaml")).expect("the test spec loads");
        let mut r = RunResults::default();
        r.push(crate::measure::headers::workload_header(&plan, &[]));
        for &(rows, p) in probes {
            r.push(Record::Comparison(ComparisonRecord {
                workload: plan.name.clone(),
                rows,
                fastest: None,
                ratios: vec![],
                equivalence: Equivalence { status: EquivalenceStatus::NotChecked, groups: vec![], note: String::new() },
                probe_ns: Some(p),
                remeasured_after: None,
            }));
        }
        r
    }

    #[test]
    fn a_size_is_slow_against_the_sizes_measured_before_it() {
        // Row-growth in quiet sweep U1 of 2026-12-05: probe medians (µs) of its first six
        // sizes, the sixth (16k rows) at 371.07 against their median 265.40 (its own
        // included): ×1.398 (by hand), over ×1.33 though under the ×1.4 a reader marks.
        let probes = [(500, 265_048.5), (1_000, 265_742.0), (2_000, 264_459.5), (4_000, 263_907.5), (8_000, 268_574.5), (16_000, 371_067.5)];
        let r = with_probes(&probes);
        let w = r.workloads[0].header.workload.clone();
        let ratio = slow_now(&r, &w, 16_000).expect("16k ran slower");
        assert!((ratio - 1.3982).abs() < 1e-3, "{ratio}");
        assert!(slow_now(&r, &w, 8_000).is_none(), "8k ran at the usual speed");
        // Two sizes cannot say what is usual.
        let r = with_probes(&probes[4..]);
        assert!(slow_now(&r, &w, 16_000).is_none());
    }

    #[test]
    fn a_size_the_machine_ran_slower_at_does_not_keep_a_design_out_of_the_next() {
        // Row-growth in quiet sweep U3 of 2026-12-05: the probe medians (ns) of its first six
        // sizes, and `extend-in-place`'s medians at 4k, 8k and 16k rows (ms).
        let probes = [(500, 293_505.5), (1_000, 360_797.0), (2_000, 277_206.0), (4_000, 270_376.0), (8_000, 270_549.0), (16_000, 365_402.5)];
        let r = with_probes(&probes);
        let w = r.workloads[0].header.workload.clone();
        let state = DesignState { history: vec![(4_000, 40.18e6), (8_000, 83.91e6), (16_000, 228.5e6)], ..Default::default() };
        let raw = super::super::admit::predict_ns(&state.history, 32_000).expect("a prediction");
        assert!((raw / 1e6 - 544.9).abs() < 1.0, "{raw}");
        // By hand: usual = (277206 + 293505.5) / 2 = 285355.75; the three sizes ran ×0.9475,
        // ×0.9481 and ×1.2805: the first two are left as measured, the third steadied to
        // 178.45 ms; slope ln(178.45 / 40.18) / ln 4 = 1.0756; at 32k 178.45 × 2^1.0756 =
        // 376.1 ms (the other sweeps measured 336 ms there): four runs fit the 2 s budget.
        let st = steadied(std::slice::from_ref(&state), &r, &w);
        let fair = super::super::admit::predict_ns(&st[0].history, 32_000).expect("a prediction");
        assert!((fair / 1e6 - 376.1).abs() < 1.0, "{fair}");
        // Sweep W1: the machine sped up (the probe at ×0.874 at 16k rows against the six
        // sizes' median 393.6 µs): that time stays as measured, and the prediction at 32k is
        // 216.34 × 2 = 432.7 ms (the slope, 0.93, is held at 1), not 506 ms.
        let fast = [(500, 405_641.0), (1_000, 390_613.5), (2_000, 427_967.0), (4_000, 396_510.5), (8_000, 357_192.0), (16_000, 344_184.0)];
        let r1 = with_probes(&fast);
        let w1 = DesignState { history: vec![(4_000, 59.66e6), (8_000, 104.61e6), (16_000, 216.34e6)], ..Default::default() };
        let st = steadied(std::slice::from_ref(&w1), &r1, &w);
        assert_eq!(st[0].history[2], w1.history[2]);
        let p = super::super::admit::predict_ns(&st[0].history, 32_000).expect("a prediction");
        assert!((p / 1e6 - 432.7).abs() < 0.1, "{p}");
        // Too few sizes to know the usual speed: unchanged.
        let r = with_probes(&probes[..2]);
        assert_eq!(steadied(std::slice::from_ref(&state), &r, &w)[0].history, state.history);
    }
}
