//! Sampling at one size: the designs admitted there, each with its feed, are run once to
//! learn their speed and choose a batch (so the clock's cost is under 1% of a sample),
//! warmed up, then sampled round-robin — A B C A B C … — so drift of the machine hits every
//! design alike, until every design's median is precise enough or a cap or budget ends it.
//!
//! A design whose median is precise keeps sampling while another design of its size is
//! not yet precise (up to its own cap and budget): the designs compared at one size are then
//! sampled over the same stretch of time. Stopped one by one, a design settled in fifteen
//! quick rounds was compared with one sampled for seconds more, and a burst of other work
//! during those fifteen rounds was read as the first design's cost: the same step twice,
//! one copy slowed by 50%, was measured ×0.90 at 2k rows on a machine running tests beside it.
//!
//! Inputs are made before the clock starts and outputs are dropped after it stops: nothing
//! may allocate inside the timed region but the design itself, because the allocation
//! counter is process-wide. Every run is armed with the watchdog (which, in a measuring
//! child, tells the parent), and a panic in a step becomes an error of its run.

use super::alloc::{AllocStats, Window};
use super::clock::process_cpu_ns;
use super::equivalence::facts_for_comparison;
use super::program::ProgramDesign;
use super::runner::{Progress, RunError};
use super::stats::{median_ci_sorted, median_sorted};
use super::stopping::{is_precise, limit};
use super::watchdog;
pub use super::execute::{make_input, panic_text, run_design, run_design_in, run_step};
use crate::patterns::sql::RunContext;
use crate::patterns::{OutputFacts, Value};
use crate::plan::{Budget, DesignPlan, Plan};
use crate::results::*;
use std::time::Instant;

/// One design being sampled at one size.
pub struct Active<'a> {
    pub index: usize,
    pub design: &'a DesignPlan,
    pub feed: Value,
    pub ctx: RunContext,
    /// Time of the untimed set-up steps at this size (ns), when the design has any.
    pub setup_ns: Option<f64>,
    pub private: bool,
    pub batch: u64,
    pub warmup_runs: u64,
    pub samples: Vec<f64>,
    pub cpu: Vec<f64>,
    pub allocs: Vec<AllocStats>,
    pub spent_s: f64,
    /// Involuntary context switches of the process and the seconds over which they were
    /// counted, while this design was sampled.
    pub switches: (u64, f64),
    pub output: Option<OutputFacts>,
    pub stop: Option<StopReason>,
    /// Why it failed at this size (a failed point is written).
    pub error: Option<SkipCause>,
    /// Its point has been written.
    pub written: bool,
    /// A program design: peak resident size of each sample and the size before it (bytes).
    pub resident: Vec<(u64, Option<u64>)>,
    pub is_program: bool,
    /// The machine's CPU ticks when its interleaved sampling began (hygiene).
    pub cpu_at_start: Option<super::hygiene::CpuSnapshot>,
    /// How long each cache sweep before one of its samples took (ns): the memory probe.
    pub memory: Vec<f64>,
    /// It writes files (a step with a disk factor, or a program): each sample is preceded
    /// by a files probe (`files_probe`).
    pub touches_files: bool,
    /// How long each files probe before one of its samples took (ns).
    pub files: Vec<f64>,
    /// Admitted for a trial (`admit::Admission::Trial`): its first run is stopped after
    /// this many seconds, and then it is skipped with this record.
    pub trial: Option<(f64, SkipInfo)>,
    /// The trial was stopped unfinished: the point is written skipped with this record.
    pub overrun: Option<SkipInfo>,
    /// Admitted with less than the point budget (`admit::Admission::Shared`): its sampling
    /// stops, for the run budget, once its own runs have taken this many seconds.
    pub share_s: Option<f64>,
    /// Its median is precise after its latest sample; it samples on while another design
    /// of the size is not.
    pub settled: bool,
}

impl<'a> Active<'a> {
    pub fn new(index: usize, design: &'a DesignPlan, feed: Value, ctx: RunContext, setup_ns: Option<f64>, error: Option<SkipCause>) -> Active<'a> {
        Active {
            index,
            design,
            feed,
            ctx,
            setup_ns,
            private: design.steps.first().is_some_and(|s| s.def.private_input),
            batch: 1,
            warmup_runs: 0,
            samples: Vec::new(),
            cpu: Vec::new(),
            allocs: Vec::new(),
            spent_s: 0.0,
            switches: (0, 0.0),
            cpu_at_start: None,
            memory: Vec::new(),
            touches_files: design.disk_factor() > 0.0,
            files: Vec::new(),
            trial: None,
            overrun: None,
            share_s: None,
            settled: false,
            output: None,
            stop: None,
            error,
            written: false,
            resident: Vec::new(),
            is_program: design.program.is_some(),
        }
    }

    /// Still to be sampled.
    pub fn sampling(&self) -> bool {
        self.error.is_none() && self.stop.is_none()
    }
}

/// Time `batch` runs as one sample. Inputs are built before the clock starts and the
/// outputs dropped after it stops.
fn sample(a: &Active) -> Result<(f64, f64, AllocStats, Option<Value>), SkipCause> {
    let mut inputs: Vec<Value> = (0..a.batch).map(|_| make_input(&a.feed, a.private)).collect();
    let mut outputs: Vec<Result<Value, SkipCause>> = Vec::with_capacity(a.batch as usize);
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
    let per_run = AllocStats { bytes: (alloc.bytes as f64 / b).round() as u64, count: (alloc.count as f64 / b).round() as u64, peak_live: alloc.peak_live };
    Ok((elapsed / b, cpu / b, per_run, first))
}

/// What one sample gave: ns per run, CPU ns per run, allocations per run, the first
/// output (steps only), the resident size at its peak and before it (programs only).
type Taken = (f64, f64, AllocStats, Option<Value>, Option<(u64, Option<u64>)>);

/// Take one sample of a design: its steps in this process, or its program.
fn take(a: &Active, programs: &mut [Option<ProgramDesign>], b: &Budget) -> Result<Taken, SkipCause> {
    take_within(a, programs, program_limit(b, a.spent_s))
}

/// [`take`], a program's runs stopped after `limit`.
fn take_within(a: &Active, programs: &mut [Option<ProgramDesign>], limit: std::time::Duration) -> Result<Taken, SkipCause> {
    match programs.get_mut(a.index).and_then(|p| p.as_mut()) {
        Some(p) => {
            let s = p.sample(a.batch, limit).map_err(program)?;
            Ok((s.ns_per_run, s.cpu_ns_per_run, AllocStats::default(), None, s.peak_resident.map(|p| (p, s.resident_before))))
        }
        None => sample(a).map(|(ns, cpu, alloc, out)| (ns, cpu, alloc, out, None)),
    }
}

/// How long a program's request may take: what is left of its point budget, with a
/// quarter and a second of grace (and at least a second).
pub fn program_limit(b: &Budget, spent_s: f64) -> std::time::Duration {
    std::time::Duration::from_secs_f64((b.per_point_s * 1.25 + 1.0 - spent_s).clamp(1.0, 86_400.0 * 14.0))
}

/// A sample that ended in an error: a failure of the design, or — when the sweep was
/// interrupted while a program ran — a stop that keeps what was measured.
pub fn failed(a: &mut Active, e: SkipCause) {
    match e {
        SkipCause::Program { message } if message == super::program::INTERRUPTED && super::interrupt::requested() => a.stop = Some(StopReason::Interrupted),
        e => a.error = Some(e),
    }
}

/// What a program design's handle reported, as a cause.
pub fn program(message: String) -> SkipCause {
    SkipCause::Program { message }
}

/// An error of the check of a design's output, as a cause.
fn output_check(message: String) -> SkipCause {
    SkipCause::Step { message }
}

/// The first run of each design: learn its speed, choose the batch, record its output.
pub fn first_runs(plan: &Plan, rows: u64, active: &mut [Active], programs: &mut [Option<ProgramDesign>], progress: &dyn Progress, min_sample_ns: f64) {
    let b = plan.budget;
    for a in active.iter_mut().filter(|a| a.error.is_none()) {
        if super::interrupt::requested() {
            break;
        }
        progress.point(&plan.name, rows, a.index, &a.design.name, 0);
        let t = Instant::now();
        let watch = watchdog::arm(a.index, rows, "the first run", watchdog::limit_for(b.per_point_s));
        let first = match &a.trial {
            Some((limit_s, _)) => take_within(a, programs, std::time::Duration::from_secs_f64(*limit_s)),
            None => take(a, programs, &b),
        };
        drop(watch);
        if first.is_err() && a.trial.is_some() && programs.get(a.index).and_then(|p| p.as_ref()).is_some_and(|p| p.stopped_at_limit()) {
            // The trial did not finish within the point budget: skipped, not failed.
            a.overrun = a.trial.take().map(|t| t.1);
            a.stop = Some(StopReason::PointBudget);
            a.spent_s += t.elapsed().as_secs_f64();
            continue;
        }
        // The output to compare: a step's first result, or what the program saved.
        let first = first.and_then(|(ns, cpu, alloc, out_v, peak)| {
            let facts = match programs.get_mut(a.index).and_then(|p| p.as_mut()) {
                Some(p) => match p.output(program_limit(&b, a.spent_s + ns / 1e9)).map_err(program)? {
                    // How the file was read back says nothing about the program's storage.
                    Some(df) => Some(OutputFacts { chunks: 0, ..facts_for_comparison(plan, &Value::Frame(df)).map_err(output_check)? }),
                    None => None,
                },
                None => out_v.as_ref().map(|v| facts_for_comparison(plan, v)).transpose().map_err(output_check)?,
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
}

/// Further warm-up, in whole batches, while it stays cheap.
pub fn warm_up(b: &Budget, rows: u64, active: &mut [Active], programs: &mut [Option<ProgramDesign>]) {
    for a in active.iter_mut().filter(|a| a.sampling()) {
        for _ in 1..b.warmup {
            if a.spent_s > b.per_point_s * 0.2 || super::interrupt::requested() {
                break;
            }
            let t = Instant::now();
            let watch = watchdog::arm(a.index, rows, "a warm-up run", watchdog::limit_for(b.per_point_s));
            let warm = take(a, programs, b);
            drop(watch);
            if let Err(e) = warm {
                failed(a, e);
                break;
            }
            a.warmup_runs += a.batch;
            a.spent_s += t.elapsed().as_secs_f64();
        }
    }
}

/// Interleaved sampling, with the drift probe timed once per round; `done` is called for a
/// design the moment its sampling ends (so its point is written at once). Returns the
/// probe's (wall, CPU) times and whether a stop was asked for.
pub fn interleave<'a>(
    plan: &Plan,
    rows: u64,
    run_started: Instant,
    probe: &super::machine::DriftProbe,
    active: &mut [Active<'a>],
    programs: &mut [Option<ProgramDesign>],
    progress: &dyn Progress,
    done: &mut dyn FnMut(&mut Active<'a>, &[(f64, f64)], &[Option<ProgramDesign>]) -> Result<(), RunError>,
) -> Result<(Vec<(f64, f64)>, bool), RunError> {
    let b = plan.budget;
    let mut probe_runs: Vec<(f64, f64)> = Vec::new();
    for a in active.iter_mut().filter(|a| !a.sampling()) {
        done(a, &probe_runs, programs)?;
    }
    // A program design's own process would count as another process for every design
    // sampled beside it in the same rounds: no others' share at such a size.
    let at_start = if active.iter().any(|a| a.is_program) { None } else { super::hygiene::cpu_snapshot() };
    for a in active.iter_mut() {
        a.cpu_at_start = at_start;
    }
    loop {
        if super::interrupt::requested() {
            return Ok((probe_runs, true));
        }
        if active.iter().any(|a| a.sampling()) {
            probe_runs.push(probe.time_with_cpu());
        }
        let mut any = false;
        for a in active.iter_mut().filter(|a| a.sampling()) {
            if super::interrupt::requested() {
                break;
            }
            any = true;
            // The file system's speed, before the sweep that leaves the caches cold.
            if a.touches_files {
                a.files.extend(super::files_probe::time(&a.ctx.temp_base()));
            }
            // The same (cold) caches before every sample, whoever ran before it (scrub.rs).
            let swept = Instant::now();
            if super::scrub::caches_timed() {
                a.memory.push(swept.elapsed().as_nanos() as f64);
            }
            let t = Instant::now();
            let watch = watchdog::arm(a.index, rows, "a sample", watchdog::limit_for(b.per_point_s));
            let sw0 = super::hygiene::involuntary_switches();
            let taken = take(a, programs, &b);
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
                    done(a, &probe_runs, programs)?;
                    continue;
                }
            }
            a.spent_s += t.elapsed().as_secs_f64();
            let precise = is_precise(a, &b);
            a.settled = precise;
            // A cap or a budget ends a design's sampling at once; precision alone waits for
            // the round's end (the module's note).
            a.stop = limit(a, &b, run_started.elapsed().as_secs_f64()).map(|r| if precise { StopReason::Precise } else { r });
            progress.point(&plan.name, rows, a.index, &a.design.name, a.samples.len());
            if a.stop.is_some() {
                done(a, &probe_runs, programs)?;
            }
        }
        if !any {
            return Ok((probe_runs, super::interrupt::requested()));
        }
        // Every design still sampling is precise: they stop together.
        if active.iter().filter(|a| a.sampling()).all(|a| a.settled) {
            for a in active.iter_mut().filter(|a| a.sampling()) {
                a.stop = Some(StopReason::Precise);
                done(a, &probe_runs, programs)?;
            }
        }
    }
}

/// Other processes' share of the machine while `a` was sampled; not judged for a program,
/// whose own process is not this one.
fn others_share(a: &Active) -> Option<f64> {
    if a.is_program {
        return None;
    }
    super::hygiene::others_share(a.cpu_at_start?, super::hygiene::cpu_snapshot()?)
}

/// The point's record from what was sampled.
pub fn summarize(a: &Active, probe_runs: &[(f64, f64)], programs: &[Option<ProgramDesign>]) -> Measured {
    // A program's CPU time can be unreadable (NaN) for a sample; the median is over the rest.
    let cpu: Vec<f64> = a.cpu.iter().copied().filter(|x| x.is_finite()).collect();
    let cpu_median = (!cpu.is_empty()).then(|| crate::measure::stats::median(&cpu));
    let mut s = a.samples.clone();
    s.sort_by(f64::total_cmp);
    let med = median_sorted(&s);
    let ci = median_ci_sorted(&s, 0.95);
    let tail = super::stats::tail_percentiles(&a.samples).unwrap_or(super::stats::TailPercentiles { p50: med, p90: med, p99: med, max: med });
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
        disturbance: Some(crate::results::Disturbance {
            memory_probe_ns: crate::fit::sample::median(&a.memory).ok(),
            files_probe_ns: crate::fit::sample::median(&a.files).ok(),
            ..super::hygiene::assess(probe_runs, (a.switches.1 > 0.0).then(|| a.switches.0 as f64 / a.switches.1), others_share(a))
        }),
        bimodal: super::hygiene::bimodal(&a.samples),
    }
}
