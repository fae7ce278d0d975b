//! Key references between samples: a column whose values fall within another file's
//! unique column.
//!
//! The rule (documented in the README): column A of one sample refers to column B of
//! another when B is unique (every non-null value once, at least 2 of them), A and B are
//! both integers or both text, A has at least 2 distinct values, at least 95% of A's
//! distinct values are found in B, and — for integers, where a small code column can fall
//! inside an id range by chance — either the names relate (A's name contains B's name or
//! B's table's name, ignoring case, `_` and `-`, and a plural `s`) or A covers at least 20%
//! of B's values.

use polars::prelude::*;
use serde::Serialize;
use std::collections::HashSet;

/// One reference found.
#[derive(Debug, Clone, Serialize)]
pub struct Reference {
    pub table: String,
    pub column: String,
    pub refers_to_table: String,
    pub refers_to_column: String,
    /// Distinct non-null values of the referring column.
    pub distinct: usize,
    /// How many of them are found in the referred column.
    pub found: usize,
    /// Values of the referred (unique) column.
    pub target_values: usize,
    /// The names relate (see the module rule).
    pub names_relate: bool,
    /// Share of the referring column's non-null rows whose value is not found in the
    /// referred column (what a join would drop): a related workload's `unmatched`.
    pub unmatched_rows: f64,
}

#[derive(PartialEq, Eq, Hash)]
enum Key {
    Int(i64),
    Text(String),
}

fn keys(s: &Series) -> Option<Vec<Key>> {
    if s.dtype().is_integer() {
        let c = s.cast(&DataType::Int64).ok()?;
        Some(c.i64().ok()?.iter().flatten().map(Key::Int).collect())
    } else if matches!(s.dtype(), DataType::String | DataType::Categorical(..) | DataType::Enum(..)) {
        let c = s.cast(&DataType::String).ok()?;
        Some(c.str().ok()?.iter().flatten().map(|t| Key::Text(t.to_string())).collect())
    } else {
        None
    }
}

fn norm(s: &str) -> String {
    s.to_lowercase().chars().filter(|c| c.is_ascii_alphanumeric()).collect()
}

fn names_relate(col: &str, target_col: &str, target_table: &str) -> bool {
    let a = norm(col);
    let b = norm(target_col);
    let t = norm(target_table);
    let singular = t.strip_suffix('s').unwrap_or(&t).to_string();
    (!b.is_empty() && a.contains(&b)) || (singular.len() >= 3 && a.contains(&singular))
}

/// Find references between the named tables.
pub fn find(tables: &[(String, &DataFrame)]) -> Vec<Reference> {
    // Unique columns of every table, as sets.
    let mut targets: Vec<(usize, String, HashSet<Key>, bool)> = Vec::new();
    for (ti, (_, df)) in tables.iter().enumerate() {
        for c in df.columns() {
            let Some(v) = keys(c.as_materialized_series()) else { continue };
            let n = v.len();
            let is_text = matches!(v.first(), Some(Key::Text(_)));
            let set: HashSet<Key> = v.into_iter().collect();
            if n >= 2 && set.len() == n {
                targets.push((ti, c.name().to_string(), set, is_text));
            }
        }
    }
    let mut out = Vec::new();
    for (ti, (tname, df)) in tables.iter().enumerate() {
        for c in df.columns() {
            let Some(v) = keys(c.as_materialized_series()) else { continue };
            let is_text = matches!(v.first(), Some(Key::Text(_)));
            let own: HashSet<&Key> = v.iter().collect();
            if own.len() < 2 {
                continue;
            }
            let mut best: Option<Reference> = None;
            for (yi, bname, set, btext) in &targets {
                if *yi == ti || *btext != is_text {
                    continue;
                }
                let found = own.iter().filter(|k| set.contains(**k)).count();
                let relate = names_relate(c.name(), bname, &tables[*yi].0);
                let enough = found as f64 >= 0.95 * own.len() as f64 && (is_text || relate || own.len() as f64 >= 0.2 * set.len() as f64);
                if !enough {
                    continue;
                }
                let r = Reference {
                    table: tname.clone(),
                    column: c.name().to_string(),
                    refers_to_table: tables[*yi].0.clone(),
                    refers_to_column: bname.clone(),
                    distinct: own.len(),
                    found,
                    target_values: set.len(),
                    names_relate: relate,
                    unmatched_rows: if found == own.len() { 0.0 } else { v.iter().filter(|k| !set.contains(*k)).count() as f64 / v.len() as f64 },
                };
                let better = match &best {
                    None => true,
                    Some(b) => (r.names_relate, r.found * b.distinct, usize::MAX - r.target_values) > (b.names_relate, b.found * r.distinct, usize::MAX - b.target_values),
                };
                if better {
                    best = Some(r);
                }
            }
            out.extend(best);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_column_within_another_files_unique_column_is_a_reference() {
        let members = df!("member_id" => [1i64, 2, 3, 4, 5], "farm" => ["a", "b", "c", "d", "e"]).expect("df");
        let deliveries = df!("delivery" => [10i64, 11, 12, 13], "member_id" => [2i64, 2, 5, 1], "crates" => [3i64, 4, 3, 9]).expect("df");
        let refs = find(&[("members".into(), &members), ("deliveries".into(), &deliveries)]);
        let r: Vec<(&str, &str, &str)> = refs.iter().map(|r| (r.column.as_str(), r.refers_to_table.as_str(), r.refers_to_column.as_str())).collect();
        assert!(r.contains(&("member_id", "members", "member_id")), "{r:?}");
        // `crates` (3, 4, 9) is not within member ids 1..5; `delivery` (10..13) neither.
        assert!(!r.iter().any(|x| x.0 == "crates" || x.0 == "delivery"), "{r:?}");
    }
}
