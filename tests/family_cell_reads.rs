//! Deterministic evidence for the single-cell-reads family: allocation counts and bytes,
//! never time. Expectation [common practice, no source; the shared REFERENCES.md "Rules of
//! thumb"]: element-by-element access through a table API costs at least 10× more per
//! element than indexing a plain array. Time is not checked here (the workload's sweep shows
//! it); what must hold deterministically is that whole-row table access allocates on every
//! read, while typed and slice reads allocate nothing per read, and that a vector copy costs
//! bytes in proportion to the rows.
//!
//! One test in its own binary: the allocation counter is process-wide.

mod common;

use common::{at, lint_problems, run, run_bare, Seen};
use polars::prelude::*;

const SPEC: &str = r#"
name: evidence
seed: 12
table:
  columns:
    - {name: crate_id, kind: key, order: sorted}
    - {name: kilograms, kind: float, range: [0.5, 950.0], nulls: 1%}
    - {name: parcel, kind: int, range: [1, 4000]}
    - {name: variety, kind: text, distinct: 14}
    - {name: organic, kind: bool}
sizes: [1k]
designs:
  - {name: cell-1k, steps: [{read_cells: {column: kilograms, reads: 1000, via: table_cell}}]}
  - {name: cell-4k, steps: [{read_cells: {column: kilograms, reads: 4000, via: table_cell}}]}
  - {name: row-1k, steps: [{read_cells: {column: kilograms, reads: 1000, via: table_row}}]}
  - {name: row-4k, steps: [{read_cells: {column: kilograms, reads: 4000, via: table_row}}]}
  - {name: typed-1k, steps: [{read_cells: {column: kilograms, reads: 1000, via: typed_get}}]}
  - {name: typed-4k, steps: [{read_cells: {column: kilograms, reads: 4000, via: typed_get}}]}
  - {name: slice-1k, steps: [{read_cells: {column: kilograms, reads: 1000, via: slice}}]}
  - {name: slice-4k, steps: [{read_cells: {column: kilograms, reads: 4000, via: slice}}]}
  - {name: chunked-slice-4k, setup: [{split_storage: {pieces: 16}}], steps: [{read_cells: {column: kilograms, reads: 4000, via: slice}}]}
  - {name: chunked-typed-4k, setup: [{split_storage: {pieces: 16}}], steps: [{read_cells: {column: kilograms, reads: 4000, via: typed_get}}]}
  - {name: copy-4k, steps: [{copy_to_vector: {column: kilograms}}, {read_vector_cells: {reads: 4000}}]}
  - {name: prebuilt-4k, setup: [{copy_to_vector: {column: kilograms}}], steps: [{read_vector_cells: {reads: 4000}}]}
  - {name: by-position, steps: [{read_cells: {column: 1, reads: 4000, via: slice}}]}
"#;

fn cells(df: &DataFrame) -> (i64, f64) {
    let read = df.column("cells_read").expect("cells_read").i64().expect("i64").get(0).expect("value");
    let sum = df.column("sum").expect("sum").f64().expect("f64").get(0).expect("value");
    (read, sum)
}

#[test]
fn table_api_reads_cost_more_than_typed_reads() {
    let plan = framecost::spec::load_str("evidence.yaml", SPEC).expect("spec");
    let n = 50_000u64;
    let table = framecost::table::generate(&plan.columns, plan.seed, n).expect("table");
    let get = |name: &str| run(&plan, name, &table).unwrap_or_else(|e| panic!("{name}: {e}"));

    // Same cells, same sum, whichever way they were read (and however the column is stored).
    let four = ["cell-4k", "row-4k", "typed-4k", "slice-4k", "chunked-slice-4k", "chunked-typed-4k", "copy-4k", "prebuilt-4k"];
    let results: Vec<Seen> = four.iter().map(|d| get(d)).collect();
    let (read, sum) = cells(&results[0].df);
    for (name, Seen { df, .. }) in four.iter().zip(&results) {
        assert_eq!(df.height(), 1, "{name} gives one row");
        assert_eq!(cells(df), (read, sum), "{name} reads the same cells");
    }
    // 1% of kilograms are null and skipped: most reads find a value, not all.
    assert!(read > 3800 && read < 4000, "cells read {read}");
    assert_eq!(cells(&get("cell-1k").df), cells(&get("slice-1k").df));

    let a = |name: &str| get(name).alloc;
    let (row1, row4) = (a("row-1k"), a("row-4k"));
    let (slice1, slice4) = (a("slice-1k"), a("slice-4k"));
    let (typed1, typed4) = (a("typed-1k"), a("typed-4k"));
    let (cell1, cell4) = (a("cell-1k"), a("cell-4k"));
    eprintln!("allocations (1k → 4k reads): row {}→{}, cell {}→{}, typed {}→{}, slice {}→{}", row1.count, row4.count, cell1.count, cell4.count, typed1.count, typed4.count, slice1.count, slice4.count);
    // A whole row per read: at least one allocation for every extra read.
    assert!(row4.count - row1.count >= 3000, "row reads allocate per read: {} → {}", row1.count, row4.count);
    // Typed and slice reads allocate nothing per read: the count does not move with reads.
    assert_eq!(slice4.count, slice1.count, "slice reads allocate nothing per read");
    assert_eq!(typed4.count, typed1.count, "typed reads allocate nothing per read");
    // The single-cell table API does not allocate per numeric read in polars 0.55 either;
    // its extra cost is work per read (shown by the sweep), not bytes.
    assert_eq!(cell4.count, cell1.count, "table_cell reads of a float column allocate nothing per read");
    assert!(row4.bytes > 100 * slice4.bytes.max(1), "row access bytes {} vs slice {}", row4.bytes, slice4.bytes);

    // A plain vector copy costs 9 bytes (a float and a presence flag) per row; reading a prebuilt one
    // costs nothing that grows with the rows.
    let (copy, pre) = (a("copy-4k"), a("prebuilt-4k"));
    assert!(copy.bytes >= 9 * n, "the copy allocates the whole column: {}", copy.bytes);
    assert!(pre.bytes * 100 < copy.bytes, "prebuilt reads: {} bytes", pre.bytes);
    // Consolidating a fragmented column for slice reads copies it once (8 bytes a row).
    let chunked = a("chunked-slice-4k");
    assert!(chunked.bytes >= 8 * n && chunked.bytes > 10 * slice4.bytes, "chunked slice: {}", chunked.bytes);

    // The older form, a column by position, reads the same cells, and finding a column by
    // name (in a five-column table, so polars would build a schema to look it up) costs the
    // run no allocation more than by position.
    let by_position = get("by-position");
    assert_eq!(cells(&by_position.df), (read, sum));
    assert_eq!((by_position.alloc.count, by_position.alloc.bytes), (slice4.count, slice4.bytes), "by name vs by position");

    // Bad columns: refused by the checker at their place, and by the step itself on a
    // table the checker never saw (errors, not panics).
    let bad = SPEC.replace("by-position, steps: [{read_cells: {column: 1, reads: 4000, via: slice}}]}", "by-position, steps: [{read_cells: {column: variety, reads: 10}}]}");
    let problems = lint_problems(&bad);
    assert!(problems.iter().any(|p| p.contains("column `variety` holds text") && p.contains("needs a numeric column")), "{problems:?}");
    let reads = ("reads", framecost::patterns::ParamValue::Count(10));
    assert!(run_bare("read_cells", &[("column", at(3)), reads.clone()], &table).is_err_and(|e| e.contains("is str, not a numeric column")));
    assert!(run_bare("read_cells", &[("column", at(9)), reads], &table).is_err_and(|e| e.contains("no column at position 9")));
}
