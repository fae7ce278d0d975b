//! Memory estimates made before a size runs, so a sweep refuses what will not fit instead
//! of taking the machine down.
//!
//! Before anything is measured, a size needs the table, the records made from it (for
//! `feed: records`), and each design's working memory as its steps' memory factor times the
//! table. Once a design has been measured at two or more sizes, its peak live bytes are
//! extrapolated along their own log-log slope instead. Steps that write files (the storage
//! family) also declare a disk factor, checked against the temp folder's free space.
//!
//! Designs on the streaming engine keep their tables on disk (Parquet chunks, counted as
//! disk) and hold a few chunks at a time: before they are measured, their working memory is
//! their memory factor times two chunks of every table.

use crate::measure::stats::loglog_slope;
use crate::plan::Plan;
use crate::spec::model::{EngineChoice, Feed};

/// Bytes a record's value takes: the value itself (an `AnyValue`, 32 bytes here) plus the
/// record's share of its vector.
pub const RECORD_VALUE_BYTES: f64 = 40.0;

/// Estimated memory for one size.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Estimate {
    pub table: f64,
    pub records: f64,
    pub working: f64,
    /// Bytes the largest-writing design puts in the temp folder.
    pub disk: f64,
}

impl Estimate {
    pub fn total(&self) -> f64 {
        self.table + self.records + self.working
    }
    pub fn describe_disk(&self) -> String {
        format!("about {} in the temp folder", crate::present::units::bytes(self.disk))
    }
    pub fn describe(&self) -> String {
        format!(
            "about {} (table {}, records {}, largest design's working memory {})",
            crate::present::units::bytes(self.total()),
            crate::present::units::bytes(self.table),
            crate::present::units::bytes(self.records),
            crate::present::units::bytes(self.working)
        )
    }
}

/// Estimate memory at `rows` for the whole size, given measured peaks `(rows,
/// peak_live_bytes)` per design: the in-memory designs' tables and largest working memory,
/// or — when every design streams — the largest streaming design's.
pub fn estimate(plan: &Plan, rows: u64, measured_peaks: &[Vec<(u64, f64)>]) -> Estimate {
    let streaming: Vec<usize> = (0..plan.designs.len()).filter(|&i| plan.designs[i].engine == EngineChoice::Streaming).collect();
    let disk_streaming = if streaming.is_empty() { 0.0 } else { plan.table_bytes(rows) };
    if streaming.len() == plan.designs.len() && !streaming.is_empty() {
        let mut largest = Estimate { table: 0.0, records: 0.0, working: 0.0, disk: 0.0 };
        for &i in &streaming {
            let e = estimate_design(plan, i, rows, measured_peaks);
            if e.total() > largest.total() {
                largest = e;
            }
        }
        largest.disk = disk_streaming;
        return largest;
    }
    let mut e = estimate_memory_designs(plan, rows, measured_peaks);
    e.disk = e.disk.max(disk_streaming);
    e
}

/// Estimate memory at `rows` for one design, on its own engine.
pub fn estimate_design(plan: &Plan, design: usize, rows: u64, measured_peaks: &[Vec<(u64, f64)>]) -> Estimate {
    let d = &plan.designs[design];
    let peaks = measured_peaks.get(design).map(Vec::as_slice).unwrap_or(&[]);
    let table = plan.table_bytes(rows);
    match d.engine {
        EngineChoice::Memory => {
            let records = if d.feed == Feed::Records { rows as f64 * plan.columns.len() as f64 * RECORD_VALUE_BYTES } else { 0.0 };
            let working = extrapolate(peaks, rows).unwrap_or(d.memory_factor() * table);
            Estimate { table, records, working, disk: d.disk_factor() * table }
        }
        EngineChoice::Streaming => {
            let chunks = (2.0 * plan.table_bytes(super::inputs::CHUNK_ROWS)).min(table);
            let working = extrapolate(peaks, rows).unwrap_or(d.memory_factor() * chunks);
            Estimate { table: chunks, records: 0.0, working, disk: table }
        }
    }
}

fn estimate_memory_designs(plan: &Plan, rows: u64, measured_peaks: &[Vec<(u64, f64)>]) -> Estimate {
    // The tables are shared; records, working memory and files are the largest of any design.
    let per: Vec<Estimate> = (0..plan.designs.len())
        .filter(|&i| plan.designs[i].engine == EngineChoice::Memory)
        .map(|i| estimate_design(plan, i, rows, measured_peaks))
        .collect();
    let largest = |f: fn(&Estimate) -> f64| per.iter().map(f).fold(0.0, f64::max);
    Estimate { table: plan.table_bytes(rows), records: largest(|e| e.records), working: largest(|e| e.working), disk: largest(|e| e.disk) }
}

/// Bytes free for an unprivileged writer in the folder's file system (statvfs), if known.
pub fn available_disk(dir: &std::path::Path) -> Option<u64> {
    use std::os::unix::ffi::OsStrExt;
    let path = std::ffi::CString::new(dir.as_os_str().as_bytes()).ok()?;
    // SAFETY: statvfs writes into the struct we own; the path is a valid C string.
    let mut st: libc::statvfs = unsafe { std::mem::zeroed() };
    let rc = unsafe { libc::statvfs(path.as_ptr(), &mut st) };
    (rc == 0).then(|| st.f_bavail as u64 * st.f_frsize as u64)
}

/// Peak at `rows` along the log-log slope of the last three measured peaks.
pub fn extrapolate(peaks: &[(u64, f64)], rows: u64) -> Option<f64> {
    let pts: Vec<(u64, f64)> = peaks.iter().copied().filter(|p| p.1 > 0.0).collect();
    if pts.len() < 2 {
        return None;
    }
    let tail = &pts[pts.len().saturating_sub(3)..];
    let x: Vec<f64> = tail.iter().map(|p| p.0 as f64).collect();
    let y: Vec<f64> = tail.iter().map(|p| p.1).collect();
    let slope = loglog_slope(&x, &y)?.clamp(0.0, 4.0);
    let (n0, p0) = tail[tail.len() - 1];
    Some(p0 * (rows as f64 / n0 as f64).powf(slope))
}
