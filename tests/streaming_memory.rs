//! The memory a streaming design is allowed before it is measured, against what such designs
//! were measured to keep: a GROUP BY whose groups grow with the rows keeps them all, whatever
//! the chunk size, so its estimate must follow the groups the table plan allows.
//!
//! Evidence: `tests/data/memory-runs/stream-groups/`, one sweep of its `workload.yaml` on this
//! project's build machine (see `tests/data/README.md`). The peaks are measurements of that
//! machine, not reference values.

use framecost::measure::memory::estimate_design;
use framecost::results::reader::RunResults;
use std::path::Path;

const RUN: &str = "tests/data/memory-runs/stream-groups";

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
