//! The memory an SQL design is allowed before it is measured, against what such designs were
//! measured to keep: a streaming GROUP BY whose groups grow with the rows keeps them all,
//! whatever the chunk size, and a join on a repeated key makes more rows than its tables; the
//! estimate must follow the groups and the joined rows the table plan allows.
//!
//! Evidence: `tests/data/memory-runs/` (see `tests/data/README.md`): one sweep of the probe
//! `stream-groups/workload.yaml`, and the sql-self-join workload cut from a catalog sweep, on
//! this project's build machine. The peaks are measurements of that machine, not reference
//! values. The joined-row count is also checked against the generated table itself.

use framecost::measure::memory::estimate_design;
use framecost::results::reader::RunResults;
use std::path::Path;

const RUN: &str = "tests/data/memory-runs/stream-groups";

/// Every measured point of the recorded run in `dir` (its `workload.yaml` and `points.jsonl`):
/// (design, rows, peak live bytes, the estimate made with nothing measured, table bytes).
fn estimated_against_peaks(dir: &Path) -> Vec<(String, u64, f64, framecost::measure::memory::Estimate, f64)> {
    let plan = framecost::spec::load(&dir.join("workload.yaml")).expect("spec");
    let r = RunResults::read(dir).expect("recorded run");
    r.workloads[0]
        .points
        .iter()
        .filter_map(|p| {
            let peak = p.measured.as_ref()?.alloc.peak_live as f64;
            let i = plan.designs.iter().position(|d| d.name == p.design).expect("design");
            Some((p.design.clone(), p.rows, peak, estimate_design(&plan, i, p.rows, &[]), plan.table_bytes(p.rows)))
        })
        .collect()
}

#[test]
fn a_streaming_group_by_is_allowed_what_its_groups_were_measured_to_keep() {
    let plan = framecost::spec::load(&Path::new(RUN).join("workload.yaml")).expect("spec");
    let run = RunResults::read(Path::new(RUN)).expect("recorded run");
    let w = &run.workloads[0];
    let design = |name: &str| plan.designs.iter().position(|d| d.name == name).expect("design");
    for name in ["streaming-unique-groups", "streaming-few-groups"] {
        let i = design(name);
        for &rows in &w.header.sizes {
            let peak = w.point(name, rows).and_then(|p| p.measured.as_ref()).expect("measured").alloc.peak_live as f64;
            // Nothing measured yet: the estimate a first size of this many rows gets.
            let before = estimate_design(&plan, i, rows, &[]).working;
            assert!(before >= peak, "{name} at {rows} rows: estimated {before:.3e} B before measuring, measured {peak:.3e} B");
            if name == "streaming-unique-groups" {
                // Every row is a group: no more than ×4 what was kept (the hashing factor
                // errs on the side of refusing; measured ×2.2 here).
                assert!(before <= 4.0 * peak, "{name} at {rows} rows: estimated {before:.3e} B, measured {peak:.3e} B");
            }
        }
    }
    // Past the measured sizes the unique groups keep growing with the rows (slope 1 over
    // 1M–8M rows), while two chunks do not: a first size of 100M rows must be allowed at
    // least the 8M peak scaled by the rows.
    let peak_8m = w.point("streaming-unique-groups", 8_000_000).and_then(|p| p.measured.as_ref()).expect("8M").alloc.peak_live as f64;
    let at_100m = estimate_design(&plan, design("streaming-unique-groups"), 100_000_000, &[]).working;
    assert!(at_100m >= peak_8m * 100.0 / 8.0, "{at_100m:.3e} B at 100M rows");
    // A handful of groups keeps the estimate at its chunks.
    let few = estimate_design(&plan, design("streaming-few-groups"), 100_000_000, &[]);
    assert!(few.working < 0.05 * at_100m, "{few:?}");
}

#[test]
fn a_statement_over_few_varieties_keeps_its_small_estimate() {
    // The catalog's statement per variety (14 groups) on the streaming engine: its estimate
    // at 250M rows stays a few chunks' worth, so the sweep the workload's about suggests
    // (`--sizes 2M,250M`) is not refused on a 24 GB machine.
    let plan = framecost::spec::load(Path::new("workloads/sql-engines.yaml")).expect("spec");
    let i = plan.designs.iter().position(|d| d.name == "streaming").expect("design");
    let e = estimate_design(&plan, i, 250_000_000, &[]);
    assert!(e.total() < 1.0e9, "{e:?}");
    assert!(e.disk > 5.0e9, "the tables go to disk: {e:?}");
}

#[test]
fn a_self_join_on_few_varieties_is_allowed_the_rows_it_makes() {
    let plan = framecost::spec::load(Path::new("workloads/sql-self-join.yaml")).expect("spec");
    let run = RunResults::read(Path::new("tests/data/memory-runs/sql-self-join")).expect("recorded run");
    let w = &run.workloads[0];
    let i = plan.designs.iter().position(|d| d.name == "self-join").expect("design");
    let mut checked = 0;
    for &rows in &w.header.sizes {
        let Some(m) = w.point("self-join", rows).and_then(|p| p.measured.as_ref()) else { continue };
        let peak = m.alloc.peak_live as f64;
        let before = estimate_design(&plan, i, rows, &[]).working;
        // Measured 40–41 bytes a joined row; the bound counts the two tables' 64.
        assert!(before >= peak && before <= 2.0 * peak, "at {rows} rows: estimated {before:.3e} B before measuring, measured {peak:.3e} B");
        checked += 1;
    }
    assert!(checked >= 4, "{checked} sizes measured");
    // A first size of 128k rows (refused from the measured peaks in every catalog sweep) is
    // refused before anything is measured too: about 1.5e9 joined rows.
    let e = estimate_design(&plan, i, 128_000, &[]);
    assert!(e.working > 64.0e9, "{e:?}");
    assert!(e.joined_rows.is_some_and(|r| (1.4e9..1.6e9).contains(&r)), "{e:?}");
    // --plan says why, in the refusal.
    let out = assert_cmd::Command::cargo_bin("framecost").expect("binary").args(["sweep", "workloads/sql-self-join.yaml", "--sizes", "8k,128k", "--plan"]).output().expect("runs");
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    assert!(text.contains("would refuse") && text.contains("an SQL join makes about 1.53G rows, bounded from the table plan"), "{text}");
    // At the workload's own sizes, --plan names the first size refused: 64k rows (22.9 GiB).
    let out = assert_cmd::Command::cargo_bin("framecost").expect("binary").args(["sweep", "workloads/sql-self-join.yaml", "--plan"]).output().expect("runs");
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("would refuse: sql-self-join design `self-join` from 64k rows: needs about 22.9 GiB"), "{text}");
    // A sweep refuses it before building anything, measures the window design, and its
    // summary says why a table of a few MiB would not fit.
    let dir = tempfile::tempdir().expect("tempdir");
    let run = dir.path().join("run");
    let out = assert_cmd::Command::cargo_bin("framecost")
        .expect("binary")
        .args(["sweep", "workloads/sql-self-join.yaml", "--sizes", "128k", "--quiet", "--out"])
        .arg(&run)
        .output()
        .expect("runs");
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let r = RunResults::read(&run).expect("run");
    assert!(r.workloads[0].point("window", 128_000).and_then(|p| p.measured.as_ref()).is_some());
    let recap = assert_cmd::Command::cargo_bin("framecost").expect("binary").arg("recap").arg(&run).output().expect("runs");
    let text = String::from_utf8_lossy(&recap.stdout).split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(text.contains("would not fit in memory: an SQL join makes about 1.53G rows"), "{text}");
}

#[test]
fn joined_rows_follow_the_generated_keys() {
    // The self-join's rows are Σ over varieties of count²: counted on the generated table
    // itself and compared with the bound's n²·Σp² (exact for a self-join, up to the draw).
    use framecost::measure::query_sizes::{match_share, values};
    use polars::prelude::*;
    let plan = framecost::spec::load(Path::new("workloads/sql-self-join.yaml")).expect("spec");
    let n = 40_000;
    let df = framecost::table::generate(&plan.columns, plan.seed, n).expect("table");
    let counts = df.lazy().group_by([col("variety")]).agg([len().alias("n")]).collect().expect("counts");
    let made: f64 = counts.column("n").expect("n").cast(&DataType::Float64).expect("f64").f64().expect("f64").into_no_null_iter().map(|c| c * c).sum();
    let t = &plan.tables[0];
    let c = t.columns.iter().find(|c| c.name == "variety").expect("variety");
    let v = values(c, t, &plan.tables, n);
    let bound = n as f64 * n as f64 * match_share(&v, &v);
    assert!((bound / made - 1.0).abs() < 0.05, "bound {bound:.4e} rows, the table makes {made:.4e}");
}

#[test]
fn a_streaming_join_is_allowed_what_it_builds() {
    // Deliveries joined to growers on the streaming engine, the growers a quarter, a
    // sixteenth, or a fixed 1000 of them: every design at every recorded size was estimated,
    // before anything was measured, at least at its measured peak, and at most ×6 above it.
    let mut checked = 0;
    for run in ["quarter-1M-8M", "quarter-16M-32M", "sixteenth", "fixed-1000"] {
        for (design, rows, peak, e, _) in estimated_against_peaks(&Path::new("tests/data/memory-runs/stream-join").join(run)) {
            assert!(e.working >= peak && e.working <= 6.0 * peak, "{run}: {design} at {rows} rows: estimated {:.3e} B, measured {peak:.3e} B", e.working);
            checked += 1;
        }
    }
    assert_eq!(checked, 20);
}

#[test]
fn an_in_memory_group_by_is_allowed_by_its_groups_and_never_below_its_peak() {
    // GROUP BY and DISTINCT on the in-memory engine at 100 to 4M groups: the estimate before
    // measuring follows the groups' share of the rows (10× the table for a unique key, the
    // plain query's 3× for a few groups), and is never below the recorded peak.
    let dir = Path::new("tests/data/memory-runs/mem-groups");
    let plan = framecost::spec::load(&dir.join("workload.yaml")).expect("spec");
    let mut checked = 0;
    for (design, rows, peak, e, table) in estimated_against_peaks(dir) {
        assert!(e.working >= peak, "{design} at {rows} rows: estimated {:.3e} B, measured {peak:.3e} B", e.working);
        let factor = e.working / table;
        // Every row its own group: the hashing factor; 100 groups: the plain query's.
        let want = match design.as_str() {
            "group-unique" | "distinct-unique" => Some(10.0),
            "group-100" => Some(3.0),
            _ => None,
        };
        assert!(want.map_or(factor <= 10.0, |f| (factor - f).abs() < 1e-9), "{design} at {rows} rows: ×{factor}");
        checked += 1;
    }
    assert_eq!(checked, 12);
    // 100 groups of 400M rows: the plain query's factor, not the hashing one.
    let few = plan.designs.iter().position(|d| d.name == "group-100").expect("design");
    let e = estimate_design(&plan, few, 400_000_000, &[]);
    assert!((e.working / plan.table_bytes(400_000_000) - 3.0).abs() < 1e-9, "{e:?}");
}

#[test]
fn a_join_without_an_equality_is_allowed_every_pair() {
    // `ON a.grams < b.grams` and the same as CROSS JOIN … WHERE: polars pairs every row with
    // every row (976 MiB at 8k rows, 16 bytes a pair). The estimate before measuring counts
    // every pair times both tables' row bytes: never below the peak, at most ×5 above it.
    let mut checked = 0;
    for (design, rows, peak, e, _) in estimated_against_peaks(Path::new("tests/data/memory-runs/range-join")) {
        assert!(e.working >= peak && e.working <= 5.0 * peak, "{design} at {rows} rows: estimated {:.3e} B, measured {peak:.3e} B", e.working);
        assert_eq!(e.joined_rows, Some(rows as f64 * rows as f64), "{e:?}");
        checked += 1;
    }
    assert_eq!(checked, 8);
}
