//! The step vocabulary: what a design is made of, and the registry that knows every step.
//!
//! A step is one piece of table work (append rows, build a table, join, …). Each family of
//! access patterns lives in its own file here and exports a `STEPS` list of [`StepDef`]s:
//! the step's YAML name, its parameters (with defaults and docs), a one-line summary for
//! `catalog`, its cost-model note (what it does to memory and how its cost should grow), and
//! a constructor. One definition feeds the spec checker, the catalog, the runner and the
//! explanations. A newcomer must know: adding a family means one new file and one line in
//! [`FAMILIES`]; nothing else in the crate names individual steps.

pub mod cell_reads;
pub mod column_growth;
pub mod columns;
pub mod context;
pub mod cross_column;
mod defaults;
pub mod grouped;
pub mod joins_sorting;
pub mod key_lookups;
pub mod row_growth;
pub mod row_wise;
pub mod sql;
pub mod storage;
pub mod subsets;
pub mod tiny_containers;
pub mod type_drift;

use polars::prelude::*;
use std::collections::BTreeMap;
use std::sync::Arc;
pub use crate::results::schema::OutputFacts;
pub use columns::{column, column_position, record_position, ColumnRef, Need};
pub use context::{Allowed, RunContext};

/// Every family of steps. Register a new family here (one line).
pub const FAMILIES: &[(&str, &[StepDef])] = &[
    ("row growth", row_growth::STEPS),
    ("column growth", column_growth::STEPS),
    ("single-cell reads", cell_reads::STEPS),
    ("key lookups", key_lookups::STEPS),
    ("grouped work", grouped::STEPS),
    ("row-wise work", row_wise::STEPS),
    ("type drift", type_drift::STEPS),
    ("cross-column reductions", cross_column::STEPS),
    ("tiny containers", tiny_containers::STEPS),
    ("storage", storage::STEPS),
    ("subsets", subsets::STEPS),
    ("joins and sorting", joins_sorting::STEPS),
    ("queries", sql::STEPS),
];

/// What flows between steps.
#[derive(Clone)]
pub enum Value {
    /// A polars table.
    Frame(DataFrame),
    /// Rows as plain values (made outside the timed region by `feed: records`).
    Records(Arc<Records>),
    /// Anything else a family passes between its own steps (an index, a list of tables,
    /// files on disk), named so designs can be checked to fit together.
    Custom(&'static str, Arc<dyn std::any::Any + Send + Sync>),
}

/// The kind of a [`Value`], for checking that a design's steps fit together.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ValueKind {
    Frame,
    Records,
    /// A family's own value, by name.
    Custom(&'static str),
}

impl ValueKind {
    pub fn label(self) -> &'static str {
        match self {
            ValueKind::Frame => "a table",
            ValueKind::Records => "records",
            ValueKind::Custom(name) => name,
        }
    }
}

impl Value {
    pub fn kind(&self) -> ValueKind {
        match self {
            Value::Frame(_) => ValueKind::Frame,
            Value::Records(_) => ValueKind::Records,
            Value::Custom(name, _) => ValueKind::Custom(name),
        }
    }

    /// The table inside, or a typed error naming the step.
    pub fn into_frame(self, step: &'static str) -> Result<DataFrame, StepError> {
        match self {
            Value::Frame(df) => Ok(df),
            other => Err(StepError::WrongInput { step, wanted: "a table", got: other.kind().label() }),
        }
    }

    /// A family's own value of type `T`, or a typed error naming the step.
    pub fn into_custom<T: Send + Sync + 'static>(self, step: &'static str, name: &'static str) -> Result<Arc<T>, StepError> {
        match self {
            Value::Custom(n, v) if n == name => {
                v.downcast::<T>().map_err(|_| StepError::WrongInput { step, wanted: name, got: "a value of another type" })
            }
            other => Err(StepError::WrongInput { step, wanted: name, got: other.kind().label() }),
        }
    }
}

/// A table's rows as owned values, with the schema to rebuild them. Categorical columns
/// become text here (a record holds plain values, not dictionary codes).
pub struct Records {
    pub schema: Schema,
    pub rows: Vec<polars::frame::row::Row<'static>>,
}

impl Records {
    /// Turn a table into records, column by column (untimed set-up).
    pub fn from_frame(df: &DataFrame) -> PolarsResult<Records> {
        let height = df.height();
        let mut rows: Vec<Vec<AnyValue<'static>>> =
            (0..height).map(|_| Vec::with_capacity(df.width())).collect();
        let mut schema = Schema::with_capacity(df.width());
        for col in df.columns() {
            let s = col.as_materialized_series();
            let s = if matches!(s.dtype(), DataType::Categorical(..) | DataType::Enum(..)) {
                s.cast(&DataType::String)?
            } else {
                s.clone()
            };
            schema.insert(s.name().clone(), s.dtype().clone());
            for (row, v) in rows.iter_mut().zip(s.iter()) {
                row.push(v.into_static());
            }
        }
        Ok(Records { schema, rows: rows.into_iter().map(polars::frame::row::Row::new).collect() })
    }

    pub fn len(&self) -> usize {
        self.rows.len()
    }

    pub fn is_empty(&self) -> bool {
        self.rows.is_empty()
    }
}

/// Errors a step can raise while running.
#[derive(Debug, thiserror::Error)]
pub enum StepError {
    #[error("step `{step}` needs {wanted} as input but got {got}")]
    WrongInput { step: &'static str, wanted: &'static str, got: &'static str },
    #[error("step `{step}`: {message}")]
    Value { step: &'static str, message: String },
    #[error("step `{step}` failed in polars: {source}")]
    Polars {
        step: &'static str,
        #[source]
        source: PolarsError,
    },
    #[error("step `{step}`: no {column} (the table has {width} columns)")]
    NoColumn { step: &'static str, column: String, width: usize },
    #[error("step `{step}`: column `{column}` is {dtype}, not {need}")]
    ColumnKind { step: &'static str, column: String, dtype: String, need: &'static str },
}

/// Why a step could not be built from its checked parameters; `param` names the parameter
/// at fault (the spec checker locates the problem there), else the step itself.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{message}")]
pub struct BuildError {
    pub param: Option<&'static str>,
    pub message: String,
}

/// What a step's constructor returns.
pub type Built = Result<Box<dyn Step>, BuildError>;

/// One runnable step with its parameters resolved.
pub trait Step: Send + Sync {
    /// Run the step. This is the timed region: do no set-up here that a real pipeline
    /// would not also do. `ctx` holds what the run may see besides its input (the size's
    /// tables, the temp folder, the deadline, what the user allowed).
    fn run(&self, input: Value, ctx: &RunContext) -> Result<Value, StepError>;
}

/// Largest column position a step parameter may name (tables have at most
/// [`crate::spec::validate::MAX_COLUMNS`] columns, and steps add a bounded number).
pub const MAX_POSITION: u64 = 65_536;

/// The upper bound of a whole-number parameter.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Max {
    /// At most this value.
    Fixed(u64),
    /// At most the table's rows (the largest size of the sweep), and never above this value.
    Rows(u64),
}

/// What a whole-number parameter makes a step build, for the memory estimate: each unit of
/// the parameter costs `bytes` plus `row_bytes` per row of the table.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cost {
    pub bytes: f64,
    pub row_bytes: f64,
}

impl Cost {
    pub const NONE: Cost = Cost { bytes: 0.0, row_bytes: 0.0 };
    /// Bytes a parameter of value `n` makes a step hold at `rows` rows.
    pub fn at(&self, n: u64, rows: u64) -> f64 {
        n as f64 * (self.bytes + self.row_bytes * rows as f64)
    }
}

/// The type of a step parameter, used to check specs and to document steps.
#[derive(Debug, Clone, Copy)]
pub enum ParamKind {
    /// A whole number from `min` to `max`; `cost` says what each unit makes the step build.
    Count { min: u64, max: Max, cost: Cost },
    /// One of a fixed set of words.
    Choice(&'static [&'static str]),
    /// A number between `min` and `max`.
    Number { min: f64, max: f64 },
    /// true or false.
    Flag,
    /// Free text (a query).
    Text,
    /// A column of the table the step receives, by name (or by position, the older form),
    /// holding what `need` says. With `span`, the column starts a run of consecutive
    /// columns whose length is the count parameter of that name.
    Column { need: Need, span: Option<&'static str> },
}

impl ParamKind {
    /// A column the step reads, holding what `need` says.
    pub const fn column(need: Need) -> ParamKind {
        ParamKind::Column { need, span: None }
    }
    /// The first of `count` consecutive columns (`count` names the count parameter).
    pub const fn columns_from(need: Need, count: &'static str) -> ParamKind {
        ParamKind::Column { need, span: Some(count) }
    }
    /// A whole number from `min` to `max` that builds nothing.
    pub const fn count(min: u64, max: u64) -> ParamKind {
        ParamKind::Count { min, max: Max::Fixed(max), cost: Cost::NONE }
    }
    /// A whole number from `min` to the table's rows (and never above `max`).
    pub const fn per_rows(min: u64, max: u64) -> ParamKind {
        ParamKind::Count { min, max: Max::Rows(max), cost: Cost::NONE }
    }
    /// The same bound, with what each unit makes the step build.
    pub const fn costing(self, bytes: f64, row_bytes: f64) -> ParamKind {
        match self {
            ParamKind::Count { min, max, .. } => ParamKind::Count { min, max, cost: Cost { bytes, row_bytes } },
            other => other,
        }
    }

    pub fn describe(&self) -> String {
        match self {
            ParamKind::Count { min, max: Max::Fixed(max), .. } => format!("a whole number from {min} to {max}"),
            ParamKind::Count { min, max: Max::Rows(max), .. } => {
                format!("a whole number from {min} to the table's rows (at most {max})")
            }
            ParamKind::Choice(c) => format!("one of {}", c.join(", ")),
            ParamKind::Number { min, max } => format!("a number from {min} to {max}"),
            ParamKind::Flag => "true or false".to_string(),
            ParamKind::Text => "text".to_string(),
            ParamKind::Column { need, span: None } => format!("a column (name or position) holding {}", need.holding()),
            ParamKind::Column { need, span: Some(count) } => {
                format!("the first of `{count}` consecutive columns (name or position), each holding {}", need.holding())
            }
        }
    }
}

/// One parameter of a step.
#[derive(Debug, Clone, Copy)]
pub struct ParamDef {
    pub name: &'static str,
    pub kind: ParamKind,
    /// Default, written as it would be in YAML.
    pub default: &'static str,
    pub doc: &'static str,
}

/// A parameter value after checking.
#[derive(Debug, Clone, PartialEq)]
pub enum ParamValue {
    Count(u64),
    Choice(String),
    Number(f64),
    Flag(bool),
    Text(String),
    Column(ColumnRef),
}

impl std::fmt::Display for ParamValue {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ParamValue::Count(v) => write!(f, "{v}"),
            ParamValue::Choice(v) => write!(f, "{v}"),
            ParamValue::Number(v) => write!(f, "{v}"),
            ParamValue::Flag(v) => write!(f, "{v}"),
            ParamValue::Text(v) => write!(f, "\"{}\"", v.split_whitespace().collect::<Vec<_>>().join(" ")),
            ParamValue::Column(c) => write!(f, "{c}"),
        }
    }
}

/// A step's parameters, every one present (defaults filled in).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Params(pub BTreeMap<String, ParamValue>);

impl Params {
    /// The value of `name`. The checker fills every parameter of a step, so a miss is a
    /// constructor asking for a name its step does not declare: the lib's tests build every
    /// step and fail on it (elsewhere the accessors below fall back to a neutral value).
    fn get(&self, name: &str) -> Option<&ParamValue> {
        let v = self.0.get(name);
        #[cfg(test)]
        assert!(v.is_some(), "a step's constructor reads `{name}`, which it does not declare");
        v
    }
    pub fn count(&self, name: &str) -> u64 {
        match self.get(name) {
            Some(ParamValue::Count(v)) => *v,
            _ => 0,
        }
    }
    pub fn choice(&self, name: &str) -> &str {
        match self.get(name) {
            Some(ParamValue::Choice(v)) => v,
            _ => "",
        }
    }
    pub fn number(&self, name: &str) -> f64 {
        match self.get(name) {
            Some(ParamValue::Number(v)) => *v,
            _ => 0.0,
        }
    }
    pub fn text(&self, name: &str) -> &str {
        match self.get(name) {
            Some(ParamValue::Text(v)) => v,
            _ => "",
        }
    }
    pub fn flag(&self, name: &str) -> bool {
        matches!(self.get(name), Some(ParamValue::Flag(true)))
    }
    /// A column parameter; an error (not a silent default) when the checker left none.
    pub fn column(&self, name: &'static str) -> Result<ColumnRef, BuildError> {
        match self.0.get(name) {
            Some(ParamValue::Column(c)) => Ok(c.clone()),
            Some(ParamValue::Count(p)) => Ok(ColumnRef::At(*p as usize)),
            _ => Err(BuildError { param: Some(name), message: format!("expected a column for `{name}`") }),
        }
    }
    /// `name{a=1, b=x}`, for labels and results.
    pub fn describe(&self, step: &str) -> String {
        if self.0.is_empty() {
            return step.to_string();
        }
        let inner: Vec<String> = self.0.iter().map(|(k, v)| format!("{k}={v}")).collect();
        format!("{step}{{{}}}", inner.join(", "))
    }
}

/// Everything framecost knows about one step.
pub struct StepDef {
    /// The YAML name.
    pub name: &'static str,
    /// One line for `catalog`.
    pub summary: &'static str,
    /// What it does to memory and how its cost should grow with the rows.
    pub cost_note: &'static str,
    pub params: &'static [ParamDef],
    /// What it takes and what it gives.
    pub takes: ValueKind,
    pub gives: ValueKind,
    /// Rough peak working memory as a multiple of the input table's bytes, used to refuse
    /// sizes that would not fit before anything has been measured.
    pub memory_factor: f64,
    /// Bytes it writes to disk as a multiple of the input table's bytes (0 for steps that
    /// write nothing), used to refuse sizes whose files would not fit in the temp folder.
    pub disk_factor: f64,
    /// The step modifies or consumes its input table, so each run gets a private deep copy
    /// made outside the timed region.
    pub private_input: bool,
    /// It gives a table with the same columns (names, kinds, order) as the one it takes,
    /// so the columns of the steps after it can still be checked against the table plan.
    pub keeps_columns: bool,
    /// Turns checked parameters into the runnable step; may refuse with a [`BuildError`].
    pub build: fn(&Params) -> Built,
}

/// Every registered step, in family order.
pub fn all_steps() -> impl Iterator<Item = (&'static str, &'static StepDef)> {
    FAMILIES.iter().flat_map(|(fam, steps)| steps.iter().map(move |s| (*fam, s)))
}

/// Look a step up by its YAML name.
pub fn find_step(name: &str) -> Option<&'static StepDef> {
    all_steps().map(|(_, s)| s).find(|s| s.name == name)
}

impl OutputFacts {
    pub fn of(v: &Value) -> OutputFacts {
        match v {
            Value::Frame(df) => OutputFacts {
                rows: df.height() as u64,
                chunks: df.columns().iter().map(|c| c.n_chunks()).max().unwrap_or(0) as u64,
                dtypes: df.columns().iter().map(|c| (c.name().to_string(), c.dtype().to_string())).collect(),
                fingerprint: crate::table::fingerprint(df),
            },
            Value::Records(r) => OutputFacts {
                rows: r.len() as u64,
                chunks: 0,
                dtypes: r.schema.iter().map(|(n, d)| (n.to_string(), d.to_string())).collect(),
                fingerprint: "records".to_string(),
            },
            Value::Custom(name, _) => OutputFacts {
                rows: 0,
                chunks: 0,
                dtypes: vec![],
                fingerprint: format!("custom:{name}"),
            },
        }
    }
}

#[cfg(test)]
mod tests;

pub(crate) fn polars_err(step: &'static str) -> impl FnOnce(PolarsError) -> StepError {
    move |source| StepError::Polars { step, source }
}
