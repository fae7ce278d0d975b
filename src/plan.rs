//! The plan: a workload resolved and ready to run — sizes sorted, defaults filled in, steps
//! built. It is the second stage after the spec (what the user wrote, checked); the runner
//! only ever sees a plan.

use crate::patterns::{Params, Step, StepDef};
use crate::spec::model::{ColumnKind, EngineChoice, Feed, Order};
use std::sync::Arc;

/// A workload ready to run.
#[derive(Clone)]
pub struct Plan {
    /// The file it came from (for messages and results).
    pub file: String,
    /// Hash of the spec's text (xxh3, hex).
    pub spec_hash: String,
    pub spec_text: String,
    pub name: String,
    pub about: String,
    pub seed: u64,
    /// The first table's columns (what built-in steps receive).
    pub columns: Vec<ColumnPlan>,
    /// Every table, the first one first (a lone `table:` is one table named `data`).
    pub tables: Vec<TablePlan>,
    /// True when the spec used `tables:` (each table's values are then drawn with a seed
    /// mixed with its name, so equal column names in two tables differ).
    pub related: bool,
    /// Increasing row counts.
    pub sizes: Vec<u64>,
    pub target: Option<u64>,
    pub budget: Budget,
    pub designs: Vec<DesignPlan>,
    pub outputs_differ: Option<String>,
    /// The workload's regression threshold for the gate (a share).
    pub gate_threshold: Option<f64>,
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

/// One design, resolved.
#[derive(Clone)]
pub struct DesignPlan {
    pub name: String,
    pub about: Option<String>,
    pub feed: Feed,
    pub engine: EngineChoice,
    /// Untimed, once per size, before sampling.
    pub setup: Vec<StepPlan>,
    /// Timed.
    pub steps: Vec<StepPlan>,
    /// Canonical growth labels the trade expects ("n", "n²", …).
    pub expect_time: Option<&'static str>,
    pub expect_bytes: Option<&'static str>,
    /// Dtypes the design is meant to end with, by column ("kilograms" → "f64").
    pub expect_dtypes: Vec<(String, &'static str)>,
    /// The optimized plan of each `sql` step, as polars describes it when the query is
    /// planned against the declared (empty) tables; filled in by the query check.
    pub query_plans: Vec<String>,
}

impl DesignPlan {
    /// `append_rows{batch=1, consolidate=each} → …`
    pub fn recipe(&self) -> String {
        let timed = self.steps.iter().map(|s| s.label.clone()).collect::<Vec<_>>().join(" → ");
        if self.setup.is_empty() {
            timed
        } else {
            let setup = self.setup.iter().map(|s| s.label.clone()).collect::<Vec<_>>().join(" → ");
            format!("(untimed: {setup}) → {timed}")
        }
    }
    /// The largest disk factor of its steps (0 when nothing is written).
    pub fn disk_factor(&self) -> f64 {
        self.setup.iter().chain(&self.steps).map(|s| s.def.disk_factor).fold(0.0, f64::max)
    }
    /// The largest memory factor of its steps.
    pub fn memory_factor(&self) -> f64 {
        self.setup.iter().chain(&self.steps).map(|s| s.def.memory_factor).fold(1.0, f64::max)
    }
}

/// One step with its parameters and its runnable form.
#[derive(Clone)]
pub struct StepPlan {
    pub def: &'static StepDef,
    pub params: Params,
    pub label: String,
    pub runner: Arc<dyn Step>,
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
}

/// One named table of the workload.
#[derive(Debug, Clone, PartialEq)]
pub struct TablePlan {
    pub name: String,
    pub rows: RowsPlan,
    pub columns: Vec<ColumnPlan>,
}

/// How a table's row count follows the swept size.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum RowsPlan {
    /// The swept size itself.
    Swept,
    /// `num/den` of the swept size, at least one row.
    Share(u64, u64),
    /// A fixed count at every size.
    Fixed(u64),
}

impl RowsPlan {
    /// Rows at swept size `n`.
    pub fn at(self, n: u64) -> u64 {
        match self {
            RowsPlan::Swept => n,
            RowsPlan::Share(a, b) => ((n as u128 * a as u128 / b.max(1) as u128) as u64).max(1),
            RowsPlan::Fixed(k) => k,
        }
    }
    pub fn label(self) -> String {
        match self {
            RowsPlan::Swept => "the swept size".into(),
            RowsPlan::Share(a, b) => format!("{a}/{b} of the swept size"),
            RowsPlan::Fixed(k) => format!("{k} rows"),
        }
    }
}

impl TablePlan {
    /// Estimated in-memory bytes at swept size `n`.
    pub fn bytes(&self, n: u64) -> f64 {
        self.columns.iter().map(|c| c.bytes_per_row()).sum::<f64>() * self.rows.at(n) as f64
    }
}

/// A value range, typed by column kind. Dates are days since 1970-01-01.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub enum RangePlan {
    None,
    Int(i64, i64),
    Float(f64, f64),
    Date(i32, i32),
}

impl ColumnPlan {
    /// Bytes one row of this column takes in memory, roughly (values + validity).
    pub fn bytes_per_row(&self) -> f64 {
        let validity = if self.nulls > 0.0 { 0.125 } else { 0.0 };
        let value = match self.kind {
            ColumnKind::Int | ColumnKind::Float | ColumnKind::Key => 8.0,
            ColumnKind::Bool => 0.125,
            ColumnKind::Date => 4.0,
            // Views are 16 bytes; words longer than 12 bytes also live in a data buffer.
            ColumnKind::Text => 16.0 + if self.length.1 > 12 { (self.length.0 + self.length.1) as f64 / 2.0 } else { 0.0 },
            ColumnKind::Category => 4.0,
        };
        value + validity
    }
}

impl Plan {
    /// Estimated in-memory bytes of every table at swept size `rows`.
    pub fn table_bytes(&self, rows: u64) -> f64 {
        self.tables.iter().map(|t| t.bytes(rows)).sum()
    }
}
