//! The file system's own speed at each point, for the designs that touch it.
//!
//! Why: between two sweeps of unchanged code the file system of a shared machine moves by
//! far more than the processor or the memory, and it moves the designs that write many
//! small files most. Measured here: two back-to-back catalog sweeps (5 December), storage's
//! `ipc-per-parcel` ×1.64–×2.04 at its four sizes and `csv-per-parcel` ×1.25–×1.66, the
//! one-file designs ×0.99–×1.30, while the memory probe (×0.96–×1.12) and the share of the
//! machine other processes took (0.00–0.02 in both) held; the
//! gate called that a regression of the code. Neither the CPU-bound drift probe nor the
//! cache sweep reads the file system, so before each sample of a design that writes files
//! (a step with a disk factor, or a program design, whose input goes through a file) this
//! probe does what such a design does per file, outside the timed region: make a fresh
//! folder in the run's temp folder, create and write [`FILES`] files of [`FILE_BYTES`]
//! bytes, read them back, and remove the folder. Its median per point is recorded
//! (`Disturbance::files_probe_ns`). The gate compares it between runs at the same point: a
//! change of such a design that went the same way as the probe, by a quarter or more, is
//! shown and not judged (`track::gate::FILES_MOVE`).
//!
//! Measured on this project's machine (ext4 on a virtual disk), four quiet storage sweeps
//! of 5 December: 0.55 ms to 8 ms per probe, alike for every design of a size (within
//! about 20%) and mostly rising through a sweep as its designs wrote more; ×2.2 to ×6.3 over
//! one of those sweeps' while another process wrote 4 MiB blocks with `oflag=direct,sync` (other
//! processes then took 10% of the CPU time, under the busy mark). It runs before the cache
//! sweep, so the sample still starts with cold caches.

use crate::patterns::storage::TempFolder;
use std::path::Path;
use std::time::Instant;

/// Files written and read back per probe (the storage workload writes one per parcel).
pub const FILES: usize = 16;
/// Bytes per file: one page, the size of a small table's file.
pub const FILE_BYTES: usize = 4096;

/// Time one probe in `base` (ns); None when the folder or a file could not be made or read
/// (the design's own steps then report the error).
pub fn time(base: &Path) -> Option<f64> {
    let block = [0x5au8; FILE_BYTES];
    let t = Instant::now();
    let folder = TempFolder::create_in(base).ok()?;
    let name = |i: usize| folder.path().join(format!("probe-{i:02}"));
    for i in 0..FILES {
        std::fs::write(name(i), block).ok()?;
    }
    for i in 0..FILES {
        if std::fs::read(name(i)).ok()?.len() != FILE_BYTES {
            return None;
        }
    }
    drop(folder);
    Some(t.elapsed().as_nanos() as f64)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_probe_takes_time_and_leaves_nothing_behind() {
        let base = tempfile::tempdir().expect("tempdir");
        let ns = time(base.path()).expect("a probe in a writable folder");
        assert!(ns > 0.0 && ns.is_finite(), "{ns}");
        assert_eq!(std::fs::read_dir(base.path()).expect("read_dir").count(), 0, "the probe's folder is removed");
    }

    #[test]
    fn a_folder_that_cannot_be_written_gives_no_reading() {
        let base = tempfile::tempdir().expect("tempdir");
        assert_eq!(time(&base.path().join("absent")), None);
    }
}
