//! Helpers the family evidence tests share, so each test file holds only its workload and
//! its checks: find a design by name, run its set-up steps on a copy of the table (untimed,
//! as the runner does), and run the design inside an allocation window that closes before
//! its output is read or dropped. A test binary takes it with `mod common;`.
// Each test binary uses only some of these.
#![allow(dead_code)]

use framecost::measure::alloc::{AllocStats, Window};
use framecost::measure::runner::run_design;
use framecost::patterns::{OutputFacts, RunContext, Value};
use framecost::plan::{DesignPlan, Plan};
use polars::prelude::*;

/// The design called `name` (panics when the test's own workload has none).
pub fn design<'a>(plan: &'a Plan, name: &str) -> &'a DesignPlan {
    plan.designs.iter().find(|d| d.name == name).expect("design")
}

/// `input` after the design's `setup:` steps.
pub fn set_up(d: &DesignPlan, input: Value) -> Result<Value, String> {
    let mut v = input;
    let ctx = RunContext::default();
    for s in &d.setup {
        v = s.runner.run(v, &ctx).map_err(|e| e.to_string())?;
    }
    Ok(v)
}

/// The design's timed steps run on `input` inside an allocation window: what they
/// allocated, and their output (the window is closed before the output is looked at).
pub fn counted(d: &DesignPlan, input: Value) -> (AllocStats, Result<Value, String>) {
    let w = Window::open();
    let out = run_design(d, input);
    let alloc = w.close();
    (alloc, out)
}

/// What one run of a design showed.
pub struct Seen {
    pub alloc: AllocStats,
    pub facts: OutputFacts,
    pub df: DataFrame,
}

/// Set up, run counted, and read the output table of the design called `name`.
pub fn run(plan: &Plan, name: &str, table: &DataFrame) -> Result<Seen, String> {
    let d = design(plan, name);
    let v = set_up(d, Value::Frame(table.clone()))?;
    let (alloc, out) = counted(d, v);
    let out = out?;
    let facts = OutputFacts::of(&out);
    match out {
        Value::Frame(df) => Ok(Seen { alloc, facts, df }),
        _ => Err(format!("{name} does not give a table")),
    }
}
