//! Deterministic evidence for the joins-and-sorting family: row counts, sorted flags and
//! allocated bytes, never time.
//!
//! - An inner join matches every left row with every right row of the same key, so its row
//!   count is Σ over keys of m_left·m_right (the definition of the relational join; for a
//!   self-join Σ m²). The expected count is computed here from the key multiplicities.
//! - Sorting data that carry polars' ascending sorted flag returns at once (polars-core 0.55
//!   `sort_impl` checks the flag); without the flag polars sorts and gathers every column,
//!   allocating ∝ rows even when the rows are already in order.
//!
//! One test in its own binary: the allocation counter is process-wide.

mod common;

use common::run_design;
use framecost::patterns::{OutputFacts, Value};
use common::design;
use std::collections::HashMap;

const SPEC: &str = r#"
name: joins-evidence
seed: 12
table:
  columns:
    - {name: parcel, kind: int, distinct: 300, range: [1, 100000], order: sorted}
    - {name: crate, kind: key}
    - {name: variety, kind: text, distinct: 14}
    - {name: kilograms, kind: float, range: [0.5, 950.0]}
sizes: [1k]
designs:
  - {name: hash, steps: [{hash_join: {column: parcel}}]}
  - {name: flag-hash, steps: [{flag_sorted: {column: parcel}}, {hash_join: {column: parcel}}]}
  - {name: merge, steps: [{flag_sorted: {column: parcel}}, {merge_join: {column: parcel}}]}
  - {name: merge-unflagged, steps: [{merge_join: {column: parcel}}]}
  - {name: sort, steps: [{sort_rows: {column: parcel}}]}
  - {name: flag-only, steps: [{flag_sorted: {column: parcel}}]}
  - {name: flag-unsorted, steps: [{flag_sorted: {column: crate}}]}
"#;

#[test]
fn duplicate_keys_multiply_rows_and_the_sorted_flag_makes_sorting_free() {
    let plan = framecost::spec::load_str("joins.yaml", SPEC).expect("spec");
    let n = 20_000u64;
    let df = framecost::table::generate(&plan.columns, plan.seed, n).expect("table");

    // Expected rows of the self-join: Σ m² over the parcel values.
    let mut counts: HashMap<i64, u64> = HashMap::new();
    for v in df.column("parcel").expect("parcel").i64().expect("i64").into_no_null_iter() {
        *counts.entry(v).or_default() += 1;
    }
    let expected: u64 = counts.values().map(|m| m * m).sum();
    assert!(expected > 10 * n, "300 parcels over {n} rows should blow the join up (got {expected})");

    let outs: Vec<OutputFacts> = ["hash", "flag-hash", "merge"]
        .iter()
        .map(|d| OutputFacts::of(&run_design(design(&plan, d), Value::Frame(df.clone())).expect("joins")))
        .collect();
    for (f, name) in outs.iter().zip(["hash", "flag-hash", "merge"]) {
        assert_eq!(f.rows, expected, "{name}: rows = Σ m² over the keys");
        assert_eq!(f.fingerprint, outs[0].fingerprint, "{name} gives the hash join's pairs in the same order");
        assert_eq!(f.dtypes.len(), 7, "{name}: 4 left columns + 3 right columns");
    }
    assert_eq!(outs[0].dtypes[4].0, "crate_right", "right-side columns carry the _right suffix");

    // Steps refuse what they cannot do, without panicking.
    let err = run_design(design(&plan, "merge-unflagged"), Value::Frame(df.clone())).err().expect("needs the flag");
    assert!(err.contains("flag"), "{err}");
    let err = run_design(design(&plan, "flag-unsorted"), Value::Frame(df.clone())).err().expect("crate is shuffled");
    assert!(err.contains("not in ascending order"), "{err}");

    // Sorting rows already in order: with the flag nothing is copied, without it every column is.
    let flagged = match run_design(design(&plan, "flag-only"), Value::Frame(df.clone())).expect("flags") {
        Value::Frame(f) => f,
        _ => panic!("a table"),
    };
    let sort = design(&plan, "sort");
    let (alloc, plain) = common::counted(sort, Value::Frame(df.clone()));
    let (plain, unflagged_bytes) = (plain.expect("sorts"), alloc.bytes);
    let (alloc, quick) = common::counted(sort, Value::Frame(flagged.clone()));
    let (quick, flagged_bytes) = (quick.expect("sorts"), alloc.bytes);
    assert_eq!(OutputFacts::of(&plain).fingerprint, OutputFacts::of(&quick).fingerprint, "same order either way");
    assert_eq!(OutputFacts::of(&plain).fingerprint, framecost::table::fingerprint(&df), "the rows were in order already");
    eprintln!("sort of {n} sorted rows: unflagged {unflagged_bytes} bytes, flagged {flagged_bytes} bytes");
    assert!(unflagged_bytes >= n * 8 * 3, "without the flag the sort gathers every column ({unflagged_bytes} bytes)");
    assert!(flagged_bytes < 4096, "with the flag the sort returns the table as is ({flagged_bytes} bytes)");

    // The merge join's own bytes are below the hash join's (no hash table).
    let measure = |name: &str| {
        let (alloc, out) = common::counted(design(&plan, name), Value::Frame(flagged.clone()));
        drop(out.expect("joins"));
        alloc.bytes
    };
    let hash_bytes = measure("hash");
    let merge_bytes = measure("merge");
    eprintln!("self-join bytes: hash {hash_bytes}, merge {merge_bytes}");
    assert!(merge_bytes < hash_bytes, "merge {merge_bytes} vs hash {hash_bytes}");
}
