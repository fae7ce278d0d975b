//! The runner: replays every design of a plan at every size and writes what it measured.
//!
//! At each size: estimate memory and refuse what will not fit; build the table (untimed);
//! make each design's feed (untimed); skip designs predicted to overrun their budget; run
//! each remaining design once to learn its speed and choose a batch (so the clock's cost is
//! under 1% of a sample); warm up; then take samples round-robin — A B C A B C … — so drift
//! of the machine hits every design alike, until each design's median is precise enough or a
//! cap or budget ends it. Inputs are made before the clock starts and outputs are dropped
//! after it stops. A newcomer must know: nothing may allocate inside the timed region but
//! the design itself, because the allocation counter is process-wide.

use super::alloc::{AllocStats, Window};
use super::clock::{process_cpu_ns, ClockInfo};
use super::machine::available_memory;
use super::memory;
use super::program::{ProgramDesign, ProgramInputs};
use super::equivalence::{compare, facts_for_comparison};
use super::stats::{median_ci_sorted, median_sorted};
use crate::patterns::sql::RunContext;
use crate::patterns::{OutputFacts, Records, Value};
use crate::plan::{DesignPlan, Plan};
use crate::results::writer::{RunWriter, WriteError};
use crate::results::*;
use crate::spec::model::{EngineChoice, Feed};
use polars::prelude::DataFrame;
use std::sync::Arc;
use std::time::Instant;

/// Settings of a sweep that are not in the spec.
#[derive(Debug, Clone)]
pub struct SweepOptions {
    /// Run sizes even when their estimated memory does not fit.
    pub force: bool,
    /// Share of the available memory one size may use.
    pub memory_share: f64,
    /// Runs (warm-up plus samples) a point must be predicted to afford; fewer and it is skipped.
    pub runs_needed: f64,
    /// Seed for the bootstrap of ratios.
    pub seed: u64,
}

impl Default for SweepOptions {
    fn default() -> Self {
        SweepOptions { force: false, memory_share: 0.8, runs_needed: 4.0, seed: 0x0f2a_3e5c }
    }
}

#[derive(Debug, thiserror::Error)]
pub enum RunError {
    #[error(transparent)]
    Write(#[from] WriteError),
    #[error("could not build the synthetic table of `{workload}` at {rows} rows: {message}")]
    Table { workload: String, rows: u64, message: String },
}

/// What a workload's sweep ended with.
#[derive(Debug, Clone, Default)]
pub struct Outcome {
    pub failures: usize,
    pub mismatches: usize,
    pub measured: usize,
    pub skipped: usize,
    /// The sweep stopped early on Ctrl-C or SIGTERM (see [`super::interrupt`]).
    pub interrupted: bool,
}

/// Receives progress between samples (never inside the timed region).
pub trait Progress {
    fn point(&self, workload: &str, rows: u64, design: &str, samples: usize);
    fn point_done(&self);
}

/// A progress sink that shows nothing.
pub struct Quiet;
impl Progress for Quiet {
    fn point(&self, _: &str, _: u64, _: &str, _: usize) {}
    fn point_done(&self) {}
}

#[derive(Default)]
struct DesignState {
    /// (rows, median ns) of measured sizes.
    history: Vec<(u64, f64)>,
    /// (rows, peak live bytes) of measured sizes.
    peaks: Vec<(u64, f64)>,
    blocked: Option<SkipInfo>,
}

struct Active<'a> {
    index: usize,
    design: &'a DesignPlan,
    feed: Value,
    ctx: RunContext,
    /// Time of the untimed set-up steps at this size (ns), when the design has any.
    setup_ns: Option<f64>,
    private: bool,
    batch: u64,
    warmup_runs: u64,
    samples: Vec<f64>,
    cpu: Vec<f64>,
    allocs: Vec<AllocStats>,
    spent_s: f64,
    /// Involuntary context switches of the process and the seconds over which they were
    /// counted, while this design was sampled.
    switches: (u64, f64),
    output: Option<OutputFacts>,
    stop: Option<StopReason>,
    error: Option<String>,
    /// Its point has been written.
    written: bool,
    /// A program design: peak resident size of each sample and the size before it (bytes).
    resident: Vec<(u64, Option<u64>)>,
    is_program: bool,
}

/// What the comparison of one size is made from: (design, samples, median, output).
type MeasuredRow = (String, Vec<f64>, f64, Option<OutputFacts>);

/// Write the point of a design whose sampling ended, the moment it ends, and update what
/// later sizes learn from it. A design interrupted before its first sample leaves no point.
fn finish_point(
    plan: &Plan,
    rows: u64,
    a: &mut Active,
    st: &mut DesignState,
    out: &mut RunWriter,
    outcome: &mut Outcome,
    measured: &mut Vec<MeasuredRow>,
    probe_runs: &[(f64, f64)],
    programs: &[Option<ProgramDesign>],
) -> Result<(), RunError> {
    if a.written {
        return Ok(());
    }
    a.written = true;
    let b = plan.budget;
    let point = |m: Option<Measured>, s: Option<SkipInfo>| {
        Record::Point(PointRecord { workload: plan.name.clone(), design: a.design.name.clone(), rows, measured: m, skipped: s, setup_ns: a.setup_ns })
    };
    if let Some(err) = &a.error {
        let info = SkipInfo { reason: SkipReason::Failed, predicted_ns: None, predicted_bytes: None, detail: err.clone() };
        st.blocked = Some(SkipInfo { detail: format!("failed at {}: {err}", plan.axis_point(rows)), ..info.clone() });
        out.write(point(None, Some(info)))?;
        outcome.failures += 1;
        return Ok(());
    }
    if a.samples.is_empty() {
        return Ok(());
    }
    let m = summarize(a, probe_runs, programs);
    st.history.push((rows, m.median_ns));
    st.peaks.push((rows, m.program.map(|p| p.peak_resident_bytes as f64).unwrap_or(m.alloc.peak_live as f64)));
    if m.stop == StopReason::PointBudget && (m.samples_ns.len() as u64) < b.min_samples {
        st.blocked = Some(SkipInfo {
            reason: SkipReason::SmallerSizeOverBudget,
            predicted_ns: None,
            predicted_bytes: None,
            detail: format!(
                "at {} the {} point budget allowed only {} of {} samples (one run {})",
                plan.axis_point(rows),
                crate::present::units::time_ns(b.per_point_s * 1e9),
                m.samples_ns.len(),
                b.min_samples,
                crate::present::units::time_ns(m.median_ns)
            ),
        });
    }
    measured.push((a.design.name.clone(), m.samples_ns.clone(), m.median_ns, m.output.clone()));
    out.write(point(Some(m), None))?;
    outcome.measured += 1;
    Ok(())
}

/// Run one design's steps on one input (with no workload tables: for tests of built-in steps).
pub fn run_design(design: &DesignPlan, input: Value) -> Result<Value, String> {
    run_design_in(design, input, &RunContext::default())
}

/// Run one design's steps on one input, with the size's tables in `ctx`. A step that
/// panics (a capacity overflow on an absurd parameter, say) becomes an error of this run,
/// so the sweep goes on.
pub fn run_design_in(design: &DesignPlan, input: Value, ctx: &RunContext) -> Result<Value, String> {
    caught(|| {
        let mut v = input;
        for s in &design.steps {
            v = s.runner.run_in(v, ctx).map_err(|e| e.to_string())?;
        }
        Ok(v)
    })
}

/// Run one (set-up) step, a panic becoming an error.
fn run_step(s: &crate::plan::StepPlan, input: Value, ctx: &RunContext) -> Result<Value, String> {
    caught(|| s.runner.run_in(input, ctx).map_err(|e| e.to_string()))
}

/// Run step work with a panic turned into an error that names it.
fn caught(work: impl FnOnce() -> Result<Value, String>) -> Result<Value, String> {
    std::panic::catch_unwind(std::panic::AssertUnwindSafe(work)).unwrap_or_else(|p| Err(format!("a step panicked: {}", panic_text(p.as_ref()))))
}

/// The message of a caught panic.
pub fn panic_text(p: &(dyn std::any::Any + Send)) -> String {
    p.downcast_ref::<&str>().map(|s| s.to_string()).or_else(|| p.downcast_ref::<String>().cloned()).unwrap_or_else(|| "no message".into())
}

/// The input for one run: shared when steps only read it, a private deep copy otherwise.
fn make_input(feed: &Value, private: bool) -> Value {
    match (feed, private) {
        (Value::Frame(df), true) => Value::Frame(crate::table::deep_copy(df)),
        (v, _) => v.clone(),
    }
}

/// Time `batch` runs as one sample. Inputs are built before the clock starts and the
/// outputs dropped after it stops.
fn sample(a: &Active) -> Result<(f64, f64, AllocStats, Option<Value>), String> {
    let mut inputs: Vec<Value> = (0..a.batch).map(|_| make_input(&a.feed, a.private)).collect();
    let mut outputs: Vec<Result<Value, String>> = Vec::with_capacity(a.batch as usize);
    let cpu0 = process_cpu_ns();
    let w = Window::open();
    let t0 = Instant::now();
    for input in inputs.drain(..) {
        outputs.push(run_design_in(a.design, input, &a.ctx));
    }
    let elapsed = t0.elapsed().as_nanos() as f64;
    let alloc = w.close();
    let cpu = process_cpu_ns().saturating_sub(cpu0) as f64;
    drop(inputs);
    let mut first = None;
    for o in outputs {
        let v = o?;
        if first.is_none() {
            first = Some(v);
        }
    }
    let b = a.batch as f64;
    let per_run = AllocStats {
        bytes: (alloc.bytes as f64 / b).round() as u64,
        count: (alloc.count as f64 / b).round() as u64,
        peak_live: alloc.peak_live,
    };
    Ok((elapsed / b, cpu / b, per_run, first))
}

/// What one sample gave: ns per run, CPU ns per run, allocations per run, the first
/// output (steps only), the resident size at its peak and before it (programs only).
type Taken = (f64, f64, AllocStats, Option<Value>, Option<(u64, Option<u64>)>);

/// Take one sample of a design: its steps in this process, or its program.
fn take(a: &Active, programs: &mut [Option<ProgramDesign>], b: &crate::plan::Budget) -> Result<Taken, String> {
    match programs.get_mut(a.index).and_then(|p| p.as_mut()) {
        Some(p) => {
            let s = p.sample(a.batch, program_limit(b, a.spent_s))?;
            Ok((s.ns_per_run, s.cpu_ns_per_run, AllocStats::default(), None, s.peak_resident.map(|p| (p, s.resident_before))))
        }
        None => sample(a).map(|(ns, cpu, alloc, out)| (ns, cpu, alloc, out, None)),
    }
}

/// How long a program's request may take: what is left of its point budget, with a
/// quarter and a second of grace (and at least a second).
fn program_limit(b: &crate::plan::Budget, spent_s: f64) -> std::time::Duration {
    std::time::Duration::from_secs_f64((b.per_point_s * 1.25 + 1.0 - spent_s).clamp(1.0, 86_400.0 * 14.0))
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

fn now_text() -> String {
    chrono::Local::now().to_rfc3339_opts(chrono::SecondsFormat::Secs, false)
}

/// Sweep one plan, writing every record as it is made.
pub fn sweep(
    plan: &Plan,
    opts: &SweepOptions,
    clock: &ClockInfo,
    out: &mut RunWriter,
    progress: &dyn Progress,
) -> Result<Outcome, RunError> {
    let b = plan.budget;
    // Program designs: one work folder each in a temp folder for the whole sweep, and a
    // worker started now (its hello says what it runs on, for the header).
    let program_temp = if plan.designs.iter().any(|d| d.program.is_some()) {
        Some(crate::patterns::storage::TempFolder::create().map_err(|e| RunError::Table {
            workload: plan.name.clone(),
            rows: 0,
            message: format!("could not create a temp folder for the program designs: {e}"),
        })?)
    } else {
        None
    };
    let start_limit = std::time::Duration::from_secs_f64((b.per_point_s * 1.25 + 1.0).max(30.0));
    let mut programs: Vec<Option<ProgramDesign>> = plan
        .designs
        .iter()
        .enumerate()
        .map(|(i, d)| match (&d.program, &program_temp) {
            (Some(p), Some(t)) => Some(ProgramDesign::new(i, &d.name, p, t.path(), start_limit)),
            _ => None,
        })
        .collect();
    out.write(Record::Workload(WorkloadHeader {
        workload: plan.name.clone(),
        file: plan.file.clone(),
        spec_hash: plan.spec_hash.clone(),
        seed: plan.seed,
        about: plan.about.clone(),
        target: plan.target,
        sizes: plan.sizes.clone(),
        budget: b,
        columns: plan.columns.clone(),
        designs: plan
            .designs
            .iter()
            .enumerate()
            .map(|(i, d)| DesignHeader {
                name: d.name.clone(),
                about: d.about.clone(),
                recipe: d.recipe(),
                steps: d.setup.iter().chain(&d.steps).map(|s| s.def.name.to_string()).collect(),
                feed: match d.feed {
                    Feed::Table => "table".into(),
                    Feed::Records => "records".into(),
                },
                engine: Some(d.engine.label().to_string()),
                query_plans: d.query_plans.clone(),
                program: d.program.as_ref().map(|p| ProgramHeader {
                    command: p.written.clone(),
                    mode: p.mode.label().to_string(),
                    input: p.input.label().to_string(),
                    any_row_order: p.any_row_order,
                    runtime: programs.get(i).and_then(|x| x.as_ref()).and_then(|x| x.runtime.clone()),
                }),
                expect_time: d.expect_time.map(str::to_string),
                expect_bytes: d.expect_bytes.map(str::to_string),
                expect_dtypes: d.expect_dtypes.iter().map(|(c, t)| (c.clone(), t.to_string())).collect(),
            })
            .collect(),
        outputs_differ: plan.outputs_differ.clone(),
        gate_threshold: plan.gate_threshold,
        spec_text: plan.spec_text.clone(),
        axis: plan.axis.clone(),
    }))?;

    let started = Instant::now();
    let mut outcome = Outcome::default();
    let probe = super::machine::DriftProbe::new();
    super::watchdog::names(&plan.name, plan.designs.iter().map(|d| d.name.clone()).collect());
    warmup_lap(plan);
    let mut states: Vec<DesignState> = plan.designs.iter().map(|_| DesignState::default()).collect();
    let min_sample_ns = clock.min_sample_ns();

    for &rows in &plan.sizes {
        if super::interrupt::requested() {
            outcome.interrupted = true;
            break;
        }
        let skip_point = |out: &mut RunWriter, design: &str, info: SkipInfo| {
            out.write(Record::Point(PointRecord {
                workload: plan.name.clone(),
                design: design.to_string(),
                rows,
                measured: None,
                skipped: Some(info),
                setup_ns: None,
            }))
        };

        // Memory and disk: refuse each design whose estimate will not fit.
        let peaks: Vec<Vec<(u64, f64)>> = states.iter().map(|s| s.peaks.clone()).collect();
        let est = memory::estimate(plan, rows, &peaks);
        let limit = memory::memory_limit();
        let avail = limit.bytes;
        // A hard limit (ulimit, cgroup) cannot be forced past: the allocation would fail and
        // abort the process, so such a size is refused even with --force.
        let mut refused = super::inputs::refusals(plan, rows, &peaks, &limit, opts.memory_share, opts.force);

        // Which designs run at this size.
        let elapsed_run = started.elapsed().as_secs_f64();
        let mut runnable = Vec::new();
        for (i, d) in plan.designs.iter().enumerate() {
            let st = &states[i];
            if let Some(info) = refused[i].take() {
                skip_point(out, &d.name, info)?;
                outcome.skipped += 1;
                progress.point_done();
                continue;
            }
            if let Some(block) = &st.blocked {
                let mut info = block.clone();
                info.predicted_ns = predict_ns(&st.history, rows).or(info.predicted_ns);
                skip_point(out, &d.name, info)?;
                outcome.skipped += 1;
                progress.point_done();
                continue;
            }
            if let Some(pred) = predict_ns(&st.history, rows) {
                let cost_s = pred * opts.runs_needed / 1e9;
                let info = if cost_s > b.per_point_s {
                    Some(SkipInfo {
                        reason: SkipReason::PredictedOverBudget,
                        predicted_ns: Some(pred),
                        predicted_bytes: None,
                        detail: format!(
                            "one run predicted at {}; {} runs need {} > {} point budget",
                            crate::present::units::time_ns(pred),
                            opts.runs_needed,
                            crate::present::units::time_ns(cost_s * 1e9),
                            crate::present::units::time_ns(b.per_point_s * 1e9)
                        ),
                    })
                } else if elapsed_run + cost_s > b.whole_run_s {
                    Some(SkipInfo {
                        reason: SkipReason::RunBudget,
                        predicted_ns: Some(pred),
                        predicted_bytes: None,
                        detail: format!(
                            "{} runs at {} would pass the {} run budget ({} used)",
                            opts.runs_needed,
                            crate::present::units::time_ns(pred),
                            crate::present::units::time_ns(b.whole_run_s * 1e9),
                            crate::present::units::time_ns(elapsed_run * 1e9)
                        ),
                    })
                } else {
                    None
                };
                if let Some(info) = info {
                    skip_point(out, &d.name, info)?;
                    outcome.skipped += 1;
                    progress.point_done();
                    continue;
                }
            }
            runnable.push(i);
        }
        if runnable.is_empty() {
            continue;
        }

        // The table and the feeds (untimed).
        let w = Window::open();
        let t0 = Instant::now();
        let engines = |e: EngineChoice| runnable.iter().any(|&i| plan.designs[i].engine == e);
        let prepared = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
            super::inputs::SizeInputs::prepare(plan, rows, engines(EngineChoice::Memory), engines(EngineChoice::Streaming))
        }))
        .unwrap_or_else(|p| Err(format!("the generator panicked: {}", panic_text(p.as_ref()))));
        let inputs = prepared.map_err(|message| RunError::Table { workload: plan.name.clone(), rows, message })?;
        let df: DataFrame = inputs.first();
        let generate_ns = t0.elapsed().as_nanos() as f64;
        let gen_alloc = w.close();
        out.write(Record::Table(TableRecord {
            workload: plan.name.clone(),
            rows,
            fingerprint: if inputs.tables.is_empty() { "on disk only".to_string() } else { crate::table::fingerprint(&df) },
            generate_ns,
            generate_alloc_bytes: gen_alloc.bytes,
            table_bytes_estimate: est.table,
            memory_estimate_bytes: est.total(),
            available_memory_bytes: avail,
        }))?;
        let records = if runnable.iter().any(|&i| plan.designs[i].feed == Feed::Records) {
            Some(Arc::new(Records::from_frame(&df).map_err(|e| RunError::Table {
                workload: plan.name.clone(),
                rows,
                message: e.to_string(),
            })?))
        } else {
            None
        };

        // Program designs read the tables from files (untimed); a worker loads its input now.
        let formats: Vec<crate::spec::model::InputFormat> = runnable.iter().filter_map(|&i| plan.designs[i].program.as_ref().map(|p| p.input)).collect();
        let program_files = (!formats.is_empty()).then(|| ProgramInputs::write(&inputs.tables, &formats));
        let mut active: Vec<Active> = runnable
            .iter()
            .map(|&i| {
                let d = &plan.designs[i];
                let raw = design_feed(d, &df, &records);
                // Untimed set-up steps, once per size.
                let (ctx, mut error) = match inputs.context(d.engine) {
                    Ok(c) => (c, None),
                    Err(e) => (RunContext::default(), Some(e)),
                };
                if let Some(p) = programs.get_mut(i).and_then(|p| p.as_mut()) {
                    let _watch = super::watchdog::arm(i, rows, "loading a program's input", super::watchdog::limit_for(b.per_point_s));
                    error = match &program_files {
                        Some(Ok(files)) => p.start_size(files, plan.rows_at(rows), program_limit(&b, 0.0)).err(),
                        Some(Err(e)) => Some(e.clone()),
                        None => Some("its input files were not written".into()),
                    };
                }
                let mut feed = raw;
                let setup_started = Instant::now();
                for s in d.setup.iter().filter(|_| error.is_none()) {
                    let _watch = super::watchdog::arm(i, rows, "a set-up step", super::watchdog::limit_for(b.per_point_s));
                    match run_step(s, feed.clone(), &ctx) {
                        Ok(v) => feed = v,
                        Err(e) => {
                            error = Some(format!("set-up step {}: {e}", s.label));
                            break;
                        }
                    }
                }
                Active {
                    index: i,
                    design: d,
                    feed,
                    ctx,
                    setup_ns: (!d.setup.is_empty()).then(|| setup_started.elapsed().as_nanos() as f64),
                    private: d.steps.first().is_some_and(|s| s.def.private_input),
                    batch: 1,
                    warmup_runs: 0,
                    samples: Vec::new(),
                    cpu: Vec::new(),
                    allocs: Vec::new(),
                    spent_s: 0.0,
                    switches: (0, 0.0),
                    output: None,
                    stop: None,
                    error,
                    written: false,
                    resident: Vec::new(),
                    is_program: d.program.is_some(),
                }
            })
            .collect();
        let mut measured: Vec<MeasuredRow> = Vec::new();

        // First run of each design: learn its speed, choose the batch, record its output.
        for a in active.iter_mut().filter(|a| a.error.is_none()) {
            if super::interrupt::requested() {
                break;
            }
            progress.point(&plan.name, rows, &a.design.name, 0);
            let t = Instant::now();
            let watch = super::watchdog::arm(a.index, rows, "the first run", super::watchdog::limit_for(b.per_point_s));
            let first = take(a, &mut programs, &b);
            drop(watch);
            // The output to compare: a step's first result, or what the program saved.
            let first = first.and_then(|(ns, cpu, alloc, out_v, peak)| {
                let facts = match programs.get_mut(a.index).and_then(|p| p.as_mut()) {
                    Some(p) => match p.output(program_limit(&b, a.spent_s + ns / 1e9))? {
                        // How the file was read back says nothing about the program's storage.
                        Some(df) => Some(OutputFacts { chunks: 0, ..facts_for_comparison(plan, &Value::Frame(df))? }),
                        None => None,
                    },
                    None => out_v.as_ref().map(|v| facts_for_comparison(plan, v)).transpose()?,
                };
                Ok((ns, cpu, alloc, facts, peak))
            });
            match first {
                Ok((ns, cpu, alloc, facts, peak)) => {
                    a.output = facts;
                    a.warmup_runs = 1;
                    if ns / 1e9 >= b.per_point_s {
                        // Too slow to sample further: keep this single run as the only sample.
                        a.samples.push(ns);
                        a.cpu.push(cpu);
                        a.allocs.push(alloc);
                        a.resident.extend(peak);
                        a.warmup_runs = 0;
                        a.stop = Some(StopReason::PointBudget);
                    } else {
                        // A worker's own clock may cost more to read than framecost's.
                        let worker_clock = programs.get(a.index).and_then(|p| p.as_ref()).and_then(|p| p.clock_ns);
                        let min_ns = worker_clock.map(|c| (c * 100.0).max(min_sample_ns)).unwrap_or(min_sample_ns);
                        let cap = if a.is_program { super::program::MAX_WORKER_BATCH } else { 100_000 };
                        a.batch = ((min_ns / ns.max(1.0)).ceil() as u64).clamp(1, cap);
                    }
                }
                Err(e) => failed(a, e),
            }
            a.spent_s += t.elapsed().as_secs_f64();
        }
        // Further warm-up, in whole batches, while it stays cheap.
        for a in active.iter_mut().filter(|a| a.error.is_none() && a.stop.is_none()) {
            for _ in 1..b.warmup {
                if a.spent_s > b.per_point_s * 0.2 || super::interrupt::requested() {
                    break;
                }
                let t = Instant::now();
                let watch = super::watchdog::arm(a.index, rows, "a warm-up run", super::watchdog::limit_for(b.per_point_s));
                let warm = take(a, &mut programs, &b);
                drop(watch);
                if let Err(e) = warm {
                    failed(a, e);
                    break;
                }
                a.warmup_runs += a.batch;
                a.spent_s += t.elapsed().as_secs_f64();
            }
        }

        // Interleaved sampling, with the drift probe timed once per round.
        let mut probe_runs: Vec<(f64, f64)> = Vec::new();
        // A design's point is written as soon as its sampling ends.
        for a in active.iter_mut().filter(|a| a.error.is_some() || a.stop.is_some()) {
            finish_point(plan, rows, a, &mut states[a.index], out, &mut outcome, &mut measured, &probe_runs, &programs)?;
            progress.point_done();
        }
        loop {
            let mut any = false;
            if super::interrupt::requested() {
                outcome.interrupted = true;
                break;
            }
            if active.iter().any(|a| a.error.is_none() && a.stop.is_none()) {
                probe_runs.push(probe.time_with_cpu());
            }
            for a in active.iter_mut().filter(|a| a.error.is_none() && a.stop.is_none()) {
                if super::interrupt::requested() {
                    break;
                }
                any = true;
                let t = Instant::now();
                let watch = super::watchdog::arm(a.index, rows, "a sample", super::watchdog::limit_for(b.per_point_s));
                let sw0 = super::hygiene::involuntary_switches();
                let taken = take(a, &mut programs, &b);
                a.switches.0 += super::hygiene::involuntary_switches().saturating_sub(sw0);
                a.switches.1 += t.elapsed().as_secs_f64();
                drop(watch);
                match taken {
                    Ok((ns, cpu, alloc, _, peak)) => {
                        a.samples.push(ns);
                        a.cpu.push(cpu);
                        a.allocs.push(alloc);
                        a.resident.extend(peak);
                    }
                    Err(e) => {
                        failed(a, e);
                        finish_point(plan, rows, a, &mut states[a.index], out, &mut outcome, &mut measured, &probe_runs, &programs)?;
                        progress.point_done();
                        continue;
                    }
                }
                a.spent_s += t.elapsed().as_secs_f64();
                a.stop = decide(a, &b, started.elapsed().as_secs_f64());
                progress.point(&plan.name, rows, &a.design.name, a.samples.len());
                if a.stop.is_some() {
                    finish_point(plan, rows, a, &mut states[a.index], out, &mut outcome, &mut measured, &probe_runs, &programs)?;
                    progress.point_done();
                }
            }
            if !any {
                break;
            }
        }

        // Designs still sampling when a stop was asked for keep what they measured.
        for a in active.iter_mut().filter(|a| !a.written) {
            if a.error.is_none() && a.stop.is_none() {
                a.stop = Some(StopReason::Interrupted);
            }
            finish_point(plan, rows, a, &mut states[a.index], out, &mut outcome, &mut measured, &probe_runs, &programs)?;
            progress.point_done();
        }
        // The comparison keeps the designs' order, whatever order their sampling ended in.
        measured.sort_by_key(|m| plan.designs.iter().position(|d| d.name == m.0));

        // Side by side.
        let mut cmp = compare(plan, rows, &measured, opts.seed);
        if !probe_runs.is_empty() {
            let walls: Vec<f64> = probe_runs.iter().map(|p| p.0).collect();
            cmp.probe_ns = Some(crate::measure::stats::median(&walls));
        }
        if cmp.equivalence.status == EquivalenceStatus::Mismatch {
            outcome.mismatches += 1;
        }
        out.write(Record::Comparison(cmp))?;
        if super::interrupt::requested() {
            outcome.interrupted = true;
            break;
        }
    }
    Ok(outcome)
}

/// A sample that ended in an error: a failure of the design, or — when the sweep was
/// interrupted while a program ran — a stop that keeps what was measured.
fn failed(a: &mut Active, e: String) {
    if e == super::program::INTERRUPTED && super::interrupt::requested() {
        a.stop = Some(StopReason::Interrupted);
    } else {
        a.error = Some(e);
    }
}

/// What a design's first step receives: the first table, its records, or — on the
/// streaming engine, whose tables stay on disk — an empty table (its `sql` steps read the
/// scans in the run context).
fn design_feed(d: &DesignPlan, df: &DataFrame, records: &Option<Arc<Records>>) -> Value {
    match (d.feed, records, d.engine) {
        (_, _, EngineChoice::Streaming) => Value::Frame(DataFrame::empty()),
        (Feed::Records, Some(r), _) => Value::Records(r.clone()),
        _ => Value::Frame(df.clone()),
    }
}

/// Run every design once on a small table before anything is timed, so the first measured
/// size does not pay for the process's cold start (thread pool, lazily built tables, fresh
/// heap pages). Failures here are ignored: the real run reports them.
/// The lap obeys the point budget: once it has taken that long, the remaining designs are
/// not warmed up (their first measured run warms them instead).
fn warmup_lap(plan: &Plan) {
    let first = plan.sizes.first().copied().unwrap_or(1);
    let rows = plan.rows_at(first).min(1000);
    let streams = plan.designs.iter().any(|d| d.engine == EngineChoice::Streaming);
    let prepared = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| super::inputs::SizeInputs::prepare_rows(plan, first, rows, true, streams)));
    let Ok(Ok(inputs)) = prepared else { return };
    let df = inputs.first();
    let records = Records::from_frame(&df).ok().map(Arc::new);
    let started = Instant::now();
    for (i, d) in plan.designs.iter().enumerate() {
        if started.elapsed().as_secs_f64() > plan.budget.per_point_s || super::interrupt::requested() {
            break;
        }
        // A program warms up in its own process, on its first run at each size.
        if d.program.is_some() {
            continue;
        }
        let Ok(ctx) = inputs.context(d.engine) else { continue };
        let mut v = design_feed(d, &df, &records);
        for s in &d.setup {
            match run_step(s, v.clone(), &ctx) {
                Ok(x) => v = x,
                Err(_) => break,
            }
        }
        // A runaway here is recorded at the first size, which it keeps from being measured.
        let first = plan.sizes.first().copied().unwrap_or(1);
        let _watch = super::watchdog::arm(i, first, "the untimed warm-up lap (one run on at most 1000 rows)", super::watchdog::limit_for(plan.budget.per_point_s));
        let _ = run_design_in(d, make_input(&v, d.steps.first().is_some_and(|s| s.def.private_input)), &ctx);
    }
}

/// Why sampling of `a` should stop now, if it should.
fn decide(a: &Active, b: &crate::plan::Budget, run_elapsed_s: f64) -> Option<StopReason> {
    let n = a.samples.len() as u64;
    if n >= b.min_samples {
        let mut s = a.samples.clone();
        s.sort_by(f64::total_cmp);
        let med = median_sorted(&s);
        if let Some((lo, hi)) = median_ci_sorted(&s, 0.95) {
            if med > 0.0 && (med - lo).max(hi - med) / med <= b.precision {
                return Some(StopReason::Precise);
            }
        }
    }
    if n >= b.max_samples {
        return Some(StopReason::SampleCap);
    }
    if a.spent_s >= b.per_point_s {
        return Some(StopReason::PointBudget);
    }
    if run_elapsed_s >= b.whole_run_s {
        return Some(StopReason::RunBudget);
    }
    None
}

fn summarize(a: &Active, probe_runs: &[(f64, f64)], programs: &[Option<ProgramDesign>]) -> Measured {
    // A program's CPU time can be unreadable (NaN) for a sample; the median is over the rest.
    let cpu: Vec<f64> = a.cpu.iter().copied().filter(|x| x.is_finite()).collect();
    let cpu_median = (!cpu.is_empty()).then(|| crate::measure::stats::median(&cpu));
    let mut s = a.samples.clone();
    s.sort_by(f64::total_cmp);
    let med = median_sorted(&s);
    let ci = median_ci_sorted(&s, 0.95);
    let tail = super::stats::tail_percentiles(&a.samples).unwrap_or(super::stats::TailPercentiles {
        p50: med,
        p90: med,
        p99: med,
        max: med,
    });
    let mut by_bytes = a.allocs.clone();
    by_bytes.sort_by_key(|x| x.bytes);
    let mid = by_bytes.get(by_bytes.len() / 2).copied().unwrap_or_default();
    let peak = a.allocs.iter().map(|x| x.peak_live).max().unwrap_or(0);
    Measured {
        stop: a.stop.unwrap_or(StopReason::SampleCap),
        batch: a.batch,
        warmup_runs: a.warmup_runs,
        samples_ns: a.samples.clone(),
        median_ns: med,
        ci_low_ns: ci.map(|c| c.0),
        ci_high_ns: ci.map(|c| c.1),
        ci_rel_half_width: ci.map(|(lo, hi)| (med - lo).max(hi - med) / med),
        mean_ns: s.iter().sum::<f64>() / s.len().max(1) as f64,
        p50_ns: tail.p50,
        p90_ns: tail.p90,
        p99_ns: tail.p99,
        max_ns: tail.max,
        cpu_ns: cpu_median.unwrap_or(0.0),
        alloc_counted: !a.is_program,
        program: a.is_program.then(|| {
            let p = programs.get(a.index).and_then(|x| x.as_ref());
            // The sample whose runs added the most above what was resident before them.
            let top = a.resident.iter().max_by_key(|(peak, before)| peak.saturating_sub(before.unwrap_or(0))).copied();
            ProgramMeasured {
                child_cpu_ns: cpu_median,
                peak_resident_bytes: top.map(|t| t.0).unwrap_or(0),
                resident_before_bytes: top.and_then(|t| t.1).or_else(|| p.and_then(|p| p.resident_before)),
                load_ns: p.and_then(|p| p.load_ns),
            }
        }),
        alloc: AllocStats { bytes: mid.bytes, count: mid.count, peak_live: peak },
        alloc_exact: a.allocs.windows(2).all(|w| w[0].bytes == w[1].bytes),
        output: a.output.clone(),
        spent_s: a.spent_s,
        disturbance: Some(super::hygiene::assess(
            probe_runs,
            (a.switches.1 > 0.0).then(|| a.switches.0 as f64 / a.switches.1),
        )),
        bimodal: super::hygiene::bimodal(&a.samples),
    }
}

/// Start a run: the header record with machine, clock and yardstick.
pub fn run_header(command: Vec<String>, clock: ClockInfo, forced: bool) -> RunHeader {
    let started = now_text();
    RunHeader {
        schema: SCHEMA.to_string(),
        run_id: chrono::Local::now().format("%Y%m%d-%H%M%S").to_string(),
        started_at: started,
        command,
        machine: super::machine::MachineFingerprint::collect(),
        clock,
        yardstick: super::machine::yardstick(),
        available_memory_bytes: available_memory(),
        forced,
    }
}

/// The closing record.
pub fn end_record(started: Instant, mismatches: usize) -> EndRecord {
    EndRecord { finished_at: now_text(), elapsed_s: started.elapsed().as_secs_f64(), mismatches: mismatches as u64 }
}
