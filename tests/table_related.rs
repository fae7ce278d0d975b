//! Related tables: shares of the swept size, references with a share of unmatched keys,
//! and chunk-by-chunk generation giving exactly the whole table's contents (what the
//! streaming engine's Parquet inputs rely on). Deterministic evidence only: row counts,
//! key sets, fingerprints.

use framecost::table::related::{chunk_blocker, generate_table_span, generate_tables};
use polars::prelude::*;

const SPEC: &str = "
name: related
tables:
  - name: members
    rows: 1/20
    columns:
      - {name: member_id, kind: key, order: sorted}
      - {name: district, kind: int, range: [1, 12], distinct: 12}
  - name: calendar
    rows: 365
    columns:
      - {name: day, kind: key, order: sorted}
  - name: deliveries
    columns:
      - {name: delivery_id, kind: key, order: sorted}
      - {name: member_id, kind: int, references: members.member_id, skew: 0.8, unmatched: 10%}
      - {name: kilograms, kind: float, range: [0.5, 950.0], nulls: 3%}
      - {name: variety, kind: text, distinct: 14}
sizes: [20k]
designs:
  - name: only
    steps:
      - sql: {query: \"SELECT COUNT(*) AS n FROM deliveries\"}
";

#[test]
fn sizes_references_and_chunks() {
    let plan = framecost::spec::load_str("related.yaml", SPEC).expect("spec is sound");
    let n = 20_000;
    let tables = generate_tables(&plan.tables, plan.seed, plan.related, n).expect("tables");
    let rows: Vec<(String, usize)> = tables.iter().map(|(t, df)| (t.clone(), df.height())).collect();
    assert_eq!(rows, vec![("members".into(), 1000), ("calendar".into(), 365), ("deliveries".into(), 20_000)]);

    // Every referencing value below the members' row count matches one member; the others
    // match none, and they make up about the declared 10% (binomial sd at n = 20k is 0.2%).
    let refs = tables[2].1.column("member_id").expect("col").i64().expect("i64").clone();
    let unmatched = refs.into_no_null_iter().filter(|&v| !(0..1000).contains(&v)).count() as f64 / n as f64;
    assert!((unmatched - 0.10).abs() < 0.01, "unmatched share {unmatched}");
    // Skewed fan-out: the most frequent member gets far more than the mean of 18 deliveries.
    let counts = tables[2].1.column("member_id").expect("col").as_materialized_series().value_counts(true, false, "n".into(), false).expect("counts");
    let top = counts.column("n").expect("n").get(0).expect("first").extract::<u64>().expect("u64");
    assert!(top > 100, "top member delivers {top} times");

    // Chunks put together give the whole table, bit for bit.
    let d = &plan.tables[2];
    assert_eq!(chunk_blocker(d), None);
    let mut parts = Vec::new();
    for start in (0..n).step_by(6_000) {
        let len = 6_000.min(n - start);
        parts.push(generate_table_span(&plan.tables, d, plan.seed, plan.related, n, start..start + len).expect("chunk"));
    }
    let mut whole = parts[0].clone();
    for p in &parts[1..] {
        whole.vstack_mut(p).expect("stack");
    }
    assert_eq!(framecost::table::fingerprint(&whole), framecost::table::fingerprint(&tables[2].1));
}

#[test]
fn a_lone_table_keeps_its_bits() {
    // A workload with one `table:` generates exactly what `table::generate` made before
    // related tables existed (the seed is not mixed with a name).
    let plan = framecost::spec::load(std::path::Path::new("tests/data/tiny.yaml")).expect("tiny");
    let old = framecost::table::generate(&plan.columns, plan.seed, 5000).expect("old");
    let new = generate_tables(&plan.tables, plan.seed, plan.related, 5000).expect("new");
    assert_eq!(new.len(), 1);
    assert_eq!(new[0].0, "data");
    assert_eq!(framecost::table::fingerprint(&old), framecost::table::fingerprint(&new[0].1));
}

#[test]
fn columns_made_whole_are_named() {
    let plan = framecost::spec::load(std::path::Path::new("tests/data/tiny.yaml")).expect("tiny");
    // tiny.yaml's key is sorted without duplicates and its other columns random: chunkable.
    assert_eq!(chunk_blocker(&plan.tables[0]), None);
    let mut t = plan.tables[0].clone();
    t.columns[1].order = framecost::spec::model::Order::Sorted;
    let m = chunk_blocker(&t).expect("a sorted column is made whole");
    assert!(m.contains("variety") && m.contains("use `order: random` or `clustered`"), "{m}");
    // A key in random order is a permutation made whole: the way out is its own order, not
    // the random order it already has.
    let mut k = plan.tables[0].clone();
    assert_eq!(k.columns[0].kind, framecost::spec::model::ColumnKind::Key);
    k.columns[0].order = framecost::spec::model::Order::Random;
    let m = chunk_blocker(&k).expect("a shuffled key is made whole");
    assert!(m.contains("order random") && m.contains("a key is made in chunks only with `order: sorted` and no `duplicates`") && !m.contains("use `order: random`"), "{m}");
}

#[test]
fn coverage_limits_the_keys_referred_to_and_is_checked() {
    let spec = SPEC.replace("skew: 0.8, unmatched: 10%}", "skew: 0.8, unmatched: 10%, coverage: 5%}");
    let plan = framecost::spec::load_str("related.yaml", &spec).expect("spec is sound");
    let n = 20_000;
    let tables = generate_tables(&plan.tables, plan.seed, plan.related, n).expect("tables");
    // 1000 members, 5% of them drawn from: at most 50 distinct matched members (18,000
    // matched rows over 50 keys: every one of them is drawn, with overwhelming probability).
    let refs = tables[2].1.column("member_id").expect("col").i64().expect("i64").clone();
    let matched: std::collections::HashSet<i64> = refs.into_no_null_iter().filter(|v| (0..1000).contains(v)).collect();
    assert_eq!(matched.len(), 50, "distinct members referred to");
    // Spread over the keys, not the first 50 ids.
    assert!(matched.iter().any(|&v| v >= 500), "{matched:?}");
    // The unmatched share is untouched by coverage (binomial sd at 20k is 0.2%).
    let refs = tables[2].1.column("member_id").expect("col").i64().expect("i64").clone();
    let unmatched = refs.into_no_null_iter().filter(|&v| !(0..1000).contains(&v)).count() as f64 / n as f64;
    assert!((unmatched - 0.10).abs() < 0.01, "unmatched share {unmatched}");

    // Without `coverage` the table is the one it always was: the same fingerprint.
    let before = framecost::spec::load_str("related.yaml", SPEC).expect("spec");
    let with_all = framecost::spec::load_str("related.yaml", &SPEC.replace("unmatched: 10%}", "unmatched: 10%, coverage: 100%}")).expect("spec");
    let a = generate_tables(&before.tables, before.seed, before.related, 4_000).expect("tables");
    let b = generate_tables(&with_all.tables, with_all.seed, with_all.related, 4_000).expect("tables");
    assert!(a[2].1.equals_missing(&b[2].1));

    // Refused: coverage without a reference, and a coverage of nothing.
    for (bad, says) in [
        (SPEC.replace("{name: district, kind: int,", "{name: district, kind: int, coverage: 50%,"), "applies only with `references`"),
        (SPEC.replace("unmatched: 10%}", "unmatched: 10%, coverage: 0}"), "above 0"),
    ] {
        let e = framecost::spec::load_str("related.yaml", &bad).err().expect("refused").to_string();
        assert!(e.contains(says), "{e}");
    }
}
