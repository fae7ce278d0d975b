//! The plan: a workload resolved and ready to run — sizes sorted, defaults filled in, steps
//! built. It is the second stage after the spec (what the user wrote, checked); the runner
//! only ever sees a plan.

use crate::patterns::{Params, Step, StepDef};
use crate::spec::model::{ColumnKind, EngineChoice, Feed, InputFormat, ProgramMode};
use std::sync::Arc;
pub use crate::results::schema::{AxisPlan, AxisSet, Budget, ColumnPlan, RangePlan};

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
    /// Increasing swept values: row counts, or the values of `axis` (see [`Plan::rows_at`]).
    pub sizes: Vec<u64>,
    /// Set when the sweep is over another shape parameter with the rows fixed.
    pub axis: Option<AxisPlan>,
    pub target: Option<u64>,
    pub budget: Budget,
    pub designs: Vec<DesignPlan>,
    pub outputs_differ: Option<String>,
    /// The workload's regression threshold for the gate (a share).
    pub gate_threshold: Option<f64>,
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
    /// Set when the design is a program of the user's (then `steps` and `setup` are empty).
    pub program: Option<ProgramPlan>,
    /// Share of each run's own time spun after its steps (`slowdown:`, for rehearsing the
    /// gate); 0 for none.
    pub slowdown: f64,
}

/// A program design, resolved: paths made absolute against the workload's folder.
#[derive(Debug, Clone, PartialEq)]
pub struct ProgramPlan {
    /// The argument list as written in the workload (for messages and results).
    pub written: Vec<String>,
    /// The argument list with relative paths that exist beside the workload made absolute.
    pub command: Vec<String>,
    pub mode: ProgramMode,
    pub input: InputFormat,
    /// Output rows are compared as a set.
    pub any_row_order: bool,
    pub env: Vec<(String, String)>,
}

impl ProgramPlan {
    /// `python3 designs/x.py (worker, csv input)`
    pub fn label(&self) -> String {
        format!("{} ({}, {} input)", self.written.join(" "), self.mode.label(), self.input.label())
    }
    /// Whether the command names a file for the program's output (`{output}`).
    pub fn writes_output(&self) -> bool {
        self.mode == ProgramMode::Worker || self.command.iter().any(|a| a.contains("{output}"))
    }
}

impl DesignPlan {
    /// `append_rows{batch=1, consolidate=each} → …`
    pub fn recipe(&self) -> String {
        if let Some(p) = &self.program {
            return format!("program: {}", p.label());
        }
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
        if self.program.is_some() {
            // The table written in the program's format, and its output file.
            return 2.0;
        }
        self.setup.iter().chain(&self.steps).map(|s| s.def.disk_factor).fold(0.0, f64::max)
    }
    /// The largest memory factor of its steps.
    pub fn memory_factor(&self) -> f64 {
        if self.program.is_some() {
            // Unknown until measured: a program holds the table in its own form (Python
            // objects take several times the columnar bytes); measured peaks take over.
            return PROGRAM_MEMORY_FACTOR;
        }
        self.setup.iter().chain(&self.steps).map(StepPlan::memory_factor).fold(1.0, f64::max)
    }
}

/// Peak memory of a program design before anything is measured, as a multiple of the table.
pub const PROGRAM_MEMORY_FACTOR: f64 = 8.0;

/// One step with its parameters and its runnable form.
#[derive(Clone)]
pub struct StepPlan {
    pub def: &'static StepDef,
    pub params: Params,
    pub label: String,
    pub runner: Arc<dyn Step>,
}

impl StepPlan {
    /// Working memory before it is measured, as a multiple of the tables: the step's
    /// declared factor, or an SQL query's own (`patterns::sql::memory_factor`).
    pub fn memory_factor(&self) -> f64 {
        if crate::patterns::sql::is_sql(self.def) {
            crate::patterns::sql::memory_factor(self.params.text("query"))
        } else {
            self.def.memory_factor
        }
    }
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
    /// Estimated in-memory bytes of every table at swept size `rows` (of a row sweep; see
    /// [`Plan::table_bytes_at`] for any sweep).
    pub fn table_bytes(&self, rows: u64) -> f64 {
        self.tables.iter().map(|t| t.bytes(rows)).sum()
    }

    /// The row count tables follow at swept value `x`: `x` itself, or the axis's fixed rows.
    pub fn rows_at(&self, x: u64) -> u64 {
        self.axis.as_ref().map_or(x, |a| a.rows)
    }

    /// The tables at swept value `x`: the declared ones, with the axis's parameter set.
    pub fn tables_at(&self, x: u64) -> Vec<TablePlan> {
        let mut tables = self.tables.clone();
        if let (Some(a), Some(first)) = (&self.axis, tables.first_mut()) {
            shape_table(first, a, x);
        }
        tables
    }

    /// The first table's columns at swept value `x`.
    pub fn columns_at(&self, x: u64) -> Vec<ColumnPlan> {
        if self.axis.is_none() {
            return self.columns.clone();
        }
        self.tables_at(x).into_iter().next().map(|t| t.columns).unwrap_or_default()
    }

    /// Estimated in-memory bytes of every table at swept value `x`.
    pub fn table_bytes_at(&self, x: u64) -> f64 {
        let rows = self.rows_at(x);
        self.tables_at(x).iter().map(|t| t.bytes(rows)).sum()
    }

    /// A swept value as prose: `4k rows`, `100 groups`.
    pub fn axis_point(&self, x: u64) -> String {
        crate::results::Axis(self.axis.as_ref()).point(x)
    }

    /// The largest row count any point has (what per-row step parameters are checked against).
    pub fn largest_rows(&self) -> u64 {
        self.sizes.last().map_or(0, |&x| self.rows_at(x))
    }
}

/// Set the axis's parameter of `t` (the first table) to swept value `x`.
pub fn shape_table(t: &mut TablePlan, a: &AxisPlan, x: u64) {
    let value = a.value(x as f64);
    let col = a.column.as_deref().and_then(|name| t.columns.iter_mut().find(|c| c.name == name));
    match (a.set, col) {
        (AxisSet::Distinct, Some(c)) => c.distinct = Some(x.max(1)),
        (AxisSet::Nulls, Some(c)) => c.nulls = value.clamp(0.0, 1.0),
        (AxisSet::Skew, Some(c)) => c.skew = value.max(0.0),
        (AxisSet::Columns, _) => t.columns = widen(&t.columns, x as usize),
        _ => {}
    }
}

/// The declared columns repeated until there are `k` (or the first `k` of them): the
/// copies are named `<name>_2`, `<name>_3`… (skipping names already taken) and, being
/// named differently, hold different values.
pub fn widen(declared: &[ColumnPlan], k: usize) -> Vec<ColumnPlan> {
    if declared.is_empty() {
        return Vec::new();
    }
    let mut out: Vec<ColumnPlan> = declared.iter().take(k.max(1)).cloned().collect();
    let mut taken: std::collections::HashSet<String> = declared.iter().map(|c| c.name.clone()).collect();
    let mut i = 0;
    while out.len() < k {
        let src = &declared[i % declared.len()];
        let mut copy = 2 + i / declared.len();
        let mut name = format!("{}_{copy}", src.name);
        while taken.contains(&name) {
            copy += 1;
            name = format!("{}_{copy}", src.name);
        }
        taken.insert(name.clone());
        out.push(ColumnPlan { name, ..src.clone() });
        i += 1;
    }
    out
}
