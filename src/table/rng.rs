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
        mul_high(self.at(i), n)
    }

    /// A float in [0, 1) for row `i`.
    #[inline(always)]
    pub fn unit(&self, i: u64) -> f64 {
        (self.at(i) >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }
}

/// The high 64 bits of `x · n`. For `n` below 2³² the product is taken in two 32-bit halves
/// (exactly the same number: `x·n = 2³²·(xh·n) + xl·n`, and the low part's carry is
/// `xl·n >> 32`), which vectorises where a 128-bit product does not.
#[inline(always)]
pub fn mul_high(x: u64, n: u64) -> u64 {
    if n >> 32 == 0 {
        ((x >> 32) * n + ((x & 0xffff_ffff) * n >> 32)) >> 32
    } else {
        ((x as u128 * n as u128) >> 64) as u64
    }
}

/// Walker/Vose alias table: draws index k with probability proportional to weights[k] in O(1).
///
/// Stored for speed without changing a draw: the coin `c · 2⁻⁵³ < prob[k]` (c a 53-bit
/// integer) is tested as `c < ⌈prob[k] · 2⁵³⌉` (the scaling by a power of two is exact), and
/// each slot packs its two outcomes, `k` and its alias, into one word, so a draw is two
/// table reads and a shift, with no branch on random data. [`Alias::relabel`] packs other
/// outcomes (a category id for k) into the same slots.
#[derive(Debug, Clone)]
pub struct Alias {
    cut: Vec<u64>,
    /// Low half: the outcome when the coin is under the cut; high half: otherwise.
    both: Vec<u64>,
}

impl Alias {
    /// Zipf weights 1/(k+1)^s over `n` values (`n` below 2³²).
    pub fn zipf(n: u64, s: f64) -> Alias {
        let w: Vec<f64> = (0..n).map(|k| 1.0 / ((k + 1) as f64).powf(s)).collect();
        Alias::new(w)
    }

    /// The table for `weights` (fewer than 2³² of them), whose buffer it reuses.
    pub fn new(weights: Vec<f64>) -> Alias {
        let n = weights.len();
        // More would take over 100 GiB to build; the memory guard refuses such sizes first.
        debug_assert!(n as u64 <= u32::MAX as u64, "an alias table holds fewer than 2^32 values");
        let total: f64 = weights.iter().sum();
        let mut prob = weights;
        for w in prob.iter_mut() {
            *w = *w * n as f64 / total;
        }
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
        const SCALE: f64 = (1u64 << 53) as f64;
        let cut: Vec<u64> = prob.into_iter().map(|p| (p * SCALE).ceil().max(0.0) as u64).collect();
        let both = alias.iter().enumerate().map(|(k, &a)| k as u64 | (a as u64) << 32).collect();
        Alias { cut, both }
    }

    /// The same draws with each outcome k replaced by `f(k)`.
    pub fn relabel(&self, f: impl Fn(u64) -> u32) -> Alias {
        let both = self.both.iter().map(|&b| f(b & 0xffff_ffff) as u64 | (f(b >> 32) as u64) << 32).collect();
        Alias { cut: self.cut.clone(), both }
    }

    /// Draw with one random word.
    #[inline(always)]
    pub fn draw(&self, word: u64) -> u64 {
        let n = self.cut.len() as u64;
        let k = mul_high(word, n) as usize;
        // The low 53 bits after removing the index bits give the coin.
        let coin = word.wrapping_mul(n) >> 11;
        debug_assert!(k < self.cut.len());
        // SAFETY: k = ⌊word·n / 2⁶⁴⌋ < n, the length of both tables (no bounds check, so
        // the loops that call this vectorise).
        let (cut, both) = unsafe { (*self.cut.get_unchecked(k), *self.both.get_unchecked(k)) };
        (both >> (((coin >= cut) as u64) << 5)) & 0xffff_ffff
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
