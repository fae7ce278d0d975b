//! What `sweep` does before measuring: every workload loaded and checked with the command
//! line's overrides applied through the spec's own limits, the program designs listed, what
//! `--plan` prints about a size; and the measuring child's entry point, which loads the same
//! workloads from the same command line.

use super::{fail, write_failed, Args};
use crate::cli::{Failure, Problem};
use crate::measure::runner::{self, SweepOptions};
use crate::plan::Plan;
use crate::results::writer::RunWriter;
use crate::spec::units::{parse_rows, parse_seconds, parse_share, rows_label};

/// Apply command-line overrides to a plan.
pub fn adjust(plan: &mut Plan, a: &Args) -> Result<(), String> {
    if let Some(list) = &a.sizes {
        if let Some(ax) = &plan.axis {
            return Err(format!("--sizes: `{}` sweeps {} at {} rows; change its `sweep: values:` instead", plan.name, ax.name, rows_label(ax.rows)));
        }
        let mut v = Vec::new();
        for s in list {
            v.push(parse_rows(s).map_err(|e| format!("--sizes: expected {e}"))?);
        }
        v.sort_unstable();
        v.dedup();
        if let Some(m) = crate::spec::validate::sizes_problems(&v).into_iter().next() {
            return Err(format!("--sizes: {m}"));
        }
        plan.sizes = v;
    }
    // Each value is parsed by the parser the YAML's own value goes through (a duration, a
    // share) and bounded below by `budget_problems`, as the spec's `budget:` is.
    let parsed = |v: &Option<String>, flag: &str, parse: fn(&str) -> Result<f64, String>| v.as_deref().map(parse).transpose().map_err(|e| format!("{flag}: expected {e}"));
    if let Some(x) = parsed(&a.point_budget, "--point-budget", parse_seconds)? {
        plan.budget.per_point_s = x;
    }
    if let Some(x) = parsed(&a.run_budget, "--run-budget", parse_seconds)? {
        plan.budget.whole_run_s = x;
    }
    if let Some(x) = parsed(&a.precision, "--precision", parse_share)? {
        plan.budget.precision = x;
    }
    if let Some(m) = a.max_samples {
        // Fewer samples at most also means fewer at least, so the two stay in order.
        plan.budget.max_samples = m;
        plan.budget.min_samples = plan.budget.min_samples.min(m);
    }
    if !a.designs.is_empty() {
        for d in &a.designs {
            if !plan.designs.iter().any(|x| &x.name == d) {
                let names: Vec<&str> = plan.designs.iter().map(|x| x.name.as_str()).collect();
                let hint = crate::spec::suggest::closest(d, names.iter().copied())
                    .map(|s| format!(" (did you mean `{s}`?)"))
                    .unwrap_or_default();
                return Err(format!("--design: `{}` has no design `{d}`{hint}; it has {}", plan.name, names.join(", ")));
            }
        }
        plan.designs.retain(|x| a.designs.contains(&x.name));
    }
    // The overridden values go through the same limits as the spec's own.
    let flag = |key: &str| match key {
        "per_point" => "--point-budget",
        "whole_run" => "--run-budget",
        "precision" => "--precision",
        _ => "--max-samples",
    };
    if let Some((key, m)) = crate::spec::validate::budget_problems(&plan.budget).into_iter().next() {
        return Err(format!("{}: {m}", flag(key)));
    }
    if let Some(m) = crate::spec::validate::plan_param_problems(plan).into_iter().next() {
        return Err(format!("--sizes: with these sizes, {m}"));
    }
    Ok(())
}

/// What `--plan` says about one size: one line, or one per engine when designs differ in it.
pub fn plan_lines(p: &Plan, n: u64) -> Vec<String> {
    use crate::spec::model::EngineChoice;
    let engines: Vec<EngineChoice> = [EngineChoice::Memory, EngineChoice::Streaming]
        .into_iter()
        .filter(|e| p.designs.iter().any(|d| d.engine == *e))
        .collect();
    let line = |e: crate::measure::memory::Estimate, who: &str| {
        let disk = if e.disk > 0.0 { format!("; writes {}", crate::present::causes::disk_need(e.disk)) } else { String::new() };
        format!("{who}needs {}", crate::present::causes::memory_need(&e.need())) + &disk
    };
    if engines.len() < 2 && !engines.contains(&EngineChoice::Streaming) {
        return vec![line(crate::measure::memory::estimate(p, n, &[]), "")];
    }
    engines
        .iter()
        .map(|&eng| {
            let largest = (0..p.designs.len())
                .filter(|&i| p.designs[i].engine == eng)
                .map(|i| crate::measure::memory::estimate_design(p, i, n, &[]))
                .max_by(|a, b| a.total().total_cmp(&b.total()));
            let who = format!("{} engine: ", eng.label());
            largest.map(|e| line(e, &who)).unwrap_or_default()
        })
        .collect()
}

/// `workload/design: command (mode, input)` for every program design, as the user wrote it.
pub fn program_commands(plans: &[Plan]) -> Vec<String> {
    plans
        .iter()
        .flat_map(|p| p.designs.iter().filter_map(move |d| d.program.as_ref().map(|g| format!("{}/{}: {}", p.name, d.name, g.label()))))
        .collect()
}

/// Every workload of the command line, checked, with its overrides applied.
pub fn load_plans(a: &Args) -> Result<Vec<Plan>, Failure> {
    let files = crate::cli::expand_paths(&a.paths).map_err(fail)?;
    // Check everything before running anything.
    let mut plans = Vec::new();
    let mut bad = Vec::new();
    for f in &files {
        match crate::spec::load(f) {
            Ok(p) => plans.push(p),
            Err(e) => bad.push(Problem::Located(e)),
        }
    }
    for name in &a.builtin {
        match crate::builtin::load(name) {
            Ok(p) => plans.push(p),
            Err(e) => bad.push(Problem::Said(format!("--builtin: {e}"))),
        }
    }
    if !bad.is_empty() {
        bad.push(Problem::Said("fix the workload files above (nothing was run)".into()));
        return Err(Failure::Workloads(bad));
    }
    for p in plans.iter_mut() {
        adjust(p, a).map_err(fail)?;
    }
    Ok(plans)
}

/// A measuring child of an isolated sweep (see `measure::supervise`): measure one workload
/// into the parent's run folder, report over the pipe, print nothing else but errors.
pub fn measure_as_child(a: &Args, order: Result<crate::measure::worker::Order, String>) -> Result<(), Failure> {
    let order = order.map_err(fail)?;
    let plans = load_plans(a)?;
    let Some(plan) = plans.get(order.workload) else { return Err(fail(format!("the measuring order names workload {} of {}", order.workload, plans.len()))) };
    if plan.spec_hash != order.spec_hash {
        return Err(fail(format!("`{}` changed since the sweep started; nothing more was measured", plan.file)));
    }
    crate::measure::worker::connect(order.fd);
    crate::measure::interrupt::install_quiet();
    if let Some(b) = order.allowance {
        crate::measure::memory::set_allowance(b);
    }
    let mut out = RunWriter::append(&order.dir).map_err(write_failed)?;
    let opts = SweepOptions { force: a.force, resume: order.resume, warm_caches: a.warm_caches, extra_size: a.extra_size, ..SweepOptions::default() };
    // The parent speaks for an interrupted child: it says nothing itself.
    match runner::sweep(plan, &opts, &order.clock, &mut out, &crate::measure::worker::PipeProgress)? {
        o if o.interrupted || crate::measure::interrupt::requested() => Err(Failure::Interrupted(None)),
        _ => Ok(()),
    }
}

