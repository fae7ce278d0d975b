//! Sizes an SQL query reaches before it runs, bounded from the table plan: the groups its
//! GROUP BY and DISTINCT keep, and the rows its joins make.
//!
//! **Groups.** On the streaming engine a query reads its tables a chunk at a time, so its
//! memory is the state it keeps between chunks: for GROUP BY and DISTINCT, one entry per
//! group. That state is small when the groups are few (a monthly statement per variety) and
//! as large as the in-memory engine's when every row is its own group. A streaming GROUP BY
//! on a unique key of a two-column integer table peaked at 73, 147, 274 and 552 MiB at 1M,
//! 2M, 4M and 8M rows here (polars 0.55, 2 threads): about 69 bytes a group, 4.3× the
//! table's bytes. The bound: a grouping expression takes at most the product of the distinct
//! values of the columns it names (from each column's plan: its `distinct` count, its value
//! range, the keys it references, at most its table's rows; a null adds one), `x % k` at most
//! `k` values, a constant one; a GROUP BY at most the product over its expressions, and at
//! most the rows of the largest table. Anything it cannot resolve (a column of a subquery, a
//! `SELECT *` under DISTINCT, a UNION that removes duplicates) counts as every row being a
//! group.
//!
//! **Joins.** An equality join of `a.x = b.y` makes Σ over values v of count_a(v)·count_b(v)
//! rows; with the columns' value shares p and q that is n_a·n_b·Σ p_v·q_v, which is at most
//! n_a·n_b·√(Σp²·Σq²) (Cauchy–Schwarz: exact for a self-join on one column), at most
//! n_a·n_b·max q (each row of `a` meets at most the commonest value's rows of `b`; for a
//! unique key, one) and at most n_a·n_b·max p. The shares follow the generator: uniform over
//! a `distinct` count, a range, or the referenced keys, Zipf over them with `skew`, a flag
//! by its `true_share`; nulls never match. Textbook estimators assume uniform shares and
//! divide by the larger distinct count (the System R rule, Selinger et al., "Access Path
//! Selection in a Relational Database Management System", SIGMOD 1979); for uniform shares
//! the bound here is the same, and with skew it is larger, as the rows are. Several
//! equalities joined by AND make at most what the tightest makes; a join on an equality of
//! expressions it cannot read is counted as the larger of its inputs (a key join), and a cross
//! join or a join with no equality at all as their product: polars pairs every row with every
//! row and filters the pairs (`ON a.grams < b.grams` on 8k rows peaked at 976 MiB, 16 bytes
//! a pair, as the same query written as a CROSS JOIN and WHERE). Measured here on
//! sql-self-join (14 varieties, Zipf 0.6): peak live bytes of 40–41 bytes per joined row
//! from 500 to 8k rows, against the bound's rows times the two tables' row bytes (64).

mod groups;
mod joins;
mod spread;

pub use groups::{distinct_values, groups_bound};
pub use joins::{joined_bytes, Joins};
pub use spread::{match_share, values, Spread};

/// Plans of the shed's ledger for the tests of this module's parts.
#[cfg(test)]
mod fixtures {
    use crate::plan::{ColumnPlan, RowsPlan, TablePlan};
    use crate::results::schema::RangePlan;
    use crate::spec::model::ColumnKind;

    pub fn col(name: &str, kind: ColumnKind) -> ColumnPlan {
        ColumnPlan {
            name: name.into(),
            kind,
            nulls: 0.0,
            distinct: None,
            range: RangePlan::None,
            order: Default::default(),
            run: 1,
            skew: 0.0,
            duplicates: 0.0,
            length: (0, 0),
            true_share: 0.5,
            references: None,
            unmatched: 0.0,
            coverage: 1.0,
        }
    }

    /// The shed's ledger: 14 varieties priced; deliveries reference them.
    pub fn shed() -> Vec<TablePlan> {
        let prices = TablePlan { name: "prices".into(), rows: RowsPlan::Fixed(14), columns: vec![col("variety_id", ColumnKind::Key)] };
        let mut variety = col("variety_id", ColumnKind::Int);
        variety.references = Some("prices.variety_id".into());
        let mut grams = col("grams", ColumnKind::Int);
        grams.range = RangePlan::Int(500, 950_000);
        let mut crew = col("crew", ColumnKind::Category);
        crew.distinct = Some(6);
        crew.nulls = 0.1;
        let deliveries = TablePlan {
            name: "deliveries".into(),
            rows: RowsPlan::Swept,
            columns: vec![col("delivery_id", ColumnKind::Key), variety, grams, crew, col("ripe", ColumnKind::Bool)],
        };
        vec![prices, deliveries]
    }
}
