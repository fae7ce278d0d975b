//! The regression gate: a baseline run against a new run, size by size and class by class.
//!
//! A point (design × size) is a **regression** only when both hold: the ratio of medians
//! new/base exceeds the threshold (default 10%, or the workload's `gate.threshold`), and a
//! two-sided Mann–Whitney test on the samples is significant (α = 0.05). Improvements are
//! judged alike. A regression fails the gate when it is **confirmed**: seen at a
//! neighbouring size of the same design too (or the design was compared at one size only).
//! Samples within one run share that run's conditions, so a single point can differ between
//! two runs by more than its own samples suggest; a change in the code shows at more than
//! one size — and, with four or more sizes compared, reaching one of the design's two
//! largest sizes. Unconfirmed regressions are reported, not hidden.
//!
//! A design has a **growth regression** when its time exponent over the sizes both runs
//! measured rose by 0.1 or more (`--growth-rise`) with the two bootstrap intervals apart
//! **and** the per-size comparisons agree — the largest size is a confirmed regression and
//! the ratio new/base grew by more than the threshold from the smallest size to the largest
//! (bootstrap intervals within one run are narrower than the variation between runs of
//! unchanged code) — or when its allocated-bytes exponent (exact counts) rose by 0.15 or
//! more. Points missing from either run are reported, not ignored.
//!
//! Points measured on a busy machine (`Measured::is_contaminated`) in either run, points
//! where other work's share of the machine rose by 0.08 or more from one run to the other
//! in the direction of the change (below the busy mark, still enough to slow a step that
//! uses both cores by ×1.6), and points whose samples fell into two separate groups
//! (`Measured::bimodal`), are compared and shown but never called a regression or an
//! improvement: `unclear`.
//!
//! Machine speed: each size of a run also times a fixed drift probe in the same rounds as
//! the designs, so a ratio can be divided by how much faster or slower the machine itself
//! was at that size (a busy neighbour, a slower machine, another polars build affects the
//! designs and the probe alike; a slower design does not move the probe). That corrected
//! ratio is judged together with the raw one: a change is called only when both pass the
//! threshold in the same direction, so the correction can explain a change away but never
//! create one from equal medians. Both are shown. Runs without probes fall back to dividing
//! by the ratio of the runs' yardsticks when the machines differ. A newcomer must know: this
//! works from saved results alone and never reruns anything (`gate --recheck` does, in cli).
//!
//! The parts: one design's points compared and confirmed (`points.rs`), growth compared
//! (`growth.rs`), the workload's common move (`common.rs`), judged against runs of one side
//! (`history.rs`) or of both (`both.rs`); this file holds the records and walks the runs.

mod common;
mod growth;
mod both;
mod history;
mod pair;
mod machine;
mod points;
pub use machine::MachineMove;
pub use points::{moved_with as files_moved_with, FILES_MOVE};
mod steady;

pub use common::{common_mode, COMMON_MODE_SPREADS};
pub use both::{judge_both, wide_suspect_moves, wide_suspects};
pub use history::{judge as judge_with_history, judge_workload as judge_runs, suspects, History, HistoryMove, RecheckSummary, Side, MIN_RUNS as HISTORY_MIN_RUNS};
pub use pair::compare_pair;
pub use steady::{design_moves, DesignMove};

use crate::results::reader::{RunResults, WorkloadResults};
use points::{confirm, false_discoveries, matched, point_gate, Machines};
use serde::{Deserialize, Serialize};

/// Settings of a gate.
#[derive(Debug, Clone)]
pub struct GateOptions {
    /// Replace every workload's threshold (a share: 0.1 = 10%).
    pub threshold: Option<f64>,
    /// Significance level of the rank test.
    pub alpha: f64,
    /// Time-exponent rise that counts as a growth regression; None turns the growth check
    /// of time off (bytes are exact counts and keep their own rule).
    pub growth_rise: Option<f64>,
}

impl Default for GateOptions {
    fn default() -> Self {
        GateOptions { threshold: None, alpha: 0.05, growth_rise: Some(TIME_EXPONENT_RISE) }
    }
}

/// The default share a median may grow before it counts.
pub const DEFAULT_THRESHOLD: f64 = 0.10;
/// Exponent rise that counts as a growth regression (time, with separated intervals).
pub const TIME_EXPONENT_RISE: f64 = 0.10;
/// Exponent rise that counts as a growth regression of allocated bytes (exact counts).
pub const BYTES_EXPONENT_RISE: f64 = 0.15;

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Call {
    Regression,
    Improvement,
    /// Within the threshold, or a difference the test does not support.
    Same,
    /// Beyond the threshold, but too few samples (or too much noise) to be significant.
    Unclear,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct PointGate {
    pub design: String,
    pub rows: u64,
    pub base_median_ns: f64,
    pub new_median_ns: f64,
    /// new / base, raw.
    pub ratio: f64,
    /// Hodges–Lehmann estimate of the ratio (the median of all pairwise ratios, after the
    /// same correction as `normalised_ratio`), the centre of the interval below.
    #[serde(default)]
    pub shift: Option<f64>,
    /// Hodges–Lehmann (Moses) interval of that estimate (95%), when the samples allow one.
    pub ratio_low: Option<f64>,
    pub ratio_high: Option<f64>,
    /// The ratio corrected for the machine's own speed: divided by the drift probe's ratio at
    /// this size (both runs timed the probe in the same rounds as the designs), or, without
    /// probes, by the yardstick ratio when the machines differ. This is the ratio judged.
    pub normalised_ratio: Option<f64>,
    /// What the ratio was divided by: "drift probe" or "yardstick".
    #[serde(default)]
    pub normalised_by: Option<String>,
    /// new / base of the memory probe at this point (the cache sweeps before the design's
    /// samples). The ratio divided by it must pass the threshold too for a change to be
    /// called; absent when either run has no memory probe.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub memory_ratio: Option<f64>,
    /// new / base of the files probe at this point (`measure::files_probe`, before each
    /// sample of a design that writes files); absent when either run has no files probe
    /// there.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub files_ratio: Option<f64>,
    /// The files probe moved by `points::FILES_MOVE` or more the way the change went: the
    /// change is left unjudged (the file system moved, by how much of this design's time
    /// the probe cannot say).
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub files_moved: bool,
    /// The other designs' move at this size (median of their judged ratios, with two or
    /// more of them compared there): what the point is judged against (`common::size_moves`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub size_move: Option<f64>,
    pub p_value: Option<f64>,
    /// The rank test's p-value adjusted over all the workload's points compared (the design's
    /// points with `--pair`): Benjamini–Hochberg (`stats::fdr`). A change is called only
    /// when this too is below alpha.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub q_value: Option<f64>,
    pub call: Call,
    /// A regression or improvement seen at a neighbouring size of the same design too (or
    /// the design was compared at one size only). Only confirmed changes fail the gate.
    #[serde(default)]
    pub confirmed: bool,
    /// A change seen at neighbouring sizes, but not at the design's largest size that could
    /// be judged (four or more compared): reported, not failing (see `points::confirm`).
    #[serde(default)]
    pub small_only: bool,
    /// Either run measured this point on a busy machine, or the others' share of the machine
    /// moved between the runs by `points::OTHERS_SHARE_MOVE` or more in the direction of the
    /// change: a change beyond the threshold is called `unclear`, never a regression or an
    /// improvement.
    #[serde(default)]
    pub busy: bool,
    /// Either run's samples at this point fell into two separate groups
    /// (`Measured::bimodal`): its median lands in one group or the other from run to run, so
    /// a change beyond the threshold is `unclear`, as for a busy point.
    #[serde(default)]
    pub split: bool,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct GrowthGate {
    pub design: String,
    /// "time", "bytes" (counted allocations) or "resident" (a program's resident memory).
    pub metric: String,
    pub base_class: Option<String>,
    pub new_class: Option<String>,
    pub base_exponent: Option<f64>,
    pub new_exponent: Option<f64>,
    /// Bootstrap intervals (time only).
    pub base_interval: Option<(f64, f64)>,
    pub new_interval: Option<(f64, f64)>,
    pub sizes: Vec<u64>,
    pub call: Call,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct MissingPoint {
    pub design: String,
    pub rows: u64,
    /// "measured", "skipped: <reason>" or "absent".
    pub baseline: String,
    pub new: String,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct WorkloadGate {
    pub workload: String,
    pub threshold: f64,
    pub points: Vec<PointGate>,
    pub growth: Vec<GrowthGate>,
    pub missing: Vec<MissingPoint>,
    /// Designs in one run only.
    pub unmatched_designs: Vec<String>,
    /// The move the whole workload shared (two or more designs), when there is one to
    /// discount: see [`common_mode`].
    #[serde(default)]
    pub common_mode: Option<CommonMode>,
    /// What the workload swept when not rows (the same in both runs), for labels.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub axis: Option<crate::results::schema::AxisPlan>,
    /// Each design's sizes judged together (see [`design_moves`]): a regression here fails
    /// the gate even when no single size was confirmed.
    #[serde(default)]
    pub moves: Vec<DesignMove>,
    /// What a history of earlier runs said (`gate --history`; see `history.rs`), when the
    /// workload had enough of them.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub history: Option<History>,
    /// What the new run's workload swept again said (`gate --recheck`): the baseline judged
    /// against the new code's own runs, with the sign turned (a regression is still the new
    /// code slower). `runs` counts the new run with its resweeps.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub recheck: Option<History>,
}

/// What the points of a workload moved together between the two runs.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct CommonMode {
    /// Median of the judged ratios over every point of every design.
    pub ratio: f64,
    /// Robust spread of the points' log-ratios around their sizes' common moves (around the
    /// median above where a size had too few other designs): 1.4826 × median absolute
    /// deviation.
    pub spread: f64,
}

#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub struct GateReport {
    pub baseline_run: String,
    pub new_run: String,
    pub machines_differ: bool,
    /// new yardstick / baseline yardstick.
    pub yardstick_ratio: Option<f64>,
    pub workloads: Vec<WorkloadGate>,
    /// Workloads in one run only.
    pub unmatched_workloads: Vec<String>,
    /// Confirmed point regressions.
    pub regressions: usize,
    /// Point regressions seen at one size only (reported, not failing).
    #[serde(default)]
    pub unconfirmed_regressions: usize,
    pub growth_regressions: usize,
    /// Designs slower over their sizes taken together (`WorkloadGate::moves`).
    #[serde(default)]
    pub design_regressions: usize,
    pub improvements: usize,
    pub missing: usize,
    /// `gate RUN --pair OLD:NEW`: the two designs of one run compared (old, new); both run
    /// ids are then that run's.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pair: Option<(String, String)>,
    /// `gate --history DIR`: how many runs the history held (the baseline among them).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub history_runs: Option<usize>,
    /// `gate --recheck N`: what was swept again and what could not be.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub recheck: Option<RecheckSummary>,
    /// The allocator tunings (baseline, new) when they differ (`RunHeader::allocators_apart`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub allocators_differ: Option<(Option<String>, Option<String>)>,
    /// What to do before acting on a gate judged alone (`cli::gate::next`, its `next step`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub next_step: Option<String>,
}

impl GateReport {
    /// True when anything got worse.
    pub fn failed(&self) -> bool {
        self.regressions > 0 || self.growth_regressions > 0 || self.design_regressions > 0
    }

    /// Count the totals again from the workloads (after `history` changed calls).
    pub fn recount(&mut self) {
        let workloads = std::mem::take(&mut self.workloads);
        (self.regressions, self.unconfirmed_regressions, self.improvements, self.growth_regressions, self.design_regressions, self.missing) = (0, 0, 0, 0, 0, 0);
        for wg in workloads {
            self.add(wg);
        }
    }

    /// Add one workload's comparison and its counts to the totals.
    pub(super) fn add(&mut self, wg: WorkloadGate) {
        self.regressions += wg.points.iter().filter(|p| p.call == Call::Regression && p.confirmed).count();
        self.unconfirmed_regressions += wg.points.iter().filter(|p| p.call == Call::Regression && !p.confirmed).count();
        self.improvements += wg.points.iter().filter(|p| p.call == Call::Improvement && p.confirmed).count();
        self.growth_regressions += wg.growth.iter().filter(|g| g.call == Call::Regression).count();
        // A design slower over its sizes against the baseline, or against its history, once.
        let mut slower: Vec<&str> = wg.moves.iter().filter(|m| m.call == Call::Regression).map(|m| m.design.as_str()).collect();
        slower.extend(wg.history.iter().chain(&wg.recheck).flat_map(|h| &h.moves).filter(|m| m.call == Call::Regression).map(|m| m.design.as_str()));
        slower.sort_unstable();
        slower.dedup();
        self.design_regressions += slower.len();
        self.missing += wg.missing.len();
        self.workloads.push(wg);
    }
}

/// Compare two runs.
pub fn compare(base: &RunResults, new: &RunResults, opts: &GateOptions) -> GateReport {
    let (bh, nh) = (base.run.as_ref(), new.run.as_ref());
    let machines_differ = match (bh, nh) {
        (Some(b), Some(n)) => !b.machine.same_machine(&n.machine),
        _ => false,
    };
    let yardstick_ratio = match (bh, nh) {
        (Some(b), Some(n)) if b.yardstick.median_ns > 0.0 => Some(n.yardstick.median_ns / b.yardstick.median_ns),
        _ => None,
    };
    let same_sweep = match (bh, nh) {
        (Some(b), Some(n)) => b.cache_sweep() == n.cache_sweep(),
        _ => true,
    };
    let machines = Machines { differ: machines_differ, yardstick_ratio, same_sweep };
    let mut report = GateReport {
        baseline_run: bh.map(|h| h.run_id.clone()).unwrap_or_default(),
        new_run: nh.map(|h| h.run_id.clone()).unwrap_or_default(),
        machines_differ,
        yardstick_ratio,
        allocators_differ: bh.zip(nh).and_then(|(b, n)| b.allocators_apart(n)),
        ..Default::default()
    };
    for bw in &base.workloads {
        let Some(nw) = new.workloads.iter().find(|w| w.header.workload == bw.header.workload) else {
            report.unmatched_workloads.push(format!("{} (baseline only)", bw.header.workload));
            continue;
        };
        if bw.header.axis != nw.header.axis {
            // Swept over different axes (say rows, then columns): equal numbers mean different points.
            report.unmatched_workloads.push(format!("{} (swept over {} in the baseline, {} in the new run)", bw.header.workload, bw.header.axis().name(), nw.header.axis().name()));
            continue;
        }
        report.add(compare_workload(bw, nw, opts, machines));
    }
    for nw in &new.workloads {
        if !base.workloads.iter().any(|w| w.header.workload == nw.header.workload) {
            report.unmatched_workloads.push(format!("{} (new run only)", nw.header.workload));
        }
    }
    report
}

/// One workload in both runs: every design in both compared, the designs in one run only
/// listed, then the common move discounted.
fn compare_workload(bw: &WorkloadResults, nw: &WorkloadResults, opts: &GateOptions, machines: Machines) -> WorkloadGate {
    let threshold = opts.threshold.or(nw.header.gate_threshold).unwrap_or(DEFAULT_THRESHOLD);
    let mut wg = WorkloadGate {
        workload: bw.header.workload.clone(),
        threshold,
        points: vec![],
        growth: vec![],
        missing: vec![],
        unmatched_designs: vec![],
        common_mode: None,
        axis: nw.header.axis.clone(),
        moves: vec![],
        history: None,
        recheck: None,
    };
    for d in &bw.header.designs {
        if !nw.header.designs.iter().any(|x| x.name == d.name) {
            wg.unmatched_designs.push(format!("{} (baseline only)", d.name));
            continue;
        }
        compare_design(&mut wg, bw, nw, &d.name, opts, machines);
    }
    for d in &nw.header.designs {
        if !bw.header.designs.iter().any(|x| x.name == d.name) {
            wg.unmatched_designs.push(format!("{} (new run only)", d.name));
        }
    }
    // Every point's rank test at the same level, dozens per workload: a few pass by chance.
    if false_discoveries(&mut wg.points, opts.alpha) {
        common::reconfirm(&mut wg);
    }
    common_mode(&mut wg, bw.header.designs.len().min(nw.header.designs.len()), threshold);
    wg.moves = design_moves(&wg, false);
    wg
}

/// One design in both runs: its points size by size, confirmed, then its growth.
fn compare_design(wg: &mut WorkloadGate, bw: &WorkloadResults, nw: &WorkloadResults, design: &str, opts: &GateOptions, machines: Machines) {
    let threshold = wg.threshold;
    let common = matched(wg, bw, nw, design);
    let first = wg.points.len();
    for &pair in &common {
        wg.points.push(point_gate(design, pair, bw, nw, machines, threshold, opts.alpha));
    }
    // Confirmation: the same call at a neighbouring compared size (see `confirm`).
    confirm(&mut wg.points[first..]);
    // Growth over the sizes both runs measured.
    if let Some(rise) = opts.growth_rise {
        if let Some(g) = growth::time_growth(design, &common, &wg.points[first..], rise, threshold) {
            wg.growth.push(g);
        }
    }
    if let Some(g) = growth::memory_growth(design, &common) {
        wg.growth.push(g);
    }
}
