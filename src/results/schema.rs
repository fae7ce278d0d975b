//! The vocabulary of the on-disk results that earlier stages also speak: allocation
//! counts, the clock's calibration, the machine's fingerprint and yardstick, a design's
//! output facts, the budget, and the column plan with its kinds and orders.
//!
//! These types are defined here, in `results`, so the results format owns its schema and
//! reading a run needs nothing from `measure`, `plan`, `patterns` or `spec`; those stages
//! re-export them where they are made. Behaviour that needs the engine (making
//! `OutputFacts` from a table, a column's bytes per row) stays with the stage that has it,
//! as inherent `impl` blocks there.

use serde::{Deserialize, Serialize};

/// What happened inside one measurement window.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct AllocStats {
    /// Bytes requested (reallocations count their new size).
    pub bytes: u64,
    /// Number of allocations (and reallocations).
    pub count: u64,
    /// Highest live bytes above the level at the window's start.
    pub peak_live: u64,
}

/// What the clock can do on this machine.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ClockInfo {
    /// Resolution the OS reports for the monotonic clock (ns).
    pub reported_resolution_ns: f64,
    /// Smallest non-zero step seen between consecutive reads (ns).
    pub observed_step_ns: f64,
    /// Mean cost of one read of `Instant::now()` (ns).
    pub read_cost_ns: f64,
}

impl ClockInfo {
    /// The shortest sample (ns) for which reading the clock twice costs under 1%, and that
    /// spans at least 1000 clock steps.
    pub fn min_sample_ns(&self) -> f64 {
        (2.0 * self.read_cost_ns * 100.0).max(1000.0 * self.observed_step_ns.max(self.reported_resolution_ns)).max(1000.0)
    }

    /// The shortest sample (ns) when the caches are swept before every sample: reading the
    /// clock twice still costs under 1%, and the sample spans at least 100 clock steps (its
    /// rounding under 1%, far below what a median moves between runs). A batch of several
    /// runs would start cold and run warm after its first run, and the share of warm runs
    /// would follow the batch count, which the first run's time decides anew in every sweep
    /// (measured: a zero-copy slice at 1M rows took 14 µs per run in batches of two and
    /// 31 µs alone, in back-to-back sweeps of the same workload). So batches start only
    /// below this shorter floor.
    pub fn cold_min_sample_ns(&self) -> f64 {
        (2.0 * self.read_cost_ns * 100.0).max(100.0 * self.observed_step_ns.max(self.reported_resolution_ns)).max(1000.0)
    }
}

/// Who ran what, where.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MachineFingerprint {
    pub cpu_model: String,
    pub logical_cores: usize,
    pub physical_cores: Option<usize>,
    pub memory_total_bytes: u64,
    pub os: String,
    pub kernel: String,
    pub arch: String,
    pub framecost_version: String,
    pub polars_version: String,
    /// Threads polars may use (POLARS_MAX_THREADS, or the logical cores).
    pub polars_threads: usize,
}

/// The yardstick's result.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Yardstick {
    /// What was timed.
    pub kernel: String,
    /// Median of the rounds (ns).
    pub median_ns: f64,
    /// Every round (ns).
    pub rounds_ns: Vec<f64>,
}

/// The output's shape and contents, recorded for every point so designs that should agree
/// can be checked to agree.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct OutputFacts {
    pub rows: u64,
    /// Largest number of chunks over the columns (1 = contiguous storage).
    pub chunks: u64,
    pub dtypes: Vec<(String, String)>,
    /// Hash of the contents in row order, independent of how storage is chunked.
    pub fingerprint: String,
}

/// Limits of a sweep, resolved.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Budget {
    pub per_point_s: f64,
    pub whole_run_s: f64,
    pub precision: f64,
    pub min_samples: u64,
    pub max_samples: u64,
    pub warmup: u64,
}

/// A column of the synthetic table with every default filled in.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ColumnPlan {
    pub name: String,
    pub kind: ColumnKind,
    pub nulls: f64,
    /// Number of distinct values to draw from (None: continuous, or unique keys).
    pub distinct: Option<u64>,
    pub range: RangePlan,
    pub order: Order,
    pub run: u64,
    pub skew: f64,
    pub duplicates: f64,
    pub length: (u32, u32),
    pub true_share: f64,
    /// `table.column` of the key this column draws its values from.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub references: Option<String>,
    /// Share of rows whose reference has no match.
    #[serde(default)]
    pub unmatched: f64,
    /// Share of the referenced keys that references draw from (1: all of them; records
    /// written before it existed read as 1, and 1 is not written, so they stay as they were).
    #[serde(default = "all_keys", skip_serializing_if = "is_all_keys")]
    pub coverage: f64,
}

fn all_keys() -> f64 {
    1.0
}

fn is_all_keys(v: &f64) -> bool {
    *v == 1.0
}

/// A value range, typed by column kind. Dates are days since 1970-01-01.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub enum RangePlan {
    None,
    Int(i64, i64),
    Float(f64, f64),
    Date(i32, i32),
}

/// What a column holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum ColumnKind {
    /// 64-bit signed integers.
    Int,
    /// 64-bit floats.
    Float,
    /// true / false.
    Bool,
    /// UTF-8 text drawn from a pool of distinct words.
    Text,
    /// Text stored as a categorical column.
    Category,
    /// Calendar dates.
    Date,
    /// A row identifier: unique integers (0..n) unless `duplicates` is set.
    Key,
}

impl ColumnKind {
    pub fn label(self) -> &'static str {
        match self {
            ColumnKind::Int => "int",
            ColumnKind::Float => "float",
            ColumnKind::Bool => "bool",
            ColumnKind::Text => "text",
            ColumnKind::Category => "category",
            ColumnKind::Date => "date",
            ColumnKind::Key => "key",
        }
    }

    /// The short dtype name a column of this kind has in a table ("i64", "f64", "bool",
    /// "str", "cat", "date"), as recorded in a point's output facts.
    pub fn dtype_label(self) -> &'static str {
        match self {
            ColumnKind::Int | ColumnKind::Key => "i64",
            ColumnKind::Float => "f64",
            ColumnKind::Bool => "bool",
            ColumnKind::Text => "str",
            ColumnKind::Category => "cat",
            ColumnKind::Date => "date",
        }
    }
}

/// The order of a column's values down the rows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Deserialize, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Order {
    #[default]
    Random,
    Sorted,
    Reverse,
    /// Runs of equal values (`run` rows each, default 64).
    Clustered,
}

/// The shape parameter a sweep sets at each point, when it is not the row count.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum AxisSet {
    /// A column's number of distinct values (groups, keys).
    Distinct,
    /// The first table's number of columns (declared columns repeated to that many).
    Columns,
    /// A column's share of nulls.
    Nulls,
    /// A column's Zipf exponent.
    Skew,
}

impl AxisSet {
    /// How the swept values are stored as whole numbers: counts as they are, shares and
    /// exponents in millionths.
    pub fn scale(self) -> u64 {
        match self {
            AxisSet::Distinct | AxisSet::Columns => 1,
            AxisSet::Nulls | AxisSet::Skew => 1_000_000,
        }
    }
    pub fn label(self) -> &'static str {
        match self {
            AxisSet::Distinct => "distinct",
            AxisSet::Columns => "columns",
            AxisSet::Nulls => "nulls",
            AxisSet::Skew => "skew",
        }
    }
    /// The name outputs use when the workload gives none.
    pub fn default_name(self) -> &'static str {
        match self {
            AxisSet::Distinct => "groups",
            AxisSet::Columns => "columns",
            AxisSet::Nulls => "null share",
            AxisSet::Skew => "skew",
        }
    }
}

/// A sweep over something other than rows: the rows stay fixed and `set` takes each swept
/// value in turn. A point's `rows` field then holds the swept value (in millionths for
/// shares and exponents, see [`AxisSet::scale`]).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AxisPlan {
    /// What outputs call it: "groups", "columns", "null share".
    pub name: String,
    pub set: AxisSet,
    /// The column whose parameter is set (none for `columns`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub column: Option<String>,
    /// The first table's rows at every point.
    pub rows: u64,
}

impl AxisPlan {
    /// The swept value a stored whole number stands for.
    pub fn value(&self, x: f64) -> f64 {
        x / self.set.scale() as f64
    }
    /// The value alone: `10k`, `12.5%`, `0.75`.
    pub fn value_label(&self, x: f64) -> String {
        match self.set {
            AxisSet::Distinct | AxisSet::Columns => crate::units::rows_label_f(x),
            AxisSet::Nulls => format!("{}%", trim_number(self.value(x) * 100.0)),
            AxisSet::Skew => trim_number(self.value(x)),
        }
    }
    /// A point: `10k groups`, `null share 10%`.
    pub fn point(&self, x: f64) -> String {
        match self.set {
            AxisSet::Distinct | AxisSet::Columns => format!("{} {}", self.value_label(x), self.name),
            AxisSet::Nulls | AxisSet::Skew => format!("{} {}", self.name, self.value_label(x)),
        }
    }
}

/// A number with at most three decimals and no trailing zeros.
fn trim_number(v: f64) -> String {
    let s = format!("{v:.3}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s.is_empty() || s == "-" { "0".into() } else { s.to_string() }
}

/// What a run swept, for labels: rows, or another axis. `Axis::of(header.axis.as_ref())`.
#[derive(Debug, Clone, Copy)]
pub struct Axis<'a>(pub Option<&'a AxisPlan>);

impl Axis<'_> {
    /// "rows", "groups", "columns"…
    pub fn name(&self) -> &str {
        self.0.map_or("rows", |a| a.name.as_str())
    }
    /// One unit of a count axis, for "per …" wording ("row", "group", "column"); None for
    /// shares and exponents, which have no units to divide by.
    pub fn unit(&self) -> Option<String> {
        match self.0 {
            None => Some("row".into()),
            Some(a) if a.set.scale() != 1 => None,
            Some(a) => Some(a.name.strip_suffix('s').filter(|s| !s.is_empty()).unwrap_or(&a.name).to_string()),
        }
    }
    /// True when the sweep is over rows.
    pub fn is_rows(&self) -> bool {
        self.0.is_none()
    }
    /// A point as prose: `4k rows`, `100 groups`, `null share 10%`.
    pub fn point(&self, x: u64) -> String {
        match self.0 {
            None => format!("{} rows", crate::units::rows_label(x)),
            Some(a) if a.set.scale() == 1 => format!("{} {}", crate::units::rows_label(x), a.name),
            Some(a) => a.point(x as f64),
        }
    }
    pub fn point_f(&self, x: f64) -> String {
        match self.0 {
            None => format!("{} rows", crate::units::rows_label_f(x)),
            Some(a) => a.point(x),
        }
    }
    /// The value alone (a table heading or a picture's tick): `4k`, `10%`.
    pub fn value(&self, x: u64) -> String {
        match self.0 {
            None => crate::units::rows_label(x),
            Some(a) if a.set.scale() == 1 => crate::units::rows_label(x),
            Some(a) => a.value_label(x as f64),
        }
    }
    pub fn value_f(&self, x: f64) -> String {
        match self.0 {
            None => crate::units::rows_label_f(x),
            Some(a) => a.value_label(x),
        }
    }
}
