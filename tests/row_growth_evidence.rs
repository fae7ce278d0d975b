//! Deterministic evidence for the row-growth family: allocation bytes and chunk counts, not
//! time. The reference is the amortized analysis of dynamic tables (Cormen, Leiserson,
//! Rivest, Stein, *Introduction to Algorithms*, chapter "Amortized Analysis", section
//! "Dynamic tables"): a table that copies everything on every insertion costs Θ(n²) for n
//! insertions — its bytes grow with log-log slope 2 — while building once (or growing by
//! doubling) costs Θ(n), slope 1.
//!
//! One test in its own binary: the allocation counter is process-wide.

mod common;

use framecost::measure::stats::loglog_slope;
use framecost::patterns::{Records, Value};
use std::sync::Arc;

const SPEC: &str = r#"
name: evidence
seed: 7
table:
  columns:
    - {name: id, kind: key, order: sorted}
    - {name: farm, kind: category, distinct: 40}
    - {name: parcel, kind: int, range: [1, 4000]}
    - {name: variety, kind: text, distinct: 14}
    - {name: kilograms, kind: float, range: [0.5, 950.0], nulls: 2%}
    - {name: picked_on, kind: date}
    - {name: organic, kind: bool}
sizes: [1k]
designs:
  - {name: one-at-a-time, feed: records, steps: [{append_rows: {batch: 1, consolidate: each}}]}
  - {name: batches-of-64, feed: records, steps: [{append_rows: {batch: 64, consolidate: each}}]}
  - {name: merged-once, feed: records, steps: [{append_rows: {batch: 1, consolidate: end}}]}
  - {name: chunks-left, feed: records, steps: [{append_rows: {batch: 1, consolidate: never}}]}
  - {name: build-once, feed: records, steps: [build_from_records]}
"#;

struct Seen {
    bytes: f64,
    chunks: u64,
    rows: u64,
    fingerprint: String,
}

fn measure(plan: &framecost::plan::Plan, design: &str, recs: &Arc<Records>) -> Seen {
    let (a, out) = common::counted(common::design(plan, design), Value::Records(recs.clone()));
    let out = out.expect("runs");
    let facts = framecost::patterns::OutputFacts::of(&out);
    Seen { bytes: a.bytes as f64, chunks: facts.chunks, rows: facts.rows, fingerprint: facts.fingerprint }
}

#[test]
fn row_growth_allocations_follow_the_dynamic_table_analysis() {
    let plan = framecost::spec::load_str("evidence.yaml", SPEC).expect("spec");
    let sizes = [2000u64, 4000, 8000, 16000];
    let names = ["one-at-a-time", "batches-of-64", "merged-once", "chunks-left", "build-once"];
    let mut bytes: Vec<Vec<f64>> = vec![Vec::new(); names.len()];
    for &n in &sizes {
        let df = framecost::table::generate(&plan.columns, plan.seed, n).expect("table");
        let recs = Arc::new(Records::from_frame(&df).expect("records"));
        let seen: Vec<Seen> = names.iter().map(|d| measure(&plan, d, &recs)).collect();
        for (i, s) in seen.iter().enumerate() {
            assert_eq!(s.rows, n, "{} rows at {n}", names[i]);
            assert_eq!(s.fingerprint, seen[0].fingerprint, "{} computes the same table at {n}", names[i]);
            bytes[i].push(s.bytes);
        }
        // Storage shape: consolidating leaves one chunk, never consolidating leaves one per row.
        assert_eq!(seen[0].chunks, 1);
        assert_eq!(seen[2].chunks, 1);
        assert_eq!(seen[3].chunks, n, "chunks-left keeps one chunk per appended row");
        assert_eq!(seen[4].chunks, 1);
        // Batching divides the copying: fewer bytes than one at a time, more than building once.
        assert!(seen[1].bytes < seen[0].bytes / 8.0, "batches of 64 copy far less at {n}");
        assert!(seen[4].bytes < seen[1].bytes, "build-once allocates least at {n}");
    }
    let x: Vec<f64> = sizes.iter().map(|&n| n as f64).collect();
    let slope = |i: usize| loglog_slope(&x, &bytes[i]).expect("slope");
    let one = slope(0);
    let once = slope(4);
    let merged = slope(2);
    eprintln!("bytes slopes: one-at-a-time {one:.3}, merged-once {merged:.3}, build-once {once:.3}");
    assert!((1.8..=2.2).contains(&one), "one-at-a-time bytes slope {one} should be near 2");
    assert!((0.9..=1.1).contains(&once), "build-once bytes slope {once} should be near 1");
    assert!((0.9..=1.1).contains(&merged), "append then merge once: slope {merged} should be near 1");
    // The quadratic term dominates: doubling the rows roughly quadruples the bytes copied.
    let last = bytes[0][3] / bytes[0][2];
    assert!((3.5..=4.5).contains(&last), "one-at-a-time 8k→16k bytes ratio {last}");
}
