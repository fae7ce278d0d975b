//! Several related tables for one size: each table's rows follow the swept size (all of it,
//! a share, or a fixed count), and a referencing column draws its values from the
//! referenced key, so joins find the fan-out and the share of unmatched rows the spec asks
//! for. Tables can also be made chunk by chunk (for the streaming engine's Parquet inputs)
//! with exactly the values the whole table has.
//!
//! A newcomer must know: a referenced key has the values 0..rows of its table (the checker
//! insists on a key without duplicates), so a referencing value below that row count
//! matches exactly one row and one at or above it matches none.

use super::rng::{Alias, Stream};
use super::{generate_span, ordered, SCATTER, VALUES};
use crate::plan::{ColumnPlan, TablePlan};
use crate::spec::model::{ColumnKind, Order};
use polars::prelude::*;

/// Stream purpose for the unmatched-reference draw.
const UNMATCHED: u64 = 6;

/// The seed a table's values are drawn with: the workload's seed for a lone `table:` (so
/// older workloads give the same table, bit for bit), mixed with the table's name when the
/// workload lists several (`related`), so equal column names in two tables differ.
pub fn table_seed(seed: u64, related: bool, name: &str) -> u64 {
    if related {
        seed ^ xxhash_rust::xxh3::xxh3_64(name.as_bytes())
    } else {
        seed
    }
}

/// Rows of the table a referencing column points at, at swept size `swept`.
fn referenced_rows(all: &[TablePlan], c: &ColumnPlan, swept: u64) -> Option<u64> {
    let (t, _) = c.references.as_deref()?.split_once('.')?;
    all.iter().find(|x| x.name == t).map(|x| x.rows.at(swept))
}

/// Rows `start..start+len` of table `t` at swept size `swept` (the whole table when the
/// span covers it).
pub fn generate_table_span(
    all: &[TablePlan],
    t: &TablePlan,
    seed: u64,
    related: bool,
    swept: u64,
    span: std::ops::Range<u64>,
) -> PolarsResult<DataFrame> {
    let total = t.rows.at(swept);
    let refs = |c: &ColumnPlan| referenced_rows(all, c, swept);
    generate_span(&t.columns, table_seed(seed, related, &t.name), total, span, &refs)
}

/// Every table of a workload at swept size `swept`, in the order declared.
pub fn generate_tables(all: &[TablePlan], seed: u64, related: bool, swept: u64) -> PolarsResult<Vec<(String, DataFrame)>> {
    all.iter()
        .map(|t| {
            let n = t.rows.at(swept);
            generate_table_span(all, t, seed, related, swept, 0..n).map(|df| (t.name.clone(), df))
        })
        .collect()
}

/// Every table with no rows: the declared names and dtypes, for planning queries.
pub fn empty_tables(all: &[TablePlan], seed: u64, related: bool) -> PolarsResult<Vec<(String, DataFrame)>> {
    all.iter()
        .map(|t| {
            let refs = |c: &ColumnPlan| c.references.as_ref().map(|_| 1);
            generate_span(&t.columns, table_seed(seed, related, &t.name), 0, 0..0, &refs).map(|df| (t.name.clone(), df))
        })
        .collect()
}

/// Why a table cannot be made chunk by chunk without making it whole, if it cannot: a
/// column whose values depend on the whole column (sorted or reverse order; keys shuffled
/// or with duplicates).
pub fn chunk_blocker(t: &TablePlan) -> Option<String> {
    t.columns.iter().find_map(|c| {
        let whole = match c.kind {
            ColumnKind::Key => !(c.order == Order::Sorted && c.duplicates <= 0.0),
            _ => matches!(c.order, Order::Sorted | Order::Reverse),
        };
        // The way out depends on the kind: a key is a permutation of its rows, made in chunks
        // only in its own order; other columns only need their order not to span the table.
        let fix = match c.kind {
            ColumnKind::Key => "a key is made in chunks only with `order: sorted` and no `duplicates`",
            _ => "use `order: random` or `clustered`",
        };
        whole.then(|| format!("column `{}.{}` ({}, order {}) is made whole, not in chunks; {fix}", t.name, c.name, c.kind.label(), format!("{:?}", c.order).to_lowercase()))
    })
}

/// Values of a referencing column for rows `span`: a referenced key drawn uniformly or by
/// Zipf rank (`skew`, scattered over the keys so the popular keys are not all the low
/// ones) among the `coverage` share of the keys (at least one; all of them by default), or
/// — for the `unmatched` share of rows — a value above every key.
pub fn reference_values(c: &ColumnPlan, seed: u64, rows: u64, span: std::ops::Range<u64>, n_ref: u64) -> Vec<i64> {
    let st = Stream::new(seed, &c.name, VALUES);
    let um = Stream::new(seed, &c.name, UNMATCHED);
    let cut = (c.unmatched * u64::MAX as f64) as u64;
    let n = n_ref.max(1);
    // Ranks drawn among the covered keys; the scatter below still spreads them over all n.
    let drawn = if c.coverage < 1.0 { ((c.coverage * n as f64).ceil() as u64).clamp(1, n) } else { n };
    let alias = (c.skew > 0.0).then(|| Alias::zipf(drawn, c.skew));
    ordered(c, rows, span, |i| {
        if c.unmatched > 0.0 && um.at(i) < cut {
            return (n + st.below(i, n)) as i64;
        }
        let k = match &alias {
            Some(a) => a.draw(st.at(i)),
            None => st.below(i, drawn),
        };
        let pos = if n % SCATTER == 0 { k } else { (k as u128 * SCATTER as u128 % n as u128) as u64 };
        pos as i64
    })
}
