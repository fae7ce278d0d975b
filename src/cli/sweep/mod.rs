//! `framecost sweep PATH...` — replay every design of each workload at every size and
//! write a run folder of results.
//!
//! Every spec is checked before anything runs. Sizes whose estimated memory does not fit
//! are refused with the estimate (unless `--force`); points predicted to overrun their time
//! budget are skipped with the prediction shown. Results are written point by point to
//! `<run>/points.jsonl`; `summary.json` is written at the end. Exit 0 on success, 2 for bad
//! input, 3 when a step failed or designs that should agree did not.

mod progress;
mod setup;

use super::Failure;
use crate::measure::runner::{self, SweepOptions};
use crate::plan::Plan;
use crate::present::terminal::{render_with, Options, Style};
use crate::results::writer::RunWriter;
use crate::results::Record;
use crate::units::rows_label;
use progress::Bar;
use setup::{load_plans, measure_as_child, plan_lines};
pub use setup::program_commands;
use std::path::{Path, PathBuf};
use std::time::Instant;

pub use setup::adjust;

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
    /// Do not sweep the processor's caches before each sample: a sample then finds whatever
    /// the design sampled before it left there (warm for small tables, and dependent on the
    /// order of the designs). By default every sample starts with cold caches, as a step over
    /// data larger than the caches does.
    #[arg(long)]
    pub warm_caches: bool,
    /// After the planned sizes, measure one more size (a step past the largest, half the
    /// point budget) for the design whose time class they leave unsettled ("n or n log n",
    /// "unclear"), where the memory estimate and the budgets allow. Off by default: the
    /// larger size often crosses into another memory regime, and which design takes it
    /// differs between runs (README, "Reading the answers").
    #[arg(long)]
    pub extra_size: bool,
}

/// The decision for one finished workload, in a few words, for the piped progress line.
fn workload_answer(r: &crate::results::reader::RunResults, name: &str) -> String {
    let Some(w) = r.workloads.iter().find(|w| w.header.workload == name) else { return String::new() };
    let (a, e) = crate::explain::analysed::analyse_and_explain(w, &crate::analyse::AnalyseOptions::default());
    crate::present::digest::digest(w, &a, &e).answer
}

/// Schema of the `--json` document (docs/results.md).
pub const SCHEMA: &str = "framecost.sweep/1";

fn fail(msg: impl std::fmt::Display) -> Failure {
    Failure::Usage(msg.to_string())
}

/// After Ctrl-C or SIGTERM: a partial summary, where the run is, how to redraw it.
fn interrupted(out: &RunWriter) -> Failure {
    if let Err(e) = out.finish_interrupted() {
        return write_failed(e);
    }
    let points = out.results.workloads.iter().map(|w| w.points.len()).sum::<usize>();
    Failure::Interrupted(Some((out.dir().to_path_buf(), points)))
}

/// Results could not be written: one message form and one exit code wherever it happens.
fn write_failed(msg: impl std::fmt::Display) -> Failure {
    Failure::Write(format!("could not write results: {msg}"))
}

pub fn run(a: Args) -> Result<(), Failure> {
    if let Some(order) = crate::measure::worker::order() {
        return measure_as_child(&a, order);
    }
    let plans = load_plans(&a)?;
    // Programs run with the user's permissions: only when allowed, and never unannounced.
    let commands = program_commands(&plans);
    if !commands.is_empty() && !a.allow_programs && !a.plan {
        return Err(Failure::ProgramsNotAllowed(commands));
    }
    if memory_plan(&plans, &a) {
        return Ok(());
    }
    let dir = run_dir(&a, &plans);
    if dir.join("points.jsonl").exists() {
        return Err(fail(format!("{} already holds a run; choose another --out", dir.display())));
    }
    let mut out = RunWriter::create(&dir).map_err(write_failed)?;
    // Temp folders of sweeps that were killed before they could clean up.
    let stale = crate::patterns::storage::remove_stale(&std::env::temp_dir());
    if stale > 0 && !a.quiet {
        eprintln!("framecost sweep: removed {stale} temp folder(s) left in {} by sweeps that ended without cleaning up", std::env::temp_dir().display());
    }
    crate::measure::interrupt::install();
    if a.in_process {
        crate::measure::watchdog::start(dir.join("points.jsonl"));
    }
    let started = Instant::now();
    let (failures, mismatches) = measure_all(&plans, &a, &mut out)?;
    out.write(Record::End(runner::end_record(started, mismatches))).map_err(write_failed)?;
    finish(&a, &dir, &out, failures, mismatches)
}

/// The memory plan: the largest size of each workload against what may be used now. With
/// `--plan`, print it and every size's estimate and stop (true: the command is done);
/// otherwise warn about what will be refused.
fn memory_plan(plans: &[Plan], a: &Args) -> bool {
    let limit = crate::measure::memory::memory_limit();
    let share = SweepOptions::default().memory_share;
    let mut refused = Vec::new();
    for p in plans {
        let largest = *p.sizes.last().unwrap_or(&0);
        let est = crate::measure::memory::estimate(p, largest, &[]);
        if a.plan {
            println!("{} ({} designs):", p.name, p.designs.len());
            for &n in &p.sizes {
                for line in plan_lines(p, n) {
                    println!("  {:>8} {}  {line}", crate::results::Axis(p.axis.as_ref()).value(n), crate::results::Axis(p.axis.as_ref()).name());
                }
            }
            if let Some(next) = crate::measure::extra::next_size(p).filter(|_| a.extra_size) {
                println!("  {:>8} rows  only for the design whose time class the sizes above leave unsettled, where the budgets allow (--extra-size)", rows_label(next));
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
            if est.disk > free as f64 * share {
                refused.push(format!("{} at {} rows writes {}; {} free on disk", p.name, rows_label(largest), crate::present::causes::disk_need(est.disk), crate::units::bytes(free as f64)));
            }
        }
        // Each design from the first size its memory estimate is refused at (with nothing
        // measured yet): what a user choosing sizes needs, said at that size.
        let mut first: Vec<Option<(u64, crate::results::SkipInfo)>> = vec![None; p.designs.len()];
        for &n in &p.sizes {
            let refusals = crate::measure::inputs::refusals(p, n, &[], &limit, share, false);
            for (slot, why) in first.iter_mut().zip(refusals) {
                if let Some(why) = why.filter(|w| w.reason == crate::results::SkipReason::Memory) {
                    slot.get_or_insert((n, why));
                }
            }
        }
        let ax = crate::results::Axis(p.axis.as_ref());
        for (d, slot) in p.designs.iter().zip(first) {
            if let Some((n, why)) = slot {
                let from = if n == largest { format!("at {} {}", ax.value(n), ax.name()) } else { format!("from {} {}", ax.value(n), ax.name()) };
                refused.push(format!("{} design `{}` {from}: {}", p.name, d.name, crate::present::causes::skip_words(&why, ax)));
            }
        }
    }
    if a.plan {
        println!("memory a size may use now: {} (set by {})", crate::units::bytes(limit.bytes as f64), limit.source);
        if let Some(free) = crate::measure::memory::available_disk(&std::env::temp_dir()) {
            println!("free disk in {}: {}", std::env::temp_dir().display(), crate::units::bytes(free as f64));
        }
        for r in &refused {
            println!("would refuse: {r}{}", if a.force { " (but --force is set)" } else { "" });
        }
        return true;
    }
    for r in &refused {
        eprintln!("framecost sweep: {r}; {}", if a.force { "running anyway (--force)" } else { "sizes that do not fit will be refused (--force runs them anyway)" });
    }
    false
}

/// The run folder: `--out`, or a new `reports/<workload>-<date>-<time>`.
fn run_dir(a: &Args, plans: &[Plan]) -> PathBuf {
    if let Some(d) = &a.out {
        return d.clone();
    }
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

/// The run header, then every workload measured (in a child process each, or here with
/// `--in-process`): the counts of failed points and mismatched sizes, or the failure.
fn measure_all(plans: &[Plan], a: &Args, out: &mut RunWriter) -> Result<(usize, usize), Failure> {
    let opts = SweepOptions { force: a.force, warm_caches: a.warm_caches, extra_size: a.extra_size, ..SweepOptions::default() };
    let clock = crate::measure::clock::calibrate();
    let mut header = runner::run_header(std::env::args().collect(), clock, a.force, a.warm_caches);
    if plans.iter().any(|p| p.axis.is_some()) {
        header.schema = crate::results::AXIS_SCHEMA.to_string();
    }
    out.write(Record::Run(header)).map_err(write_failed)?;
    eprintln!("framecost: writing {}", out.dir().display());
    let bar = Bar::new(plans);
    let clear = |bar: &Bar| {
        if let Some(pb) = &bar.pb {
            pb.finish_and_clear();
        }
    };
    let (mut failures, mut mismatches) = (0, 0);
    for (k, p) in plans.iter().enumerate() {
        let _ = out.side_file(&format!("spec-{}.yaml", p.name), &p.spec_text);
        bar.begin(k);
        let swept = if a.in_process { runner::sweep(p, &opts, &clock, out, &bar) } else { crate::measure::supervise::sweep(p, k, &clock, out, &bar) };
        match swept {
            Ok(o) if o.interrupted || crate::measure::interrupt::requested() => {
                clear(&bar);
                return Err(interrupted(out));
            }
            Ok(o) => {
                failures += o.failures;
                mismatches += o.mismatches;
                // The piped progress line names the answer; the bar has no room for it.
                bar.end(&if bar.pb.is_none() { workload_answer(&out.results, &p.name) } else { String::new() });
            }
            Err(e) => {
                clear(&bar);
                return Err(Failure::Sweep(e));
            }
        }
    }
    clear(&bar);
    Ok((failures, mismatches))
}

/// After the measurements: the summary, the analysis, the pictures and pages, and what the
/// terminal shows — all from the results as read back from disk, exactly as `explain`,
/// `report` and `recap` will read them later, so they agree.
fn finish(a: &Args, dir: &Path, out: &RunWriter, failures: usize, mismatches: usize) -> Result<(), Failure> {
    let summary_path = out.finish().map_err(write_failed)?;
    // Everything after the measurements is drawn from the results as read back from disk,
    // exactly as `explain`, `report` and `recap` will read them later, so they agree.
    let saved = crate::results::reader::RunResults::read(dir).unwrap_or_else(|_| out.results.clone());
    // Analysed and explained once: the same value feeds analysis.json (for notebooks;
    // `framecost explain` recomputes it), the pictures and pages, and the summary.
    let analysed = crate::explain::Analysed::new(&saved, &crate::analyse::AnalyseOptions::default());
    let doc = analysed.document(super::explain::SCHEMA);
    crate::results::writer::write_atomic(&dir.join("analysis.json"), &serde_json::to_string_pretty(&doc).unwrap_or_default()).map_err(write_failed)?;
    let report = crate::present::report::write(dir, &analysed);
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
    // The measurements are safe on disk, but not everything asked for may have been written.
    let report = report.err();
    if failures > 0 || mismatches > 0 || report.is_some() {
        return Err(Failure::SweepEnded { failures, mismatches, report });
    }
    Ok(())
}
