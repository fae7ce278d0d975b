//! Designs of the user's own, written as SQL: the `sql` step runs one query through polars'
//! SQL engine over the workload's tables and collects the result.
//!
//! Every table of the workload is registered under its name; the table flowing into the
//! step is registered as `data` (at the start of a design that is the first table, after
//! another step it is that step's output). The timed region ends when the result is
//! collected — by the in-memory engine, or by the streaming engine for a design with
//! `engine: streaming`, whose tables are scans of Parquet chunks written before timing. A
//! newcomer must know: the query is parsed and planned inside the timed region too, as a
//! real pipeline would; the plan itself is recorded once, from the query check.

pub use super::context::RunContext;
use super::{ParamDef, ParamKind, Params, Step, StepDef, StepError, Value, ValueKind};
use crate::spec::model::EngineChoice;
use polars::prelude::*;
use polars::sql::SQLContext;
use polars_core::query_result::QueryResult;

const NAME: &str = "sql";

/// The steps of this family.
pub const STEPS: &[StepDef] = &[StepDef {
    name: NAME,
    summary: "run an SQL query over the workload's tables (the incoming table is `data`) and collect it",
    cost_note: "Whatever the query asks for, planned by polars' optimizer (filters and column choices \
pushed down towards the scans, joins ordered): a filter or projection is linear in the rows it reads; \
a hash join is linear in its inputs plus its output, and its output grows with the product of the \
rows that share a key; GROUP BY and DISTINCT hash every row once (linear, memory in the number of \
groups); ORDER BY and window functions over partitions sort (n log n). On the streaming engine the \
tables are read in chunks from Parquet, so peak memory follows the state the query keeps (hash \
tables, sorted runs) rather than the tables themselves. The optimized plan is recorded with the run.",
    params: &[ParamDef {
        name: "query",
        kind: ParamKind::Text,
        default: "~",
        doc: "the SELECT statement; tables by their names, the incoming table as `data`",
    }],
    takes: ValueKind::Frame,
    gives: ValueKind::Frame,
    memory_factor: 3.0,
    disk_factor: 0.0,
    private_input: false,
    keeps_columns: false,
    build: |p: &Params| Ok(Box::new(Sql { query: p.text("query").to_string() })),
}];

struct Sql {
    query: String,
}

impl Step for Sql {
    fn run(&self, input: Value, ctx: &RunContext) -> Result<Value, StepError> {
        let df = input.into_frame(NAME)?;
        let lf = plan_query(&self.query, ctx, df).map_err(|source| StepError::Polars { step: NAME, source })?;
        collect(lf, ctx.engine).map(Value::Frame).map_err(|source| StepError::Polars { step: NAME, source })
    }
}

/// Register the context's tables and the incoming table as `data`, and plan the query.
/// A table with no columns (what a streaming design receives) leaves `data` as the first
/// table.
pub fn plan_query(query: &str, ctx: &RunContext, input: DataFrame) -> PolarsResult<LazyFrame> {
    let mut sc = SQLContext::new();
    for (name, lf) in &ctx.tables {
        sc.register(name, lf.clone());
    }
    if input.width() > 0 {
        sc.register(crate::spec::tables::DEFAULT_TABLE, input.lazy());
    } else if let Some((_, lf)) = ctx.tables.first() {
        sc.register(crate::spec::tables::DEFAULT_TABLE, lf.clone());
    }
    sc.execute(query)
}

/// Collect a planned query on the chosen engine.
pub fn collect(lf: LazyFrame, engine: EngineChoice) -> PolarsResult<DataFrame> {
    match engine {
        EngineChoice::Memory => lf.collect(),
        EngineChoice::Streaming => match lf.collect_with_engine(Engine::Streaming)? {
            QueryResult::Single(df) => Ok(df),
            QueryResult::Multiple(_) => polars_bail!(ComputeError: "the query gave several results; expected one table"),
        },
    }
}
