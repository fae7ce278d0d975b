//! The plan: a workload resolved and ready to run — sizes sorted, defaults filled in, steps
//! built. It is the second stage after the spec (what the user wrote, checked); the runner
//! only ever sees a plan.

use crate::patterns::{Params, Step, StepDef};
use crate::spec::model::{ColumnKind, Feed, Order};
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
    pub columns: Vec<ColumnPlan>,
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
    /// Untimed, once per size, before sampling.
    pub setup: Vec<StepPlan>,
    /// Timed.
    pub steps: Vec<StepPlan>,
    /// Canonical growth labels the trade expects ("n", "n²", …).
    pub expect_time: Option<&'static str>,
    pub expect_bytes: Option<&'static str>,
    /// Dtypes the design is meant to end with, by column ("kilograms" → "f64").
    pub expect_dtypes: Vec<(String, &'static str)>,
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
    /// Estimated in-memory bytes of the synthetic table at `rows` rows.
    pub fn table_bytes(&self, rows: u64) -> f64 {
        self.columns.iter().map(|c| c.bytes_per_row()).sum::<f64>() * rows as f64
    }
}
