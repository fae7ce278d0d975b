//! Deterministic evidence for the column-growth family: chunk counts, dtypes and bytes
//! allocated, never time. Expectation [common practice, no source; the shared REFERENCES.md
//! "Rules of thumb"]: adding columns one at a time leaves storage fragmented, and the first
//! operation that needs contiguous storage pays to consolidate it. In polars the
//! fragmentation is per column (a derived column inherits its source's chunks), so the
//! measurable cost is consolidating reads repeated between additions.
//!
//! One test in its own binary: the allocation counter is process-wide.

mod common;

use common::{run, Seen};
use polars::prelude::*;

const SPEC: &str = r#"
name: evidence
seed: 11
table:
  columns:
    - {name: crate_id, kind: key, order: sorted}
    - {name: kilograms, kind: float, range: [0.5, 950.0]}
    - {name: parcel, kind: int, range: [1, 4000]}
    - {name: variety, kind: text, distinct: 14}
sizes: [1k]
designs:
  - {name: between, setup: [{split_storage: {pieces: 32}}], steps: [{grow_columns: {source: kilograms, columns: 8, reads: between}}]}
  - {name: between-16, setup: [{split_storage: {pieces: 32}}], steps: [{grow_columns: {source: kilograms, columns: 16, reads: between}}]}
  - {name: kept, setup: [{split_storage: {pieces: 32}}], steps: [{grow_columns: {source: kilograms, columns: 8, reads: between_kept}}]}
  - {name: first, setup: [{split_storage: {pieces: 32}}], steps: [consolidate_table, {grow_columns: {source: kilograms, columns: 8, reads: between}}]}
  - {name: after, setup: [{split_storage: {pieces: 32}}], steps: [{grow_columns: {source: kilograms, columns: 8, reads: after}}]}
  - {name: after-16, setup: [{split_storage: {pieces: 32}}], steps: [{grow_columns: {source: kilograms, columns: 16, reads: after}}]}
  - {name: at-once, setup: [{split_storage: {pieces: 32}}], steps: [{grow_columns: {source: kilograms, columns: 8, how: all_at_once, reads: after}}]}
  - {name: f64-none, steps: [{grow_columns: {source: kilograms, columns: 8, reads: none}}]}
  - {name: f32-none, steps: [{grow_columns: {source: kilograms, columns: 8, reads: none, dtype: f32}}]}
"#;

fn chunks_of(s: &Seen, col: &str) -> usize {
    s.df.column(col).expect("column").n_chunks()
}

#[test]
fn column_growth_fragments_and_consolidation_costs() {
    let plan = framecost::spec::load_str("evidence.yaml", SPEC).expect("spec");
    let n = 20_000u64;
    let table = framecost::table::generate(&plan.columns, plan.seed, n).expect("table");
    let names = ["between", "between-16", "kept", "first", "after", "after-16", "at-once", "f64-none", "f32-none"];
    let seen: Vec<Seen> = names.iter().map(|d| run(&plan, d, &table).unwrap_or_else(|e| panic!("{d}: {e}"))).collect();
    let by = |name: &str| &seen[names.iter().position(|n| *n == name).expect("known design")];

    for (name, s) in names.iter().zip(&seen) {
        assert_eq!(s.facts.rows, n, "{name} keeps every row");
        let width = if name.ends_with("-16") { 4 + 16 } else { 4 + 8 };
        assert_eq!(s.df.width(), width, "{name} adds its columns");
    }
    // Same contents for every 8-column f64 design, however it was stored.
    let same = ["between", "kept", "first", "after", "at-once", "f64-none"];
    for name in same {
        assert_eq!(by(name).facts.fingerprint, by("between").facts.fingerprint, "{name} computes the same table");
    }

    // Chunk counts: derived columns inherit the source's 32 pieces unless storage was
    // consolidated (and kept) before they were made.
    assert_eq!(chunks_of(by("between"), "kilograms_tier7"), 32);
    assert_eq!(by("between").facts.chunks, 32);
    assert_eq!(by("after").facts.chunks, 32);
    assert_eq!(by("at-once").facts.chunks, 32);
    assert_eq!(by("kept").facts.chunks, 1, "reads that keep their consolidation leave one chunk");
    assert_eq!(chunks_of(by("kept"), "kilograms_tier7"), 1, "columns made after a kept consolidation are contiguous");
    assert_eq!(by("first").facts.chunks, 1);
    assert_eq!(by("f64-none").facts.chunks, 1, "an unsplit table stays contiguous");

    // Consolidation cost, in bytes: reads between additions that throw the consolidated
    // copy away pay for the whole table every time.
    let b = |name: &str| by(name).alloc.bytes as f64;
    eprintln!(
        "bytes: between {} between-16 {} kept {} first {} after {} after-16 {} at-once {}",
        b("between"), b("between-16"), b("kept"), b("first"), b("after"), b("after-16"), b("at-once")
    );
    assert!(b("between") > 3.0 * b("after"), "repeated consolidation costs several times one read after");
    assert!(b("kept") < 0.5 * b("between"), "keeping the consolidated storage saves most of it");
    assert!(b("first") < 0.5 * b("between"), "consolidating first saves most of it");
    // Quadratic in the columns added: doubling them nearly triples the bytes of reads
    // between (k·w + k²/2 column copies), while one read after grows less than twofold.
    assert!(b("between-16") / b("between") > 2.5, "between: {}", b("between-16") / b("between"));
    assert!(b("after-16") / b("after") < 2.1, "after: {}", b("after-16") / b("after"));
    // All at once or one at a time: the same work in polars (no block copies).
    let r = b("at-once") / b("after");
    assert!((0.9..=1.1).contains(&r), "all at once vs one at a time: {r}");

    // Type change: the derived columns end as 32-bit floats, which takes a second buffer.
    let f32s = by("f32-none");
    assert_eq!(f32s.df.column("kilograms_tier3").expect("column").dtype(), &DataType::Float32);
    assert_eq!(by("f64-none").df.column("kilograms_tier3").expect("column").dtype(), &DataType::Float64);
    assert_ne!(f32s.facts.fingerprint, by("f64-none").facts.fingerprint, "a type change changes the contents");
    assert!(b("f32-none") > 1.3 * b("f64-none"), "casting after making each column costs another buffer");
}
