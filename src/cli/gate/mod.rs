//! `framecost gate BASELINE NEW` — compare two runs of the same workloads, size by size and
//! class by class, and fail (exit 1) when something got slower beyond the threshold with a
//! significant rank test, or started to scale worse. Exit 0 when nothing got worse, 2 for
//! bad input. BASELINE is a run folder or the name of a saved baseline.
//! `framecost gate RUN --pair OLD:NEW` compares two designs of one run the same way
//! (`track::gate::pair`).

use super::Failure;
use crate::results::reader::RunResults;
use crate::spec::units::parse_share;
use crate::track::gate::{compare, compare_pair, GateOptions, GateReport};
use std::path::{Path, PathBuf};

mod next;
mod recheck;
mod render;
pub use render::render;

/// Schema of the `--json` document (docs/results.md).
pub const SCHEMA: &str = "framecost.gate/1";

/// Compare a baseline run with a new run (or two designs of one run, `--pair`); exit 1 on a
/// regression.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The baseline: a run folder, or a name saved with `framecost baseline save`. With
    /// `--pair`, the one run whose two designs are compared.
    pub baseline: String,
    /// The new run folder (not with `--pair`).
    #[arg(required_unless_present = "pair", conflicts_with = "pair")]
    pub new: Option<PathBuf>,
    /// Compare design NEW with design OLD of the same run, in every workload that has
    /// both, e.g. `--pair before:after`. Designs sampled in the same sweep share every move
    /// of the machine, so a smaller change shows than between two sweeps.
    #[arg(long, value_name = "OLD:NEW")]
    pub pair: Option<String>,
    /// How much slower a median may get before it counts, e.g. `10%` (default: each
    /// workload's `gate.threshold`, else 10%).
    #[arg(long, value_name = "SHARE")]
    pub threshold: Option<String>,
    /// Significance level of the rank test.
    #[arg(long, default_value_t = 0.05, value_name = "ALPHA")]
    pub alpha: f64,
    /// Where saved baselines live.
    #[arg(long, default_value = "baselines", value_name = "DIR")]
    pub store: PathBuf,
    /// Time-exponent rise that counts as a growth regression, e.g. `0.1` (the default); the
    /// per-size comparisons must agree with it too.
    #[arg(long, value_name = "EXPONENT", conflicts_with = "no_growth_check")]
    pub growth_rise: Option<f64>,
    /// Judge sizes only: no growth check of time exponents (bytes keep theirs).
    #[arg(long)]
    pub no_growth_check: bool,
    /// A folder of earlier runs of the baseline's code (one run folder each; the baseline
    /// counts too): a change is then called only beyond how far each design wandered across
    /// those runs by itself. Workloads with fewer than five such runs are judged against the
    /// baseline alone. Keep eight or more (README, "Using the gate in CI").
    #[arg(long, value_name = "DIR", conflicts_with = "pair")]
    pub history: Option<PathBuf>,
    /// Before failing, sweep each failing workload of the new run again (same file, sizes,
    /// budgets and designs, a fresh process each) until N runs of the new code are at hand,
    /// and call a change only beyond how far those runs wander by themselves. Costs up to
    /// N − 1 sweeps of each failing workload; they are kept in NEW/rechecks and reused.
    /// When this framecost build made both runs, the baseline's workloads are swept again
    /// too (from the text the baseline recorded, kept in BASELINE/rechecks) and the two
    /// sides' runs compared. Run the gate from the folder the sweep was run from (workload
    /// paths are relative).
    #[arg(long, value_name = "N", conflicts_with = "pair")]
    pub recheck: Option<usize>,
    /// Let `--recheck` run designs that are programs again.
    #[arg(long, requires = "recheck")]
    pub allow_programs: bool,
    /// Print the comparison as JSON.
    #[arg(long)]
    pub json: bool,
    /// Judge what can be compared even when the comparison is partial (the new run did not
    /// finish, designs match nothing, records are duplicated or damaged). Without it such
    /// a comparison is refused with exit 2.
    #[arg(long)]
    pub partial_ok: bool,
}

/// A run folder, or a saved baseline's folder by name.
pub fn resolve(arg: &str, store: &Path) -> PathBuf {
    let p = PathBuf::from(arg);
    if p.exists() {
        return p;
    }
    store.join(arg)
}

pub fn run(a: Args) -> Result<(), Failure> {
    let bad = |m: String| Err(Failure::Usage(m));
    // The workload's `gate.threshold` is parsed and bounded by the same two functions.
    let threshold = match a.threshold.as_deref().map(parse_share).transpose() {
        Ok(t) => t,
        Err(e) => return bad(format!("--threshold: expected {e}")),
    };
    if let Some(m) = threshold.and_then(crate::spec::limits::threshold_problem) {
        return bad(format!("--threshold: {m}"));
    }
    if let Some(n) = a.recheck.filter(|&n| !(recheck::MIN_RUNS..=recheck::MAX_RUNS).contains(&n)) {
        return bad(format!("--recheck: expected at least {} and at most {} runs of the new code (the new run among them), found {n}", recheck::MIN_RUNS, recheck::MAX_RUNS));
    }
    if !(a.alpha > 0.0 && a.alpha < 1.0) {
        return bad(format!("--alpha: expected a level between 0 and 1, found {}", a.alpha));
    }
    let base_dir = resolve(&a.baseline, &a.store);
    let base = match RunResults::read(&base_dir) {
        Ok(r) => r,
        Err(e) => return bad(format!("{}: {e}", if a.pair.is_some() { "run" } else { "baseline" })),
    };
    let growth_rise = match (a.no_growth_check, a.growth_rise) {
        (true, _) => None,
        (false, Some(r)) if !(r > 0.0 && r <= 3.0) => return bad(format!("--growth-rise: expected an exponent above 0 and at most 3, found {r}")),
        (false, Some(r)) => Some(r),
        (false, None) => Some(crate::track::gate::TIME_EXPONENT_RISE),
    };
    let opts = GateOptions { threshold, alpha: a.alpha, growth_rise };
    if let Some(pair) = &a.pair {
        let Some((old, new)) = pair.split_once(':').filter(|(o, n)| !o.is_empty() && !n.is_empty() && o != n) else {
            return bad(format!("--pair: expected two different design names as OLD:NEW, found `{pair}`"));
        };
        let report = compare_pair(&base, old, new, &opts);
        if report.workloads.is_empty() {
            return bad(format!("no workload of the run has both `{old}` and `{new}` ({})", report.unmatched_workloads.join(", ")));
        }
        return answer(&report, a.json);
    }
    let Some(new_dir) = &a.new else { return bad("a new run folder is needed (or --pair OLD:NEW)".into()) };
    let new = match RunResults::read(new_dir) {
        Ok(r) => r,
        Err(e) => return bad(format!("new run: {e}")),
    };
    // Refuse to pass on a comparison of little or nothing (see track::completeness).
    let completeness = crate::track::completeness::check(&base, &new);
    let problems = completeness.problems();
    if !problems.is_empty() {
        let lines = problems.iter().map(|p| format!("  - {p}")).collect::<Vec<_>>().join("\n");
        if !a.partial_ok {
            return bad(format!(
                "the comparison would be partial ({} of {} baseline points comparable):\n{lines}\n(--partial-ok judges what can be compared)",
                completeness.comparable_points, completeness.baseline_points
            ));
        }
        eprintln!("framecost gate: partial comparison (--partial-ok):\n{lines}");
    }
    let mut report = compare(&base, &new, &opts);
    if let Some(dir) = &a.history {
        let earlier = match history_runs(dir, &base, &new) {
            Ok(r) => r,
            Err(m) => return bad(m),
        };
        let mut runs: Vec<&RunResults> = earlier.iter().collect();
        runs.push(&base);
        crate::track::gate::judge_with_history(&mut report, &runs, &new);
        report.history_runs = Some(runs.len());
    }
    if report.workloads.is_empty() {
        return bad(format!("the runs share no workload ({})", report.unmatched_workloads.join(", ")));
    }
    if let Some(runs) = a.recheck {
        let how = recheck::Recheck { runs, allow_programs: a.allow_programs, new_dir, base_dir: &base_dir };
        if let Err(m) = recheck::recheck(&mut report, &base, &new, &how) {
            return bad(m);
        }
    }
    report.next_step = next::next_step(&report, recheck::same_build(&base, &new).is_ok());
    answer(&report, a.json)
}

/// The complete runs in `dir` (its subfolders holding `points.jsonl`, or `dir` itself),
/// leaving out the baseline and the new run (by run id): the baseline is added by the
/// caller, the new run is what is judged.
fn history_runs(dir: &Path, base: &RunResults, new: &RunResults) -> Result<Vec<RunResults>, String> {
    let id = |r: &RunResults| r.run.as_ref().map(|h| h.run_id.clone());
    let mut runs = RunResults::read_folder(dir).map_err(|e| format!("--history {}: {e}", dir.display()))?;
    runs.retain(|r| id(r).is_some() && id(r) != id(base) && id(r) != id(new));
    if runs.is_empty() {
        return Err(format!("--history {}: no complete run folder in it (folders holding points.jsonl)", dir.display()));
    }
    Ok(runs)
}

/// Print the report and give the exit.
fn answer(report: &GateReport, json: bool) -> Result<(), Failure> {
    if json {
        // The report's own fields, with the schema beside them (docs/results.md).
        let mut doc = serde_json::to_value(report).unwrap_or_default();
        if let Some(o) = doc.as_object_mut() {
            o.insert("schema".into(), SCHEMA.into());
        }
        println!("{}", serde_json::to_string_pretty(&doc).unwrap_or_default());
    } else {
        print!("{}", render(report));
    }
    if report.failed() {
        return Err(Failure::Regression);
    }
    Ok(())
}
