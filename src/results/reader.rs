//! Reads a run folder back. Tolerates damaged lines (a run killed mid-write, a byte that is
//! not UTF-8, a line edited by hand): every line is read on its own, good lines are kept and
//! the damage is counted, not hidden. A record whose numbers cannot come from a measurement
//! (a median of 1e308 ns or 1e-300 ns, zero rows) counts as damaged too, so nothing
//! downstream fits or draws absurd values; names are stripped of control characters.

use super::*;
use std::path::Path;

/// Everything in one run, grouped by workload.
#[derive(Debug, Clone, Default)]
pub struct RunResults {
    pub run: Option<RunHeader>,
    pub workloads: Vec<WorkloadResults>,
    pub end: Option<EndRecord>,
    /// Lines that could not be read (a cut-off last line after a crash, for instance).
    pub damaged_lines: usize,
}

#[derive(Debug, Clone)]
pub struct WorkloadResults {
    pub header: WorkloadHeader,
    pub tables: Vec<TableRecord>,
    pub points: Vec<PointRecord>,
    pub comparisons: Vec<ComparisonRecord>,
    /// The run's record of the processor's data caches (`RunHeader::caches`).
    pub caches: Vec<super::CacheLevel>,
}

impl WorkloadResults {
    /// (size, drift-probe median) of every comparison that has a probe time.
    pub fn probes(&self) -> Vec<(u64, f64)> {
        self.comparisons.iter().filter_map(|c| c.probe_ns.filter(|p| *p > 0.0 && p.is_finite()).map(|p| (c.rows, p))).collect()
    }

    /// The estimated in-memory size of the table at swept value `rows` (its `table` record).
    pub fn table_bytes(&self, rows: u64) -> Option<f64> {
        self.tables.iter().find(|t| t.rows == rows).map(|t| t.table_bytes_estimate)
    }

    /// Sizes with points beyond the header's planned sizes: the extra size a sweep spends
    /// on the designs whose class the planned sizes left unsettled (`sweep --extra-size`
    /// turns it on), ascending.
    pub fn extra_sizes(&self) -> Vec<u64> {
        let mut v: Vec<u64> = self.points.iter().map(|p| p.rows).filter(|n| !self.header.sizes.contains(n)).collect();
        v.sort_unstable();
        v.dedup();
        v
    }

    /// The planned sizes and the extra ones, ascending: the columns of a table of points.
    pub fn all_sizes(&self) -> Vec<u64> {
        let mut v = self.header.sizes.clone();
        v.extend(self.extra_sizes());
        v.sort_unstable();
        v.dedup();
        v
    }

    /// The points of one design, in size order.
    pub fn design_points(&self, design: &str) -> Vec<&PointRecord> {
        let mut v: Vec<&PointRecord> = self.points.iter().filter(|p| p.design == design).collect();
        v.sort_by_key(|p| p.rows);
        v
    }
    pub fn point(&self, design: &str, rows: u64) -> Option<&PointRecord> {
        self.points.iter().find(|p| p.design == design && p.rows == rows)
    }
    pub fn comparison(&self, rows: u64) -> Option<&ComparisonRecord> {
        self.comparisons.iter().find(|c| c.rows == rows)
    }
}

#[derive(Debug, thiserror::Error)]
pub enum ReadError {
    #[error("cannot read {path}: {source}")]
    Io {
        path: String,
        #[source]
        source: std::io::Error,
    },
    #[error("{path} is not a framecost run: {why}")]
    NotARun { path: String, why: String },
}

impl RunResults {
    /// Add one record (used by the writer as it goes, and by the reader).
    pub fn push(&mut self, rec: Record) {
        match rec {
            Record::Run(h) => self.run = Some(h),
            Record::Workload(h) => {
                let caches = self.run.as_ref().map(|r| r.caches.clone()).unwrap_or_default();
                self.workloads.push(WorkloadResults { header: h, tables: vec![], points: vec![], comparisons: vec![], caches })
            }
            Record::Table(t) => {
                if let Some(w) = self.workload_mut(&t.workload) {
                    w.tables.push(t)
                }
            }
            Record::Point(p) => {
                if let Some(w) = self.workload_mut(&p.workload) {
                    w.points.push(p)
                }
            }
            Record::Comparison(c) => {
                if let Some(w) = self.workload_mut(&c.workload) {
                    w.comparisons.push(c)
                }
            }
            Record::End(e) => self.end = Some(e),
        }
    }

    /// The workload named `name` (the last one of that name, as records are added to it).
    pub fn workload(&self, name: &str) -> Option<&WorkloadResults> {
        self.workloads.iter().rev().find(|w| w.header.workload == name)
    }

    fn workload_mut(&mut self, name: &str) -> Option<&mut WorkloadResults> {
        self.workloads.iter_mut().rev().find(|w| w.header.workload == name)
    }

    /// The complete runs in the folders of `dir` (those holding `points.jsonl`), in path
    /// order; folders that cannot be read or hold an unfinished run are passed over. An
    /// error only when `dir` itself cannot be listed. Used by `history`, `gate --history`
    /// and `gate --recheck`.
    pub fn read_folder(dir: &Path) -> std::io::Result<Vec<RunResults>> {
        let mut paths: Vec<std::path::PathBuf> = std::fs::read_dir(dir)?.filter_map(|e| e.ok()).map(|e| e.path()).filter(|p| p.join("points.jsonl").is_file()).collect();
        paths.sort();
        Ok(paths.iter().filter_map(|p| RunResults::read(p).ok()).filter(|r| r.complete()).collect())
    }

    /// Read `points.jsonl` from a run folder (or the file itself).
    pub fn read(path: &Path) -> Result<RunResults, ReadError> {
        let file = if path.is_dir() { path.join("points.jsonl") } else { path.to_path_buf() };
        let bytes = std::fs::read(&file).map_err(|source| ReadError::Io { path: file.display().to_string(), source })?;
        let mut out = RunResults::default();
        for line in bytes.split(|&b| b == b'\n') {
            let Ok(line) = std::str::from_utf8(line) else {
                out.damaged_lines += 1;
                continue;
            };
            if line.trim().is_empty() {
                continue;
            }
            match serde_json::from_str::<Record>(line) {
                Ok(rec) if super::sane::plausible(&rec) => out.push(super::sane::tidy(rec)),
                _ => out.damaged_lines += 1,
            }
        }
        match &out.run {
            None => Err(ReadError::NotARun {
                path: file.display().to_string(),
                why: "no run header (first line)".into(),
            }),
            Some(h) if h.schema != SCHEMA && !READABLE_SCHEMAS.contains(&h.schema.as_str()) => Err(ReadError::NotARun {
                path: file.display().to_string(),
                why: format!("schema `{}`, this framecost reads `{SCHEMA}` and {}", h.schema, READABLE_SCHEMAS.join(", ")),
            }),
            Some(h) => {
                if h.schema == "framecost.results/1" {
                    upgrade_percentiles(&mut out);
                }
                for w in &mut out.workloads {
                    mark_slow_sizes(w, slow_probe());
                }
                Ok(out)
            }
        }
    }

    /// True when the run ended normally.
    pub fn complete(&self) -> bool {
        self.end.is_some()
    }
}

/// How much slower than its median over a workload's sizes the drift probe must run at one
/// size for that size's points to count as measured on a slower machine
/// (`Disturbance::machine_slow`).
pub const SLOW_PROBE: f64 = 1.4;

/// The slow limit in use: [`SLOW_PROBE`], or `FRAMECOST_SLOW_PROBE` when set (to re-judge
/// saved runs at another limit).
pub fn slow_probe() -> f64 {
    std::env::var("FRAMECOST_SLOW_PROBE").ok().and_then(|v| v.parse().ok()).unwrap_or(SLOW_PROBE)
}

/// The sizes whose drift probe ran at least `limit` times slower than the probe's median over
/// the workload's sizes, with that ratio (three sizes or more with a probe; none otherwise).
///
/// Why: the probe is a fixed computation timed in the same rounds as the designs, so its
/// time moves only with the machine. Over three back-to-back catalog sweeps here (297 sizes),
/// a design's median at a size correlated with the probe there (r = 0.70 between their
/// log-deviations from the three runs' medians); where the probe ran ×1.25 or more its
/// usual time, the designs ran a median ×1.19 theirs. Within one run ×1.4 over the
/// workload's median marked 8 of the 297 sizes; with them left out, row-wise named the
/// same verdict in all three runs (a tie at ×1.15 had become a "winner" at ×1.44 in the
/// run whose largest size met a probe at ×1.42).
pub fn slow_sizes(probes: &[(u64, f64)], limit: f64) -> Vec<(u64, f64)> {
    let probes: Vec<(u64, f64)> = probes.iter().copied().filter(|p| p.1 > 0.0 && p.1.is_finite()).collect();
    if probes.len() < 3 {
        return vec![];
    }
    let median = crate::measure::stats::median(&probes.iter().map(|p| p.1).collect::<Vec<_>>());
    probes.iter().map(|&(rows, p)| (rows, p / median)).filter(|x| x.1 >= limit).collect()
}

/// Mark the points of every size [`slow_sizes`] names (`Disturbance::machine_slow`).
pub fn mark_slow_sizes(w: &mut WorkloadResults, limit: f64) {
    for (rows, ratio) in slow_sizes(&w.probes(), limit) {
        for m in w.points.iter_mut().filter(|x| x.rows == rows).filter_map(|x| x.measured.as_mut()) {
            if let Some(d) = m.disturbance.as_mut() {
                d.machine_slow = Some(ratio);
            }
        }
    }
}

/// Version 1 stored every percentile as 2 ns: recompute them from the samples it kept.
fn upgrade_percentiles(r: &mut RunResults) {
    for w in &mut r.workloads {
        for p in &mut w.points {
            if let Some(m) = p.measured.as_mut() {
                if let Some(t) = crate::fit::sample::tail_percentiles(&m.samples_ns) {
                    (m.p50_ns, m.p90_ns, m.p99_ns, m.max_ns) = (t.p50, t.p90, t.p99, t.max);
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Probe medians of one workload's sizes from a real sweep (row-wise, the third of three
    /// back-to-back catalog sweeps, µs): only the largest size, at ×1.42 the median, is slow.
    #[test]
    fn a_size_whose_probe_ran_slower_is_named_with_its_ratio() {
        let probes = [(4_000, 274.206), (16_000, 277.156), (64_000, 280.492), (256_000, 269.23), (1_024_000, 394.595)];
        let slow = slow_sizes(&probes, SLOW_PROBE);
        assert_eq!(slow.len(), 1, "{slow:?}");
        assert_eq!(slow[0].0, 1_024_000);
        // Median of the five: 277.156; 394.595 / 277.156 = 1.4237 (by hand).
        assert!((slow[0].1 - 1.4237).abs() < 1e-4, "{slow:?}");
        // Under the limit, or with too few sizes to know the usual time: nothing.
        assert!(slow_sizes(&probes, 1.5).is_empty());
        assert!(slow_sizes(&probes[3..], 1.0).is_empty());
    }

    #[test]
    fn a_point_on_a_slower_machine_is_left_out_but_not_called_busy() {
        let mut m = Measured::fixture(1e6);
        m.disturbance = Some(Disturbance { machine_slow: Some(1.42), ..Default::default() });
        assert!(m.is_contaminated() && !m.is_busy());
        assert!(m.disturbed_because().is_some_and(|w| w.contains("1.42 times its usual time")));
        m.disturbance = Some(Disturbance::default());
        assert!(!m.is_contaminated() && m.disturbed_because().is_none());
    }
}
