//! `framecost history DIR` — every run found in DIR (folders holding `points.jsonl`, saved
//! baselines included), in the order they were made: per workload a picture of each design's
//! cost at each size across the runs, with the places where the gate between consecutive
//! runs found a confirmed change marked (the changes it would fail on — sizes confirmed by a
//! neighbour, designs moved over their sizes taken together — and improvements found the
//! same way), and the same changes listed; unconfirmed moves are only counted. Runs
//! whose workload file changed (the spec hash in the workload header differs from the run
//! before) are marked in both.

use super::Failure;
use crate::present::plot::{spec_changes, RunMark};
use crate::units::{escaped, size_label};
use crate::results::reader::RunResults;
use crate::track::gate::{compare, Call, GateOptions};
use std::path::PathBuf;

/// Draw each workload's cost across many runs and mark where it changed.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// A folder of run folders (for example `reports/`).
    pub dir: PathBuf,
    /// Where to write the pictures (default: DIR/history).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
}

pub fn run(a: Args) -> Result<(), Failure> {
    let Ok(mut runs) = RunResults::read_folder(&a.dir) else {
        return Err(Failure::Usage(format!("cannot list {}", a.dir.display())));
    };
    runs.sort_by(|x, y| {
        let k = |r: &RunResults| r.run.as_ref().map(|h| (h.started_at.clone(), h.run_id.clone())).unwrap_or_default();
        k(x).cmp(&k(y))
    });
    if runs.len() < 2 {
        return Err(Failure::Usage(format!("{} holds {} complete run(s); two or more are needed", a.dir.display(), runs.len())));
    }
    let out = a.out.clone().unwrap_or_else(|| a.dir.join("history"));
    // Changes between consecutive runs: (index of the later run, design, rows, worse?) —
    // only those the gate confirms (a neighbouring size agrees, and the change reaches the
    // design's two largest sizes), the ones it would fail on; a move at one size alone is
    // counted per workload, not marked: between sweeps of unchanged code on a shared
    // machine single sizes move past the threshold often (eleven catalog sweeps of
    // unchanged steps: 91 marks before this rule, 3 after).
    let mut changes: Vec<(String, usize, String, Option<u64>, bool)> = Vec::new();
    let mut unconfirmed: std::collections::BTreeMap<String, usize> = Default::default();
    // How far the machine itself moved between consecutive runs (the gate's probes).
    let options = GateOptions::default();
    let mut moves: Vec<(usize, crate::track::gate::MachineMove, f64)> = Vec::new();
    for i in 1..runs.len() {
        let g = compare(&runs[i - 1], &runs[i], &options);
        let threshold = g.workloads.iter().map(|w| w.threshold).fold(f64::INFINITY, f64::min);
        moves.extend(g.machine_move().filter(|_| threshold.is_finite()).map(|m| (i, m, threshold)));
        for w in &g.workloads {
            for p in w.points.iter().filter(|p| matches!(p.call, Call::Regression | Call::Improvement)) {
                if p.confirmed {
                    changes.push((w.workload.clone(), i, p.design.clone(), Some(p.rows), p.call == Call::Regression));
                } else {
                    *unconfirmed.entry(w.workload.clone()).or_default() += 1;
                }
            }
            // A design the gate calls slower or faster over its sizes taken together (the
            // move may pass the threshold at no single size).
            for m in w.moves.iter().filter(|m| matches!(m.call, Call::Regression | Call::Improvement)) {
                changes.push((w.workload.clone(), i, m.design.clone(), None, m.call == Call::Regression));
            }
        }
    }
    let moved: Vec<&(usize, crate::track::gate::MachineMove, f64)> = moves.iter().filter(|(_, m, t)| m.widest() > 1.0 + t).collect();
    if let Some((k, m, _)) = moved.iter().max_by(|a, b| a.1.widest().total_cmp(&b.1.widest())) {
        let least = moved.iter().map(|x| x.2).fold(f64::INFINITY, f64::min);
        let id = runs[*k].run.as_ref().map(|h| h.run_id.clone()).unwrap_or_default();
        let probe = match (m.memory, m.drift) {
            (Some((lo, hi)), _) => format!("the memory probe {lo:.2}× to {hi:.2}× across its points"),
            (None, Some((lo, hi))) => format!("the drift probe {lo:.2}× to {hi:.2}× across its points"),
            (None, None) => format!("the yardstick {:.2}×", m.yardstick.unwrap_or(1.0)),
        };
        println!(
            "machine: between {} of {} pairs of consecutive runs the machine itself moved by more than the gate's threshold ({:.0}%; most before run {}: {probe}); a change of that size seen at one size alone cannot be told from it, which is why only confirmed changes are marked",
            moved.len(),
            runs.len() - 1,
            least * 100.0,
            escaped(&id)
        );
    }
    let mut names: Vec<String> = Vec::new();
    for r in &runs {
        for w in &r.workloads {
            if !names.contains(&w.header.workload) {
                names.push(w.header.workload.clone());
            }
        }
    }
    for name in &names {
        let series: Vec<(String, &crate::results::reader::WorkloadResults)> = runs
            .iter()
            .filter_map(|r| {
                let id = r.run.as_ref().map(|h| h.run_id.clone()).unwrap_or_default();
                r.workloads.iter().find(|w| &w.header.workload == name).map(|w| (id, w))
            })
            .collect();
        let marks: Vec<RunMark> = changes
            .iter()
            .filter(|c| &c.0 == name)
            .filter_map(|c| {
                // Index within this workload's series.
                let id = runs[c.1].run.as_ref().map(|h| h.run_id.clone())?;
                series.iter().position(|s| s.0 == id).map(|k| RunMark { run: k, design: c.2.clone(), rows: c.3, worse: c.4 })
            })
            .collect();
        let p = crate::present::plot::draw_history(&out, name, &series, &marks).map_err(|error| Failure::History { workload: name.clone(), error })?;
        println!("{}: {} runs → {}", escaped(name), series.len(), p.display());
        // In run order: where the workload file changed (its spec hash differs from the run
        // before), then what the gate found at that run.
        let edits = spec_changes(&series);
        for (k, (id, _)) in series.iter().enumerate().skip(1) {
            if let Some((_, old, new)) = edits.iter().find(|e| e.0 == k) {
                println!(
                    "  run {}: workload file changed (spec {} → {}); changes across it may come from the edit",
                    escaped(id),
                    escaped(&old.chars().take(8).collect::<String>()),
                    escaped(&new.chars().take(8).collect::<String>())
                );
            }
            for m in marks.iter().filter(|m| m.run == k) {
                let verb = if m.worse { "got slower" } else { "got faster" };
                match m.rows {
                    Some(rows) => println!("  run {}: {} at {} rows {verb}", escaped(id), escaped(&m.design), size_label(rows as f64)),
                    None => println!("  run {}: {} {verb} over its sizes taken together", escaped(id), escaped(&m.design)),
                }
            }
        }
        if let Some(n) = unconfirmed.get(name) {
            println!("  {n} unconfirmed move(s) not marked: past the threshold at one size alone, or not at the largest sizes, as the machine's own noise moves points (`framecost gate` lists them)");
        }
    }
    Ok(())
}
