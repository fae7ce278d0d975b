//! Helpers the family evidence tests share, so each test file holds only its workload and
//! its checks: find a design by name, run its set-up steps on a copy of the table (untimed,
//! as the runner does), and run the design inside an allocation window that closes before
//! its output is read or dropped; build one step bare (its defaults, a few parameters
//! replaced) to check the run-time guard on tables the spec checker never sees, and read
//! what the checker says of a spec. A test binary takes it with `mod common;`.
// Each test binary uses only some of these.
#![allow(dead_code)]

use framecost::measure::alloc::{AllocStats, Window};
use framecost::patterns::{find_step, ColumnRef, OutputFacts, ParamValue, Params, RunContext, Step, Value};
use framecost::plan::{DesignPlan, Plan};
use polars::prelude::*;

/// The design called `name` (panics when the test's own workload has none).
pub fn design<'a>(plan: &'a Plan, name: &str) -> &'a DesignPlan {
    plan.designs.iter().find(|d| d.name == name).expect("design")
}

/// The design's timed steps on `input`; a failure in the words the terminal shows.
pub fn run_design(d: &DesignPlan, input: Value) -> Result<Value, String> {
    framecost::measure::runner::run_design(d, input).map_err(|e| framecost::present::causes::words(&e, framecost::results::Axis(None)))
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

/// Step `name` built from its defaults with `given` parameters replaced, past the spec
/// checker: what the run-time guard meets when an earlier step reshaped the table.
pub fn bare_step(name: &str, given: &[(&str, ParamValue)]) -> Box<dyn Step> {
    let def = find_step(name).expect("a registered step");
    let mut p = Params::defaults(def);
    for (k, v) in given {
        p.0.insert(k.to_string(), v.clone());
    }
    (def.build)(&p).expect("the step builds")
}

/// Run a bare step on `df`, its error as text.
pub fn run_bare(name: &str, given: &[(&str, ParamValue)], df: &DataFrame) -> Result<Value, String> {
    bare_step(name, given).run(Value::Frame(df.clone()), &RunContext::default()).map_err(|e| e.to_string())
}

/// A column parameter by position, for `bare_step`.
pub fn at(p: usize) -> ParamValue {
    ParamValue::Column(ColumnRef::At(p))
}

/// What the spec checker says of `spec`, one `line:column: message` per problem (empty
/// when it is accepted).
pub fn lint_problems(spec: &str) -> Vec<String> {
    match framecost::spec::load_str("test.yaml", spec) {
        Ok(_) => Vec::new(),
        Err(e) => e.0.iter().map(|i| format!("{}:{}: {}", i.line, i.column, i.message)).collect(),
    }
}
