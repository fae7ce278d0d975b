//! Counter-based randomness: the value of cell (column, row) is a pure function of the seed,
//! the column's stream and the row number.
//!
//! This is why tables are the same bit for bit on every run and machine, and why a column
//! does not change when another column is added: there is no shared generator state. The
//! mixer is SplitMix64's finaliser (Steele, Lea & Flood, "Fast splittable pseudorandom
//! number generators", OOPSLA 2014), fixed here so that a dependency upgrade can never
//! change the tables.

/// SplitMix64's output function (its one home is `fit::rng`, which depends on nothing).
pub use crate::fit::rng::mix64;

const GOLDEN: u64 = 0x9e37_79b9_7f4a_7c15;

/// One independent stream of random words, indexed by row.
#[derive(Debug, Clone, Copy)]
pub struct Stream {
    key: u64,
}

impl Stream {
    /// A stream for `(seed, name, purpose)`: the name is the column name, the purpose tells
    /// apart the uses inside one column (values, nulls, shuffles).
    pub fn new(seed: u64, name: &str, purpose: u64) -> Stream {
        let h = xxhash_rust::xxh3::xxh3_64_with_seed(name.as_bytes(), seed);
        Stream { key: mix64(h ^ purpose.wrapping_mul(GOLDEN)) }
    }

    /// The random word for row `i`.
    #[inline(always)]
    pub fn at(&self, i: u64) -> u64 {
        mix64(self.key.wrapping_add(i.wrapping_mul(GOLDEN)))
    }

    /// A number in `0..n` for row `i` (multiply-high mapping, Lemire 2019).
    #[inline(always)]
    pub fn below(&self, i: u64, n: u64) -> u64 {
        ((self.at(i) as u128 * n as u128) >> 64) as u64
    }

    /// A float in [0, 1) for row `i`.
    #[inline(always)]
    pub fn unit(&self, i: u64) -> f64 {
        (self.at(i) >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }
}

/// Walker/Vose alias table: draws index k with probability proportional to weights[k] in O(1).
#[derive(Debug, Clone)]
pub struct Alias {
    prob: Vec<f64>,
    alias: Vec<u32>,
}

impl Alias {
    /// Zipf weights 1/(k+1)^s over `n` values.
    pub fn zipf(n: u64, s: f64) -> Alias {
        let w: Vec<f64> = (0..n).map(|k| 1.0 / ((k + 1) as f64).powf(s)).collect();
        Alias::new(&w)
    }

    pub fn new(weights: &[f64]) -> Alias {
        let n = weights.len();
        let total: f64 = weights.iter().sum();
        let mut prob: Vec<f64> = weights.iter().map(|w| w * n as f64 / total).collect();
        let mut alias = vec![0u32; n];
        let (mut small, mut large): (Vec<usize>, Vec<usize>) = (0..n).partition(|&i| prob[i] < 1.0);
        while let (Some(s), Some(&l)) = (small.pop(), large.last()) {
            alias[s] = l as u32;
            prob[l] -= 1.0 - prob[s];
            if prob[l] < 1.0 {
                large.pop();
                small.push(l);
            }
        }
        for i in large.into_iter().chain(small) {
            prob[i] = 1.0;
        }
        Alias { prob, alias }
    }

    /// Draw with one random word.
    #[inline(always)]
    pub fn draw(&self, word: u64) -> u64 {
        let n = self.prob.len() as u64;
        let k = ((word as u128 * n as u128) >> 64) as usize;
        // The low 53 bits after removing the index bits give the coin.
        let coin = ((word.wrapping_mul(n)) >> 11) as f64 * (1.0 / (1u64 << 53) as f64);
        if coin < self.prob[k] {
            k as u64
        } else {
            self.alias[k] as u64
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn splitmix_reference_values() {
        // Reference [memory]: SplitMix64 seeded with 0 yields 0xe220a8397b1dcdaf first
        // (the sequence used to seed xoshiro generators); our mix64 of the first state
        // (0 + golden gamma) must give it.
        assert_eq!(mix64(GOLDEN), 0xe220_a839_7b1d_cdaf);
    }

    #[test]
    fn zipf_alias_frequencies() {
        // Zipf s=1 over 4 values: probabilities 1/H4 · (1, 1/2, 1/3, 1/4), H4 = 25/12.
        let a = Alias::zipf(4, 1.0);
        let st = Stream::new(7, "z", 0);
        let mut counts = [0u64; 4];
        let n = 200_000;
        for i in 0..n {
            counts[a.draw(st.at(i)) as usize] += 1;
        }
        let h = 25.0 / 12.0;
        for (k, c) in counts.iter().enumerate() {
            let p = 1.0 / ((k + 1) as f64 * h);
            let got = *c as f64 / n as f64;
            assert!((got - p).abs() < 0.01, "value {k}: {got} vs {p}");
        }
    }
}
