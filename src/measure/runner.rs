//! The runner: replays every design of a plan at every size and writes what it measured.
//!
//! At each size: admit the designs that fit and are predicted to keep to their budgets
//! ([`super::admit`]); build the table and each design's feed, and run its set-up steps
//! (untimed, [`super::inputs`]); sample the designs side by side ([`super::sampling`]);
//! write each design's point the moment its sampling ends; then compare the designs'
//! outputs and times ([`super::equivalence`]). A sweep can resume at a size (a measuring
//! child started again after an earlier one ended abnormally, [`super::worker::Resume`]):
//! what the earlier sizes taught is read back from `points.jsonl`.

use super::admit::{resumed_states, DesignState};
use super::point::{finish_point, MeasuredRow};
use super::clock::ClockInfo;
use super::equivalence::compare;
use super::program::{ProgramDesign, ProgramInputs};
use super::sampling::{run_step, Active};
use crate::patterns::{Allowed, Records, RunContext, Value};
use crate::plan::{DesignPlan, Plan};
use crate::results::writer::{RunWriter, WriteError};
use crate::results::*;
use crate::spec::model::{EngineChoice, Feed};
use polars::prelude::DataFrame;
use std::sync::Arc;
use std::time::Instant;

pub use super::admit::predict_ns;
pub use super::headers::{end_record, run_header};
pub use super::options::SweepOptions;
pub use super::sampling::{panic_text, run_design, run_design_in};

#[derive(Debug, thiserror::Error)]
pub enum RunError {
    #[error(transparent)]
    Write(#[from] WriteError),
    #[error("could not build the synthetic table of `{workload}` at {rows} rows: {message}")]
    Table { workload: String, rows: u64, message: String },
    #[error("could not measure `{workload}`: its measuring process stopped with exit code {code} (its message is above)")]
    Stopped { workload: String, code: i32 },
    /// The measuring process ended abnormally `restarts` times, the last because of `last`.
    #[error("could not measure `{workload}`: its measuring process ended abnormally {restarts} times")]
    Lost { workload: String, restarts: usize, last: SkipCause },
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
    /// A point's sampling goes on: design number `design` (named `name`) at `rows`.
    fn point(&self, workload: &str, rows: u64, design: usize, name: &str, samples: usize);
    fn point_done(&self);
    /// The workload's sweep starts again with only `kept` of its points (a measuring child
    /// ended abnormally and the size it was on was cut): count from there.
    fn rewound(&self, _kept: usize) {}
}

/// A progress sink that shows nothing.
pub struct Quiet;
impl Progress for Quiet {
    fn point(&self, _: &str, _: u64, _: usize, _: &str, _: usize) {}
    fn point_done(&self) {}
}

/// Everything one size's steps share.
struct SizeRun<'p, 'o> {
    plan: &'p Plan,
    opts: &'o SweepOptions,
    out: &'o mut RunWriter,
    progress: &'o dyn Progress,
    outcome: Outcome,
    states: Vec<DesignState>,
    programs: Vec<Option<ProgramDesign>>,
    started: Instant,
    min_sample_ns: f64,
    probe: super::machine::DriftProbe,
    /// At the extra size (`extra.rs`): the one design measured there; the others get no point.
    only: Option<usize>,
    /// While a size is measured again (`again.rs`): the first attempt's probe ratio.
    again: Option<f64>,
}

/// Sweep one plan, writing every record as it is made.
pub fn sweep(plan: &Plan, opts: &SweepOptions, clock: &ClockInfo, out: &mut RunWriter, progress: &dyn Progress) -> Result<Outcome, RunError> {
    let b = plan.budget;
    super::alloc::steady_thresholds();
    super::scrub::configure(opts.warm_caches);
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
    let programs: Vec<Option<ProgramDesign>> = plan
        .designs
        .iter()
        .enumerate()
        .map(|(i, d)| match (&d.program, &program_temp) {
            (Some(p), Some(t)) => Some(ProgramDesign::new(i, &d.name, p, t.path(), start_limit)),
            _ => None,
        })
        .collect();
    let resume = opts.resume.clone();
    if resume.is_none() {
        out.write(super::headers::workload_header(plan, &programs))?;
    }
    let from = resume.as_ref().map(|r| r.from).unwrap_or(0);
    let states = match &resume {
        Some(_) => resumed_states(plan, &out.results, from),
        None => plan.designs.iter().map(|_| DesignState::default()).collect(),
    };
    let elapsed = std::time::Duration::from_secs_f64(resume.as_ref().map(|r| r.elapsed_s.clamp(0.0, 1e9)).unwrap_or(0.0));
    super::watchdog::names(&plan.name, plan.designs.iter().map(|d| d.name.clone()).collect());
    let mut run = SizeRun {
        plan,
        opts,
        out,
        progress,
        outcome: Outcome::default(),
        states,
        programs,
        started: Instant::now().checked_sub(elapsed).unwrap_or_else(Instant::now),
        min_sample_ns: if opts.warm_caches { clock.min_sample_ns() } else { clock.cold_min_sample_ns() },
        probe: super::machine::DriftProbe::new(),
        only: None,
        again: None,
    };
    // The lap builds the first size's tables (a table with fixed rows at its full size), so
    // it runs only when the memory guard lets some design run at that size: a related table
    // of a billion rows, refused at every size, was built by the lap anyway and the
    // measuring process was killed for lack of memory (found by `benches/fuzz-sweep.sh`).
    let first = plan.sizes.get(from).copied().unwrap_or(1);
    let peaks: Vec<Vec<(u64, f64)>> = run.states.iter().map(|s| s.peaks.clone()).collect();
    let refused = super::inputs::refusals(plan, first, &peaks, &super::memory::memory_limit(), opts.memory_share, opts.force);
    if refused.iter().any(Option::is_none) {
        super::lap::warmup_lap(plan, first, &run.states);
    }
    for (k, &rows) in plan.sizes.iter().enumerate().skip(from) {
        if super::interrupt::requested() {
            run.outcome.interrupted = true;
            break;
        }
        super::worker::size_started(rows);
        if let Some(r) = resume.as_ref().filter(|r| r.from == k) {
            run.failed_before(rows, &r.failed)?;
        }
        let before = super::again::Before { mark: run.out.mark()?, states: run.states.clone(), outcome: run.outcome.clone() };
        if run.one_size(rows)? || run.measure_again(rows, before)? {
            run.outcome.interrupted = true;
            break;
        }
    }
    if opts.extra_size && !run.outcome.interrupted && !super::interrupt::requested() {
        let failed = resume.as_ref().filter(|r| r.from >= plan.sizes.len()).map(|r| r.failed.clone()).unwrap_or_default();
        if run.extra_size(&failed)? {
            run.outcome.interrupted = true;
        }
    }
    drop(program_temp);
    Ok(run.outcome)
}

impl<'p> SizeRun<'p, '_> {
    fn skip_point(&mut self, rows: u64, design: usize, info: SkipInfo) -> Result<(), RunError> {
        self.out.write(Record::Point(PointRecord {
            workload: self.plan.name.clone(),
            design: self.plan.designs[design].name.clone(),
            rows,
            measured: None,
            skipped: Some(info),
            setup_ns: None,
        }))?;
        self.progress.point_done();
        Ok(())
    }

    /// Designs that an earlier measuring process of this sweep lost at `rows`: their failed
    /// points, written where they failed.
    fn failed_before(&mut self, rows: u64, failed: &[(usize, SkipInfo)]) -> Result<(), RunError> {
        for (i, info) in failed.iter().filter(|(i, _)| *i < self.plan.designs.len()) {
            self.skip_point(rows, *i, info.clone())?;
            self.states[*i].learn_failed(rows, info);
            self.states[*i].written_at = Some(rows);
            self.outcome.failures += 1;
        }
        Ok(())
    }

    /// One more size for the design whose time class the planned sizes left unsettled
    /// (`extra.rs`); `failed` are the designs an earlier measuring process lost there, whose
    /// failed points are written instead. True when a stop was asked for.
    fn extra_size(&mut self, failed: &[(usize, SkipInfo)]) -> Result<bool, RunError> {
        let Some(rows) = super::extra::next_size(self.plan) else { return Ok(false) };
        let Some((design, _)) = super::extra::chosen(&self.out.results, self.plan) else { return Ok(false) };
        // Lost there by an earlier measuring process: its failed point, nothing measured.
        if let Some(lost) = failed.iter().find(|(i, _)| *i == design) {
            self.failed_before(rows, std::slice::from_ref(lost))?;
            return Ok(false);
        }
        super::worker::size_started(rows);
        // Half the point budget and the fewest samples (admission judges by them too).
        let mut smaller = self.plan.clone();
        smaller.budget.per_point_s /= 2.0;
        smaller.budget.max_samples = smaller.budget.min_samples.max(3);
        let mut sub = SizeRun {
            plan: &smaller,
            opts: self.opts,
            out: &mut *self.out,
            progress: self.progress,
            outcome: std::mem::take(&mut self.outcome),
            states: std::mem::take(&mut self.states),
            programs: std::mem::take(&mut self.programs),
            started: self.started,
            min_sample_ns: self.min_sample_ns,
            probe: super::machine::DriftProbe::new(),
            only: Some(design),
            again: None,
        };
        let stopped = sub.one_size(rows);
        (self.outcome, self.states, self.programs) = (sub.outcome, sub.states, sub.programs);
        stopped
    }

    /// Measure `rows` once more when its drift probe ran slower than the workload's sizes
    /// before it (`again.rs`): cut its records, forget what the designs learned there, and
    /// measure it as if for the first time, without charging the run budget. True when a
    /// stop was asked for.
    fn measure_again(&mut self, rows: u64, before: super::again::Before) -> Result<bool, RunError> {
        let name = &self.plan.name;
        let Some(ratio) = super::again::slow_now(&self.out.results, name, rows) else { return Ok(false) };
        if super::again::spent_at(&self.out.results, name, rows) > self.plan.budget.whole_run_s * super::again::AGAIN_SHARE {
            return Ok(false);
        }
        self.out.cut_back(before.mark)?;
        self.progress.rewound(super::again::points_of(&self.out.results, name));
        (self.states, self.outcome) = (before.states, before.outcome);
        let t0 = Instant::now();
        self.again = Some(ratio);
        let stopped = self.one_size(rows);
        self.again = None;
        self.started += t0.elapsed();
        stopped
    }

    /// Measure every admitted design at one size. True when a stop was asked for.
    fn one_size(&mut self, rows: u64) -> Result<bool, RunError> {
        let plan = self.plan;
        // Read once: admission judges by them and the table record states them.
        let peaks: Vec<Vec<(u64, f64)>> = self.states.iter().map(|s| s.peaks.clone()).collect();
        let limit = super::memory::memory_limit();
        let steadied = super::again::steadied(&self.states, &self.out.results, &plan.name);
        let decisions = super::admit::admit(plan, rows, &steadied, self.opts, self.started.elapsed().as_secs_f64(), &peaks, &limit, self.only);
        let mut runnable = Vec::new();
        let mut trials = Vec::new();
        let mut shares = Vec::new();
        // At the extra size admission leaves every design but `only` out (None).
        for (i, d) in decisions.into_iter().enumerate() {
            match d {
                Some(Ok(admitted)) => {
                    runnable.push(i);
                    match admitted {
                        super::admit::Admission::Trial { limit_s, skip } => trials.push((i, limit_s, skip)),
                        super::admit::Admission::Shared { share_s } => shares.push((i, share_s)),
                        super::admit::Admission::Run => {}
                    }
                }
                Some(Err(info)) => {
                    self.skip_point(rows, i, info)?;
                    self.outcome.skipped += 1;
                }
                None => {}
            }
        }
        if runnable.is_empty() {
            return Ok(false);
        }
        let inputs = self.prepare(rows, &runnable, &peaks, limit.bytes)?;
        let (mut active, _program_files) = self.activate(rows, &runnable, &inputs)?;
        for (i, limit_s, skip) in trials {
            if let Some(a) = active.iter_mut().find(|a| a.index == i) {
                a.trial = Some((limit_s, skip));
            }
        }
        for (i, share_s) in shares {
            if let Some(a) = active.iter_mut().find(|a| a.index == i) {
                a.share_s = Some(share_s);
            }
        }
        let mut measured: Vec<MeasuredRow> = Vec::new();
        super::sampling::first_runs(plan, rows, &mut active, &mut self.programs, self.progress, self.min_sample_ns);
        super::sampling::warm_up(&plan.budget, rows, &mut active, &mut self.programs);
        // A design's point is written as soon as its sampling ends.
        let (states, out, outcome, progress) = (&mut self.states, &mut *self.out, &mut self.outcome, self.progress);
        let mut done = |a: &mut Active<'p>, probe_runs: &[(f64, f64)], programs: &[Option<ProgramDesign>]| -> Result<(), RunError> {
            finish_point(plan, rows, a, &mut states[a.index], out, outcome, &mut measured, probe_runs, programs)?;
            progress.point_done();
            Ok(())
        };
        let (probe_runs, stopped) = super::sampling::interleave(plan, rows, self.started, &self.probe, &mut active, &mut self.programs, progress, &mut done)?;
        // Designs still sampling when a stop was asked for keep what they measured.
        for a in active.iter_mut().filter(|a| !a.written) {
            if a.sampling() {
                a.stop = Some(StopReason::Interrupted);
            }
            done(a, &probe_runs, &self.programs)?;
        }
        drop(done);
        // The comparison keeps the designs' order, whatever order their sampling ended in.
        measured.sort_by_key(|m| plan.designs.iter().position(|d| d.name == m.0));
        let mut cmp = compare(plan, rows, &measured, self.opts.seed);
        if self.only.is_some() {
            // At the extra size only the unsettled design ran: no ranking among a subset
            // (a verdict or a "fastest" there would leave the settled designs out). The
            // outputs are still compared.
            cmp.ratios.clear();
            cmp.fastest = None;
        }
        if !probe_runs.is_empty() {
            let walls: Vec<f64> = probe_runs.iter().map(|p| p.0).collect();
            cmp.probe_ns = Some(crate::measure::stats::median(&walls));
        }
        cmp.remeasured_after = self.again;
        if cmp.equivalence.status == EquivalenceStatus::Mismatch {
            self.outcome.mismatches += 1;
        }
        self.out.write(Record::Comparison(cmp))?;
        Ok(stopped || super::interrupt::requested())
    }

    /// The size's tables (untimed), with their record written.
    fn prepare(&mut self, rows: u64, runnable: &[usize], peaks: &[Vec<(u64, f64)>], available: u64) -> Result<super::inputs::SizeInputs, RunError> {
        let plan = self.plan;
        let est = super::memory::estimate(plan, rows, peaks);
        let w = super::alloc::Window::open();
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
        self.out.write(Record::Table(TableRecord {
            workload: plan.name.clone(),
            rows,
            fingerprint: if inputs.tables.is_empty() { "on disk only".to_string() } else { crate::table::fingerprint(&df) },
            generate_ns,
            generate_alloc_bytes: gen_alloc.bytes,
            table_bytes_estimate: est.table,
            memory_estimate_bytes: est.total(),
            available_memory_bytes: available,
        }))?;
        Ok(inputs)
    }

    /// Each runnable design's feed, its program's input and its set-up steps (untimed).
    /// The program input files come back too: programs started per run read them, so
    /// they must outlive the size's sampling.
    fn activate(
        &mut self,
        rows: u64,
        runnable: &[usize],
        inputs: &super::inputs::SizeInputs,
    ) -> Result<(Vec<Active<'p>>, Option<Result<ProgramInputs, String>>), RunError> {
        let plan: &'p Plan = self.plan;
        let b = plan.budget;
        let df = inputs.first();
        let records = if runnable.iter().any(|&i| plan.designs[i].feed == Feed::Records) {
            Some(Arc::new(Records::from_frame(&df).map_err(|e| RunError::Table { workload: plan.name.clone(), rows, message: e.to_string() })?))
        } else {
            None
        };
        // Program designs read the tables from files (untimed); a worker loads its input now.
        let formats: Vec<crate::spec::model::InputFormat> = runnable.iter().filter_map(|&i| plan.designs[i].program.as_ref().map(|p| p.input)).collect();
        let program_files = (!formats.is_empty()).then(|| ProgramInputs::write(&inputs.tables, &formats));
        let mut active = Vec::new();
        for &i in runnable {
            let d = &plan.designs[i];
            let (ctx, mut error) = match inputs.context(d.engine) {
                Ok(c) => (c.limited(Instant::now() + super::watchdog::limit_for(b.per_point_s), Allowed::of(d.program.is_some(), self.opts.force)), None),
                Err(message) => (RunContext::default(), Some(SkipCause::Step { message })),
            };
            if let Some(p) = self.programs.get_mut(i).and_then(|p| p.as_mut()) {
                let _watch = super::watchdog::arm(i, rows, "loading a program's input", super::watchdog::limit_for(b.per_point_s));
                error = match &program_files {
                    Some(Ok(files)) => p.start_size(files, plan.rows_at(rows), super::sampling::program_limit(&b, 0.0)).err(),
                    Some(Err(e)) => Some(e.clone()),
                    None => Some("its input files were not written".into()),
                }
                .map(super::sampling::program);
            }
            // Untimed set-up steps, once per size.
            let mut feed = design_feed(d, &df, &records);
            let setup_started = Instant::now();
            for s in d.setup.iter().filter(|_| error.is_none()) {
                let _watch = super::watchdog::arm(i, rows, "a set-up step", super::watchdog::limit_for(b.per_point_s));
                match run_step(s, feed.clone(), &ctx) {
                    Ok(v) => feed = v,
                    Err(e) => {
                        error = Some(SkipCause::Setup { step: s.label.clone(), cause: Box::new(e) });
                        break;
                    }
                }
            }
            let setup_ns = (!d.setup.is_empty()).then(|| setup_started.elapsed().as_nanos() as f64);
            active.push(Active::new(i, d, feed, ctx, setup_ns, error));
        }
        Ok((active, program_files))
    }
}

/// What a design's first step receives: the first table, its records, or — on the
/// streaming engine, whose tables stay on disk — an empty table (its `sql` steps read the
/// scans in the run context).
pub(super) fn design_feed(d: &DesignPlan, df: &DataFrame, records: &Option<Arc<Records>>) -> Value {
    match (d.feed, records, d.engine) {
        (_, _, EngineChoice::Streaming) => Value::Frame(DataFrame::empty()),
        (Feed::Records, Some(r), _) => Value::Records(r.clone()),
        _ => Value::Frame(df.clone()),
    }
}
