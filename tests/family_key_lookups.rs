//! Deterministic evidence for the key-lookups family: row counts, output equality and
//! allocation bytes, never time. References [published: Cormen, Leiserson, Rivest, Stein,
//! *Introduction to Algorithms* — binary search Θ(log n), hash-table lookup O(1) expected,
//! scanning Θ(n); see the shared REFERENCES.md "Order of growth"]. What is checked here:
//! every way of finding keys returns the same rows (several for a duplicated key, none for
//! a missing one), a prefix index filters on the second level, and building a hash index
//! costs bytes in proportion to the table while probing a prebuilt one does not.
//!
//! One test in its own binary: the allocation counter is process-wide.

mod common;

use common::{run, Seen};
use polars::prelude::*;

const SPEC: &str = r#"
name: evidence
seed: 13
table:
  columns:
    - {name: tag, kind: key, order: sorted, duplicates: 25%}
    - {name: kilograms, kind: float, range: [0.5, 950.0], nulls: 2%}
    - {name: shuffled, kind: key}
    - {name: farm, kind: int, range: [1, 30]}
    - {name: parcel, kind: int, range: [1, 20]}
sizes: [1k]
designs:
  - {name: binary, setup: [{mark_sorted: {column: tag}}], steps: [{lookup_sorted: {key: tag, value: kilograms, probes: 800}}]}
  - {name: scan, steps: [{lookup_scan: {key: tag, value: kilograms, probes: 800}}]}
  - {name: hash-in-run, steps: [{build_key_index: {key: tag, value: kilograms}}, {probe_key_index: {probes: 800}}]}
  - {name: hash-prebuilt, setup: [{build_key_index: {key: tag, value: kilograms}}], steps: [{probe_key_index: {probes: 800}}]}
  - {name: join, steps: [{join_wanted_keys: {key: tag, value: kilograms, probes: 800}}]}
  - {name: unflagged, steps: [{lookup_sorted: {key: tag, value: kilograms, probes: 800}}]}
  - {name: unsorted-scan, steps: [{lookup_scan: {key: shuffled, value: kilograms, probes: 800}}]}
  - {name: unsorted-hash, setup: [{build_key_index: {key: shuffled, value: kilograms}}], steps: [{probe_key_index: {probes: 800}}]}
  - {name: unsorted-join, steps: [{join_wanted_keys: {key: shuffled, value: kilograms, probes: 800}}]}
  - {name: pairs-scan, steps: [{lookup_pairs_scan: {first: farm, second: parcel, probes: 300}}]}
  - {name: pairs-full, setup: [{build_pair_index: {first: farm, second: parcel, level: full}}], steps: [{probe_pair_index: {probes: 300}}]}
  - {name: pairs-prefix, setup: [{build_pair_index: {first: farm, second: parcel, level: prefix}}], steps: [{probe_pair_index: {probes: 300}}]}
  - {name: by-position, steps: [{lookup_scan: {key: 0, value: 1, probes: 800}}]}
"#;

fn probes_of(df: &DataFrame) -> Vec<i64> {
    df.column("probe").expect("probe").i64().expect("i64").into_no_null_iter().collect()
}

#[test]
fn every_lookup_finds_the_same_rows_and_indexes_cost_what_they_should() {
    let plan = framecost::spec::load_str("evidence.yaml", SPEC).expect("spec");
    let n = 40_000u64;
    let table = framecost::table::generate(&plan.columns, plan.seed, n).expect("table");
    let get = |name: &str| run(&plan, name, &table).unwrap_or_else(|e| panic!("{name}: {e}"));

    // Sorted key with duplicates: all five designs return identical rows.
    let names = ["binary", "scan", "hash-in-run", "hash-prebuilt", "join"];
    let seen: Vec<Seen> = names.iter().map(|d| get(d)).collect();
    for (name, s) in names.iter().zip(&seen) {
        assert_eq!(s.facts.fingerprint, seen[1].facts.fingerprint, "{name} finds the same rows as the scan");
        assert_eq!(s.facts.dtypes, seen[1].facts.dtypes, "{name} output types");
    }
    let probes = probes_of(&seen[1].df);
    let mut distinct = probes.clone();
    distinct.dedup();
    // Every eighth probe is a missing key: 700 of 800 probes hit, and none of the misses.
    assert_eq!(distinct.len(), 700, "hits");
    assert!(probes.iter().all(|p| p % 8 != 7), "a missing key returns no row");
    // Duplicated keys: several rows for some probes.
    assert!(probes.len() > distinct.len() + 50, "{} rows for {} probes", probes.len(), distinct.len());
    // Rows come back in probe order, then table order.
    let rows: Vec<i64> = seen[1].df.column("row").expect("row").i64().expect("i64").into_no_null_iter().collect();
    assert!(probes.windows(2).zip(rows.windows(2)).all(|(p, r)| p[0] < p[1] || r[0] < r[1]));

    // Unsorted unique key: exactly one row per hit.
    let un: Vec<Seen> = ["unsorted-scan", "unsorted-hash", "unsorted-join"].iter().map(|d| get(d)).collect();
    for s in &un {
        assert_eq!(s.facts.rows, 700, "one row per found key");
        assert_eq!(s.facts.fingerprint, un[0].facts.fingerprint);
    }

    // Two-level keys: exact (full) and prefix indexes agree with the scan; the prefix index
    // filters the rows sharing the first level (misses share it, by construction).
    let pairs: Vec<Seen> = ["pairs-scan", "pairs-full", "pairs-prefix"].iter().map(|d| get(d)).collect();
    for s in &pairs {
        assert_eq!(s.facts.fingerprint, pairs[0].facts.fingerprint, "pair lookups agree");
        assert!(probes_of(&s.df).iter().all(|p| p % 8 != 7), "a missing second level returns no row");
    }
    // 30 × 20 pairs over 40k rows: about 67 rows per pair.
    assert!(pairs[0].facts.rows > 260 * 30, "pair rows {}", pairs[0].facts.rows);

    // Bytes: building the index in the run costs bytes in proportion to the table; probing
    // a prebuilt one, binary search and scanning allocate only the output.
    let b = |i: usize| seen[i].alloc.bytes as f64;
    eprintln!("bytes: binary {} scan {} hash-in-run {} hash-prebuilt {} join {}", b(0), b(1), b(2), b(3), b(4));
    assert!(b(2) > 8.0 * n as f64, "building the index allocates at least 8 bytes a row: {}", b(2));
    assert!(b(2) > 10.0 * b(3), "build + probe vs probe only: {} vs {}", b(2), b(3));
    assert!(b(0) < 2.0 * b(3) && b(1) < 2.0 * b(3), "binary search and scan allocate about what probing does");
    assert!(b(4) > 8.0 * n as f64, "the join numbers every row: {}", b(4));

    // Refusals, not panics: a key not flagged sorted, a key that is not an integer column.
    assert!(run(&plan, "unflagged", &table).is_err_and(|e| e.contains("not flagged sorted")));
    assert!(common::run_bare("lookup_scan", &[("key", common::at(1)), ("value", common::at(0))], &table).is_err_and(|e| e.contains("not an integer column")));
    let bad = SPEC.replace("by-position, steps: [{lookup_scan: {key: 0, value: 1, probes: 800}}]}", "by-position, steps: [{lookup_scan: {key: kilograms, value: 0}}]}");
    let problems = common::lint_problems(&bad);
    assert!(problems.iter().any(|p| p.contains("column `kilograms` holds decimal numbers") && p.contains("needs an integer column")), "{problems:?}");
    // The older form, columns by position, finds the same rows.
    assert_eq!(run(&plan, "by-position", &table).expect("scans").facts.fingerprint, run(&plan, "scan", &table).expect("scans").facts.fingerprint);
}
