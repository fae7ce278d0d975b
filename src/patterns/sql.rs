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

/// Working memory of a query before it is measured, as a multiple of its tables: what the
/// step declares (3, enough for a filter, a projection, a sort, or a join: a unique-key
/// self-join of a 4M-row table peaked at 2.9× the table), raised where the query hashes
/// every row it reads. Measured here on a 4M-row table of three integer columns (polars
/// 0.55, 2 threads; peak live bytes over table bytes): DISTINCT over two columns 8.5×,
/// GROUP BY a unique key 4.3× (6.6× and 6.8× on 2M and 8M rows of two columns), GROUP BY
/// five values 0.2×, a window over five partitions 0.6×, ORDER BY 1.3×. So 10 for a query
/// with DISTINCT or GROUP BY, whatever its groups; the memory estimate scales it by the share
/// of the rows its groups can reach, from the table plan (`measure::memory`, at least 3).
pub fn memory_factor(query: &str) -> f64 {
    use sqlparser::ast::{SetExpr, Visitor};
    use std::ops::ControlFlow;
    struct Hashes(bool);
    impl Visitor for Hashes {
        type Break = ();
        fn pre_visit_query(&mut self, q: &sqlparser::ast::Query) -> ControlFlow<()> {
            fn in_set(s: &SetExpr) -> bool {
                match s {
                    SetExpr::Select(sel) => crate::spec::sql_rules::is_grouped(sel) || sel.distinct.is_some(),
                    // UNION without ALL removes duplicates: a DISTINCT of its own.
                    SetExpr::SetOperation { left, right, set_quantifier, .. } => {
                        !matches!(set_quantifier, sqlparser::ast::SetQuantifier::All) || in_set(left) || in_set(right)
                    }
                    SetExpr::Query(q) => in_set(&q.body),
                    _ => false,
                }
            }
            if in_set(&q.body) {
                self.0 = true;
                return ControlFlow::Break(());
            }
            ControlFlow::Continue(())
        }
    }
    let base = STEPS[0].memory_factor;
    let mut v = Hashes(false);
    if crate::spec::sql_rules::visit_statements(query, &mut v).is_none() {
        return base;
    }
    if v.0 {
        HASHING_MEMORY_FACTOR
    } else {
        base
    }
}

/// [`memory_factor`] of a query that hashes every row it reads (DISTINCT, GROUP BY).
pub const HASHING_MEMORY_FACTOR: f64 = 10.0;

/// Whether `def` is this family's step (its memory factor depends on the query).
pub fn is_sql(def: &StepDef) -> bool {
    def.name == NAME
}

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

#[cfg(test)]
mod tests {
    use super::{memory_factor, HASHING_MEMORY_FACTOR};

    #[test]
    fn queries_that_hash_every_row_get_the_larger_memory_factor() {
        let hashing = [
            "SELECT member_id, SUM(kilograms) AS kg FROM deliveries GROUP BY member_id",
            "SELECT DISTINCT member_id, variety FROM deliveries",
            "SELECT member_id FROM deliveries UNION SELECT member_id FROM members",
            "SELECT d.member_id FROM (SELECT member_id, COUNT(*) AS n FROM deliveries GROUP BY member_id) AS d JOIN members m ON d.member_id = m.member_id",
        ];
        for q in hashing {
            assert_eq!(memory_factor(q), HASHING_MEMORY_FACTOR, "{q}");
        }
        let plain = [
            "SELECT * FROM deliveries WHERE kilograms > 800 ORDER BY delivered_on",
            "SELECT d.delivery_id, m.district FROM deliveries d JOIN members m ON d.member_id = m.member_id",
            "SELECT member_id, SUM(kilograms) OVER (PARTITION BY member_id) AS kg FROM deliveries",
            "SELECT member_id FROM deliveries UNION ALL SELECT member_id FROM members",
            "not a query at all",
        ];
        for q in plain {
            assert_eq!(memory_factor(q), 3.0, "{q}");
        }
    }
}
