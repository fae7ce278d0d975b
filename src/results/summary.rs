//! `summary.json`: the run condensed for people and notebooks — per workload and design,
//! each size's median, interval, ratio to the fastest, allocations, what ended sampling,
//! skips, and the equivalence verdict. Derived from the records alone.

use super::reader::{RunResults, WorkloadResults};
use super::*;
use serde::{Deserialize, Serialize};

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Summary {
    pub schema: String,
    pub run_id: String,
    pub started_at: String,
    pub finished_at: Option<String>,
    pub complete: bool,
    /// The sweep was stopped by Ctrl-C or SIGTERM: what is here is what was finished.
    #[serde(default)]
    pub interrupted: bool,
    pub machine: Option<MachineFingerprint>,
    pub yardstick_ns: Option<f64>,
    pub workloads: Vec<WorkloadSummary>,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct WorkloadSummary {
    pub workload: String,
    pub about: String,
    pub target: Option<u64>,
    pub sizes: Vec<u64>,
    /// What `sizes` are values of when it is not rows (absent in row sweeps and older runs).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub axis: Option<AxisPlan>,
    pub designs: Vec<DesignSummary>,
    /// Sizes at which outputs differed without the spec allowing it.
    pub mismatches: Vec<u64>,
    /// Every measured size's outputs agreed (or differed as declared).
    pub outputs_agree: bool,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct DesignSummary {
    pub design: String,
    pub recipe: String,
    pub expect_time: Option<String>,
    pub expect_bytes: Option<String>,
    pub points: Vec<PointSummary>,
    /// Log-log slope of median time over the measured sizes (3 or more).
    pub time_exponent: Option<f64>,
    /// Log-log slope of allocated bytes per run over the measured sizes (3 or more).
    pub bytes_exponent: Option<f64>,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct PointSummary {
    pub rows: u64,
    pub median_ns: Option<f64>,
    pub ci_low_ns: Option<f64>,
    pub ci_high_ns: Option<f64>,
    pub ratio_to_fastest: Option<f64>,
    pub stop: Option<StopReason>,
    pub samples: usize,
    pub alloc_bytes: Option<u64>,
    pub peak_live_bytes: Option<u64>,
    /// A program design's peak resident size (it has no allocation counts).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub peak_resident_bytes: Option<u64>,
    pub output_chunks: Option<u64>,
    pub skipped: Option<SkipInfo>,
}

/// Slope over the measured points, when there are at least three.
pub fn exponent(points: &[(u64, f64)]) -> Option<f64> {
    if points.len() < 3 {
        return None;
    }
    let (x, y): (Vec<f64>, Vec<f64>) = points.iter().filter(|p| p.0 > 0 && p.1 > 0.0).map(|p| (p.0 as f64, p.1)).unzip();
    if x.len() < 2 {
        return None;
    }
    crate::fit::growth::loglog_slope(&x, &y).ok()
}

impl Summary {
    pub fn from_results(r: &RunResults) -> Summary {
        let run = r.run.as_ref();
        Summary {
            schema: SCHEMA.into(),
            run_id: run.map(|h| h.run_id.clone()).unwrap_or_default(),
            started_at: run.map(|h| h.started_at.clone()).unwrap_or_default(),
            finished_at: r.end.as_ref().map(|e| e.finished_at.clone()),
            complete: r.complete(),
            interrupted: false,
            machine: run.map(|h| h.machine.clone()),
            yardstick_ns: run.map(|h| h.yardstick.median_ns),
            workloads: r.workloads.iter().map(workload_summary).collect(),
        }
    }
}

fn workload_summary(w: &WorkloadResults) -> WorkloadSummary {
    let designs = w
        .header
        .designs
        .iter()
        .map(|d| {
            let pts = w.design_points(&d.name);
            let points: Vec<PointSummary> = pts
                .iter()
                .map(|p| {
                    let m = p.measured.as_ref();
                    let ratio = w
                        .comparison(p.rows)
                        .and_then(|c| c.ratios.iter().find(|r| r.design == d.name))
                        .map(|r| r.ratio);
                    PointSummary {
                        rows: p.rows,
                        median_ns: m.map(|m| m.median_ns),
                        ci_low_ns: m.and_then(|m| m.ci_low_ns),
                        ci_high_ns: m.and_then(|m| m.ci_high_ns),
                        ratio_to_fastest: ratio,
                        stop: m.map(|m| m.stop),
                        samples: m.map(|m| m.samples_ns.len()).unwrap_or(0),
                        alloc_bytes: m.and_then(|m| m.counted_bytes()),
                        peak_live_bytes: m.filter(|m| m.alloc_counted).map(|m| m.alloc.peak_live),
                        peak_resident_bytes: m.and_then(|m| m.program).map(|p| p.peak_resident_bytes),
                        output_chunks: m.and_then(|m| m.output.as_ref().map(|o| o.chunks)),
                        skipped: p.skipped.clone(),
                    }
                })
                .collect();
            let time: Vec<(u64, f64)> = pts.iter().filter_map(|p| p.measured.as_ref().map(|m| (p.rows, m.median_ns))).collect();
            let bytes: Vec<(u64, f64)> = pts
                .iter()
                .filter_map(|p| p.measured.as_ref().map(|m| (p.rows, m.alloc.bytes as f64)))
                .filter(|p| p.1 > 0.0)
                .collect();
            DesignSummary {
                design: d.name.clone(),
                recipe: d.recipe.clone(),
                expect_time: d.expect_time.clone(),
                expect_bytes: d.expect_bytes.clone(),
                points,
                time_exponent: exponent(&time),
                bytes_exponent: exponent(&bytes),
            }
        })
        .collect();
    let mismatches: Vec<u64> = w
        .comparisons
        .iter()
        .filter(|c| c.equivalence.status == EquivalenceStatus::Mismatch)
        .map(|c| c.rows)
        .collect();
    WorkloadSummary {
        workload: w.header.workload.clone(),
        about: w.header.about.clone(),
        target: w.header.target,
        sizes: w.header.sizes.clone(),
        axis: w.header.axis.clone(),
        designs,
        outputs_agree: mismatches.is_empty(),
        mismatches,
    }
}
