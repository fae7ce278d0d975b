//! The records that open and close a run and a workload: who ran what, where, with which
//! clock (the run header), the workload's spec, sizes, budgets, columns and designs (the
//! workload header), and when and how the run ended.

use super::clock::ClockInfo;
use super::machine::available_memory;
use super::program::ProgramDesign;
use crate::plan::Plan;
use crate::results::*;
use crate::spec::model::Feed;
use std::time::Instant;

fn now_text() -> String {
    chrono::Local::now().to_rfc3339_opts(chrono::SecondsFormat::Secs, false)
}

/// The workload's header record: its spec, sizes, budgets, columns and designs.
pub fn workload_header(plan: &Plan, programs: &[Option<ProgramDesign>]) -> Record {
    let b = plan.budget;
    Record::Workload(WorkloadHeader {
        workload: plan.name.clone(),
        file: plan.file.clone(),
        spec_hash: plan.spec_hash.clone(),
        seed: plan.seed,
        about: plan.about.clone(),
        target: plan.target,
        sizes: plan.sizes.clone(),
        budget: b,
        columns: plan.columns.clone(),
        designs: plan
            .designs
            .iter()
            .enumerate()
            .map(|(i, d)| DesignHeader {
                name: d.name.clone(),
                about: d.about.clone(),
                recipe: d.recipe(),
                steps: d.setup.iter().chain(&d.steps).map(|s| s.def.name.to_string()).collect(),
                feed: match d.feed {
                    Feed::Table => "table".into(),
                    Feed::Records => "records".into(),
                },
                engine: Some(d.engine.label().to_string()),
                query_plans: d.query_plans.clone(),
                program: d.program.as_ref().map(|p| ProgramHeader {
                    command: p.written.clone(),
                    mode: p.mode.label().to_string(),
                    input: p.input.label().to_string(),
                    any_row_order: p.any_row_order,
                    runtime: programs.get(i).and_then(|x| x.as_ref()).and_then(|x| x.runtime.clone()),
                }),
                expect_time: d.expect_time.map(str::to_string),
                expect_bytes: d.expect_bytes.map(str::to_string),
                expect_dtypes: d.expect_dtypes.iter().map(|(c, t)| (c.clone(), t.to_string())).collect(),
            })
            .collect(),
        outputs_differ: plan.outputs_differ.clone(),
        gate_threshold: plan.gate_threshold,
        spec_text: plan.spec_text.clone(),
        axis: plan.axis.clone(),
    })
}

/// Start a run: the header record with machine, clock and yardstick.
pub fn run_header(command: Vec<String>, clock: ClockInfo, forced: bool, warm_caches: bool) -> RunHeader {
    let started = now_text();
    RunHeader {
        schema: SCHEMA.to_string(),
        run_id: chrono::Local::now().format("%Y%m%d-%H%M%S").to_string(),
        started_at: started,
        command,
        machine: super::machine::MachineFingerprint::collect(),
        clock,
        yardstick: super::machine::yardstick(),
        available_memory_bytes: available_memory(),
        forced,
        cache_sweep_bytes: (!warm_caches).then(super::scrub::bytes),
        cache_sweep_threads: (!warm_caches).then(super::scrub::threads),
        caches: super::scrub::cache_levels(),
        allocator: super::alloc::settings(),
        build: build_id(),
    }
}

/// This framecost build: the xxh3 hash of its own executable, in hex (read once, about
/// 0.1 s for a 107 MB release build); None where the executable cannot be read.
pub fn build_id() -> Option<String> {
    static ID: std::sync::OnceLock<Option<String>> = std::sync::OnceLock::new();
    ID.get_or_init(|| {
        let bytes = std::fs::read(std::env::current_exe().ok()?).ok()?;
        Some(format!("{:016x}", xxhash_rust::xxh3::xxh3_64(&bytes)))
    })
    .clone()
}

/// The closing record.
pub fn end_record(started: Instant, mismatches: usize) -> EndRecord {
    EndRecord { finished_at: now_text(), elapsed_s: started.elapsed().as_secs_f64(), mismatches: mismatches as u64 }
}
