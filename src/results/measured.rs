//! What was measured at one point: the samples and their statistics, allocation counts, a
//! program's own figures, and how the machine behaved meanwhile. Part of the results format
//! (`docs/results.md`); re-exported by `results`.

use super::schema::{AllocStats, OutputFacts};
use super::StopReason;
use serde::{Deserialize, Serialize};

/// Everything measured at one point. Times are per run of the design (ns); a sample of a
/// very fast design times `batch` runs and is divided by it.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Measured {
    pub stop: StopReason,
    pub batch: u64,
    pub warmup_runs: u64,
    /// Every sample, in the order taken (ns per run).
    pub samples_ns: Vec<f64>,
    pub median_ns: f64,
    /// 95% distribution-free interval of the median (absent below 6 samples).
    pub ci_low_ns: Option<f64>,
    pub ci_high_ns: Option<f64>,
    /// Largest distance from the median to an interval end, over the median.
    pub ci_rel_half_width: Option<f64>,
    pub mean_ns: f64,
    /// Percentiles of the samples, Hyndman & Fan type 7 (p50 is the median). Version 1
    /// stored 2 here (a clamped histogram); the reader recomputes them for such runs.
    pub p50_ns: f64,
    pub p90_ns: f64,
    pub p99_ns: f64,
    pub max_ns: f64,
    /// Median CPU time of the whole process per run (ns); above wall time means parallel work.
    pub cpu_ns: f64,
    /// Allocations per run inside the timed region (median over samples); zero for a
    /// program design, which has none counted (see `alloc_counted`).
    pub alloc: AllocStats,
    /// True when every sample allocated the same bytes per run.
    pub alloc_exact: bool,
    /// False for a program design: `alloc` holds no counts and must not be read as zero
    /// allocations (absent in older runs: true).
    #[serde(default = "yes", skip_serializing_if = "is_true")]
    pub alloc_counted: bool,
    /// What was measured of a program design's process (absent for steps).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub program: Option<ProgramMeasured>,
    /// What the design produced (from its first run).
    pub output: Option<OutputFacts>,
    /// Wall time spent on this point, warm-up included (s).
    pub spent_s: f64,
    /// How the machine behaved while this point's size was sampled (absent in runs made
    /// before it was recorded).
    #[serde(default)]
    pub disturbance: Option<Disturbance>,
    /// The sorted samples split into two clusters (a gap of ×1.5 with 15% on each side).
    #[serde(default)]
    pub bimodal: bool,
}

fn yes() -> bool {
    true
}
fn is_true(b: &bool) -> bool {
    *b
}

/// A program design's process at one point: its own CPU time and resident memory.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
pub struct ProgramMeasured {
    /// Median CPU time of the program per run (ns), from its own resource usage (every
    /// thread); above the wall time means parallel work. Absent where it cannot be read.
    pub child_cpu_ns: Option<f64>,
    /// Largest peak resident size of the program over the samples (bytes): `VmHWM` of a
    /// worker, reset before each sample; `ru_maxrss` of a whole process run.
    pub peak_resident_bytes: u64,
    /// Resident size before the timed runs (bytes): a worker's size with the input loaded;
    /// absent in process mode, where every run starts from nothing.
    pub resident_before_bytes: Option<u64>,
    /// Time the worker took to load the input (ns, untimed by the sweep).
    pub load_ns: Option<f64>,
}

impl ProgramMeasured {
    /// Memory the timed runs added on top of what was resident before them (the whole
    /// peak in process mode).
    pub fn working_bytes(&self) -> u64 {
        self.peak_resident_bytes.saturating_sub(self.resident_before_bytes.unwrap_or(0))
    }
}

impl Measured {
    /// A point as `points.jsonl` stores it, with median `median_ns` and samples around it
    /// (±1%), one allocated byte: for unit tests that set what they need.
    #[cfg(test)]
    pub fn fixture(median_ns: f64) -> Measured {
        const POINT: &str = r#"{"stop":"precise","batch":1,"warmup_runs":1,"samples_ns":[1.0],"median_ns":1.0,
            "ci_low_ns":1.0,"ci_high_ns":1.0,"ci_rel_half_width":0.01,"mean_ns":1.0,"p50_ns":1.0,"p90_ns":1.0,
            "p99_ns":1.0,"max_ns":1.0,"cpu_ns":1.0,"alloc":{"bytes":1,"count":1,"peak_live":1},"alloc_exact":true,
            "spent_s":0.1,"bimodal":false}"#;
        let mut m: Measured = serde_json::from_str(POINT).expect("fixture");
        m.median_ns = median_ns;
        m.samples_ns = vec![median_ns * 0.99, median_ns, median_ns * 1.01];
        m
    }

    /// Bytes allocated per run, when they were counted (steps only).
    pub fn counted_bytes(&self) -> Option<u64> {
        self.alloc_counted.then_some(self.alloc.bytes)
    }
    /// Peak memory of one run: the counted peak of live allocations for steps, the working
    /// resident size for a program.
    pub fn peak_bytes(&self) -> u64 {
        match (&self.program, self.alloc_counted) {
            (Some(p), false) => p.working_bytes(),
            _ => self.alloc.peak_live,
        }
    }

    /// Measured while the machine was busy, or while it ran markedly slower than over the
    /// workload's other sizes (`Disturbance::machine_slow`): such a point never decides a
    /// class or a verdict.
    pub fn is_contaminated(&self) -> bool {
        self.disturbance.as_ref().is_some_and(|d| d.busy || d.machine_slow.is_some())
    }

    /// Why a contaminated point is left out, for reports: other work on the machine, or the
    /// machine itself running slower (with the drift probe's ratio); None for a clean point.
    pub fn disturbed_because(&self) -> Option<String> {
        let d = self.disturbance.as_ref()?;
        if d.busy {
            return Some("measured while the machine was busy".into());
        }
        d.machine_slow.map(|r| format!("measured while the machine ran slower (the drift probe took {r:.2} times its usual time at this size)"))
    }

    /// Measured while other work took the machine (`Disturbance::busy`) — not the slower
    /// machine seen by the drift probe alone, which the gate corrects for between runs.
    pub fn is_busy(&self) -> bool {
        self.disturbance.as_ref().is_some_and(|d| d.busy)
    }
}

/// Signals of a busy machine at one size (see `measure::hygiene`).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct Disturbance {
    /// CPU time the single-threaded drift probe got over its wall time, over the size's
    /// rounds (1 = a core to itself).
    pub probe_cpu_share: Option<f64>,
    /// Involuntary context switches of the process per second of sampling this design.
    pub switches_per_s: Option<f64>,
    /// Share of the machine's CPU time used by other processes (and other guests of the
    /// hypervisor) while this design was sampled; absent in runs before it was measured.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub others_share: Option<f64>,
    /// One-minute load average per core when the size ended.
    pub load_per_core: Option<f64>,
    /// Median time of the cache sweeps before this design's samples (ns): the memory's speed
    /// at this point, which the CPU-bound drift probe does not see. Absent with
    /// `--warm-caches` and in runs before it was measured.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub memory_probe_ns: Option<f64>,
    /// Median time of the files probe before this design's samples (ns): the file system's
    /// speed at this point (`measure::files_probe`), for designs that write files only.
    /// Absent for the others and in runs before it was measured.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub files_probe_ns: Option<f64>,
    /// True when the probe got less than 0.85 of a core ("probe-share" in `reasons`) or other
    /// processes used more than 35% of the machine ("other-processes").
    pub busy: bool,
    pub reasons: Vec<String>,
    /// The drift probe's time at this size over its median over the workload's sizes, when
    /// at least `results::reader::SLOW_PROBE`: the machine itself ran slower while this size
    /// was measured (a neighbour on the same host, a slower clock), though no process of
    /// this machine took the cores. Set when the run is read, not stored.
    #[serde(skip)]
    pub machine_slow: Option<f64>,
}
