//! The untimed warm-up lap before a workload's first measured size.

use super::admit::DesignState;
use super::runner::design_feed;
use super::sampling::{make_input, run_design_in, run_step};
use crate::patterns::Records;
use crate::plan::Plan;
use crate::spec::model::{EngineChoice, Feed};
use std::sync::Arc;
use std::time::Instant;

/// Run every design once on a small table before anything is timed, so the first measured
/// size does not pay for the process's cold start (thread pool, lazily built tables, fresh
/// heap pages). Failures here are ignored: the real run reports them.
/// The lap obeys the point budget: once it has taken that long, the remaining designs are
/// not warmed up (their first measured run warms them instead).
pub(super) fn warmup_lap(plan: &Plan, at: u64, states: &[DesignState]) {
    let first = plan.sizes.first().copied().unwrap_or(1);
    let rows = plan.rows_at(first).min(1000);
    let streams = plan.designs.iter().any(|d| d.engine == EngineChoice::Streaming);
    let prepared = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| super::inputs::SizeInputs::prepare_rows(plan, first, rows, true, streams)));
    let Ok(Ok(inputs)) = prepared else { return };
    let df = inputs.first();
    // Records only when a design warmed up here takes them, as the memory estimate assumes:
    // a fixed table keeps its full size in the lap, and records of 50M rows took 7.4 GiB
    // where the size was estimated at 3 GiB for its SQL designs.
    let takes_records = plan.designs.iter().enumerate().any(|(i, d)| d.feed == Feed::Records && d.program.is_none() && states[i].blocked.is_none());
    let records = if takes_records { Records::from_frame(&df).ok().map(Arc::new) } else { None };
    let started = Instant::now();
    for (i, d) in plan.designs.iter().enumerate() {
        if started.elapsed().as_secs_f64() > plan.budget.per_point_s || super::interrupt::requested() {
            break;
        }
        // A program warms up in its own process, on its first run at each size; a design
        // that failed in an earlier measuring process is not run again.
        if d.program.is_some() || states[i].blocked.is_some() {
            continue;
        }
        let Ok(ctx) = inputs.context(d.engine) else {
            continue;
        };
        let mut v = design_feed(d, &df, &records);
        for s in &d.setup {
            match run_step(s, v.clone(), &ctx) {
                Ok(x) => v = x,
                Err(_) => break,
            }
        }
        // A runaway here is recorded at the size about to be measured, which it keeps from
        // being measured.
        let _watch = super::watchdog::arm(i, at, "the untimed warm-up lap (one run on at most 1000 rows)", super::watchdog::limit_for(plan.budget.per_point_s));
        let _ = run_design_in(d, make_input(&v, d.steps.first().is_some_and(|s| s.def.private_input)), &ctx);
    }
}
