//! Admission at one size: which designs run there, and why each other one does not.
//!
//! A design is not run at a size when its estimated memory or disk will not fit
//! ([`super::inputs::refusals`], the same rule `sweep --plan` shows), when it failed or ran
//! out of budget at a smaller size, or when its time — extrapolated from the sizes it was
//! measured at — would overrun the point budget or the whole run's. What admission knows of
//! a design is its [`DesignState`], learned from each point as it is written (or read back
//! from `points.jsonl` when a sweep resumes).
//!
//! **Trials.** The extrapolation never assumes time grows more slowly than the rows, which
//! is safe for framecost's own steps (their fixed cost is microseconds) but wrong for a
//! program started once per run: a Python process that took 0.24 s at 1k rows, nearly all
//! of it start-up, was predicted at 15 s at 64k rows and never measured there. So a
//! process-mode program that only the extrapolation keeps out is admitted as an
//! [`Admission::Trial`] when the most hopeful reading of its sizes ([`hopeful_ns`]: all
//! start-up, or start-up plus a part in proportion to the rows) fits the point budget and a
//! whole point budget still fits in the run's: its first run there is stopped at the point
//! budget, and a trial stopped unfinished becomes a skipped point (`trial_over_budget`) that
//! keeps the design out of larger sizes. A trial that finishes is an ordinary first run.

use super::runner::SweepOptions;
use crate::plan::Plan;
use crate::results::{Measured, SkipCause, SkipInfo, SkipReason, StopReason};

/// What later sizes learn from a design's earlier ones.
#[derive(Debug, Default, Clone)]
pub struct DesignState {
    /// (size, median ns) of measured sizes.
    pub history: Vec<(u64, f64)>,
    /// (size, peak live bytes, or a program's peak resident size) of measured sizes.
    pub peaks: Vec<(u64, f64)>,
    /// Why it runs at no larger size, if it does not.
    pub blocked: Option<SkipInfo>,
    /// The size whose point is already written (a resumed sweep's failure).
    pub written_at: Option<u64>,
}

impl DesignState {
    /// Learn from a design's measured point at `rows`.
    pub fn learn_measured(&mut self, plan: &Plan, rows: u64, m: &Measured) {
        let b = plan.budget;
        self.history.push((rows, m.median_ns));
        self.peaks.push((rows, m.program.map(|p| p.peak_resident_bytes as f64).unwrap_or(m.alloc.peak_live as f64)));
        if m.stop == StopReason::PointBudget && (m.samples_ns.len() as u64) < b.min_samples {
            let cause = SkipCause::TooFewSamples { at: rows, budget_ns: b.per_point_s * 1e9, samples: m.samples_ns.len() as u64, needed: b.min_samples, run_ns: m.median_ns };
            self.blocked = Some(SkipInfo::new(SkipReason::SmallerSizeOverBudget, cause));
        }
    }

    /// Learn that a trial run was stopped unfinished (`info`, the point's skip record): the
    /// design is over the budget at every larger size, with no second trial.
    pub fn learn_trial_stopped(&mut self, info: &SkipInfo) {
        self.blocked = Some(SkipInfo { reason: SkipReason::SmallerSizeOverBudget, ..info.clone() });
    }

    /// Learn that the design failed at `rows`: it is not run at larger sizes.
    pub fn learn_failed(&mut self, rows: u64, info: &SkipInfo) {
        // A record from before causes were recorded carries its prose as the step's text.
        let cause = info.cause.clone().unwrap_or_else(|| SkipCause::Step { message: info.detail.clone() });
        self.blocked = Some(SkipInfo { cause: Some(SkipCause::FailedAt { at: rows, cause: Box::new(cause) }), detail: String::new(), ..info.clone() });
    }
}

/// Predicted median time of one run at `rows` from the measured sizes: the log-log slope of
/// the last three (at least 1, so growth is never assumed to be below linear).
pub fn predict_ns(history: &[(u64, f64)], rows: u64) -> Option<f64> {
    let (n0, t0) = *history.last()?;
    let slope = if history.len() >= 2 {
        let tail = &history[history.len().saturating_sub(3)..];
        let x: Vec<f64> = tail.iter().map(|p| p.0 as f64).collect();
        let y: Vec<f64> = tail.iter().map(|p| p.1).collect();
        super::stats::loglog_slope(&x, &y).unwrap_or(1.0).clamp(1.0, 4.0)
    } else {
        1.0
    };
    Some(t0 * (rows as f64 / n0 as f64).powf(slope))
}

/// The most hopeful reading of the measured sizes: a fixed start-up plus a part that grows in
/// proportion to the rows, through the last two sizes (both parts at least zero), or the one
/// measured time unchanged. Only for deciding whether a trial run is worth its cost.
pub fn hopeful_ns(history: &[(u64, f64)], rows: u64) -> Option<f64> {
    let &(n2, t2) = history.last()?;
    if history.len() < 2 {
        return Some(t2);
    }
    let (n1, t1) = history[history.len() - 2];
    let per_row = if n2 > n1 { ((t2 - t1) / (n2 - n1) as f64).max(0.0) } else { 0.0 };
    let fixed = (t2 - per_row * n2 as f64).max(0.0);
    Some(fixed + per_row * rows as f64)
}

/// How a design is let in at a size.
#[derive(Debug, Clone)]
pub enum Admission {
    /// Measured as usual.
    Run,
    /// One trial run first, stopped after `limit_s`; a trial stopped unfinished is written
    /// as `skip` (see the module doc).
    Trial { limit_s: f64, skip: SkipInfo },
}

/// The decision for each design at one size: `Ok` with how it is let in (an [`Admission`]),
/// or why it is skipped.
/// A design whose point at this size is already written gets neither (it is left out).
/// `peaks` are the designs' measured peaks and `limit` the memory the size may count on,
/// as the size's table record states them.
pub fn admit(
    plan: &Plan,
    rows: u64,
    states: &[DesignState],
    opts: &SweepOptions,
    elapsed_run_s: f64,
    peaks: &[Vec<(u64, f64)>],
    limit: &super::memory::MemoryLimit,
) -> Vec<Option<Result<Admission, SkipInfo>>> {
    let b = plan.budget;
    // A hard limit (ulimit, cgroup) cannot be forced past: the allocation would fail, so
    // such a size is refused even with --force.
    let mut refused = super::inputs::refusals(plan, rows, peaks, limit, opts.memory_share, opts.force);
    (0..plan.designs.len())
        .map(|i| {
            let st = &states[i];
            if st.written_at == Some(rows) {
                return None;
            }
            if let Some(info) = refused[i].take() {
                return Some(Err(info));
            }
            if let Some(block) = &st.blocked {
                let mut info = block.clone();
                info.predicted_ns = predict_ns(&st.history, rows).or(info.predicted_ns);
                return Some(Err(info));
            }
            let Some(pred) = predict_ns(&st.history, rows) else {
                return Some(Ok(Admission::Run));
            };
            let cost_s = pred * opts.runs_needed / 1e9;
            if cost_s > b.per_point_s {
                let started_per_run = plan.designs[i].program.as_ref().is_some_and(|p| p.mode == crate::spec::model::ProgramMode::Process);
                let hopeful_s = hopeful_ns(&st.history, rows).unwrap_or(pred) * opts.runs_needed / 1e9;
                if started_per_run && hopeful_s <= b.per_point_s && elapsed_run_s + b.per_point_s <= b.whole_run_s {
                    let cause = SkipCause::TrialOverBudget { at: rows, limit_ns: b.per_point_s * 1e9, runs: opts.runs_needed, budget_ns: b.per_point_s * 1e9 };
                    let skip = SkipInfo { predicted_ns: Some(pred.max(b.per_point_s * 1e9)), ..SkipInfo::new(SkipReason::PredictedOverBudget, cause) };
                    return Some(Ok(Admission::Trial { limit_s: b.per_point_s, skip }));
                }
                let cause = SkipCause::PointBudget { predicted_ns: pred, runs: opts.runs_needed, budget_ns: b.per_point_s * 1e9 };
                return Some(Err(SkipInfo { predicted_ns: Some(pred), ..SkipInfo::new(SkipReason::PredictedOverBudget, cause) }));
            }
            if elapsed_run_s + cost_s > b.whole_run_s {
                let cause = SkipCause::RunBudget { predicted_ns: pred, runs: opts.runs_needed, budget_ns: b.whole_run_s * 1e9, used_ns: elapsed_run_s * 1e9 };
                return Some(Err(SkipInfo { predicted_ns: Some(pred), ..SkipInfo::new(SkipReason::RunBudget, cause) }));
            }
            Some(Ok(Admission::Run))
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The hopeful reading: one size is all start-up; two sizes split into start-up and a
    /// part in proportion to the rows, neither below zero. The cautious extrapolation beside
    /// it never grows slower than the rows.
    #[test]
    fn hopeful_reading_splits_start_up_from_growth() {
        assert_eq!(hopeful_ns(&[], 10), None);
        assert_eq!(hopeful_ns(&[(1_000, 2.4e8)], 64_000), Some(2.4e8));
        // 200 ms of start-up plus 1 µs per row, read from 1k and 64k rows.
        let h = [(1_000, 2.01e8), (64_000, 2.64e8)];
        let at_1m = hopeful_ns(&h, 1_000_000).expect("a reading");
        assert!((at_1m - 1.2e9).abs() < 1e3, "{at_1m}");
        // Time that fell between sizes (noise) is read as start-up alone.
        assert_eq!(hopeful_ns(&[(1_000, 2.5e8), (64_000, 2.4e8)], 1_000_000), Some(2.4e8));
        // Growth faster than the rows leaves no start-up (the line through both sizes would cross
        // zero above zero rows): the per-row part alone, 5 µs a row.
        let steep = hopeful_ns(&[(1_000, 1e6), (4_000, 1.6e7)], 16_000).expect("a reading");
        assert!((steep - 8e7).abs() < 1.0, "{steep}");
        assert!(predict_ns(&h, 1_000_000).expect("a prediction") > 4e9);
    }
}
