//! Deterministic evidence for the subsets family: allocated bytes, rows and contents, never
//! time. Expectation [common practice, no source]: a slice is zero-copy (allocates about
//! nothing, whatever the size) while a gather or a deep copy allocates in proportion to the
//! rows kept. polars 0.55 also turns a filter whose kept rows form one run into a slice
//! (seen in `polars-compute` `filter_with_bitmap`: it trims leading and trailing false runs),
//! so the filter allocates only its mask.
//!
//! One test in its own binary: the allocation counter is process-wide.

mod common;

use framecost::patterns::{OutputFacts, Value};

const SPEC: &str = r#"
name: subsets-evidence
seed: 11
table:
  columns:
    - {name: crate, kind: key, order: sorted}
    - {name: farm, kind: category, distinct: 40}
    - {name: parcel, kind: int, range: [1, 4000]}
    - {name: variety, kind: text, distinct: 300, length: [5, 18]}
    - {name: kilograms, kind: float, range: [0.5, 950.0], nulls: 2%}
    - {name: picked_on, kind: date}
    - {name: organic, kind: bool}
sizes: [1k]
designs:
  - {name: slice, steps: [{keep_slice: {start: 0.25, share: 0.5}}]}
  - {name: mask, steps: [{keep_by_mask: {start: 0.25, share: 0.5}}]}
  - {name: gather, steps: [{keep_by_index: {start: 0.25, share: 0.5}}]}
  - {name: copy, steps: [{keep_deep_copy: {start: 0.25, share: 0.5}}]}
"#;

#[test]
fn a_slice_allocates_nothing_per_row_and_a_gather_or_copy_allocates_per_row() {
    let plan = framecost::spec::load_str("subsets.yaml", SPEC).expect("spec");
    let names = ["slice", "mask", "gather", "copy"];
    let sizes = [50_000u64, 200_000];
    let mut bytes = vec![[0f64; 2]; names.len()];
    // Counting is process-wide: the first polars operation of the process sets up state once
    // (a fresh-clone CI run once counted 3.8 KB more for the first slice at 50k rows than for
    // the slice at 200k rows). Run every design once, uncounted, so only the designs' own
    // allocations are compared.
    let warm = framecost::table::generate(&plan.columns, plan.seed, 1_000).expect("table");
    for name in names {
        let _ = common::counted(common::design(&plan, name), Value::Frame(warm.clone()));
    }
    for (si, &n) in sizes.iter().enumerate() {
        let df = framecost::table::generate(&plan.columns, plan.seed, n).expect("table");
        let mut facts = Vec::new();
        for (i, name) in names.iter().enumerate() {
            let (a, out) = common::counted(common::design(&plan, name), Value::Frame(df.clone()));
            let out = out.expect("runs");
            facts.push(OutputFacts::of(&out));
            drop(out);
            bytes[i][si] = a.bytes as f64;
        }
        for (i, f) in facts.iter().enumerate() {
            assert_eq!(f.rows, n / 2, "{} keeps half the rows at {n}", names[i]);
            assert_eq!(f.fingerprint, facts[0].fingerprint, "{} keeps the same rows as the slice at {n}", names[i]);
        }
        // The kept rows' fixed-width values alone (crate, parcel, kilograms: 8 bytes; date: 4).
        let fixed = (n / 2) as f64 * (8.0 * 3.0 + 4.0);
        assert!(bytes[0][si] < 16.0 * 1024.0, "slice allocated {} bytes at {n}", bytes[0][si]);
        assert!(bytes[2][si] >= fixed, "gather allocated {} < {fixed} at {n}", bytes[2][si]);
        assert!(bytes[3][si] >= fixed, "deep copy allocated {} < {fixed} at {n}", bytes[3][si]);
        // The mask: at least one bit per input row, far less than copying the rows.
        assert!(bytes[1][si] >= n as f64 / 8.0, "mask filter allocated {} at {n}", bytes[1][si]);
        assert!(bytes[1][si] < bytes[2][si] / 10.0, "mask filter {} vs gather {} at {n}", bytes[1][si], bytes[2][si]);
    }
    eprintln!("bytes at {sizes:?}: {:?}", bytes);
    // Constant versus proportional: 4× the rows.
    assert_eq!(bytes[0][0], bytes[0][1], "a slice allocates the same at every size");
    for i in [2, 3] {
        let r = bytes[i][1] / bytes[i][0];
        assert!((3.6..=4.4).contains(&r), "{} bytes ratio for 4× rows: {r}", names[i]);
    }
}
