//! `framecost sweep PATH...` — replay every design of each workload at every size and
//! write a run folder of results.
//!
//! Every spec is checked before anything runs. Sizes whose estimated memory does not fit
//! are refused with the estimate (unless `--force`); points predicted to overrun their time
//! budget are skipped with the prediction shown. Results are written point by point to
//! `<run>/points.jsonl`; `summary.json` is written at the end. Exit 0 on success, 2 for bad
//! input, 3 when a step failed or designs that should agree did not.

use crate::measure::runner::{self, Progress, SweepOptions};
use crate::plan::Plan;
use crate::present::terminal::{render_with, Options, Style};
use crate::results::writer::RunWriter;
use crate::results::Record;
use crate::spec::units::{parse_rows, parse_seconds, parse_share, rows_label};
use std::path::PathBuf;
use std::time::Instant;

/// Replay designs on growing tables and measure them.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Workload files, or folders of them.
    #[arg(required_unless_present = "builtin")]
    pub paths: Vec<PathBuf>,
    /// Also sweep this built-in workload (repeatable; `framecost catalog` lists them).
    #[arg(long, value_name = "NAME", value_parser = clap::builder::PossibleValuesParser::new(crate::builtin::names()), hide_possible_values = true)]
    pub builtin: Vec<String>,
    /// Run folder to write (default: reports/<workload>-<date>-<time>).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Replace the sizes of every workload, e.g. `1k,4k,16k`.
    #[arg(long, value_name = "LIST", value_delimiter = ',')]
    pub sizes: Option<Vec<String>>,
    /// Replace the per-point time budget, e.g. `5s`.
    #[arg(long, value_name = "DURATION")]
    pub point_budget: Option<String>,
    /// Replace the whole-run time budget of each workload, e.g. `2m`.
    #[arg(long, value_name = "DURATION")]
    pub run_budget: Option<String>,
    /// Replace the target precision of medians, e.g. `5%`.
    #[arg(long, value_name = "SHARE")]
    pub precision: Option<String>,
    /// Replace the most samples per point.
    #[arg(long, value_name = "N")]
    pub max_samples: Option<u64>,
    /// Run only these designs (repeatable).
    #[arg(long = "design", value_name = "NAME")]
    pub designs: Vec<String>,
    /// Run sizes even when their estimated memory exceeds what is available.
    #[arg(long)]
    pub force: bool,
    /// Show the plan and its memory estimates, then stop without running.
    #[arg(long)]
    pub plan: bool,
    /// Print only the run folder's path at the end, not the summary.
    #[arg(long)]
    pub quiet: bool,
    /// Let designs that are programs run (they run with your permissions: read their
    /// commands first; without this flag such a workload is refused and its commands listed).
    #[arg(long)]
    pub allow_programs: bool,
    /// At the end, print one JSON document (`framecost.sweep/1`) instead of the summary.
    #[arg(long)]
    pub json: bool,
    /// Print everything in the summary: all findings, cost-model notes, intervals, chunks.
    #[arg(long)]
    pub long: bool,
    /// Measure in this process instead of a child process per workload: a runaway design
    /// (one run past twice its point budget) then ends the whole sweep, and a step that
    /// allocates past the memory available takes framecost down with it.
    #[arg(long)]
    pub in_process: bool,
}

/// The decision for one finished workload, in a few words, for the piped progress line.
fn workload_answer(r: &crate::results::reader::RunResults, name: &str) -> String {
    let Some(w) = r.workloads.iter().find(|w| w.header.workload == name) else { return String::new() };
    let (a, e) = crate::explain::analysed::analyse_and_explain(w, &crate::analyse::AnalyseOptions::default());
    crate::present::digest::digest(w, &a, &e).answer
}

/// Schema of the `--json` document (docs/results.md).
pub const SCHEMA: &str = "framecost.sweep/1";

fn fail(msg: impl std::fmt::Display) -> i32 {
    eprintln!("framecost sweep: {msg}");
    crate::exit::BAD_INPUT
}

/// After Ctrl-C or SIGTERM: a partial summary, where the run is, how to redraw it.
fn interrupted(out: &RunWriter) -> i32 {
    let dir = out.dir().display();
    if let Err(e) = out.finish_interrupted() {
        return write_failed(e);
    }
    let points = out.results.workloads.iter().map(|w| w.points.len()).sum::<usize>();
    eprintln!("framecost sweep: interrupted; {points} finished point(s) are in {dir}/points.jsonl (partial summary: {dir}/summary.json)");
    eprintln!("framecost sweep: redraw it with `framecost report {dir}`, or see it with `framecost recap {dir}`");
    crate::exit::INTERRUPTED
}

/// Results could not be written: one message form and one exit code wherever it happens.
fn write_failed(msg: impl std::fmt::Display) -> i32 {
    eprintln!("framecost sweep: could not write results: {msg}");
    crate::exit::WRITE_FAILED
}

/// Apply command-line overrides to a plan.
fn adjust(plan: &mut Plan, a: &Args) -> Result<(), String> {
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
    if let Some(s) = &a.point_budget {
        plan.budget.per_point_s = positive(parse_seconds(s), "--point-budget")?;
    }
    if let Some(s) = &a.run_budget {
        plan.budget.whole_run_s = positive(parse_seconds(s), "--run-budget")?;
    }
    if let Some(s) = &a.precision {
        plan.budget.precision = parse_share(s).map_err(|e| format!("--precision: expected {e}"))?;
    }
    if let Some(m) = a.max_samples {
        if m < plan.budget.min_samples.min(6) {
            return Err(format!("--max-samples: expected at least {}", plan.budget.min_samples.min(6)));
        }
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

fn positive(v: Result<f64, String>, flag: &str) -> Result<f64, String> {
    match v {
        Ok(x) if x > 0.0 && x.is_finite() => Ok(x),
        Ok(x) => Err(format!("{flag}: expected a duration above zero, found {x} s")),
        Err(e) => Err(format!("{flag}: expected {e}")),
    }
}

/// What `--plan` says about one size: one line, or one per engine when designs differ in it.
fn plan_lines(p: &Plan, n: u64) -> Vec<String> {
    use crate::spec::model::EngineChoice;
    let engines: Vec<EngineChoice> = [EngineChoice::Memory, EngineChoice::Streaming]
        .into_iter()
        .filter(|e| p.designs.iter().any(|d| d.engine == *e))
        .collect();
    let line = |e: crate::measure::memory::Estimate, who: &str| {
        let disk = if e.disk > 0.0 { format!("; writes {}", e.describe_disk()) } else { String::new() };
        format!("{who}needs {}{disk}", e.describe())
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

/// Progress on stderr: on a terminal a bar with the elapsed time and an estimate of what is
/// left; otherwise one plain line per finished workload (and per finished size once a
/// workload has run for [`LONG_WORKLOAD_S`]), so a CI log shows the sweep moving. Drawn
/// only from the runner's calls between samples (never from a timer thread: the
/// allocation counter is process-wide).
struct Bar {
    pb: Option<indicatif::ProgressBar>,
    state: std::sync::Mutex<BarState>,
}

/// A workload that has run this long reports each finished size when piped.
const LONG_WORKLOAD_S: f64 = 20.0;

#[derive(Default)]
struct BarState {
    /// (name, sizes, designs, run budget in seconds) of every workload, in sweep order.
    plans: Vec<(String, Vec<u64>, usize, f64)>,
    /// Index of the current workload.
    current: usize,
    /// Points finished in the current workload.
    done_here: usize,
    /// Work finished (Σ rows of finished points) and in all, for the estimate.
    work_done: f64,
    work_total: f64,
    points_done: u64,
    started: Option<Instant>,
    workload_started: Option<Instant>,
    size_started: Option<Instant>,
}

fn hms(s: f64) -> String {
    let s = s.max(0.0).round() as u64;
    if s >= 3600 {
        format!("{}h{:02}m", s / 3600, (s % 3600) / 60)
    } else if s >= 60 {
        format!("{}m{:02}s", s / 60, s % 60)
    } else {
        format!("{s}s")
    }
}

impl Bar {
    fn new(plans: &[Plan]) -> Bar {
        use std::io::IsTerminal;
        let total: u64 = plans.iter().map(|p| (p.sizes.len() * p.designs.len()) as u64).sum();
        let state = BarState {
            plans: plans.iter().map(|p| (p.name.clone(), p.sizes.clone(), p.designs.len(), p.budget.whole_run_s)).collect(),
            work_total: plans.iter().map(|p| p.sizes.iter().map(|&n| n as f64).sum::<f64>() * p.designs.len() as f64).sum(),
            started: Some(Instant::now()),
            ..BarState::default()
        };
        let pb = std::io::stderr().is_terminal().then(|| {
            let pb = indicatif::ProgressBar::with_draw_target(Some(total), indicatif::ProgressDrawTarget::stderr());
            if let Ok(st) = indicatif::ProgressStyle::with_template("{bar:20} {pos}/{len} points · {wide_msg}") {
                pb.set_style(st);
            }
            pb
        });
        Bar { pb, state: std::sync::Mutex::new(state) }
    }

    /// A workload starts (called by `run` before the runner).
    fn begin(&self, index: usize) {
        if let Ok(mut st) = self.state.lock() {
            st.current = index;
            st.done_here = 0;
            st.workload_started = Some(Instant::now());
            st.size_started = Some(Instant::now());
        }
    }

    /// A workload ended: one plain line when piped.
    fn end(&self, summary: &str) {
        if self.pb.is_some() {
            return;
        }
        if let Ok(st) = self.state.lock() {
            let Some((name, ..)) = st.plans.get(st.current) else { return };
            let took = st.workload_started.map(|t| t.elapsed().as_secs_f64()).unwrap_or(0.0);
            let all = st.started.map(|t| t.elapsed().as_secs_f64()).unwrap_or(0.0);
            eprintln!(
                "framecost: {name} done in {} ({}/{} workloads, {} elapsed){}",
                hms(took),
                st.current + 1,
                st.plans.len(),
                hms(all),
                if summary.is_empty() { String::new() } else { format!(": {summary}") }
            );
        }
    }

    /// Seconds left: the pace so far (by rows, as cost grows at least with the rows), but
    /// never more than what the run budgets still allow.
    fn left(st: &BarState) -> Option<f64> {
        let elapsed = st.started?.elapsed().as_secs_f64();
        if st.work_done <= 0.0 {
            return None;
        }
        let by_pace = elapsed / st.work_done * (st.work_total - st.work_done);
        let here = st.workload_started.map(|t| t.elapsed().as_secs_f64()).unwrap_or(0.0);
        let budget: f64 = st.plans.get(st.current).map(|p| (p.3 - here).max(0.0)).unwrap_or(0.0)
            + st.plans.iter().skip(st.current + 1).map(|p| p.3).sum::<f64>();
        Some(by_pace.min(budget))
    }
}

impl Progress for Bar {
    fn point(&self, workload: &str, rows: u64, _index: usize, design: &str, samples: usize) {
        let Some(pb) = &self.pb else { return };
        let Ok(st) = self.state.lock() else { return };
        let elapsed = st.started.map(|t| t.elapsed().as_secs_f64()).unwrap_or(0.0);
        let left = Bar::left(&st).map(|s| format!(" · about {} left", hms(s))).unwrap_or_default();
        pb.set_message(format!("{} elapsed{left} · {workload} · {} rows · {design} · {samples} samples", hms(elapsed), rows_label(rows)));
    }
    fn rewound(&self, kept: usize) {
        let Ok(mut st) = self.state.lock() else { return };
        let lost = st.done_here.saturating_sub(kept);
        st.done_here = kept;
        st.points_done = st.points_done.saturating_sub(lost as u64);
        if let Some(pb) = &self.pb {
            pb.set_position(st.points_done);
        }
    }
    fn point_done(&self) {
        let Ok(mut st) = self.state.lock() else { return };
        st.points_done += 1;
        st.done_here += 1;
        let Some((name, sizes, designs, _)) = st.plans.get(st.current).cloned() else { return };
        let k = (st.done_here - 1) / designs.max(1);
        st.work_done += sizes.get(k).copied().unwrap_or(0) as f64;
        if let Some(pb) = &self.pb {
            pb.inc(1);
            return;
        }
        // Piped: one line per finished size of a long workload.
        if designs > 0 && st.done_here % designs == 0 && st.done_here < designs * sizes.len() {
            let here = st.workload_started.map(|t| t.elapsed().as_secs_f64()).unwrap_or(0.0);
            let size_took = st.size_started.map(|t| t.elapsed().as_secs_f64()).unwrap_or(0.0);
            st.size_started = Some(Instant::now());
            if here >= LONG_WORKLOAD_S {
                let left = Bar::left(&st).map(|s| format!(", about {} left", hms(s))).unwrap_or_default();
                eprintln!(
                    "framecost: {name} · {} rows done in {} (size {}/{}{left})",
                    rows_label(sizes[k]),
                    hms(size_took),
                    k + 1,
                    sizes.len()
                );
            }
        }
    }
}

/// Every workload of the command line, checked, with its overrides applied.
fn load_plans(a: &Args) -> Result<Vec<Plan>, i32> {
    let files = super::expand_paths(&a.paths).map_err(fail)?;
    // Check everything before running anything.
    let mut plans = Vec::new();
    let mut bad = false;
    for f in &files {
        match crate::spec::load(f) {
            Ok(p) => plans.push(p),
            Err(e) => {
                eprintln!("{e}");
                bad = true;
            }
        }
    }
    for name in &a.builtin {
        match crate::builtin::load(name) {
            Ok(p) => plans.push(p),
            Err(e) => {
                eprintln!("framecost sweep: --builtin: {e}");
                bad = true;
            }
        }
    }
    if bad {
        return Err(fail("fix the workload files above (nothing was run)"));
    }
    for p in plans.iter_mut() {
        adjust(p, a).map_err(fail)?;
    }
    Ok(plans)
}

/// A measuring child of an isolated sweep (see `measure::supervise`): measure one workload
/// into the parent's run folder, report over the pipe, print nothing else but errors.
fn measure_as_child(a: &Args, order: Result<crate::measure::worker::Order, String>) -> i32 {
    let order = match order {
        Ok(o) => o,
        Err(e) => return fail(e),
    };
    let plans = match load_plans(a) {
        Ok(p) => p,
        Err(code) => return code,
    };
    let Some(plan) = plans.get(order.workload) else { return fail(format!("the measuring order names workload {} of {}", order.workload, plans.len())) };
    if plan.spec_hash != order.spec_hash {
        return fail(format!("`{}` changed since the sweep started; nothing more was measured", plan.file));
    }
    crate::measure::worker::connect(order.fd);
    crate::measure::interrupt::install_quiet();
    if let Some(b) = order.allowance {
        crate::measure::memory::set_allowance(b);
    }
    let mut out = match RunWriter::append(&order.dir) {
        Ok(w) => w,
        Err(e) => return write_failed(e),
    };
    let opts = SweepOptions { force: a.force, resume: order.resume, ..SweepOptions::default() };
    match runner::sweep(plan, &opts, &order.clock, &mut out, &crate::measure::worker::PipeProgress) {
        Ok(o) if o.interrupted || crate::measure::interrupt::requested() => crate::exit::INTERRUPTED,
        Ok(_) => crate::exit::OK,
        Err(runner::RunError::Write(w)) => write_failed(w),
        Err(other) => {
            eprintln!("framecost sweep: {other}");
            crate::exit::RUN_FAILED
        }
    }
}

pub fn run(a: Args) -> i32 {
    if let Some(order) = crate::measure::worker::order() {
        return measure_as_child(&a, order);
    }
    let plans = match load_plans(&a) {
        Ok(p) => p,
        Err(code) => return code,
    };
    // Programs run with the user's permissions: only when allowed, and never unannounced.
    let commands = program_commands(&plans);
    if !commands.is_empty() && !a.allow_programs && !a.plan {
        eprintln!("framecost sweep: these workloads have designs that are programs; they would run:");
        for c in &commands {
            eprintln!("  {c}");
        }
        return fail("nothing was run: read the commands above, then add --allow-programs to run them");
    }

    // Memory plan: the largest size of each workload against what is free now.
    let limit = crate::measure::memory::memory_limit();
    let avail = limit.bytes;
    let opts = SweepOptions { force: a.force, ..SweepOptions::default() };
    let mut refused = Vec::new();
    for p in &plans {
        let largest = *p.sizes.last().unwrap_or(&0);
        let est = crate::measure::memory::estimate(p, largest, &[]);
        if a.plan {
            println!("{} ({} designs):", p.name, p.designs.len());
            for &n in &p.sizes {
                for line in plan_lines(p, n) {
                    println!("  {:>8} {}  {line}", crate::results::Axis(p.axis.as_ref()).value(n), crate::results::Axis(p.axis.as_ref()).name());
                }
            }
            println!(
                "  budgets: {} per point, {} whole run, precision ±{:.1}%, {}–{} samples",
                crate::units::time_ns(p.budget.per_point_s * 1e9),
                crate::units::time_ns(p.budget.whole_run_s * 1e9),
                p.budget.precision * 100.0,
                p.budget.min_samples,
                p.budget.max_samples
            );
        }
        if let Some(free) = crate::measure::memory::available_disk(&std::env::temp_dir()) {
            if est.disk > free as f64 * opts.memory_share {
                refused.push(format!(
                    "{} at {} rows writes {}; {} free on disk",
                    p.name,
                    rows_label(largest),
                    est.describe_disk(),
                    crate::units::bytes(free as f64)
                ));
            }
        }
        let refusals = crate::measure::inputs::refusals(p, largest, &[], &limit, opts.memory_share, false);
        for (d, why) in p.designs.iter().zip(&refusals) {
            if let Some(why) = why.as_ref().filter(|w| w.reason == crate::results::SkipReason::Memory) {
                refused.push(format!("{} design `{}` at {} rows: {}", p.name, d.name, rows_label(largest), why.detail));
            }
        }
    }
    if a.plan {
        println!("memory a size may use now: {} (set by {})", crate::units::bytes(avail as f64), limit.source);
        if let Some(free) = crate::measure::memory::available_disk(&std::env::temp_dir()) {
            println!("free disk in {}: {}", std::env::temp_dir().display(), crate::units::bytes(free as f64));
        }
        for r in &refused {
            println!("would refuse: {r}{}", if a.force { " (but --force is set)" } else { "" });
        }
        return crate::exit::OK;
    }
    for r in &refused {
        eprintln!(
            "framecost sweep: {r}; {}",
            if a.force { "running anyway (--force)" } else { "sizes that do not fit will be refused (--force runs them anyway)" }
        );
    }

    // The run folder.
    let dir = match &a.out {
        Some(d) => d.clone(),
        None => {
            let label = if plans.len() == 1 { plans[0].name.clone() } else { "sweep".to_string() };
            let stamp = chrono::Local::now().format("%Y%m%d-%H%M%S");
            let mut d = PathBuf::from("reports").join(format!("{label}-{stamp}"));
            let mut k = 2;
            while d.exists() {
                d = PathBuf::from("reports").join(format!("{label}-{stamp}-{k}"));
                k += 1;
            }
            d
        }
    };
    if dir.join("points.jsonl").exists() {
        return fail(format!("{} already holds a run; choose another --out", dir.display()));
    }
    let mut out = match RunWriter::create(&dir) {
        Ok(w) => w,
        Err(e) => return write_failed(e),
    };

    crate::measure::interrupt::install();
    if a.in_process {
        crate::measure::watchdog::start(dir.join("points.jsonl"));
    }
    let started = Instant::now();
    let clock = crate::measure::clock::calibrate();
    let mut header = runner::run_header(std::env::args().collect(), clock, a.force);
    if plans.iter().any(|p| p.axis.is_some()) {
        header.schema = crate::results::AXIS_SCHEMA.to_string();
    }
    if let Err(e) = out.write(Record::Run(header)) {
        return write_failed(e);
    }
    eprintln!("framecost: writing {}", dir.display());
    let bar = Bar::new(&plans);
    let mut failures = 0;
    let mut mismatches = 0;
    for (k, p) in plans.iter().enumerate() {
        let _ = out.side_file(&format!("spec-{}.yaml", p.name), &p.spec_text);
        bar.begin(k);
        let swept = if a.in_process { runner::sweep(p, &opts, &clock, &mut out, &bar) } else { crate::measure::supervise::sweep(p, k, &clock, &mut out, &bar) };
        match swept {
            Ok(o) if o.interrupted || crate::measure::interrupt::requested() => {
                if let Some(pb) = &bar.pb {
                    pb.finish_and_clear();
                }
                return interrupted(&out);
            }
            Ok(o) => {
                failures += o.failures;
                mismatches += o.mismatches;
                bar.end(&workload_answer(&out.results, &p.name));
            }
            Err(e) => {
                if let Some(pb) = &bar.pb {
                    pb.finish_and_clear();
                }
                return match e {
                    runner::RunError::Write(w) => write_failed(w),
                    other => {
                        eprintln!("framecost sweep: {other}");
                        crate::exit::RUN_FAILED
                    }
                };
            }
        }
    }
    if let Some(pb) = &bar.pb {
        pb.finish_and_clear();
    }
    if let Err(e) = out.write(Record::End(runner::end_record(started, mismatches))) {
        return write_failed(e);
    }
    let summary_path = match out.finish() {
        Ok(p) => p,
        Err(e) => return write_failed(e),
    };
    // Everything after the measurements is drawn from the results as read back from disk,
    // exactly as `explain`, `report` and `recap` will read them later, so they agree.
    let saved = crate::results::reader::RunResults::read(&dir).unwrap_or_else(|_| out.results.clone());
    // Analysed and explained once: the same value feeds analysis.json (for notebooks;
    // `framecost explain` recomputes it), the pictures and pages, and the summary.
    let analysed = crate::explain::Analysed::new(&saved, &crate::analyse::AnalyseOptions::default());
    let doc = analysed.document(super::explain::SCHEMA);
    if let Err(e) = crate::results::writer::write_atomic(&dir.join("analysis.json"), &serde_json::to_string_pretty(&doc).unwrap_or_default()) {
        return write_failed(e);
    }
    let report = crate::present::report::write(&dir, &analysed);
    if let Err(e) = &report {
        eprintln!("framecost sweep: could not write results: the pictures and reports: {e} (the measurements are kept; `framecost report` redraws them)");
    }
    if a.json {
        let mut doc = super::recap::document(SCHEMA, &analysed);
        doc["run"] = dir.display().to_string().into();
        doc["report"] = report.as_ref().ok().map(|w| w.html.display().to_string()).into();
        let tables: Vec<String> = ["points.parquet", "samples.parquet", "points.csv"]
            .iter()
            .map(|f| dir.join(f))
            .filter(|p| p.is_file())
            .map(|p| p.display().to_string())
            .collect();
        doc["tables"] = tables.into();
        doc["failed_points"] = failures.into();
        doc["mismatched_sizes"] = mismatches.into();
        println!("{}", serde_json::to_string_pretty(&doc).unwrap_or_default());
    } else if !a.quiet {
        print!("{}", render_with(&analysed, Style::detect(), Options::detect(a.long)));
    }
    if !a.json {
        println!("\nresults: {} (summary: {})", dir.join("points.jsonl").display(), summary_path.display());
        if let Ok(w) = &report {
            println!("report:  {} ({} pictures)", w.html.display(), w.pictures.len());
        }
        if dir.join("points.parquet").is_file() {
            println!("tables:  {} (also samples.parquet, points.csv)", dir.join("points.parquet").display());
        }
    }
    if failures > 0 || mismatches > 0 {
        eprintln!("framecost sweep: {failures} failed point(s), {mismatches} size(s) where outputs differed");
        return crate::exit::RUN_FAILED;
    }
    if report.is_err() {
        // The measurements are safe on disk, but not everything asked for could be written.
        return crate::exit::WRITE_FAILED;
    }
    crate::exit::OK
}
