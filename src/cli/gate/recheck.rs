//! `gate BASELINE NEW --recheck N`: before failing, sweep each failing workload of the new
//! run again (the same workload file, sizes, budgets and designs, in a fresh `framecost
//! sweep` process each time) until N runs of the new code are at hand, and judge the
//! baseline against how far those runs wander by themselves (`track::gate::history`, from
//! the new code's side). A design that was only out of line in the new sweep is then let
//! through; one that is slower in every run of the new code still fails.
//!
//! When the baseline, the new run and the gate are one framecost build (`RunHeader::build`),
//! the baseline's side is swept again too, from the workload text the baseline recorded, in
//! turn with the new side's, and the two sides' runs are compared (`track::gate::
//! judge_both`); designs that moved steadily under the two-run bar are asked about as well.
//! Otherwise the baseline's code is not at hand, so a baseline that was itself out of line
//! (a design faster than usual in that sweep) still reads as a slowdown; a history of the
//! baseline's code (`--history`) covers that side.
//!
//! The resweeps are kept in the new run's folder (`rechecks/<workload>-<k>`); a later gate
//! of the same run reuses those whose workload file is unchanged (same spec hash).

use crate::results::reader::{RunResults, WorkloadResults};
use crate::track::gate::{GateReport, RecheckSummary, Side, HISTORY_MIN_RUNS};
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

/// Fewest runs of the new code `--recheck` accepts (the new run among them).
pub const MIN_RUNS: usize = HISTORY_MIN_RUNS;
/// Most runs `--recheck` accepts: each is a sweep of every failing workload, and past about
/// twenty the bound hardly narrows (t(0.975, 19) = 2.09 against 1.96 for endless runs).
pub const MAX_RUNS: usize = 20;

/// What `--recheck` needs besides the runs.
pub struct Recheck<'a> {
    pub runs: usize,
    pub allow_programs: bool,
    pub new_dir: &'a Path,
    pub base_dir: &'a Path,
}

/// One workload to sweep again: its run on one side, the resweeps kept and made, how many
/// are still needed, and the arguments that make one (or why none can be made).
struct Plan<'a> {
    w: &'a WorkloadResults,
    runs: Vec<RunResults>,
    need: usize,
    args: Result<Vec<String>, String>,
    folder: PathBuf,
    took: Option<f64>,
}

/// Sweep the failing workloads again and judge them (module doc). Errors are for the
/// folder itself; a workload that cannot be swept again is listed with its reason.
pub fn recheck(report: &mut GateReport, base: &RunResults, new: &RunResults, r: &Recheck) -> Result<(), String> {
    let folder = r.new_dir.join("rechecks");
    let base_folder = r.base_dir.join("rechecks");
    let mut summary = RecheckSummary { runs: r.runs, folder: folder.display().to_string(), ..Default::default() };
    // The baseline's side too, when this very build made both runs (module doc).
    let both = same_build(base, new);
    if let Err(why) = &both {
        summary.baseline_not_swept = Some(why.clone());
    }
    let wanted: Vec<String> = report.workloads.iter().filter(|w| asks(w, both.is_ok())).map(|w| w.workload.clone()).collect();
    // Resweeps kept by an earlier gate of these runs, read once.
    let earlier = RunResults::read_folder(&folder).unwrap_or_default();
    let earlier_base = if both.is_ok() { RunResults::read_folder(&base_folder).unwrap_or_default() } else { vec![] };
    // Per failing workload, the new side's plan and the baseline's (when it is swept too).
    let mut plans: Vec<(Plan, Option<Plan>)> = Vec::new();
    for name in &wanted {
        let Some(nw) = new.workloads.iter().find(|w| &w.header.workload == name) else { continue };
        let mine: Vec<RunResults> = earlier.iter().filter(|run| same_workload(run, nw)).cloned().collect();
        let need = r.runs.saturating_sub(1 + mine.len());
        let args = if need > 0 { sweep_args(nw, new, r.allow_programs) } else { Ok(vec![]) };
        let new_plan = Plan { w: nw, runs: mine, need, args, folder: folder.clone(), took: None };
        let base_plan = base.workloads.iter().find(|w| &w.header.workload == name).filter(|_| both.is_ok()).map(|bw| {
            let theirs: Vec<RunResults> = earlier_base.iter().filter(|run| same_workload(run, bw)).cloned().collect();
            let need = r.runs.saturating_sub(1 + theirs.len());
            let args = if need > 0 { baseline_args(bw, base, &base_folder) } else { Ok(vec![]) };
            Plan { w: bw, runs: theirs, need, args, folder: base_folder.clone(), took: None }
        });
        plans.push((new_plan, base_plan));
    }
    for (np, bp) in plans.iter_mut() {
        if let (Err(why), true) = (&np.args, np.need > 0) {
            summary.not_rechecked.push((np.w.header.workload.clone(), why.clone()));
            np.need = 0;
        }
        if let Some(b) = bp.as_mut().filter(|b| b.need > 0 && b.args.is_err()) {
            if let Err(why) = &b.args {
                summary.not_rechecked.push((b.w.header.workload.clone(), format!("the baseline's side: {why}")));
            }
            b.need = 0;
        }
    }
    for p in plans.iter().flat_map(|(n, b)| std::iter::once(n).chain(b.as_ref())).filter(|p| p.need > 0) {
        std::fs::create_dir_all(&p.folder).map_err(|e| format!("--recheck: cannot create {}: {e}", p.folder.display()))?;
    }
    // Rounds: every workload once per round, each side in turn, so a slow spell of the
    // machine spreads over them and over both sides alike.
    let rounds = plans.iter().flat_map(|(n, b)| std::iter::once(n.need).chain(b.as_ref().map(|b| b.need))).max().unwrap_or(0);
    for round in 0..rounds {
        for (np, bp) in plans.iter_mut() {
            for (p, side) in std::iter::once((np, "")).chain(bp.as_mut().map(|b| (b, " (the baseline's workload)"))) {
                let (true, Ok(args)) = (p.need > 0, &p.args) else { continue };
                let name = p.w.header.workload.clone();
                let out = free_folder(&p.folder, &name);
                let cost = match p.took {
                    Some(s) => format!("the last took {}", crate::units::time_ns(s * 1e9)),
                    None => format!("the run sampled it for {}, more with its tables and probes", crate::units::time_ns(spent_s(p.w) * 1e9)),
                };
                eprintln!("framecost gate: sweeping {name}{side} again ({} of {rounds}; {cost}) into {}", round + 1, out.display());
                let started = std::time::Instant::now();
                match sweep_again(args, &out) {
                    Ok(run) => {
                        if side.is_empty() {
                            summary.swept += 1;
                        } else {
                            summary.baseline_swept += 1;
                        }
                        p.need -= 1;
                        p.took = Some(started.elapsed().as_secs_f64());
                        p.runs.push(run);
                    }
                    Err(why) => {
                        summary.not_rechecked.push((name, format!("{}{why}", if side.is_empty() { "" } else { "the baseline's side: " })));
                        p.need = 0;
                    }
                }
            }
        }
    }
    for (np, bp) in &plans {
        let name = &np.w.header.workload;
        let Some(bw) = base.workloads.iter().find(|w| &w.header.workload == name) else { continue };
        let Some(wg) = report.workloads.iter_mut().find(|w| &w.workload == name) else { continue };
        let mut hs: Vec<&WorkloadResults> = vec![np.w];
        hs.extend(np.runs.iter().filter_map(|run| run.workloads.iter().find(|w| &w.header.workload == name)));
        if hs.len() < MIN_RUNS {
            if !summary.not_rechecked.iter().any(|(n, _)| n == name) {
                summary.not_rechecked.push((name.clone(), format!("only {} run(s) of the new code; {MIN_RUNS} are needed", hs.len())));
            }
            continue;
        }
        let mut bs: Vec<&WorkloadResults> = vec![bw];
        if let Some(bp) = bp {
            bs.extend(bp.runs.iter().filter_map(|run| run.workloads.iter().find(|w| &w.header.workload == name)));
        }
        let out = if bs.len() >= MIN_RUNS { crate::track::gate::judge_both(wg, &hs, &bs) } else { crate::track::gate::judge_runs(wg, &hs, bw, Side::New) };
        wg.recheck = Some(out);
        summary.workloads.push(name.clone());
    }
    report.recheck = Some(summary);
    report.recount();
    Ok(())
}

/// Whether `--recheck` sweeps this workload again: when it has a suspect (a change the gate
/// called), and, when the baseline's side is swept too (`both_sides`), when it has a wide
/// suspect (a steady move whose interval reaches past the threshold). The `next step`
/// paragraph names the same workloads.
pub(super) fn asks(w: &crate::track::gate::WorkloadGate, both_sides: bool) -> bool {
    !crate::track::gate::suspects(w).is_empty() || (both_sides && !crate::track::gate::wide_suspects(w).is_empty())
}

/// Whether the baseline's workloads can be swept again as the baseline measured them: only
/// by the framecost build that made both runs (another build may measure them differently,
/// and a change of framecost or polars is itself a change to gate).
pub(super) fn same_build(base: &RunResults, new: &RunResults) -> Result<(), String> {
    let this = crate::measure::headers::build_id();
    let of = |r: &RunResults| r.run.as_ref().and_then(|h| h.build.clone());
    match (of(base), of(new), this) {
        (Some(b), Some(n), Some(t)) if b == t && n == t => Ok(()),
        (None, _, _) | (_, None, _) => Err("a run does not record the framecost build that made it, so the baseline's workloads were not swept again (only the new code's)".into()),
        _ => Err("the runs were not both made by this framecost build, so the baseline's workloads were not swept again (only the new code's)".into()),
    }
}

/// The `framecost sweep` arguments that measure the baseline's workload as the baseline
/// did: its recorded workload text written to `folder` (a workload with program designs is
/// not swept again: a program's code is not recorded, and the change gated may be there).
fn baseline_args(bw: &WorkloadResults, base: &RunResults, folder: &Path) -> Result<Vec<String>, String> {
    let h = &bw.header;
    if h.designs.iter().any(|d| d.program.is_some()) {
        return Err("its designs include programs, whose code the baseline does not record".into());
    }
    if h.spec_text.is_empty() {
        return Err("the baseline did not record its workload text".into());
    }
    std::fs::create_dir_all(folder).map_err(|e| format!("cannot create {}: {e}", folder.display()))?;
    let file = folder.join(format!("{}.baseline.yaml", h.workload));
    std::fs::write(&file, &h.spec_text).map_err(|e| format!("cannot write {}: {e}", file.display()))?;
    let mut args = vec!["sweep".to_string(), file.display().to_string()];
    args.extend(measure_args(bw, base));
    Ok(args)
}

/// Seconds the new run spent sampling the workload: what one resweep takes, about.
fn spent_s(nw: &WorkloadResults) -> f64 {
    nw.points.iter().filter_map(|p| p.measured.as_ref()).map(|m| m.spent_s).sum()
}

/// True when `run` measured `nw`'s workload from the same workload file (a resweep of it).
fn same_workload(run: &RunResults, nw: &WorkloadResults) -> bool {
    run.workloads.iter().any(|w| w.header.workload == nw.header.workload && w.header.spec_hash == nw.header.spec_hash && w.header.axis == nw.header.axis)
}

/// The first `rechecks/<workload>-<k>` not taken.
fn free_folder(folder: &Path, name: &str) -> PathBuf {
    (1..).map(|k| folder.join(format!("{name}-{k}"))).find(|p| !p.exists()).expect("a free name")
}

/// The `framecost sweep` arguments that measure the workload as the new run did, or why
/// that is not possible.
fn sweep_args(nw: &WorkloadResults, new: &RunResults, allow_programs: bool) -> Result<Vec<String>, String> {
    let h = &nw.header;
    let mut args = vec!["sweep".to_string()];
    if let Some(name) = h.file.strip_prefix("builtin:") {
        if crate::builtin::text(name) != Some(h.spec_text.as_str()) {
            return Err(format!("the built-in `{name}` of this framecost differs from the one the new run swept"));
        }
        args.extend(["--builtin".to_string(), name.to_string()]);
    } else {
        match std::fs::read_to_string(&h.file) {
            Ok(t) if t == h.spec_text => args.push(h.file.clone()),
            Ok(_) => return Err(format!("{} changed since the new run was made", h.file)),
            Err(e) => return Err(format!("{}: {e} (run the gate from the folder the sweep was run from)", h.file)),
        }
    }
    if h.designs.iter().any(|d| d.program.is_some()) {
        if !allow_programs {
            return Err("its designs include programs; --allow-programs lets the gate run them again".into());
        }
        args.push("--allow-programs".into());
    }
    args.extend(measure_args(nw, new));
    Ok(args)
}

/// The sizes, budgets, designs and options a run measured a workload with, as `sweep`
/// arguments.
fn measure_args(nw: &WorkloadResults, new: &RunResults) -> Vec<String> {
    let h = &nw.header;
    let mut args = Vec::new();
    if h.axis.is_none() {
        args.push("--sizes".into());
        args.push(h.sizes.iter().map(|n| n.to_string()).collect::<Vec<_>>().join(","));
    }
    let b = &h.budget;
    args.extend([
        "--point-budget".to_string(),
        format!("{}s", b.per_point_s),
        "--run-budget".to_string(),
        format!("{}s", b.whole_run_s),
        "--precision".to_string(),
        format!("{}%", b.precision * 100.0),
        "--max-samples".to_string(),
        b.max_samples.to_string(),
    ]);
    for d in &h.designs {
        args.extend(["--design".to_string(), d.name.clone()]);
    }
    if let Some(run) = &new.run {
        if run.forced {
            args.push("--force".into());
        }
        if run.cache_sweep_bytes.is_none() {
            args.push("--warm-caches".into());
        }
    }
    args.push("--quiet".into());
    args
}

/// One resweep in a fresh process, read back; its own output is kept out of the gate's.
fn sweep_again(args: &[String], out: &Path) -> Result<RunResults, String> {
    let exe = std::env::current_exe().map_err(|e| format!("cannot find framecost's own executable: {e}"))?;
    let done = Command::new(exe).args(args).arg("--out").arg(out).stdin(Stdio::null()).stdout(Stdio::null()).stderr(Stdio::piped()).output();
    let done = done.map_err(|e| format!("could not start a sweep: {e}"))?;
    // 0, or 3 (a step failed or designs disagreed): the run is written either way.
    if let Some(run) = RunResults::read(out).ok().filter(|r| matches!(done.status.code(), Some(0) | Some(3)) && r.complete()) {
        return Ok(run);
    }
    let err = String::from_utf8_lossy(&done.stderr);
    let last = err.lines().rev().find(|l| !l.trim().is_empty()).unwrap_or("no message");
    Err(format!("the sweep ended with {}: {last}", done.status))
}
