//! The loops every generated column is made by: rows filled from a pure per-row function in
//! parallel chunks, by a loop simple enough for the compiler to vectorise, so generating a
//! table stays a small part of a sweep (`benches/generate.rs` measures it against a copy).
//!
//! A newcomer must know: on x86-64 the same loop is compiled a second time for AVX-512 and
//! chosen at run time when the processor has it (by compilers from Rust 1.89, where those
//! target features are stable: `build.rs` sets `framecost_wide`; older ones build the plain
//! loops alone) (eight rows per instruction: SplitMix64's
//! 64-bit multiplies have no narrower vector form). Both copies evaluate the same integer
//! and IEEE arithmetic on each row, so a table never depends on the machine; the unit test
//! below compares them. The per-row functions must be branch-free where they can (a select
//! instead of an `if` on random data): a mispredicted branch per row costs more than the
//! row's arithmetic.

use polars_arrow::bitmap::Bitmap;
use rayon::prelude::*;
use std::mem::MaybeUninit;
use std::ops::Range;

/// Rows per parallel task.
pub(crate) const GRAIN: usize = 1 << 14;

/// True when the wide copy of the loops can run here (checked once, then cached by std).
#[cfg(all(target_arch = "x86_64", framecost_wide))]
#[inline]
fn wide() -> bool {
    std::arch::is_x86_feature_detected!("avx512f")
        && std::arch::is_x86_feature_detected!("avx512dq")
        && std::arch::is_x86_feature_detected!("avx512vl")
        && std::arch::is_x86_feature_detected!("avx512bw")
}

#[inline(always)]
fn fill_plain<T>(out: &mut [MaybeUninit<T>], base: u64, f: &impl Fn(u64) -> T) {
    for (j, o) in out.iter_mut().enumerate() {
        o.write(f(base + j as u64));
    }
}

#[cfg(all(target_arch = "x86_64", framecost_wide))]
#[target_feature(enable = "avx512f,avx512dq,avx512vl,avx512bw")]
unsafe fn fill_wide<T>(out: &mut [MaybeUninit<T>], base: u64, f: &impl Fn(u64) -> T) {
    fill_plain(out, base, f)
}

/// `out[j] = f(base + j)` for every j, with the fastest copy of the loop this machine runs.
fn fill_chunk<T>(out: &mut [MaybeUninit<T>], base: u64, f: &impl Fn(u64) -> T) {
    #[cfg(all(target_arch = "x86_64", framecost_wide))]
    if wide() {
        // SAFETY: `wide()` checked that the processor has every feature the copy is built for.
        unsafe { fill_wide(out, base, f) };
        return;
    }
    fill_plain(out, base, f)
}

#[inline(always)]
fn map_plain<T: Copy>(vals: &mut [T], f: &impl Fn(T) -> T) {
    for v in vals.iter_mut() {
        *v = f(*v);
    }
}

#[cfg(all(target_arch = "x86_64", framecost_wide))]
#[target_feature(enable = "avx512f,avx512dq,avx512vl,avx512bw")]
unsafe fn map_wide<T: Copy>(vals: &mut [T], f: &impl Fn(T) -> T) {
    map_plain(vals, f)
}

/// `vals[j] = f(vals[j])` for every j, on this thread (the caller is already parallel).
pub(crate) fn map_in_place<T: Copy>(vals: &mut [T], f: impl Fn(T) -> T) {
    #[cfg(all(target_arch = "x86_64", framecost_wide))]
    if wide() {
        // SAFETY: as in `fill_chunk`.
        unsafe { map_wide(vals, &f) };
        return;
    }
    map_plain(vals, &f)
}

/// `[f(span.start), …, f(span.end - 1)]`, made in parallel chunks.
pub(crate) fn collect<T: Copy + Send>(span: Range<u64>, f: impl Fn(u64) -> T + Sync) -> Vec<T> {
    collect_with(span, |out, base| fill_chunk(out, base, &f))
}

/// Rows `span` where row i holds `f(i / run)`: each run's value is computed once.
pub(crate) fn collect_runs<T: Copy + Send>(span: Range<u64>, run: u64, f: impl Fn(u64) -> T + Sync) -> Vec<T> {
    let run = run.max(1);
    collect_with(span, |out, base| {
        let len = out.len() as u64;
        if len == 0 {
            return;
        }
        let (first, last) = (base / run, (base + len - 1) / run);
        let mut values: Vec<MaybeUninit<T>> = Vec::with_capacity((last - first + 1) as usize);
        values.resize_with((last - first + 1) as usize, MaybeUninit::uninit);
        fill_chunk(&mut values, first, &f);
        let mut at = 0usize;
        for (r, v) in values.iter().enumerate() {
            let end = (((first + r as u64 + 1) * run).min(base + len) - base) as usize;
            // SAFETY: `fill_chunk` wrote every element of `values`.
            let v = unsafe { v.assume_init() };
            for o in &mut out[at..end] {
                o.write(v);
            }
            at = end;
        }
    })
}

/// A vector of `span`'s length whose chunks `fill(chunk, first_row)` writes in parallel.
fn collect_with<T: Copy + Send>(span: Range<u64>, fill: impl Fn(&mut [MaybeUninit<T>], u64) + Sync) -> Vec<T> {
    let n = (span.end - span.start) as usize;
    let mut v: Vec<T> = Vec::with_capacity(n);
    v.spare_capacity_mut()[..n].par_chunks_mut(GRAIN).enumerate().for_each(|(c, chunk)| fill(chunk, span.start + (c * GRAIN) as u64));
    // SAFETY: every chunk of the first n slots was written above (a panic in `fill` unwinds
    // past this line), and T is Copy, so nothing needs dropping.
    unsafe { v.set_len(n) };
    v
}

/// Bits 64 rows at a time: bit j of word w is `set(base + 64w + j)`, rows at or past `rows`
/// left clear.
#[inline(always)]
fn bits_plain(out: &mut [u8], base: u64, rows: u64, set: &impl Fn(u64) -> bool) {
    for (w, o) in out.chunks_mut(8).enumerate() {
        let first = base + 64 * w as u64;
        let mut word = 0u64;
        if first + 64 <= rows {
            for j in 0..64u64 {
                word |= (set(first + j) as u64) << j;
            }
        } else {
            for j in 0..rows.saturating_sub(first).min(64) {
                word |= (set(first + j) as u64) << j;
            }
        }
        o.copy_from_slice(&word.to_le_bytes()[..o.len()]);
    }
}

#[cfg(all(target_arch = "x86_64", framecost_wide))]
#[target_feature(enable = "avx512f,avx512dq,avx512vl,avx512bw")]
unsafe fn bits_wide(out: &mut [u8], base: u64, rows: u64, set: &impl Fn(u64) -> bool) {
    bits_plain(out, base, rows, set)
}

/// A bitmap of `rows` bits, bit i = `set(i)`, built 64 rows per word in parallel.
pub(crate) fn bits(rows: u64, set: impl Fn(u64) -> bool + Sync) -> Bitmap {
    let mut bytes = vec![0u8; rows.div_ceil(8) as usize];
    // Chunks of whole words, so every task starts at a multiple of 64 rows.
    bytes.par_chunks_mut(GRAIN / 8).enumerate().for_each(|(c, chunk)| {
        let base = (c * GRAIN) as u64;
        #[cfg(all(target_arch = "x86_64", framecost_wide))]
        if wide() {
            // SAFETY: as in `fill_chunk`.
            unsafe { bits_wide(chunk, base, rows, &set) };
            return;
        }
        bits_plain(chunk, base, rows, &set)
    });
    Bitmap::from_u8_vec(bytes, rows as usize)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::table::rng::{Alias, Stream};

    fn plain<T: Copy>(n: u64, f: impl Fn(u64) -> T) -> Vec<T> {
        let mut v: Vec<MaybeUninit<T>> = Vec::with_capacity(n as usize);
        v.resize_with(n as usize, MaybeUninit::uninit);
        fill_plain(&mut v, 3, &f);
        v.into_iter().map(|x| unsafe { x.assume_init() }).collect()
    }

    #[test]
    fn parallel_and_wide_loops_give_what_a_plain_loop_gives() {
        let st = Stream::new(17, "crates", 1);
        let zipf = Alias::zipf(120, 0.8);
        let n = 100_003u64;
        // The rows a plain sequential loop gives are the reference; `collect` (parallel
        // chunks, the wide copy when this machine has it) must give the same bits.
        let ints = |i: u64| 7 + st.below(i, 100_001) as i64;
        assert_eq!(collect(3..n + 3, ints), plain(n, ints));
        let wide_n = |i: u64| st.below(i, (1u64 << 40) + 9) as i64;
        assert_eq!(collect(3..n + 3, wide_n), plain(n, wide_n));
        let floats = |i: u64| (0.5 + (950.0 - 0.5) * st.unit(i)).to_bits();
        assert_eq!(collect(3..n + 3, floats), plain(n, floats));
        let skewed = |i: u64| zipf.draw(st.at(i));
        assert_eq!(collect(3..n + 3, skewed), plain(n, skewed));
        let runs: Vec<u64> = (3..n + 3).map(|i| st.at(i / 7)).collect();
        assert_eq!(collect_runs(3..n + 3, 7, |r| st.at(r)), runs);
        // Bits: against one test per row, including a ragged last word.
        for rows in [0u64, 1, 63, 64, 65, 100_003] {
            let cut = u64::MAX / 3;
            let bm = bits(rows, |i| st.at(i) < cut);
            assert_eq!(bm.len() as u64, rows);
            assert!(bm.iter().enumerate().all(|(i, b)| b == (st.at(i as u64) < cut)), "{rows} rows");
        }
        #[cfg(all(target_arch = "x86_64", framecost_wide))]
        if wide() {
            // And the wide copy alone, on the same rows.
            let mut v: Vec<MaybeUninit<u64>> = Vec::with_capacity(n as usize);
            v.resize_with(n as usize, MaybeUninit::uninit);
            unsafe { fill_wide(&mut v, 3, &skewed) };
            let v: Vec<u64> = v.into_iter().map(|x| unsafe { x.assume_init() }).collect();
            assert_eq!(v, plain(n, skewed));
        }
    }
}
