//! Fast, parallel building blocks of the generator: a random order of the keys 0..n and the
//! duplicated-key rule, both computed row by row so long columns split across threads.
//!
//! A newcomer must know: the random order is a keyed Feistel network over the smallest
//! power-of-four domain holding n, walked until it lands below n ("cycle walking"), so it
//! is a true permutation of 0..n for any n, and row i's key depends only on (seed, column
//! name, i) like every other cell.

use super::rng::Stream;
use rayon::prelude::*;

use super::fill::{self, GRAIN};

/// A pseudo-random permutation of 0..rows (one key per row, each exactly once).
pub fn random_order(st: &Stream, rows: u64) -> Vec<i64> {
    if rows <= 1 {
        return (0..rows as i64).collect();
    }
    let bits = 64 - (rows - 1).leading_zeros();
    let half = bits.div_ceil(2);
    let mask = (1u64 << half) - 1;
    let feistel = |x: u64| -> u64 {
        let (mut l, mut r) = (x >> half, x & mask);
        for round in 0..4u64 {
            let t = l ^ (st.at(r | (round << 40)) & mask);
            l = r;
            r = t;
        }
        (l << half) | r
    };
    let mut keys = fill::collect(0..rows, |i| feistel(i) as i64);
    if 1u64 << (2 * half) == rows {
        // The network's domain is exactly 0..rows: every key already landed.
        return keys;
    }
    // Cycle walking: a key that landed at or past `rows` is sent through the network again
    // until it lands below. Done per chunk on the keys still walking, each pass one
    // vectorised loop over them alone.
    keys.par_chunks_mut(GRAIN).for_each(|chunk| {
        if !chunk.iter().fold(false, |any, &x| any | (x as u64 >= rows)) {
            return;
        }
        let (mut at, mut walking): (Vec<usize>, Vec<u64>) =
            chunk.iter().enumerate().filter(|(_, &x)| x as u64 >= rows).map(|(j, &x)| (j, x as u64)).unzip();
        while !walking.is_empty() {
            fill::map_in_place(&mut walking, feistel);
            let mut kept = 0;
            for m in 0..walking.len() {
                if walking[m] < rows {
                    chunk[at[m]] = walking[m] as i64;
                } else {
                    at[kept] = at[m];
                    walking[kept] = walking[m];
                    kept += 1;
                }
            }
            at.truncate(kept);
            walking.truncate(kept);
        }
    });
    keys
}

/// Apply the duplicated-key rule: row i (i ≥ 1) is a repeat when `du.at(i) < cut`, and then
/// takes the final key of an earlier row j = `du.below(i ^ 0x5555_5555, i)`. Following the
/// chain of repeats back to a row that is not one gives, in parallel, exactly what the
/// sequential rule gives.
pub fn with_duplicates(keys: &[i64], du: &Stream, cut: u64) -> Vec<i64> {
    (0..keys.len())
        .into_par_iter()
        .with_min_len(GRAIN)
        .map(|i| {
            let mut at = i as u64;
            while at >= 1 && du.at(at) < cut {
                at = du.below(at ^ 0x5555_5555, at);
            }
            keys[at as usize]
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn random_order_is_a_permutation_for_awkward_sizes() {
        let st = Stream::new(5, "k", 3);
        for n in [0u64, 1, 2, 3, 7, 1000, 4097, 65_537] {
            let mut v = random_order(&st, n);
            assert_eq!(v.len() as u64, n);
            let moved = v.iter().enumerate().filter(|(i, &k)| *i as i64 != k).count();
            v.sort_unstable();
            assert!(v.iter().enumerate().all(|(i, &k)| i as i64 == k), "n = {n}");
            if n >= 1000 {
                assert!(moved as f64 > 0.9 * n as f64, "n = {n}: only {moved} keys moved");
            }
        }
    }

    #[test]
    fn parallel_duplicates_equal_the_sequential_rule() {
        let du = Stream::new(9, "d", 4);
        let cut = (0.3 * u64::MAX as f64) as u64;
        let keys: Vec<i64> = (0..50_000).rev().collect();
        let mut seq = keys.clone();
        for i in 1..seq.len() {
            if du.at(i as u64) < cut {
                let j = du.below(i as u64 ^ 0x5555_5555, i as u64) as usize;
                seq[i] = seq[j];
            }
        }
        assert_eq!(with_duplicates(&keys, &du, cut), seq);
    }
}
