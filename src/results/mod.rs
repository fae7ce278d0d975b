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
mod measured;
pub mod reader;
pub mod sane;
pub mod schema;
pub mod summary;
pub mod writer;

pub use cause::{MemoryNeed, SkipCause};
pub use measured::{Disturbance, Measured, ProgramMeasured};
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
    /// The processor's data caches as the system reported them (`measure::scrub::
    /// cache_levels`), smallest level first; empty where they could not be read and in runs
    /// made before they were recorded. `explain` says when a prediction's table outgrows a
    /// level that held it at every fitted size.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub caches: Vec<CacheLevel>,
    /// How the measuring process tuned the system allocator (`measure::alloc::settings`);
    /// absent where it was not tuned and in runs made before it was recorded. Medians of
    /// designs that allocate and free many blocks depend on it, so `gate` says when the two
    /// runs differ.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub allocator: Option<String>,
    /// The framecost build that made the run: a hash of its executable
    /// (`measure::headers::build_id`); absent in runs made before it was recorded. `gate
    /// --recheck` sweeps the baseline's workloads again only with the same build, since
    /// another build may measure them differently (a polars upgrade is a change to gate).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub build: Option<String>,
}

/// One level of the processor's data caches (data or unified; instruction caches left out).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct CacheLevel {
    /// 1, 2, 3…
    pub level: u8,
    pub bytes: u64,
    /// Logical CPUs that share it (1: private to a core).
    pub shared_by: u32,
}

impl RunHeader {
    /// This run's and `other`'s allocator tunings, when they differ (None where a run did not
    /// record it): designs that allocate and free many small blocks can move by that alone.
    pub fn allocators_apart(&self, other: &RunHeader) -> Option<(Option<String>, Option<String>)> {
        (self.allocator != other.allocator).then(|| (self.allocator.clone(), other.allocator.clone()))
    }

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
    /// Set when this size was measured a second time because the drift probe of the first
    /// attempt ran this many times its usual time (`measure::runner`, "a size measured
    /// again"): the records of that first attempt were replaced by these.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub remeasured_after: Option<f64>,
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
