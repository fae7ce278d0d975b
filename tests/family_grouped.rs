//! Deterministic evidence for the grouped-work family: row counts, output equality and
//! allocation counts, never time. Expectation [common practice, no source;
//! the shared REFERENCES.md "Rules of thumb"]: a user function called once per group is much
//! slower than a native aggregate over the same groups. Checked here through its cause: the
//! per-group designs build a small table and call a function for every group — dozens of
//! allocations per group — while the native aggregate allocates about once per group (its
//! list of row positions, measured with polars 0.55) and does the rest in bulk.
//!
//! One test in its own binary: the allocation counter is process-wide.

mod common;

use common::{run, Seen};
use polars::prelude::*;

const SPEC: &str = r#"
name: evidence
seed: 14
table:
  columns:
    - {name: crew, kind: key}
    - {name: grams, kind: int, range: [500, 950000], nulls: 1%}
    - {name: variety, kind: text, distinct: 14}
sizes: [1k]
designs:
  - {name: totals-native, setup: [{assign_groups: {column: crew, rows_per_group: 8}}], steps: [{group_totals: {by: crew, value: grams, method: native}}]}
  - {name: totals-fn, setup: [{assign_groups: {column: crew, rows_per_group: 8}}], steps: [{group_totals: {by: crew, value: grams, method: per_group_fn}}]}
  - {name: totals-parts, setup: [{assign_groups: {column: crew, rows_per_group: 8}}], steps: [{group_totals: {by: crew, value: grams, method: partitions}}]}
  - {name: shares-window, setup: [{assign_groups: {column: crew, rows_per_group: 8}}], steps: [{group_shares: {by: crew, value: grams, method: window}}]}
  - {name: shares-join, setup: [{assign_groups: {column: crew, rows_per_group: 8}}], steps: [{group_shares: {by: crew, value: grams, method: join_back}}]}
  - {name: shares-fn, setup: [{assign_groups: {column: crew, rows_per_group: 8}}], steps: [{group_shares: {by: crew, value: grams, method: per_group_fn}}]}
  - {name: shares-parts, setup: [{assign_groups: {column: crew, rows_per_group: 8}}], steps: [{group_shares: {by: crew, value: grams, method: partitions}}]}
  - {name: by-position, setup: [{assign_groups: {column: 0, rows_per_group: 8}}], steps: [{group_totals: {by: 0, value: 1, method: native}}]}
"#;

#[test]
fn per_group_functions_allocate_per_group_and_agree_with_native() {
    let plan = framecost::spec::load_str("evidence.yaml", SPEC).expect("spec");
    let totals = ["totals-native", "totals-fn", "totals-parts"];
    let shares = ["shares-window", "shares-join", "shares-fn", "shares-parts"];
    let mut counts: Vec<Vec<u64>> = vec![Vec::new(); totals.len()];
    let sizes = [8_000u64, 32_000];
    for &n in &sizes {
        let table = framecost::table::generate(&plan.columns, plan.seed, n).expect("table");
        let get = |name: &str| run(&plan, name, &table).unwrap_or_else(|e| panic!("{name}: {e}"));
        let groups = n / 8;

        // Totals: one row per group (the number of groups follows the rows), same contents.
        let t: Vec<Seen> = totals.iter().map(|d| get(d)).collect();
        for (name, s) in totals.iter().zip(&t) {
            assert_eq!(s.facts.rows, groups, "{name}: one row per group at {n}");
            assert_eq!(s.facts.fingerprint, t[0].facts.fingerprint, "{name} agrees with native at {n}");
            counts[totals.iter().position(|x| x == name).expect("known")].push(s.alloc.count);
        }
        // The older form, columns by position, gives the same totals.
        assert_eq!(get("by-position").facts.fingerprint, t[0].facts.fingerprint, "positions agree with names at {n}");
        let crates: i64 = t[0].df.column("crates").expect("crates").i64().expect("i64").sum().unwrap_or(0);
        let nonnull = n as i64 - table.column("grams").expect("grams").null_count() as i64;
        assert_eq!(crates, nonnull, "counts cover every non-null value");

        // Shares: every row kept in ledger order, same contents, shares of a group sum to 1.
        let s: Vec<Seen> = shares.iter().map(|d| get(d)).collect();
        for (name, x) in shares.iter().zip(&s) {
            assert_eq!(x.facts.rows, n, "{name} keeps every row");
            assert_eq!(x.facts.fingerprint, s[0].facts.fingerprint, "{name} agrees with the window at {n}");
            assert_eq!(x.df.column("share").expect("share").dtype(), &DataType::Float64);
        }
        let total_share: f64 = s[0].df.column("share").expect("share").f64().expect("f64").sum().unwrap_or(0.0);
        assert!((total_share - groups as f64).abs() < 1e-6 * groups as f64, "shares sum to one per group: {total_share}");

        // Allocations: the per-group designs allocate many times per group, the native
        // designs about once (group positions).
        for (name, x) in [("totals-fn", &t[1]), ("totals-parts", &t[2]), ("shares-fn", &s[2]), ("shares-parts", &s[3])] {
            assert!(x.alloc.count >= 20 * groups, "{name} allocates per group at {n}: {} for {groups} groups", x.alloc.count);
        }
        for (name, x) in [("totals-native", &t[0]), ("shares-window", &s[0]), ("shares-join", &s[1])] {
            assert!(x.alloc.count <= 2 * groups, "{name} allocates in bulk at {n}: {} for {groups} groups", x.alloc.count);
        }
        assert!(t[1].alloc.bytes > 5 * t[0].alloc.bytes, "per-group fn bytes {} vs native {}", t[1].alloc.bytes, t[0].alloc.bytes);
        assert!(s[2].alloc.bytes > 5 * s[0].alloc.bytes, "per-group fn bytes {} vs window {}", s[2].alloc.bytes, s[0].alloc.bytes);
        eprintln!("n={n}: counts totals {:?} shares {:?}; bytes totals {:?} shares {:?}", t.iter().map(|x| x.alloc.count).collect::<Vec<_>>(), s.iter().map(|x| x.alloc.count).collect::<Vec<_>>(), t.iter().map(|x| x.alloc.bytes).collect::<Vec<_>>(), s.iter().map(|x| x.alloc.bytes).collect::<Vec<_>>());
    }
    eprintln!("allocation counts at {sizes:?}: native {:?}, per-group fn {:?}, partitions {:?}", counts[0], counts[1], counts[2]);
    // Four times the groups: each extra group costs the per-group function dozens of
    // allocations, the native aggregate about one.
    let extra = (sizes[1] - sizes[0]) / 8;
    assert!(counts[1][1] - counts[1][0] >= 20 * extra, "per-group fn: {:?}", counts[1]);
    assert!(counts[0][1] - counts[0][0] <= 2 * extra, "native: {:?}", counts[0]);

    // A text value column: refused by the checker at its place, and by the step on a table
    // the checker never saw.
    let bad = SPEC.replace("steps: [{group_totals: {by: 0, value: 1, method: native}}]}", "steps: [{group_totals: {by: crew, value: variety}}]}");
    let problems = common::lint_problems(&bad);
    assert!(problems.iter().any(|p| p.contains("column `variety` holds text") && p.contains("needs an integer column")), "{problems:?}");
    let small = framecost::table::generate(&plan.columns, plan.seed, 100).expect("table");
    assert!(common::run_bare("group_totals", &[("by", common::at(0)), ("value", common::at(2))], &small).is_err_and(|e| e.contains("not an integer column")));
}
