//! Inputs for one size: the workload's tables in memory (for designs on the in-memory
//! engine) and as Parquet chunks in a temp folder (for designs on the streaming engine),
//! made before anything is timed; and which designs the memory and disk guards refuse.
//!
//! A newcomer must know: the streaming inputs are written chunk by chunk from the same
//! generator, so a size whose tables would not fit in memory can still be written and
//! scanned; the temp folder is removed when the inputs are dropped (after the size).

use super::memory;
use crate::patterns::sql::RunContext;
use crate::patterns::storage::TempFolder;
use crate::plan::Plan;
use crate::results::{SkipCause, SkipInfo, SkipReason};
use crate::spec::model::EngineChoice;
use polars::prelude::*;
use std::path::PathBuf;

/// Rows per Parquet chunk written for the streaming engine.
pub const CHUNK_ROWS: u64 = 1 << 20;

/// The tables of one size, ready for every design that runs at it.
pub struct SizeInputs {
    /// Every table in memory, first table first (empty when no in-memory design runs).
    pub tables: Vec<(String, DataFrame)>,
    /// One folder of Parquet chunks per table, inside a temp folder removed on drop.
    files: Option<(TempFolder, Vec<(String, PathBuf)>)>,
}

impl SizeInputs {
    /// Make what the designs at swept value `x` need: tables in memory when `memory`,
    /// Parquet chunks when `streaming`. `x` is a row count, or a value of the plan's axis
    /// (the tables then have the axis's rows and its parameter set to `x`).
    pub fn prepare(plan: &Plan, x: u64, memory: bool, streaming: bool) -> Result<SizeInputs, String> {
        Self::prepare_rows(plan, x, plan.rows_at(x), memory, streaming)
    }

    /// As [`SizeInputs::prepare`] with the row count given (the warm-up lap's small tables).
    pub fn prepare_rows(plan: &Plan, x: u64, rows: u64, memory: bool, streaming: bool) -> Result<SizeInputs, String> {
        let shaped = plan.tables_at(x);
        let tables = if memory {
            crate::table::related::generate_tables(&shaped, plan.seed, plan.related, rows).map_err(|e| e.to_string())?
        } else {
            Vec::new()
        };
        let files = if streaming { Some(write_chunks(plan, &shaped, rows, &tables)?) } else { None };
        Ok(SizeInputs { tables, files })
    }

    /// The first table (what built-in steps receive), or an empty frame when it is not in
    /// memory.
    pub fn first(&self) -> DataFrame {
        self.tables.first().map(|t| t.1.clone()).unwrap_or_default()
    }

    /// The run context of a design on `engine`: tables in memory, or scans of the chunks.
    pub fn context(&self, engine: EngineChoice) -> Result<RunContext, String> {
        let tables = match engine {
            EngineChoice::Memory => self.tables.iter().map(|(n, df)| (n.clone(), df.clone().lazy())).collect(),
            EngineChoice::Streaming => {
                let Some((_, dirs)) = &self.files else { return Err("the Parquet inputs were not written".into()) };
                dirs.iter()
                    .map(|(n, dir)| {
                        let glob = dir.join("*.parquet").display().to_string();
                        LazyFrame::scan_parquet(PlRefPath::new(glob.as_str()), ScanArgsParquet::default())
                            .map(|lf| (n.clone(), lf))
                            .map_err(|e| format!("could not scan the Parquet chunks of `{n}`: {e}"))
                    })
                    .collect::<Result<_, _>>()?
            }
        };
        Ok(RunContext::for_sweep(tables, engine))
    }
}

/// Write every table as Parquet chunks of [`CHUNK_ROWS`] rows: sliced from the tables in
/// memory when they were made, else generated chunk by chunk.
fn write_chunks(plan: &Plan, shaped: &[crate::plan::TablePlan], rows: u64, in_memory: &[(String, DataFrame)]) -> Result<(TempFolder, Vec<(String, PathBuf)>), String> {
    let folder = TempFolder::create().map_err(|e| format!("could not create a temp folder: {e}"))?;
    let mut dirs = Vec::new();
    for (ti, t) in shaped.iter().enumerate() {
        let dir = folder.path().join(&t.name);
        std::fs::create_dir(&dir).map_err(|e| format!("could not create {}: {e}", dir.display()))?;
        let total = t.rows.at(rows);
        let mut start = 0;
        let mut part = 0;
        loop {
            let len = CHUNK_ROWS.min(total - start);
            let mut chunk = match in_memory.get(ti) {
                Some((_, df)) => df.slice(start as i64, len as usize),
                None => crate::table::related::generate_table_span(shaped, t, plan.seed, plan.related, rows, start..start + len)
                    .map_err(|e| format!("could not make rows {start}.. of `{}`: {e}", t.name))?,
            };
            let path = dir.join(format!("part-{part:06}.parquet"));
            let file = std::fs::File::create(&path).map_err(|e| format!("could not write {}: {e}", path.display()))?;
            ParquetWriter::new(file).finish(&mut chunk).map_err(|e| format!("could not write {}: {e}", path.display()))?;
            start += len;
            part += 1;
            if start >= total {
                break;
            }
        }
        dirs.push((t.name.clone(), dir));
    }
    Ok((folder, dirs))
}

/// For each design, why the memory or disk guard refuses it at swept value `rows` (None: it may run).
/// `force` lifts the guard except against a hard limit (a resource limit or a cgroup), past
/// which an allocation would fail and abort the process.
pub fn refusals(plan: &Plan, rows: u64, peaks: &[Vec<(u64, f64)>], limit: &memory::MemoryLimit, share: f64, force: bool) -> Vec<Option<SkipInfo>> {
    let free_disk = memory::available_disk(&std::env::temp_dir());
    let avail = limit.bytes;
    (0..plan.designs.len())
        .map(|i| {
            let est = memory::estimate_design(plan, i, rows, peaks);
            let beyond_hard = limit.hard && est.total() > avail as f64;
            if force && !beyond_hard {
                return None;
            }
            if est.total() > avail as f64 * share {
                let cause = SkipCause::Memory {
                    need: est.need(),
                    engine: plan.designs[i].engine.label().to_string(),
                    limit_bytes: avail,
                    limit_source: limit.source.to_string(),
                    share,
                    hard: limit.hard,
                };
                return Some(SkipInfo { predicted_bytes: Some(est.total()), ..SkipInfo::new(SkipReason::Memory, cause) });
            }
            if force {
                return None;
            }
            match free_disk {
                Some(free) if est.disk > 0.0 && est.disk > free as f64 * share => {
                    let cause = SkipCause::Disk { disk_bytes: est.disk, free_bytes: free, folder: std::env::temp_dir().display().to_string(), share };
                    Some(SkipInfo { predicted_bytes: Some(est.disk), ..SkipInfo::new(SkipReason::Disk, cause) })
                }
                _ => None,
            }
        })
        .collect()
}
