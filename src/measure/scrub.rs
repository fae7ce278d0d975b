//! The same cache state before every sample: the processor's caches are swept by reading a
//! buffer larger than the last-level cache, outside the timed region.
//!
//! Why: designs are sampled in turn, so what a sample finds in the caches depends on which
//! other designs ran just before it, and that changes while a size is measured — a design
//! that stops early (its budget spent, or precise enough) stops evicting the others' data.
//! Measured on this project's 2-core machine (EPYC, 32 MiB L3): key-lookups at 256k rows, a
//! prebuilt hash index took ~480 µs per run while the design that builds its own index
//! was sampled between its runs, and ~250 µs once that design had stopped after 21 samples;
//! the median then depended on when the neighbour stopped. Swept caches make every sample
//! start cold, which is also the state of a pipeline step over data larger than the caches
//! — the sizes a prediction is for.
//!
//! The buffer is 1.5 × the largest cache the system reports (`/sys/devices/system/cpu/cpu0/
//! cache/index*/size`; 32 MiB when unreadable, at most 256 MiB), allocated once, read one
//! cache line at a time, once per sample (not per run of a batch). Its cost is the memory's:
//! 48 MiB took 2–4 ms on the EPYC above; on a Xeon reporting a 260 MiB L3 the 256 MiB buffer
//! takes 15 ms read in two halves at once, 25 ms on one thread ([`caches`]), and no smaller
//! buffer is enough there (measured: an 8 MiB buffer read again after a 128 MiB sweep was
//! still partly cached, 0.35–0.63 ms against 0.58–0.66 ms after 256 MiB). It is the largest
//! cost of a sweep of sub-millisecond designs: in a catalog run of 12,561 samples it was 301 s
//! of 537 s.

use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::OnceLock;

/// Off with `sweep --warm-caches`: samples then find the caches as the previous one left them.
static ENABLED: AtomicBool = AtomicBool::new(true);

/// Sweep before every sample (the default) or not.
pub fn set_enabled(on: bool) {
    ENABLED.store(on, Ordering::Relaxed);
}

/// Size of the buffer read by [`caches`], in bytes.
pub fn bytes() -> u64 {
    (buffer().len() * 8) as u64
}

/// Bytes between the loads that touch the buffer: one per cache line.
const LINE: usize = 64;

fn buffer() -> &'static [u64] {
    static BUF: OnceLock<Vec<u64>> = OnceLock::new();
    BUF.get_or_init(|| {
        let bytes = (largest_cache_bytes().unwrap_or(32 << 20) * 3 / 2).min(256 << 20);
        // Filled with distinct values so the pages are real (not the shared zero page).
        (0..bytes / 8).map(|i| i as u64).collect()
    })
}

/// The largest data cache of the first CPU, in bytes ([`cache_levels`]).
pub fn largest_cache_bytes() -> Option<usize> {
    cache_levels().iter().map(|c| c.bytes as usize).max()
}

/// The data caches of the first CPU (data and unified; not instruction caches), smallest
/// level first, from Linux sysfs; empty where it cannot be read.
pub fn cache_levels() -> Vec<crate::results::CacheLevel> {
    let Ok(dir) = std::fs::read_dir("/sys/devices/system/cpu/cpu0/cache") else { return vec![] };
    let read = |p: &std::path::Path, f: &str| std::fs::read_to_string(p.join(f)).unwrap_or_default();
    let mut out: Vec<crate::results::CacheLevel> = dir
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().starts_with("index"))
        .filter_map(|e| {
            let p = e.path();
            cache_level(&read(&p, "level"), &read(&p, "type"), &read(&p, "size"), &read(&p, "shared_cpu_list"))
        })
        .collect();
    out.sort_by_key(|c| (c.level, c.bytes));
    out.dedup_by_key(|c| c.level);
    out
}

/// One sysfs cache entry (`level`, `type`, `size`, `shared_cpu_list` files), None for an
/// instruction cache or an unreadable entry.
fn cache_level(level: &str, kind: &str, size: &str, shared: &str) -> Option<crate::results::CacheLevel> {
    if !matches!(kind.trim(), "Data" | "Unified") {
        return None;
    }
    Some(crate::results::CacheLevel {
        level: level.trim().parse().ok()?,
        bytes: parse_size(size.trim())? as u64,
        shared_by: cpu_count(shared.trim()).unwrap_or(1),
    })
}

/// How many CPUs a kernel CPU list names ("0-1" → 2, "0,4-6" → 4).
fn cpu_count(list: &str) -> Option<u32> {
    let mut n = 0u32;
    for part in list.split(',').filter(|p| !p.is_empty()) {
        n += match part.split_once('-') {
            Some((a, b)) => b.trim().parse::<u32>().ok()?.checked_sub(a.trim().parse::<u32>().ok()?)? + 1,
            None => part.trim().parse::<u32>().map(|_| 1).ok()?,
        };
    }
    (n > 0).then_some(n)
}

/// "32768K" → 33554432; "1M", "512" (bytes) likewise.
fn parse_size(s: &str) -> Option<usize> {
    let (num, mult) = match s.chars().last()? {
        'K' | 'k' => (&s[..s.len() - 1], 1usize << 10),
        'M' | 'm' => (&s[..s.len() - 1], 1 << 20),
        'G' | 'g' => (&s[..s.len() - 1], 1 << 30),
        _ => (s, 1),
    };
    num.parse::<usize>().ok()?.checked_mul(mult)
}

/// Sweep before every sample unless `warm_caches`; allocate the buffer now if so.
pub fn configure(warm_caches: bool) {
    set_enabled(!warm_caches);
    if !warm_caches {
        prepare();
    }
}

/// Allocate the buffer now (before any timing), so the first sweep does not pay for it.
pub fn prepare() {
    let _ = buffer();
}

/// Sweep the caches: read one word of every cache line of the buffer. Returns a value
/// derived from the reads so the compiler cannot drop them.
///
/// With two or more cores the buffer is read in two halves at once, one on a helper thread:
/// the last-level cache is shared, so the eviction is the same, and the sweep is bound by the
/// memory's latency per core rather than by its bandwidth. Measured on this project's 2-core
/// machine (a Xeon reporting a 260 MiB L3, so a 256 MiB buffer): 25 ms per sweep on one
/// thread, 15 ms on two; an 8 MiB buffer read after either sweep took 0.56–0.66 ms, against
/// 0.35 ms when it was still cached. The sweep is outside the timed region and the helper
/// has ended before the sample starts.
#[inline(never)]
pub fn caches() -> u64 {
    if !ENABLED.load(Ordering::Relaxed) {
        return 0;
    }
    let buf = buffer();
    if !two_cores() {
        return read_lines(buf);
    }
    let (first, second) = buf.split_at(buf.len() / 2);
    std::thread::scope(|s| match std::thread::Builder::new().spawn_scoped(s, || read_lines(second)) {
        Ok(helper) => {
            let a = read_lines(first);
            a.wrapping_add(helper.join().unwrap_or(0))
        }
        // No thread to be had (a limit on threads): the whole buffer on this one.
        Err(_) => read_lines(first).wrapping_add(read_lines(second)),
    })
}

/// Threads that read the buffer in [`caches`].
pub fn threads() -> u32 {
    if two_cores() {
        2
    } else {
        1
    }
}

fn two_cores() -> bool {
    static TWO: OnceLock<bool> = OnceLock::new();
    *TWO.get_or_init(|| std::thread::available_parallelism().is_ok_and(|n| n.get() >= 2))
}

/// Read one word of every cache line of `buf`.
fn read_lines(buf: &[u64]) -> u64 {
    let step = LINE / 8;
    let mut acc = 0u64;
    let mut i = 0;
    while i < buf.len() {
        acc = acc.wrapping_add(buf[i]);
        i += step;
    }
    std::hint::black_box(acc)
}

/// [`caches`], telling whether a sweep happened (so its duration is a reading of the
/// memory's speed: the same bytes read from main memory every time).
pub fn caches_timed() -> bool {
    caches();
    ENABLED.load(Ordering::Relaxed)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cache_sizes_read_as_sysfs_writes_them() {
        // Format of /sys/devices/system/cpu/cpu*/cache/index*/size (Linux kernel
        // documentation, ABI sysfs-devices-system-cpu): a number with a K suffix.
        assert_eq!(parse_size("32768K"), Some(32 << 20));
        assert_eq!(parse_size("48K"), Some(48 << 10));
        assert_eq!(parse_size("1M"), Some(1 << 20));
        assert_eq!(parse_size("512"), Some(512));
        assert_eq!(parse_size("x"), None);
        assert_eq!(parse_size(""), None);
        // shared_cpu_list uses the kernel's CPU list format (Documentation/admin-guide/
        // kernel-parameters.rst, "cpu lists"): ranges and single numbers, comma separated.
        assert_eq!(cpu_count("0"), Some(1));
        assert_eq!(cpu_count("0-1"), Some(2));
        assert_eq!(cpu_count("0,4-6"), Some(4));
        assert_eq!(cpu_count("0-3,8-11"), Some(8));
        assert_eq!(cpu_count("3-1"), None);
        assert_eq!(cpu_count(""), None);
        // The entries of this project's 2-core Xeon as sysfs lists them.
        let l2 = cache_level("2\n", "Unified\n", "2048K\n", "0\n").expect("a data cache");
        assert_eq!((l2.level, l2.bytes, l2.shared_by), (2, 2 << 20, 1));
        assert_eq!(cache_level("3", "Unified", "491520K", "0-1").map(|c| (c.bytes, c.shared_by)), Some((480 << 20, 2)));
        assert!(cache_level("1", "Instruction", "64K", "0").is_none());
        assert!(cache_level("1", "Data", "48K", "0").is_some());
        // The sweep touches every line of the buffer (sum of 0, 8, 16, … below its length),
        // whether it is read on one thread or two.
        let n = buffer().len() as u64;
        let lines = n.div_ceil(8);
        assert_eq!(caches(), 8 * lines * (lines - 1) / 2);
        assert_eq!(read_lines(buffer()), 8 * lines * (lines - 1) / 2);
    }
}
