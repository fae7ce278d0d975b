//! Deterministic evidence for the row-wise family: output equality, nulls, one value
//! checked by hand, and allocation counts, never time. Expectation [common practice, no
//! source; the shared REFERENCES.md "Rules of thumb"]: element-by-element access through a
//! table API costs at least 10× more per element than plain array work. Checked here
//! through its deterministic side: building a row per call allocates on every row, while the
//! reused row, the typed loop and the expression allocate in bulk.
//!
//! One test in its own binary: the allocation counter is process-wide.

mod common;

use common::{run, Seen};
use polars::prelude::*;

const SPEC: &str = r#"
name: evidence
seed: 15
table:
  columns:
    - {name: crate_id, kind: key, order: sorted}
    - {name: gross, kind: int, range: [2000, 960000], nulls: 2%}
    - {name: tare, kind: int, range: [900, 1800], nulls: 2%}
    - {name: organic, kind: bool, true_share: 0.3, nulls: 5%}
    - {name: variety, kind: text, distinct: 14}
    - {name: farm, kind: category, distinct: 40}
sizes: [1k]
designs:
  - {name: row, steps: [{payout_per_row: {a: gross, b: tare, flag: organic, access: row}}]}
  - {name: reused, steps: [{payout_per_row: {a: gross, b: tare, flag: organic, access: row_reused}}]}
  - {name: typed, steps: [{payout_per_row: {a: gross, b: tare, flag: organic, access: typed}}]}
  - {name: expression, steps: [{payout_expression: {a: gross, b: tare, flag: organic}}]}
  - {name: by-position, steps: [{payout_expression: {a: 1, b: 2, flag: 3}}]}
"#;

#[test]
fn per_row_functions_agree_with_expressions_and_allocate_per_row() {
    let plan = framecost::spec::load_str("evidence.yaml", SPEC).expect("spec");
    let n = 20_000u64;
    let table = framecost::table::generate(&plan.columns, plan.seed, n).expect("table");
    let names = ["row", "reused", "typed", "expression"];
    let seen: Vec<Seen> =
        names.iter().map(|d| run(&plan, d, &table).unwrap_or_else(|e| panic!("{d}: {e}"))).collect();
    for (name, Seen { facts, df, .. }) in names.iter().zip(&seen) {
        assert_eq!(facts.rows, n, "{name} keeps every row");
        assert_eq!(facts.fingerprint, seen[3].facts.fingerprint, "{name} computes what the expression computes");
        assert_eq!(df.column("payout").expect("payout").dtype(), &DataType::Int64);
    }

    // Nulls fall the same way: a payout is null exactly where gross or tare is null; a null
    // organic flag counts as not organic.
    let df = &seen[3].df;
    let g = table.column("gross").expect("gross").i64().expect("i64").clone();
    let t = table.column("tare").expect("tare").i64().expect("i64").clone();
    let o = table.column("organic").expect("organic").bool().expect("bool").clone();
    let p = df.column("payout").expect("payout").i64().expect("i64").clone();
    let mut checked_null_flag = false;
    for i in 0..n as usize {
        let want = match (g.get(i), t.get(i)) {
            (Some(a), Some(b)) => Some((a - b) * if o.get(i) == Some(true) { 13 } else { 10 }),
            _ => None,
        };
        assert_eq!(p.get(i), want, "row {i}");
        checked_null_flag |= o.get(i).is_none() && want.is_some();
    }
    assert!(checked_null_flag, "the table has a null flag on a row with a payout");
    assert!(p.null_count() > 0 && p.null_count() < (n / 10) as usize, "nulls {}", p.null_count());

    // Allocations: a fresh row per call allocates at least once per row; the others
    // allocate a fixed amount (plan and buffers), far fewer than one per row.
    let count = |i: usize| seen[i].alloc.count;
    let bytes = |i: usize| seen[i].alloc.bytes;
    eprintln!("allocations: row {} reused {} typed {} expression {}", count(0), count(1), count(2), count(3));
    eprintln!("bytes: row {} reused {} typed {} expression {}", bytes(0), bytes(1), bytes(2), bytes(3));
    assert!(count(0) >= n, "a row per call: {} allocations for {n} rows", count(0));
    for i in 1..4 {
        assert!(count(i) * 20 < n, "{}: {} allocations for {n} rows (a fixed overhead, not per row)", names[i], count(i));
    }
    assert!(bytes(0) > 5 * bytes(3), "row-per-call bytes {} vs expression {}", bytes(0), bytes(3));

    // Wrong column types are refused with a message, not a panic.
    let a = |p: usize| common::at(p);
    assert!(common::run_bare("payout_expression", &[("a", a(4)), ("b", a(2)), ("flag", a(3))], &table).is_err_and(|e| e.contains("is str, not an integer column")));
    assert!(common::run_bare("payout_per_row", &[("a", a(1)), ("b", a(2)), ("flag", a(1))], &table).is_err_and(|e| e.contains("is i64, not a bool column")));
    // The checker refuses them first, at their place.
    let bad = SPEC.replace("by-position, steps: [{payout_expression: {a: 1, b: 2, flag: 3}}]}", "by-position, steps: [{payout_expression: {a: variety, b: tare, flag: gross}}]}");
    let problems = common::lint_problems(&bad);
    assert!(problems.iter().any(|p| p.contains("`variety` holds text") && p.contains("needs an integer column")), "{problems:?}");
    assert!(problems.iter().any(|p| p.contains("`gross` holds whole numbers") && p.contains("needs a bool column")), "{problems:?}");
    // The older form, columns by position, computes the same payouts.
    assert_eq!(run(&plan, "by-position", &table).expect("runs").facts.fingerprint, run(&plan, "expression", &table).expect("runs").facts.fingerprint);
}
