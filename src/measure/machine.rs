//! Machine facts: a fingerprint of the computer a run was made on, the memory it has free,
//! and a yardstick — a fixed reference kernel timed in the same run.
//!
//! The yardstick lets later comparisons across runs and machines be judged: if the
//! yardstick got 30% slower, a 30% slower design says more about the machine than about
//! the design.


use std::time::Instant;
use sysinfo::{CpuRefreshKind, System};
pub use crate::results::schema::{MachineFingerprint, Yardstick};

impl MachineFingerprint {
    pub fn collect() -> MachineFingerprint {
        let mut sys = System::new();
        sys.refresh_cpu_list(CpuRefreshKind::nothing());
        sys.refresh_memory();
        let cpu_model = sys.cpus().first().map(|c| c.brand().trim().to_string()).unwrap_or_default();
        MachineFingerprint {
            cpu_model: if cpu_model.is_empty() { "unknown".into() } else { cpu_model },
            logical_cores: std::thread::available_parallelism().map(|n| n.get()).unwrap_or(1),
            physical_cores: System::physical_core_count(),
            memory_total_bytes: sys.total_memory(),
            os: format!("{} {}", System::name().unwrap_or_default(), System::os_version().unwrap_or_default())
                .trim()
                .to_string(),
            kernel: System::kernel_version().unwrap_or_default(),
            arch: System::cpu_arch(),
            framecost_version: env!("CARGO_PKG_VERSION").to_string(),
            polars_version: polars::VERSION.to_string(),
            polars_threads: std::env::var("POLARS_MAX_THREADS")
                .ok()
                .and_then(|v| v.parse().ok())
                .unwrap_or_else(|| std::thread::available_parallelism().map(|n| n.get()).unwrap_or(1)),
        }
    }

    /// Fields that make two machines different for comparison purposes.
    pub fn same_machine(&self, other: &MachineFingerprint) -> bool {
        self.cpu_model == other.cpu_model
            && self.logical_cores == other.logical_cores
            && self.memory_total_bytes == other.memory_total_bytes
            && self.polars_version == other.polars_version
    }
}

/// Memory the OS says is available now (bytes).
pub fn available_memory() -> u64 {
    let mut sys = System::new();
    sys.refresh_memory();
    sys.available_memory()
}

/// The drift probe: a small fixed kernel (sum 64 Ki words, sort 16 Ki words of fixed data,
/// single thread, about 0.1–0.5 ms) timed once per sampling round, beside the designs, so
/// each size records how fast the machine itself was while that size was measured.
pub struct DriftProbe {
    data: Vec<u64>,
}

impl DriftProbe {
    pub fn new() -> DriftProbe {
        let st = crate::table::rng::Stream::new(0x5eed, "drift-probe", 0);
        DriftProbe { data: (0..(1u64 << 16)).map(|i| st.at(i)).collect() }
    }

    /// Time one run of the kernel (ns).
    pub fn time(&self) -> f64 {
        self.time_with_cpu().0
    }

    /// Time one run of the kernel: (wall ns, this thread's CPU ns). The kernel is
    /// single-threaded, so CPU below wall means the thread waited for a core.
    pub fn time_with_cpu(&self) -> (f64, f64) {
        let mut v = self.data[..1 << 14].to_vec();
        let c0 = super::hygiene::thread_cpu_ns();
        let t0 = Instant::now();
        let s = self.data.iter().fold(0u64, |a, &b| a.wrapping_add(b));
        std::hint::black_box(s);
        v.sort_unstable();
        std::hint::black_box(&v);
        let wall = t0.elapsed().as_nanos() as f64;
        let cpu = super::hygiene::thread_cpu_ns().saturating_sub(c0) as f64;
        (wall, cpu)
    }
}

impl Default for DriftProbe {
    fn default() -> Self {
        DriftProbe::new()
    }
}

/// A fixed kernel: sum 4 Mi words and sort 1 Mi words of fixed pseudo-random data, single
/// threaded. About 100 ms on a laptop core; the same work on every machine and version.
pub fn yardstick() -> Yardstick {
    let st = crate::table::rng::Stream::new(0x5eed, "yardstick", 0);
    let data: Vec<u64> = (0..(1u64 << 22)).map(|i| st.at(i)).collect();
    let mut rounds = Vec::new();
    for _ in 0..7 {
        let t0 = Instant::now();
        let s = data.iter().fold(0u64, |a, &b| a.wrapping_add(b));
        std::hint::black_box(s);
        let mut v = data[..1 << 20].to_vec();
        v.sort_unstable();
        std::hint::black_box(&v);
        rounds.push(t0.elapsed().as_nanos() as f64);
    }
    Yardstick {
        kernel: "sum 4Mi u64 + sort 1Mi u64 (single thread, fixed data)".into(),
        median_ns: crate::measure::stats::median(&rounds),
        rounds_ns: rounds,
    }
}
