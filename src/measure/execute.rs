//! Running a design's steps outside the timed loop's bookkeeping: a step's error and a
//! panic in it become the run's [`SkipCause`], and each run gets its own input (a deep
//! copy when a step changes its input in place). Used by sampling, by the set-up steps of
//! each size and by the tests of built-in steps.

use crate::patterns::sql::RunContext;
use crate::patterns::Value;
use crate::plan::DesignPlan;
use crate::results::SkipCause;

/// Run one design's steps on one input (with no workload tables: for tests of built-in steps).
pub fn run_design(design: &DesignPlan, input: Value) -> Result<Value, SkipCause> {
    run_design_in(design, input, &RunContext::default())
}

/// Run one design's steps on one input, with the size's tables in `ctx`. A step that
/// panics (a capacity overflow on an absurd parameter, say) becomes an error of this run,
/// so the sweep goes on.
pub fn run_design_in(design: &DesignPlan, input: Value, ctx: &RunContext) -> Result<Value, SkipCause> {
    // The clock is read only for a slowed design: a read costs tens of ns inside the timed region.
    let t0 = (design.slowdown > 0.0).then(std::time::Instant::now);
    let out = caught(|| {
        let mut v = input;
        for s in &design.steps {
            v = s.runner.run(v, ctx).map_err(|e| e.to_string())?;
        }
        Ok(v)
    });
    if let Some(t0) = t0 {
        spin_after(t0, design.slowdown);
    }
    out
}

/// Keep the core busy until `share` more of the time since `t0` has passed (the design's
/// `slowdown:`): a slowdown by that fraction that allocates nothing and touches no memory,
/// so the gate can be rehearsed on any design with a realistic 10–20% regression.
pub fn spin_after(t0: std::time::Instant, share: f64) {
    if share > 0.0 {
        let until = t0.elapsed().mul_f64(1.0 + share);
        while t0.elapsed() < until {
            std::hint::spin_loop();
        }
    }
}

/// Run one (set-up) step, a panic becoming an error.
pub fn run_step(s: &crate::plan::StepPlan, input: Value, ctx: &RunContext) -> Result<Value, SkipCause> {
    caught(|| s.runner.run(input, ctx).map_err(|e| e.to_string()))
}

/// Run step work, its error (its own text) and a panic kept apart as causes.
fn caught(work: impl FnOnce() -> Result<Value, String>) -> Result<Value, SkipCause> {
    match std::panic::catch_unwind(std::panic::AssertUnwindSafe(work)) {
        Ok(r) => r.map_err(|message| SkipCause::Step { message }),
        Err(p) => Err(SkipCause::Panic { message: panic_text(p.as_ref()) }),
    }
}

/// The message of a caught panic.
pub fn panic_text(p: &(dyn std::any::Any + Send)) -> String {
    p.downcast_ref::<&str>().map(|s| s.to_string()).or_else(|| p.downcast_ref::<String>().cloned()).unwrap_or_else(|| "no message".into())
}

/// The input for one run: shared when steps only read it, a private deep copy otherwise.
pub fn make_input(feed: &Value, private: bool) -> Value {
    match (feed, private) {
        (Value::Frame(df), true) => Value::Frame(crate::table::deep_copy(df)),
        (v, _) => v.clone(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_slowdown_spins_for_at_least_its_share_of_the_run() {
        // The spin waits on the clock, so the bound below holds on any machine, busy or not.
        let t0 = std::time::Instant::now();
        let mut x = 0u64;
        for i in 0..2_000_000u64 {
            x = x.wrapping_add(std::hint::black_box(i));
        }
        std::hint::black_box(x);
        let work = t0.elapsed();
        spin_after(t0, 0.5);
        assert!(t0.elapsed() >= work.mul_f64(1.5), "{:?} after {:?} of work", t0.elapsed(), work);
    }
}
