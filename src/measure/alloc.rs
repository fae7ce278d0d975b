//! A counting global allocator: exact, deterministic evidence of how much memory a step
//! asks for.
//!
//! It wraps the system allocator and keeps four atomic counters: bytes allocated, number of
//! allocations, bytes live now, and the peak of live bytes since the last [`Window::open`].
//! Counts cover every thread (polars works on a thread pool). A newcomer must know: the
//! counters are process-wide, so nothing else may allocate while a sample is timed — the
//! runner draws progress only between samples.

use std::alloc::{GlobalAlloc, Layout, System};
use std::sync::atomic::{AtomicU64, Ordering::Relaxed};
pub use crate::results::schema::AllocStats;

pub struct CountingAlloc;

static ALLOCATED: AtomicU64 = AtomicU64::new(0);
static COUNT: AtomicU64 = AtomicU64::new(0);
static LIVE: AtomicU64 = AtomicU64::new(0);
static PEAK: AtomicU64 = AtomicU64::new(0);

#[inline(always)]
fn grow(size: u64) {
    ALLOCATED.fetch_add(size, Relaxed);
    COUNT.fetch_add(1, Relaxed);
    let live = LIVE.fetch_add(size, Relaxed) + size;
    PEAK.fetch_max(live, Relaxed);
}

#[inline(always)]
fn shrink(size: u64) {
    LIVE.fetch_sub(size, Relaxed);
}

unsafe impl GlobalAlloc for CountingAlloc {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        let p = unsafe { System.alloc(layout) };
        if !p.is_null() {
            grow(layout.size() as u64);
        }
        p
    }
    unsafe fn alloc_zeroed(&self, layout: Layout) -> *mut u8 {
        let p = unsafe { System.alloc_zeroed(layout) };
        if !p.is_null() {
            grow(layout.size() as u64);
        }
        p
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        unsafe { System.dealloc(ptr, layout) };
        shrink(layout.size() as u64);
    }
    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        let p = unsafe { System.realloc(ptr, layout, new_size) };
        if !p.is_null() {
            // A reallocation is counted as a new allocation of the new size and a free of
            // the old: that is what it costs when the block has to move.
            shrink(layout.size() as u64);
            grow(new_size as u64);
        }
        p
    }
}

#[global_allocator]
static GLOBAL: CountingAlloc = CountingAlloc;

/// An open measurement window.
pub struct Window {
    bytes0: u64,
    count0: u64,
    live0: u64,
}

impl Window {
    /// Start counting: resets the peak to the current live level.
    #[inline]
    pub fn open() -> Window {
        let live0 = LIVE.load(Relaxed);
        PEAK.store(live0, Relaxed);
        Window { bytes0: ALLOCATED.load(Relaxed), count0: COUNT.load(Relaxed), live0 }
    }

    /// Stop counting and read the window.
    #[inline]
    pub fn close(self) -> AllocStats {
        AllocStats {
            bytes: ALLOCATED.load(Relaxed) - self.bytes0,
            count: COUNT.load(Relaxed) - self.count0,
            peak_live: PEAK.load(Relaxed).saturating_sub(self.live0),
        }
    }
}

/// The system allocator's thresholds, fixed for the measuring process.
///
/// glibc adapts its thresholds as the process runs: the first time a large block that came
/// from `mmap` is freed, blocks up to that size start coming from the heap instead, and the
/// heap is handed back to the system whenever its free top passes twice that size. Whether
/// a sample pays for fresh pages then depends on what the other designs, sampled in turn,
/// happened to allocate and free before it, not on the design being measured: six sweeps of
/// `workloads/type-drift.yaml` on this project's 2-core machine had 15 bimodal points of
/// 180 with the adaptive thresholds (one cast at 256k rows: 100 µs samples, then twenty at
/// 800 µs, then 80 µs again) and 1 of 180 with them fixed.
///
/// Fixed where glibc starts: blocks of 128 KiB and more always come fresh from the system
/// (and pay for their pages as they are first touched), smaller ones are reused from the
/// heap, which is only trimmed past 2 GiB free. That is the regime of the sizes that matter:
/// a column of a million rows is megabytes, and a pipeline run once over the full data
/// touches fresh memory. Fixing the thresholds high instead (32 MiB, glibc's largest) kept
/// the small sizes free of page faults and moved the change of regime to where the blocks
/// pass 32 MiB: a self-join whose table of pairs crosses it between 4,000 and 8,000 rows went
/// from ×4.8 to ×6.5 per doubling there, so fits on the smaller sizes predicted it far too
/// low; with 128 KiB it grew ×3.4, ×4.8, ×4.3 from 500 to 4,000 rows. The allocation
/// counters above do not change.
///
/// Small blocks are also freed at once (`M_MXFAST` 0: no "fast bins"). With fast bins a
/// freed small block is only parked, and the parked blocks are merged by the next larger
/// allocation, whoever makes it: a design that frees many small blocks hands that work to
/// the design sampled after it. Measured on this project's 2-core Xeon: cross-column's
/// `horizontal-arithmetic` at 64k rows ran 0.7–1.1 ms alone or beside `horizontal-sum`, and
/// 3.6–5.9 ms (CPU busy throughout) while sampled in turn with `transpose-numeric`, whose
/// runs free many small blocks (one column per row of the table) — back to 0.7 ms after that design's
/// last sample; with fast bins off, 0.78–1.10 ms beside it. Over 26 catalog sweeps its
/// samples had fallen into two groups at 117 of 259 points. Each design now pays for the
/// blocks it frees itself (the per-size caches of freed blocks stay: a few blocks per size,
/// reused by the same design). Called once, before the first size is measured; later calls
/// do nothing.
pub fn steady_thresholds() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        #[cfg(all(target_os = "linux", target_env = "gnu"))]
        // SAFETY: mallopt only changes the allocator's tuning values; it is called before the
        // measuring threads allocate, and glibc serialises it against allocation anyway.
        unsafe {
            libc::mallopt(libc::M_MMAP_THRESHOLD, 128 << 10);
            libc::mallopt(libc::M_TRIM_THRESHOLD, i32::MAX);
            libc::mallopt(libc::M_MXFAST, 0);
        }
    });
}

/// The allocator tuning [`steady_thresholds`] applies, in words, for the run header: runs
/// measured with different settings are not comparable for designs that allocate and free
/// many blocks (fast bins on, before 5 December 2026, made `horizontal-arithmetic` ×4–×6
/// slower beside a transpose). None where nothing is tuned.
pub fn settings() -> Option<String> {
    #[cfg(all(target_os = "linux", target_env = "gnu"))]
    return Some("glibc: blocks of 128 KiB and more fresh from the system, heap never trimmed, fast bins off".to_string());
    #[allow(unreachable_code)]
    None
}

/// Bytes live in the whole process right now.
pub fn live_bytes() -> u64 {
    LIVE.load(Relaxed)
}

#[cfg(all(test, target_os = "linux", target_env = "gnu"))]
mod tests {
    /// Bytes parked in glibc's fast bins, over every arena (`mallinfo2`'s `fsmblks`).
    fn parked_bytes() -> usize {
        // SAFETY: mallinfo2 only reads the allocator's statistics.
        unsafe { libc::mallinfo2() }.fsmblks
    }

    #[test]
    fn small_blocks_freed_are_not_parked_for_the_next_allocation() {
        super::steady_thresholds();
        let before = parked_bytes();
        // Many small blocks, every other one freed (so none can merge with a neighbour):
        // past the few per size the thread's cache keeps, fast bins would park the rest
        // (with them on, 9,993 blocks and 480 kB here) until a later, larger allocation
        // merged them. Other tests may run meanwhile; none can park blocks either.
        let mut blocks: Vec<Option<Box<[u8; 40]>>> = (0..20_000).map(|i| Some(Box::new([i as u8; 40]))).collect();
        for b in blocks.iter_mut().step_by(2) {
            *b = None;
        }
        assert_eq!(blocks.iter().flatten().count(), 10_000);
        assert!(parked_bytes() <= before, "{} bytes parked, {before} before", parked_bytes());
    }
}
