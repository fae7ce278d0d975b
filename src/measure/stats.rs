//! Order statistics for samples: the median, its distribution-free confidence interval,
//! and a bootstrap interval for the ratio of two medians.
//!
//! The median interval uses the binomial distribution of how many samples fall below the
//! true median (the classic sign-test interval; e.g. Conover, *Practical Nonparametric
//! Statistics*, §3.2). It assumes nothing about the shape of timing noise, which is
//! skewed and often bimodal. At least 6 samples are needed for 95%.

use crate::table::rng::Stream;

/// Median of sorted data (mean of the two middle values for an even count).
pub fn median_sorted(s: &[f64]) -> f64 {
    let n = s.len();
    if n == 0 {
        return f64::NAN;
    }
    if n % 2 == 1 {
        s[n / 2]
    } else {
        (s[n / 2 - 1] + s[n / 2]) / 2.0
    }
}

pub use crate::fit::sample::{tail_percentiles, TailPercentiles};

pub fn median(v: &[f64]) -> f64 {
    let mut s = v.to_vec();
    s.sort_by(f64::total_cmp);
    median_sorted(&s)
}

/// Ranks (1-based) `(j, n+1-j)` of the order statistics bounding a median interval with at
/// least `confidence` coverage, or None when n is too small for it.
pub fn median_ci_ranks(n: usize, confidence: f64) -> Option<(usize, usize)> {
    if n == 0 {
        return None;
    }
    let alpha = (1.0 - confidence) / 2.0;
    // cdf(k) = P(Bin(n, 1/2) <= k), summed in log space to survive large n.
    let ln2n = n as f64 * std::f64::consts::LN_2;
    let mut ln_c = 0.0f64; // ln C(n, 0)
    let mut cdf = 0.0f64;
    let mut j = 0usize; // largest j with P(Bin < j) <= alpha
    for k in 0..n {
        let next = cdf + (ln_c - ln2n).exp();
        // P(Bin < k+1) = P(Bin <= k) = next
        if next <= alpha {
            j = k + 1;
        } else {
            break;
        }
        cdf = next;
        ln_c += ((n - k) as f64).ln() - ((k + 1) as f64).ln();
    }
    if j == 0 {
        None
    } else {
        Some((j, n + 1 - j))
    }
}

/// 95% (or other) interval of the median from sorted data; None when n is too small.
pub fn median_ci_sorted(s: &[f64], confidence: f64) -> Option<(f64, f64)> {
    let (j, k) = median_ci_ranks(s.len(), confidence)?;
    Some((s[j - 1], s[k - 1]))
}

/// Percentile bootstrap interval of median(a)/median(b): resamples each set with
/// replacement, deterministically from `seed`.
pub fn ratio_ci(a: &[f64], b: &[f64], resamples: usize, confidence: f64, seed: u64) -> Option<(f64, f64)> {
    if a.is_empty() || b.is_empty() || resamples < 10 {
        return None;
    }
    let sa = Stream::new(seed, "ratio-a", 0);
    let sb = Stream::new(seed, "ratio-b", 0);
    let mut ratios = Vec::with_capacity(resamples);
    let mut bufa = vec![0.0; a.len()];
    let mut bufb = vec![0.0; b.len()];
    let mut ctr = 0u64;
    for _ in 0..resamples {
        for x in bufa.iter_mut() {
            *x = a[sa.below(ctr, a.len() as u64) as usize];
            ctr += 1;
        }
        for x in bufb.iter_mut() {
            *x = b[sb.below(ctr, b.len() as u64) as usize];
            ctr += 1;
        }
        let r = median(&bufa) / median(&bufb);
        if r.is_finite() {
            ratios.push(r);
        }
    }
    if ratios.is_empty() {
        return None;
    }
    ratios.sort_by(f64::total_cmp);
    let q = |p: f64| {
        let h = (ratios.len() - 1) as f64 * p;
        let lo = h.floor() as usize;
        let hi = h.ceil() as usize;
        ratios[lo] + (ratios[hi] - ratios[lo]) * (h - lo as f64)
    };
    let alpha = (1.0 - confidence) / 2.0;
    Some((q(alpha), q(1.0 - alpha)))
}

/// Least-squares slope of ln(y) on ln(x) over the pairs where both are positive: the
/// empirical growth exponent (the fitting lives in `fit::growth::loglog_slope`).
pub fn loglog_slope(x: &[f64], y: &[f64]) -> Option<f64> {
    let (px, py): (Vec<f64>, Vec<f64>) = x.iter().zip(y).filter(|(a, b)| **a > 0.0 && **b > 0.0).map(|(a, b)| (*a, *b)).unzip();
    if px.len() < 2 {
        return None;
    }
    crate::fit::growth::loglog_slope(&px, &py).ok().filter(|s| s.is_finite())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn median_interval_ranks_match_binomial_tables() {
        // n = 6: the whole range, coverage 1 - 2/64 = 0.969 (exact binomial).
        assert_eq!(median_ci_ranks(6, 0.95), Some((1, 6)));
        assert_eq!(median_ci_ranks(5, 0.95), None);
        // n = 10 → (2, 9), n = 20 → (6, 15): the sign-test interval ranks of published tables
        // of the median's confidence interval (e.g. Conover, Table A5) [memory]; the Python
        // cross-check in tests/reference_stats.rs recomputes them from math.comb.
        assert_eq!(median_ci_ranks(10, 0.95), Some((2, 9)));
        assert_eq!(median_ci_ranks(20, 0.95), Some((6, 15)));
    }

    #[test]
    fn medians() {
        assert_eq!(median(&[3.0, 1.0, 2.0]), 2.0);
        assert_eq!(median(&[4.0, 1.0, 2.0, 3.0]), 2.5);
        assert!(median(&[]).is_nan());
    }

    #[test]
    fn ratio_interval_brackets_the_ratio() {
        let a: Vec<f64> = (0..40).map(|i| 200.0 + (i % 7) as f64).collect();
        let b: Vec<f64> = (0..40).map(|i| 100.0 + (i % 5) as f64).collect();
        let (lo, hi) = ratio_ci(&a, &b, 500, 0.95, 3).expect("interval");
        let r = median(&a) / median(&b);
        assert!(lo <= r && r <= hi, "{lo} {r} {hi}");
        assert!(lo > 1.9 && hi < 2.1);
    }

    #[test]
    fn slopes() {
        let x = [1e3, 2e3, 4e3, 8e3];
        let y: Vec<f64> = x.iter().map(|v| 3.0 * v * v).collect();
        assert!((loglog_slope(&x, &y).expect("slope") - 2.0).abs() < 1e-12);
    }
}
