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
    /// Time spent around each sample outside it (the cache sweep before it, and the files
    /// probe for a design that writes files), per sample, at the last measured size: what
    /// the run budget pays beyond the samples themselves.
    pub overhead_ns: f64,
}

impl DesignState {
    /// Learn from a design's measured point at `rows`.
    pub fn learn_measured(&mut self, plan: &Plan, rows: u64, m: &Measured) {
        let b = plan.budget;
        self.history.push((rows, m.median_ns));
        let probe = |x: Option<f64>| x.filter(|x| x.is_finite() && *x > 0.0).unwrap_or(0.0);
        self.overhead_ns = m.disturbance.as_ref().map_or(0.0, |d| probe(d.memory_probe_ns) + probe(d.files_probe_ns));
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
    /// Measured as usual, but with less than the point budget: what is left of the run's
    /// budget after the cheaper designs at the size ([`share_run_budget`]), as seconds of its
    /// own runs (the time [`crate::measure::sampling::Active::spent_s`] counts).
    Shared { share_s: f64 },
    /// One trial run first, stopped after `limit_s`; a trial stopped unfinished is written
    /// as `skip` (see the module doc).
    Trial { limit_s: f64, skip: SkipInfo },
}

/// The decision for each design at one size: `Ok` with how it is let in (an [`Admission`]),
/// or why it is skipped.
/// A design whose point at this size is already written gets neither (it is left out), nor
/// does any design but `only` when it is given (the extra size, `extra.rs`, measures one).
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
    only: Option<usize>,
) -> Vec<Option<Result<Admission, SkipInfo>>> {
    let b = plan.budget;
    // A hard limit (ulimit, cgroup) cannot be forced past: the allocation would fail, so
    // such a size is refused even with --force.
    let mut refused = super::inputs::refusals(plan, rows, peaks, limit, opts.memory_share, opts.force);
    // First each design on its own (refusals, blocks, the point budget); the designs that
    // pass wait for the run budget, which they share (below).
    let mut decisions: Vec<Option<Result<Admission, SkipInfo>>> = Vec::with_capacity(plan.designs.len());
    let mut waiting: Vec<Waiting> = Vec::new();
    for i in 0..plan.designs.len() {
        let st = &states[i];
        // At the extra size only one design runs: the others take no share of the budget.
        if st.written_at == Some(rows) || only.is_some_and(|o| o != i) {
            decisions.push(None);
            continue;
        }
        if let Some(info) = refused[i].take() {
            decisions.push(Some(Err(info)));
            continue;
        }
        if let Some(block) = &st.blocked {
            let mut info = block.clone();
            info.predicted_ns = predict_ns(&st.history, rows).or(info.predicted_ns);
            decisions.push(Some(Err(info)));
            continue;
        }
        let Some(pred) = predict_ns(&st.history, rows) else {
            decisions.push(Some(Ok(Admission::Run)));
            continue;
        };
        let cost_s = pred * opts.runs_needed / 1e9;
        if cost_s > b.per_point_s {
            let started_per_run = plan.designs[i].program.as_ref().is_some_and(|p| p.mode == crate::spec::model::ProgramMode::Process);
            let hopeful_s = hopeful_ns(&st.history, rows).unwrap_or(pred) * opts.runs_needed / 1e9;
            if started_per_run && hopeful_s <= b.per_point_s && elapsed_run_s + b.per_point_s <= b.whole_run_s {
                let cause = SkipCause::TrialOverBudget { at: rows, limit_ns: b.per_point_s * 1e9, runs: opts.runs_needed, budget_ns: b.per_point_s * 1e9 };
                let skip = SkipInfo { predicted_ns: Some(pred.max(b.per_point_s * 1e9)), ..SkipInfo::new(SkipReason::PredictedOverBudget, cause) };
                decisions.push(Some(Ok(Admission::Trial { limit_s: b.per_point_s, skip })));
                continue;
            }
            let cause = SkipCause::PointBudget { predicted_ns: pred, runs: opts.runs_needed, budget_ns: b.per_point_s * 1e9 };
            decisions.push(Some(Err(SkipInfo { predicted_ns: Some(pred), ..SkipInfo::new(SkipReason::PredictedOverBudget, cause) })));
            continue;
        }
        decisions.push(Some(Ok(Admission::Run)));
        waiting.push(Waiting { index: i, pred_ns: pred, overhead_ns: st.overhead_ns });
    }
    share_run_budget(&mut decisions, &waiting, b, opts.runs_needed, elapsed_run_s);
    decisions
}

/// A design that passed every check but the run budget at one size.
#[derive(Debug, Clone, Copy)]
struct Waiting {
    index: usize,
    /// Predicted time of one run.
    pred_ns: f64,
    /// Time around each sample outside it ([`DesignState::overhead_ns`]).
    overhead_ns: f64,
}

impl Waiting {
    /// What `runs` runs take of the run: the runs, what surrounds each, and the warm-up runs.
    fn cost_s(&self, runs: f64, b: &crate::results::Budget) -> f64 {
        (runs * (self.pred_ns + self.overhead_ns) + b.warmup as f64 * self.pred_ns) / 1e9
    }

    /// What the design is expected to take of the run once let in: as many runs as its point
    /// budget allows (sampling time counts against it), at most `max_samples`.
    fn expected_s(&self, b: &crate::results::Budget) -> f64 {
        let runs = if self.pred_ns > 0.0 { (b.per_point_s * 1e9 / self.pred_ns).min(b.max_samples as f64) } else { b.max_samples as f64 };
        self.cost_s(runs, b)
    }
}

/// The designs `waiting` at one size share what is left of the whole run's budget,
/// **cheapest first**: a design is let in when `runs` of its runs still fit after what the
/// cheaper ones let in before it are expected to take ([`Waiting::expected_s`]), and may
/// spend no more than what they leave ([`Admission::Shared`]). The others are skipped with
/// the run budget as their cause.
///
/// Each design judged alone against the time left (as before) let every design in at the
/// size where the budget ran low; they were then sampled in turns and the budget stopped all
/// of them together after 3 or 4 samples each (row-growth at 32k rows: five designs, 3–4
/// samples each), and the cheap designs never reached the next size.
fn share_run_budget(decisions: &mut [Option<Result<Admission, SkipInfo>>], waiting: &[Waiting], b: crate::results::Budget, runs: f64, elapsed_run_s: f64) {
    let mut order = waiting.to_vec();
    order.sort_by(|x, y| x.pred_ns.total_cmp(&y.pred_ns).then(x.index.cmp(&y.index)));
    let mut kept_s = 0.0;
    for w in order {
        let left_s = b.whole_run_s - elapsed_run_s - kept_s;
        if w.cost_s(runs, &b) > left_s {
            let cause = SkipCause::RunBudget { predicted_ns: w.pred_ns, runs, budget_ns: b.whole_run_s * 1e9, used_ns: elapsed_run_s * 1e9, kept_ns: kept_s * 1e9 };
            decisions[w.index] = Some(Err(SkipInfo { predicted_ns: Some(w.pred_ns), ..SkipInfo::new(SkipReason::RunBudget, cause) }));
            continue;
        }
        let expected_s = w.expected_s(&b);
        if expected_s > left_s {
            // Less than its point budget is left: it may spend what is left, counted as its
            // own runs' time (the cache sweeps around them come out of the same time).
            let share_s = left_s * w.pred_ns / (w.pred_ns + w.overhead_ns);
            decisions[w.index] = Some(Ok(Admission::Shared { share_s }));
        }
        kept_s += expected_s.min(left_s);
    }
}

/// What a resumed sweep knows of each design from the points already written.
pub(super) fn resumed_states(plan: &Plan, results: &crate::results::reader::RunResults, from: usize) -> Vec<DesignState> {
    let mut states: Vec<DesignState> = plan.designs.iter().map(|_| DesignState::default()).collect();
    let Some(w) = results.workload(&plan.name) else {
        return states;
    };
    for p in &w.points {
        let Some(i) = plan.designs.iter().position(|d| d.name == p.design) else {
            continue;
        };
        if plan.sizes.iter().position(|&s| s == p.rows).is_none_or(|k| k >= from) {
            continue;
        }
        match (&p.measured, &p.skipped) {
            (Some(m), _) => states[i].learn_measured(plan, p.rows, m),
            (None, Some(s)) if s.reason == SkipReason::Failed => states[i].learn_failed(p.rows, s),
            // A trial stopped unfinished keeps the design out of larger sizes, as it did
            // before the sweep was interrupted (no second trial at a larger size).
            (None, Some(s)) if s.trial_stopped(p.rows).is_some() => states[i].learn_trial_stopped(s),
            _ => {}
        }
    }
    states
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The designs at one size share the rest of the run budget cheapest first: with 11 s
    /// left, two designs of a few milliseconds and three of about half a second a run (the
    /// shape of row-growth at 32k rows), each with 15 ms of cache sweep around a sample, the
    /// cheap ones are let in with their whole expected spend kept for them, then the slow ones
    /// while 4 of their runs (and a warm-up) still fit; the last one let in gets what is left.
    #[test]
    fn designs_at_a_size_share_the_run_budget_cheapest_first() {
        let b = crate::results::Budget { per_point_s: 4.0, whole_run_s: 75.0, precision: 0.03, min_samples: 6, max_samples: 30, warmup: 1 };
        let w = |index, pred_ns| Waiting { index, pred_ns, overhead_ns: 1.5e7 };
        let waiting = [w(0, 5.4e8), w(1, 3.0e7), w(2, 7.8e8), w(3, 4.3e8), w(4, 6.0e6)];
        let mut decisions: Vec<Option<Result<Admission, SkipInfo>>> = (0..5).map(|_| Some(Ok(Admission::Run))).collect();
        share_run_budget(&mut decisions, &waiting, b, 4.0, 64.0);
        // Expected spends: design 4, 30 runs of 21 ms and a warm-up: 0.636 s; design 1, 30 of
        // 45 ms and a warm-up: 1.38 s; design 3, 4 s / 0.43 s = 9.30 runs of 445 ms and a
        // warm-up: 4.57 s. That leaves 4.42 s: design 0 needs 4 × 555 ms + 540 ms = 2.76 s,
        // is let in, and may spend the 4.42 s, of which its own runs 540/555 (4.30 s).
        // Nothing is left for design 2.
        assert!(matches!(decisions[4], Some(Ok(Admission::Run))) && matches!(decisions[1], Some(Ok(Admission::Run))));
        assert!(matches!(decisions[3], Some(Ok(Admission::Run))), "{:?}", decisions[3]);
        let left = 11.0 - 0.636 - 1.38 - (4e9 / 4.3e8 * 0.445 + 0.43);
        let Some(Ok(Admission::Shared { share_s })) = decisions[0] else { panic!("{:?}", decisions[0]) };
        assert!((share_s - left * 540.0 / 555.0).abs() < 1e-9, "{share_s}");
        let Some(Err(info)) = &decisions[2] else { panic!("design 2 was let in") };
        let Some(SkipCause::RunBudget { kept_ns, used_ns, .. }) = info.cause else { panic!("{info:?}") };
        assert!((kept_ns - 11e9).abs() < 1e-3, "{kept_ns}");
        assert_eq!(used_ns, 64e9);
        assert_eq!(info.reason, SkipReason::RunBudget);
        // With the whole budget still free every design is let in with its point budget.
        let mut all: Vec<Option<Result<Admission, SkipInfo>>> = (0..5).map(|_| Some(Ok(Admission::Run))).collect();
        share_run_budget(&mut all, &waiting, b, 4.0, 0.0);
        assert!(all.iter().all(|d| matches!(d, Some(Ok(Admission::Run)))));
    }

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
