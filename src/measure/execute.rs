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
    caught(|| {
        let mut v = input;
        for s in &design.steps {
            v = s.runner.run(v, ctx).map_err(|e| e.to_string())?;
        }
        Ok(v)
    })
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
