//! The workload file as the user wrote it: serde types, nothing resolved yet.
//!
//! A newcomer must know: every struct denies unknown keys, so a typo is an error with a
//! position (and a did-you-mean added by `spec::load`); steps are kept as raw YAML here and
//! checked against the step registry by `validate`, so each step family owns its parameters.

use super::units::{RowCount, Seconds, Share};
use serde::{Deserialize, Serialize};
pub use crate::results::schema::{ColumnKind, Order};

/// The newest workload format this build reads.
pub const FORMAT_VERSION: u32 = 1;

/// A whole workload file.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct WorkloadSpec {
    /// Format version of the file (1).
    #[serde(default = "default_format")]
    pub framecost: u32,
    /// Short name, used in run folders and reports: letters, digits, `-` and `_`.
    pub name: String,
    /// One paragraph: what job this is and what it teaches.
    #[serde(default)]
    pub about: String,
    /// Seed of the synthetic table (the same seed gives the same table, bit for bit).
    #[serde(default = "default_seed")]
    pub seed: u64,
    /// The synthetic table every design starts from (called `data` in queries unless it
    /// has a `name:`). Give either `table:` or `tables:`.
    #[serde(default)]
    pub table: Option<TableSpec>,
    /// Several named, related tables; the first is what built-in steps receive.
    #[serde(default)]
    pub tables: Option<Vec<TableSpec>>,
    /// The sizes (rows) to replay every design at. Give either `sizes:` or `sweep:`.
    #[serde(default)]
    pub sizes: Option<SizeLadder>,
    /// The first table's rows at every point of a `sweep:` over another axis.
    #[serde(default)]
    pub rows: Option<RowCount>,
    /// A sweep over another shape parameter with `rows:` fixed: a column's distinct
    /// count, the number of columns, a null share or a skew.
    #[serde(default)]
    pub sweep: Option<SweepSpec>,
    /// The size that matters: predictions are made for it.
    #[serde(default)]
    pub target: Option<RowCount>,
    /// Time, precision and memory limits of the sweep.
    #[serde(default)]
    pub budget: BudgetSpec,
    /// One or more ways of doing the same job (one design is tracked on its own growth).
    pub designs: Vec<DesignSpec>,
    /// When set, the designs are known to give different outputs, and this says why
    /// (for example a lossy cast). Without it, differing outputs are a loud failure.
    #[serde(default)]
    pub outputs_differ: Option<String>,
    /// Settings for comparing runs of this workload with `framecost gate`.
    #[serde(default)]
    pub gate: Option<GateSpec>,
}

/// `sweep: {axis: groups, column: grower, set: distinct, values: [10, 100, 1k]}`.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct SweepSpec {
    /// The name outputs label it with (default: groups, columns, null share, skew).
    #[serde(default)]
    pub axis: Option<String>,
    /// The first table's column whose parameter is set (not for `set: columns`).
    #[serde(default)]
    pub column: Option<String>,
    /// What each value sets: `distinct`, `columns`, `nulls` or `skew`.
    pub set: crate::results::schema::AxisSet,
    /// The values, in increasing order: counts (`10`, `1k`), shares (`10%`, `0.1`) or exponents.
    pub values: Vec<serde_yaml::Value>,
}

/// How `framecost gate` judges this workload.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct GateSpec {
    /// How much slower a median may get before it counts as a regression (default 10%).
    #[serde(default)]
    pub threshold: Option<Share>,
}

fn default_format() -> u32 {
    FORMAT_VERSION
}
fn default_seed() -> u64 {
    1
}

/// One synthetic table.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct TableSpec {
    /// The table's name in queries (needed under `tables:`; `data` for a lone `table:`).
    #[serde(default)]
    pub name: Option<String>,
    /// Its row count: absent for the swept size, `1/20` for a share of it, or a fixed
    /// count (`365`, `2k`).
    #[serde(default)]
    pub rows: Option<TableRows>,
    pub columns: Vec<ColumnSpec>,
}

/// A table's `rows:` as written: a number, or text such as `1/20` or `2k`.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(untagged)]
pub enum TableRows {
    Count(u64),
    Text(String),
}

/// One bound of a value range: a number, or a date as `YYYY-MM-DD`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize)]
#[serde(untagged)]
pub enum Bound {
    Int(i64),
    Float(f64),
    Text(String),
}

/// One column of the synthetic table.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct ColumnSpec {
    pub name: String,
    pub kind: ColumnKind,
    /// Share of rows that are null (0 to 1).
    #[serde(default)]
    pub nulls: Option<Share>,
    /// Number of distinct values to draw from.
    #[serde(default)]
    pub distinct: Option<u64>,
    /// Smallest and largest value: numbers, or dates `YYYY-MM-DD`.
    #[serde(default)]
    pub range: Option<Vec<Bound>>,
    #[serde(default)]
    pub order: Order,
    /// Run length for `order: clustered`.
    #[serde(default)]
    pub run: Option<u64>,
    /// Zipf exponent over the distinct values (0 = uniform).
    #[serde(default)]
    pub skew: Option<f64>,
    /// For `key` columns: share of rows that repeat an earlier row's key.
    #[serde(default)]
    pub duplicates: Option<Share>,
    /// For text: shortest and longest word, in characters.
    #[serde(default)]
    pub length: Option<Vec<u64>>,
    /// For bool: share of `true` among non-null rows.
    #[serde(default)]
    pub true_share: Option<Share>,
    /// For int columns: `table.column` of a key this column refers to (a foreign key);
    /// values are drawn from that key's values, `skew` spreads the fan-out.
    #[serde(default)]
    pub references: Option<String>,
    /// With `references`: share of rows whose value has no match in the referenced key.
    #[serde(default)]
    pub unmatched: Option<Share>,
    /// With `references`: share of the referenced key's values that rows draw from (the
    /// rest are never referred to); 100% when absent.
    #[serde(default)]
    pub coverage: Option<Share>,
}

/// The size ladder: a list of row counts, or a geometric ladder.
#[derive(Debug, Clone, Serialize)]
pub enum SizeLadder {
    List(Vec<RowCount>),
    Ladder(LadderSpec),
}

/// `{from: 1k, to: 256k, factor: 2}`: from, from·factor, … up to and including `to`.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct LadderSpec {
    pub from: RowCount,
    pub to: RowCount,
    #[serde(default = "default_factor")]
    pub factor: f64,
}
fn default_factor() -> f64 {
    2.0
}

impl<'de> Deserialize<'de> for SizeLadder {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        use serde::de::{self, MapAccess, SeqAccess, Visitor};
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = SizeLadder;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("a list of row counts like [1k, 2k, 4k] or a ladder like {from: 1k, to: 64k, factor: 2}")
            }
            fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<SizeLadder, A::Error> {
                let mut out = Vec::new();
                while let Some(v) = seq.next_element::<RowCount>()? {
                    out.push(v);
                }
                Ok(SizeLadder::List(out))
            }
            fn visit_map<A: MapAccess<'de>>(self, map: A) -> Result<SizeLadder, A::Error> {
                LadderSpec::deserialize(de::value::MapAccessDeserializer::new(map)).map(SizeLadder::Ladder)
            }
        }
        d.deserialize_any(V)
    }
}

/// Limits of the sweep. Every field has a default.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct BudgetSpec {
    /// Longest time to spend sampling one design at one size.
    #[serde(default = "d_point")]
    pub per_point: Seconds,
    /// Longest time for the whole workload; points predicted to overrun it are skipped.
    #[serde(default = "d_run")]
    pub whole_run: Seconds,
    /// Stop sampling when the median's 95% confidence interval is this tight (half-width / median).
    #[serde(default = "d_precision")]
    pub precision: Share,
    /// Fewest samples per point (6 is the least for a 95% interval of the median).
    #[serde(default = "d_min")]
    pub min_samples: u64,
    /// Most samples per point.
    #[serde(default = "d_max")]
    pub max_samples: u64,
    /// Untimed runs before sampling starts.
    #[serde(default = "d_warmup")]
    pub warmup: u64,
}
fn d_point() -> Seconds {
    Seconds(10.0)
}
fn d_run() -> Seconds {
    Seconds(600.0)
}
fn d_precision() -> Share {
    Share(0.03)
}
fn d_min() -> u64 {
    6
}
fn d_max() -> u64 {
    200
}
fn d_warmup() -> u64 {
    1
}
impl Default for BudgetSpec {
    fn default() -> Self {
        BudgetSpec {
            per_point: d_point(),
            whole_run: d_run(),
            precision: d_precision(),
            min_samples: d_min(),
            max_samples: d_max(),
            warmup: d_warmup(),
        }
    }
}

/// What the timed steps of a design receive.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Deserialize, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Feed {
    /// The synthetic table itself (shared, read-only; steps that modify their input get a
    /// private copy made outside the timed region).
    #[default]
    Table,
    /// The table's rows as a list of records (plain values), made outside the timed region.
    Records,
}

/// Which polars engine runs a design's queries.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Deserialize, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum EngineChoice {
    /// Tables in memory, the in-memory engine.
    #[default]
    Memory,
    /// Tables written as Parquet chunks (untimed) and scanned by the streaming engine.
    Streaming,
}

impl EngineChoice {
    pub fn label(self) -> &'static str {
        match self {
            EngineChoice::Memory => "memory",
            EngineChoice::Streaming => "streaming",
        }
    }
}

/// One design: a named list of steps.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct DesignSpec {
    pub name: String,
    #[serde(default)]
    pub about: Option<String>,
    #[serde(default)]
    pub feed: Feed,
    /// The engine its `sql` steps run on (default memory).
    #[serde(default)]
    pub engine: EngineChoice,
    /// Untimed steps run once per size before sampling (building an index, say); their
    /// output is what the timed steps receive. Same form as `steps`.
    #[serde(default)]
    pub setup: Vec<serde_yaml::Value>,
    /// The timed steps. Each item is `step_name` or `{step_name: {param: value, ...}}`.
    /// A design has either `steps` or a `program`.
    #[serde(default)]
    pub steps: Vec<serde_yaml::Value>,
    /// A program of the user's, in any language, replayed on the generated table instead of
    /// steps (runs only with `sweep --allow-programs`).
    #[serde(default)]
    pub program: Option<ProgramSpec>,
    /// What the trade expects of this design, for teaching.
    #[serde(default)]
    pub expect: Option<ExpectSpec>,
    /// A deliberate slowdown for rehearsing the gate: after every run of the steps, keep the
    /// core busy for this share of the run's own time (`15%` or 0.15; up to 1000%). Step
    /// designs only (a program is slowed in the program).
    #[serde(default)]
    pub slowdown: Option<Share>,
}

/// A design that is a program: `{command: [python3, x.py], mode: worker, input: csv}`.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct ProgramSpec {
    /// The program and its arguments (no shell). Relative paths are relative to the
    /// workload file. In `process` mode `{input}`, `{output}` and `{rows}` are replaced;
    /// `{input:NAME}` names one of several tables.
    pub command: Vec<String>,
    /// `worker` (default): one long-lived process speaking framecost's JSON-lines protocol
    /// (docs/programs.md); `process`: one whole run of the command per sample.
    #[serde(default)]
    pub mode: ProgramMode,
    /// The file format the table is handed over in (default parquet).
    #[serde(default)]
    pub input: InputFormat,
    /// `any` when the order of the program's output rows carries no meaning: outputs are
    /// then compared as sets of rows (for every design of the workload).
    #[serde(default)]
    pub row_order: RowOrder,
    /// Extra environment variables for the program.
    #[serde(default)]
    pub env: std::collections::BTreeMap<String, String>,
}

/// How a program design is run.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Deserialize, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum ProgramMode {
    #[default]
    Worker,
    Process,
}

impl ProgramMode {
    pub fn label(self) -> &'static str {
        match self {
            ProgramMode::Worker => "worker",
            ProgramMode::Process => "process",
        }
    }
}

/// A file format a table is written in for a program.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Deserialize, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum InputFormat {
    #[default]
    Parquet,
    Ipc,
    Csv,
}

impl InputFormat {
    pub fn label(self) -> &'static str {
        match self {
            InputFormat::Parquet => "parquet",
            InputFormat::Ipc => "ipc",
            InputFormat::Csv => "csv",
        }
    }
    /// The file extension used for it.
    pub fn extension(self) -> &'static str {
        match self {
            InputFormat::Parquet => "parquet",
            InputFormat::Ipc => "arrow",
            InputFormat::Csv => "csv",
        }
    }
}

/// Whether the order of output rows is part of the result.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Deserialize, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum RowOrder {
    #[default]
    Kept,
    Any,
}

/// Teaching expectations: the growth class of time and of allocated bytes.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct ExpectSpec {
    #[serde(default)]
    pub time: Option<String>,
    #[serde(default)]
    pub bytes: Option<String>,
    /// The dtypes the design is meant to end with, by column (`kilograms: float`): a
    /// deliberate cast is then not reported as drift, and a missed one is. Columns not
    /// listed are compared with the table's declared kinds.
    #[serde(default)]
    pub dtypes: std::collections::BTreeMap<String, ColumnKind>,
}

/// Growth classes a spec may name, with the spellings accepted for each.
pub const GROWTH_LABELS: &[(&str, &[&str])] = &[
    ("constant", &["constant", "1", "o(1)"]),
    ("log n", &["log n", "log", "logarithmic"]),
    ("n", &["n", "linear"]),
    ("n log n", &["n log n", "nlogn", "linearithmic"]),
    ("n²", &["n²", "n^2", "quadratic"]),
    ("n³", &["n³", "n^3", "cubic"]),
];

/// The canonical growth label for a spelling, if it is one we know.
pub fn canonical_growth(label: &str) -> Option<&'static str> {
    let l = label.trim().to_lowercase();
    GROWTH_LABELS
        .iter()
        .find(|(_, spellings)| spellings.contains(&l.as_str()))
        .map(|(c, _)| *c)
}
