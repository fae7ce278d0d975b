//! Limits on what a results file may say, applied as each line is read back.
//!
//! A results file can be damaged or edited: a value no measurement could give (a median of
//! 1e308 ns, a sample of 1e-300 ns, zero rows) would send fits and pictures into absurd
//! ranges (a log axis of 600 decades), so such a record is treated as a damaged line.
//! Names are printed to terminals and written into reports: control characters in them are
//! replaced by visible escapes ([`crate::units::escaped`]).

use super::*;

/// Longest time a sample or median may report: about 115 days per run, in ns.
pub const MAX_NS: f64 = 1e16;
/// Shortest median a run may report (ns): well under one CPU cycle even for batched runs.
pub const MIN_MEDIAN_NS: f64 = 1e-3;
/// Largest row count a record may name (the spec's target cap).
pub const MAX_ROWS: u64 = 10_000_000_000_000;
/// Largest ratio to the fastest design.
pub const MAX_RATIO: f64 = 1e12;

fn time_ok(v: f64) -> bool {
    v.is_finite() && (0.0..=MAX_NS).contains(&v)
}
fn opt_ok(v: Option<f64>, ok: impl Fn(f64) -> bool) -> bool {
    v.is_none_or(ok)
}
fn rows_ok(n: u64) -> bool {
    (1..=MAX_ROWS).contains(&n)
}
fn ratio_ok(v: f64) -> bool {
    v.is_finite() && (0.0..=MAX_RATIO).contains(&v)
}

/// Whether every number in a record is one a measurement could give.
pub fn plausible(rec: &Record) -> bool {
    match rec {
        Record::Point(p) => rows_ok(p.rows) && p.measured.as_ref().is_none_or(measured_ok) && p.skipped.as_ref().is_none_or(|s| {
            opt_ok(s.predicted_ns, |v| v.is_finite() && v >= 0.0) && opt_ok(s.predicted_bytes, |v| v.is_finite() && v >= 0.0) && s.cause.as_ref().is_none_or(cause_ok)
        }),
        Record::Comparison(c) => {
            rows_ok(c.rows)
                && opt_ok(c.probe_ns, time_ok)
                && c.ratios.iter().all(|r| ratio_ok(r.ratio) && opt_ok(r.low, ratio_ok) && opt_ok(r.high, ratio_ok))
        }
        Record::Table(t) => rows_ok(t.rows) && time_ok(t.generate_ns) && t.table_bytes_estimate.is_finite() && t.memory_estimate_bytes.is_finite(),
        Record::Workload(h) => h.sizes.iter().all(|&n| rows_ok(n)) && h.target.is_none_or(rows_ok),
        Record::Run(_) | Record::End(_) => true,
    }
}

/// A cause's numbers: amounts never below zero, swept values in range.
fn cause_ok(c: &SkipCause) -> bool {
    let amount = |v: &f64| v.is_finite() && *v >= 0.0;
    match c {
        SkipCause::PointBudget { predicted_ns, runs, budget_ns } => [predicted_ns, runs, budget_ns].into_iter().all(amount),
        SkipCause::RunBudget { predicted_ns, runs, budget_ns, used_ns, kept_ns } => [predicted_ns, runs, budget_ns, used_ns, kept_ns].into_iter().all(amount),
        SkipCause::TrialOverBudget { at, limit_ns, runs, budget_ns } => rows_ok(*at) && [limit_ns, runs, budget_ns].into_iter().all(amount),
        SkipCause::TooFewSamples { at, budget_ns, run_ns, .. } => rows_ok(*at) && amount(budget_ns) && amount(run_ns),
        SkipCause::Memory { need, share, .. } => [&need.table, &need.records, &need.generator, &need.working, share].into_iter().all(amount),
        SkipCause::Disk { disk_bytes, share, .. } => amount(disk_bytes) && amount(share),
        SkipCause::Runaway { ran_ns, limit_ns, .. } => amount(ran_ns) && amount(limit_ns),
        SkipCause::Setup { cause, .. } => cause_ok(cause),
        SkipCause::FailedAt { at, cause } => rows_ok(*at) && cause_ok(cause),
        SkipCause::Step { .. } | SkipCause::Panic { .. } | SkipCause::Program { .. } | SkipCause::Lost { .. } => true,
    }
}

/// A cause's names with control characters made visible (a step's or program's own message
/// is left as it is, like the older `detail`: it may span lines).
fn clean_cause(c: &mut SkipCause) {
    match c {
        SkipCause::Memory { engine, limit_source, .. } => [engine, limit_source].into_iter().for_each(clean),
        SkipCause::Disk { folder, .. } => clean(folder),
        SkipCause::Setup { step, cause } => {
            clean(step);
            clean_cause(cause);
        }
        SkipCause::Lost { during, .. } => during.iter_mut().for_each(clean),
        SkipCause::Runaway { during, .. } => clean(during),
        SkipCause::FailedAt { cause, .. } => clean_cause(cause),
        SkipCause::Step { .. } | SkipCause::Panic { .. } | SkipCause::Program { .. } => {}
        SkipCause::PointBudget { .. } | SkipCause::RunBudget { .. } | SkipCause::TrialOverBudget { .. } | SkipCause::TooFewSamples { .. } => {}
    }
}

fn measured_ok(m: &Measured) -> bool {
    m.median_ns.is_finite()
        && (MIN_MEDIAN_NS..=MAX_NS).contains(&m.median_ns)
        && !m.samples_ns.is_empty()
        && m.samples_ns.iter().all(|&v| time_ok(v))
        && [m.mean_ns, m.p50_ns, m.p90_ns, m.p99_ns, m.max_ns, m.cpu_ns].into_iter().all(time_ok)
        && opt_ok(m.ci_low_ns, time_ok)
        && opt_ok(m.ci_high_ns, time_ok)
        && opt_ok(m.ci_rel_half_width, |v| v.is_finite() && v >= 0.0)
        && m.spent_s.is_finite()
        && m.spent_s >= 0.0
}

fn clean(s: &mut String) {
    if s.chars().any(crate::units::unprintable) {
        *s = crate::units::escaped(s).into_owned();
    }
}

/// The record with control characters in its names made visible.
pub fn tidy(mut rec: Record) -> Record {
    match &mut rec {
        Record::Workload(h) => {
            clean(&mut h.workload);
            for d in &mut h.designs {
                clean(&mut d.name);
                clean(&mut d.recipe);
            }
            for c in &mut h.columns {
                clean(&mut c.name);
            }
        }
        Record::Table(t) => clean(&mut t.workload),
        Record::Point(p) => {
            clean(&mut p.workload);
            clean(&mut p.design);
            if let Some(s) = &mut p.skipped {
                s.cause.iter_mut().for_each(clean_cause);
            }
        }
        Record::Comparison(c) => {
            clean(&mut c.workload);
            if let Some(f) = &mut c.fastest {
                clean(f);
            }
            for r in &mut c.ratios {
                clean(&mut r.design);
            }
            for g in &mut c.equivalence.groups {
                g.iter_mut().for_each(clean);
            }
        }
        Record::Run(_) | Record::End(_) => {}
    }
    rec
}
