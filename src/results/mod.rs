//! The on-disk results format, version 2 (`framecost.results/2`; version 1 still reads),
//! documented in
//! `docs/results.md`.
//!
//! A run folder holds `points.jsonl` — one JSON object per line, each tagged by its
//! `record` field, appended and flushed as soon as it exists so an interrupted run keeps
//! everything measured so far — and `summary.json`, written atomically at the end. Readers
//! (`explain`, `report`, notebooks) need only this module's types. A newcomer must know:
//! add fields with `#[serde(default)]` so older files still read; anything else is a new
//! schema version.

pub mod cause;
pub mod export;
pub mod reader;
pub mod sane;
pub mod schema;
pub mod summary;
pub mod writer;

pub use cause::{MemoryNeed, SkipCause};
pub use schema::{AllocStats, Axis, AxisPlan, AxisSet, Budget, ClockInfo, ColumnKind, ColumnPlan, MachineFingerprint, Order, OutputFacts, RangePlan, Yardstick};
use serde::{Deserialize, Serialize};

/// Schema name and version written into every run.
pub const SCHEMA: &str = "framecost.results/2";

/// Older versions this build still reads. Version 1 lacks the machine-disturbance fields
/// (read as absent) and stored wrong percentiles (every one 2 ns): the reader recomputes
/// them from the samples.
pub const READABLE_SCHEMAS: &[&str] = &["framecost.results/1", AXIS_SCHEMA];

/// Written instead of [`SCHEMA`] by a run holding a workload swept over another axis
/// (`WorkloadHeader::axis`): its points' `rows` are that axis's values, which a reader
/// that does not know `axis` would label as rows, so such a reader refuses the run.
/// Otherwise the same as version 2.
pub const AXIS_SCHEMA: &str = "framecost.results/3";

/// One line of `points.jsonl`.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(tag = "record", rename_all = "snake_case")]
pub enum Record {
    Run(RunHeader),
    Workload(WorkloadHeader),
    Table(TableRecord),
    Point(PointRecord),
    Comparison(ComparisonRecord),
    End(EndRecord),
}

/// First line: the run, the machine, the clock and the yardstick.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct RunHeader {
    pub schema: String,
    pub run_id: String,
    pub started_at: String,
    /// The command line that made this run (to reproduce it).
    pub command: Vec<String>,
    pub machine: MachineFingerprint,
    pub clock: ClockInfo,
    pub yardstick: Yardstick,
    pub available_memory_bytes: u64,
    /// Whether size refusals for memory were overridden.
    pub forced: bool,
    /// Bytes of the buffer read before every sample to sweep the caches (`measure::scrub`);
    /// absent when `--warm-caches` left them as the previous sample did, and in runs made
    /// before the sweep existed.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cache_sweep_bytes: Option<u64>,
    /// Threads that read that buffer at once (2 on a machine with two or more cores); absent
    /// in runs made before the sweep was split, which read it on one thread. The sweep's
    /// duration is a reading of the memory's speed, comparable only between runs that swept
    /// the same way.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cache_sweep_threads: Option<u32>,
}

impl RunHeader {
    /// How the caches were swept before each sample: (buffer bytes, threads); None with warm
    /// caches.
    pub fn cache_sweep(&self) -> Option<(u64, u32)> {
        self.cache_sweep_bytes.map(|b| (b, self.cache_sweep_threads.unwrap_or(1)))
    }
}

/// A workload about to be swept.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct WorkloadHeader {
    pub workload: String,
    pub file: String,
    pub spec_hash: String,
    pub seed: u64,
    pub about: String,
    pub target: Option<u64>,
    pub sizes: Vec<u64>,
    pub budget: Budget,
    pub columns: Vec<ColumnPlan>,
    pub designs: Vec<DesignHeader>,
    pub outputs_differ: Option<String>,
    /// The workload's own regression threshold for `framecost gate` (a share), if set.
    #[serde(default)]
    pub gate_threshold: Option<f64>,
    /// The workload file as it was when the run started.
    pub spec_text: String,
    /// What was swept when it was not the row count (`sizes` then holds its values);
    /// absent in older runs and in row sweeps.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub axis: Option<AxisPlan>,
}

impl WorkloadHeader {
    /// The swept axis, for labels ("4k rows", "100 groups").
    pub fn axis(&self) -> Axis<'_> {
        Axis(self.axis.as_ref())
    }
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct DesignHeader {
    pub name: String,
    pub about: Option<String>,
    /// Steps with parameters, `a{x=1} → b`.
    pub recipe: String,
    /// Step names, for looking up cost-model notes.
    pub steps: Vec<String>,
    pub feed: String,
    pub expect_time: Option<String>,
    pub expect_bytes: Option<String>,
    /// Dtypes the design is meant to end with: (column, dtype name such as "f64").
    #[serde(default)]
    pub expect_dtypes: Vec<(String, String)>,
    /// The engine its queries ran on (`memory` or `streaming`); absent in older runs.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub engine: Option<String>,
    /// The optimized plan of each `sql` step, in step order; absent in older runs.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub query_plans: Vec<String>,
    /// Set when the design is a program of the user's: it has no allocation counts, and
    /// its memory is its peak resident size.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub program: Option<ProgramHeader>,
}

/// How a program design was run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ProgramHeader {
    /// The argument list as written in the workload.
    pub command: Vec<String>,
    /// `worker` or `process`.
    pub mode: String,
    /// The table's file format: `parquet`, `ipc` or `csv`.
    pub input: String,
    /// Outputs compared as sets of rows.
    #[serde(default)]
    pub any_row_order: bool,
    /// What the program said about itself when it started (a worker's hello: its runtime).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub runtime: Option<String>,
}

/// The synthetic table made for one size.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct TableRecord {
    pub workload: String,
    pub rows: u64,
    pub fingerprint: String,
    pub generate_ns: f64,
    /// Bytes allocated while generating it.
    pub generate_alloc_bytes: u64,
    /// Estimated in-memory size of the table.
    pub table_bytes_estimate: f64,
    /// Estimated peak memory of this size, and what was available when it started.
    pub memory_estimate_bytes: f64,
    pub available_memory_bytes: u64,
}

/// Why sampling of a point ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum StopReason {
    /// The median's confidence interval reached the target precision.
    Precise,
    /// The most samples allowed were taken.
    SampleCap,
    /// The point's time budget ran out.
    PointBudget,
    /// The whole run's time budget ran out.
    RunBudget,
    /// The sweep was interrupted (Ctrl-C or SIGTERM) while this point was being sampled.
    Interrupted,
}

impl StopReason {
    pub fn label(self) -> &'static str {
        match self {
            StopReason::Precise => "precise",
            StopReason::SampleCap => "sample cap",
            StopReason::PointBudget => "point budget",
            StopReason::RunBudget => "run budget",
            StopReason::Interrupted => "interrupted",
        }
    }
    pub fn mark(self) -> &'static str {
        match self {
            StopReason::Precise => "",
            StopReason::SampleCap => "c",
            StopReason::PointBudget => "b",
            StopReason::RunBudget => "r",
            StopReason::Interrupted => "i",
        }
    }
}

/// Why a point was not measured.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SkipReason {
    /// Predicted from smaller sizes to overrun the point's budget.
    PredictedOverBudget,
    /// Predicted to overrun what is left of the run's budget.
    RunBudget,
    /// A smaller size of this design already used up its budget.
    SmallerSizeOverBudget,
    /// The size's estimated memory does not fit in what is available.
    Memory,
    /// The files the size would write do not fit in the temp folder's free space.
    Disk,
    /// A step failed at this or a smaller size.
    Failed,
}

impl SkipReason {
    pub fn label(self) -> &'static str {
        match self {
            SkipReason::PredictedOverBudget => "predicted over point budget",
            SkipReason::RunBudget => "predicted over run budget",
            SkipReason::SmallerSizeOverBudget => "smaller size over budget",
            SkipReason::Memory => "would not fit in memory",
            SkipReason::Disk => "would not fit on disk",
            SkipReason::Failed => "failed",
        }
    }
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct SkipInfo {
    pub reason: SkipReason,
    /// Predicted median time of one run (ns), when there was a prediction.
    pub predicted_ns: Option<f64>,
    /// Estimated peak memory (bytes), for memory refusals.
    pub predicted_bytes: Option<f64>,
    /// Why, in numbers (absent in runs made before it was recorded: read `detail`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cause: Option<SkipCause>,
    /// Why, in words: all that older runs have; newer runs write the cause's words here
    /// too, so an older reader shows them. Readers word `cause` when there is one.
    #[serde(default)]
    pub detail: String,
}

impl SkipInfo {
    /// A skip for `reason` because of `cause` (worded when it is written).
    pub fn new(reason: SkipReason, cause: SkipCause) -> SkipInfo {
        SkipInfo { reason, predicted_ns: None, predicted_bytes: None, cause: Some(cause), detail: String::new() }
    }

    /// A failed point because of `cause`.
    pub fn failed(cause: SkipCause) -> SkipInfo {
        SkipInfo::new(SkipReason::Failed, cause)
    }

    /// The limit of a trial run stopped unfinished at `rows` itself (not at a smaller size
    /// that kept the design out of this one): the point's time is known to pass it.
    pub fn trial_stopped(&self, rows: u64) -> Option<f64> {
        match &self.cause {
            Some(SkipCause::TrialOverBudget { at, limit_ns, .. }) if *at == rows => Some(*limit_ns),
            _ => None,
        }
    }
}

/// One design at one size.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct PointRecord {
    pub workload: String,
    pub design: String,
    pub rows: u64,
    /// Set when the point was measured.
    pub measured: Option<Measured>,
    /// Set when it was not.
    pub skipped: Option<SkipInfo>,
    /// Time of the design's untimed `setup:` steps at this size (ns), run once before
    /// sampling; absent when it has none (and in older runs).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub setup_ns: Option<f64>,
}

/// Everything measured at one point. Times are per run of the design (ns); a sample of a
/// very fast design times `batch` runs and is divided by it.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Measured {
    pub stop: StopReason,
    pub batch: u64,
    pub warmup_runs: u64,
    /// Every sample, in the order taken (ns per run).
    pub samples_ns: Vec<f64>,
    pub median_ns: f64,
    /// 95% distribution-free interval of the median (absent below 6 samples).
    pub ci_low_ns: Option<f64>,
    pub ci_high_ns: Option<f64>,
    /// Largest distance from the median to an interval end, over the median.
    pub ci_rel_half_width: Option<f64>,
    pub mean_ns: f64,
    /// Percentiles of the samples, Hyndman & Fan type 7 (p50 is the median). Version 1
    /// stored 2 here (a clamped histogram); the reader recomputes them for such runs.
    pub p50_ns: f64,
    pub p90_ns: f64,
    pub p99_ns: f64,
    pub max_ns: f64,
    /// Median CPU time of the whole process per run (ns); above wall time means parallel work.
    pub cpu_ns: f64,
    /// Allocations per run inside the timed region (median over samples); zero for a
    /// program design, which has none counted (see `alloc_counted`).
    pub alloc: AllocStats,
    /// True when every sample allocated the same bytes per run.
    pub alloc_exact: bool,
    /// False for a program design: `alloc` holds no counts and must not be read as zero
    /// allocations (absent in older runs: true).
    #[serde(default = "yes", skip_serializing_if = "is_true")]
    pub alloc_counted: bool,
    /// What was measured of a program design's process (absent for steps).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub program: Option<ProgramMeasured>,
    /// What the design produced (from its first run).
    pub output: Option<OutputFacts>,
    /// Wall time spent on this point, warm-up included (s).
    pub spent_s: f64,
    /// How the machine behaved while this point's size was sampled (absent in runs made
    /// before it was recorded).
    #[serde(default)]
    pub disturbance: Option<Disturbance>,
    /// The sorted samples split into two clusters (a gap of ×1.5 with 15% on each side).
    #[serde(default)]
    pub bimodal: bool,
}

fn yes() -> bool {
    true
}
fn is_true(b: &bool) -> bool {
    *b
}

/// A program design's process at one point: its own CPU time and resident memory.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
pub struct ProgramMeasured {
    /// Median CPU time of the program per run (ns), from its own resource usage (every
    /// thread); above the wall time means parallel work. Absent where it cannot be read.
    pub child_cpu_ns: Option<f64>,
    /// Largest peak resident size of the program over the samples (bytes): `VmHWM` of a
    /// worker, reset before each sample; `ru_maxrss` of a whole process run.
    pub peak_resident_bytes: u64,
    /// Resident size before the timed runs (bytes): a worker's size with the input loaded;
    /// absent in process mode, where every run starts from nothing.
    pub resident_before_bytes: Option<u64>,
    /// Time the worker took to load the input (ns, untimed by the sweep).
    pub load_ns: Option<f64>,
}

impl ProgramMeasured {
    /// Memory the timed runs added on top of what was resident before them (the whole
    /// peak in process mode).
    pub fn working_bytes(&self) -> u64 {
        self.peak_resident_bytes.saturating_sub(self.resident_before_bytes.unwrap_or(0))
    }
}

impl Measured {
    /// A point as `points.jsonl` stores it, with median `median_ns` and samples around it
    /// (±1%), one allocated byte: for unit tests that set what they need.
    #[cfg(test)]
    pub fn fixture(median_ns: f64) -> Measured {
        const POINT: &str = r#"{"stop":"precise","batch":1,"warmup_runs":1,"samples_ns":[1.0],"median_ns":1.0,
            "ci_low_ns":1.0,"ci_high_ns":1.0,"ci_rel_half_width":0.01,"mean_ns":1.0,"p50_ns":1.0,"p90_ns":1.0,
            "p99_ns":1.0,"max_ns":1.0,"cpu_ns":1.0,"alloc":{"bytes":1,"count":1,"peak_live":1},"alloc_exact":true,
            "spent_s":0.1,"bimodal":false}"#;
        let mut m: Measured = serde_json::from_str(POINT).expect("fixture");
        m.median_ns = median_ns;
        m.samples_ns = vec![median_ns * 0.99, median_ns, median_ns * 1.01];
        m
    }

    /// Bytes allocated per run, when they were counted (steps only).
    pub fn counted_bytes(&self) -> Option<u64> {
        self.alloc_counted.then_some(self.alloc.bytes)
    }
    /// Peak memory of one run: the counted peak of live allocations for steps, the working
    /// resident size for a program.
    pub fn peak_bytes(&self) -> u64 {
        match (&self.program, self.alloc_counted) {
            (Some(p), false) => p.working_bytes(),
            _ => self.alloc.peak_live,
        }
    }

    /// Measured while the machine was busy: such a point never decides a class or a verdict.
    pub fn is_contaminated(&self) -> bool {
        self.disturbance.as_ref().is_some_and(|d| d.busy)
    }
}

/// Signals of a busy machine at one size (see `measure::hygiene`).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct Disturbance {
    /// CPU time the single-threaded drift probe got over its wall time, over the size's
    /// rounds (1 = a core to itself).
    pub probe_cpu_share: Option<f64>,
    /// Involuntary context switches of the process per second of sampling this design.
    pub switches_per_s: Option<f64>,
    /// Share of the machine's CPU time used by other processes (and other guests of the
    /// hypervisor) while this design was sampled; absent in runs before it was measured.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub others_share: Option<f64>,
    /// One-minute load average per core when the size ended.
    pub load_per_core: Option<f64>,
    /// Median time of the cache sweeps before this design's samples (ns): the memory's speed
    /// at this point, which the CPU-bound drift probe does not see. Absent with
    /// `--warm-caches` and in runs before it was measured.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub memory_probe_ns: Option<f64>,
    /// True when the probe got less than 0.85 of a core ("probe-share" in `reasons`) or other
    /// processes used more than 35% of the machine ("other-processes").
    pub busy: bool,
    pub reasons: Vec<String>,
}

/// Designs side by side at one size.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ComparisonRecord {
    pub workload: String,
    pub rows: u64,
    pub fastest: Option<String>,
    pub ratios: Vec<Ratio>,
    pub equivalence: Equivalence,
    /// Median time of the drift probe (a fixed kernel timed once per sampling round at
    /// this size): how fast the machine itself was while this size was measured.
    #[serde(default)]
    pub probe_ns: Option<f64>,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Ratio {
    pub design: String,
    /// Median over the fastest design's median.
    pub ratio: f64,
    /// 95% bootstrap interval of that ratio.
    pub low: Option<f64>,
    pub high: Option<f64>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum EquivalenceStatus {
    /// Every measured design produced the same contents.
    Same,
    /// Contents differ, and the spec did not say they may.
    Mismatch,
    /// Contents differ, as the spec says they may.
    DifferAsDeclared,
    /// Fewer than two designs were measured at this size.
    NotChecked,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Equivalence {
    pub status: EquivalenceStatus,
    /// Designs grouped by identical output fingerprint.
    pub groups: Vec<Vec<String>>,
    pub note: String,
}

/// Last line of a complete run.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct EndRecord {
    pub finished_at: String,
    pub elapsed_s: f64,
    pub mismatches: u64,
}
