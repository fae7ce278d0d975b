//! Mann–Whitney U rank test of two independent samples, two-sided, with
//! the conventions of scipy 1.17.1 `scipy.stats.mannwhitneyu`.
//!
//! The one thing to know: **`u1` is the statistic of the first sample**
//! (`x`), the number of pairs (xᵢ, yⱼ) with xᵢ > yⱼ, ties counting ½; it is
//! *small* when x tends to be smaller than y. The p-value is symmetric:
//! `mann_whitney(x, y)` and `mann_whitney(y, x)` give the same p.
//!
//! Conventions (scipy 1.17.1, documented in its docstring, checked against
//! the \[computed\] values in framecost's REFERENCES.md):
//! - ranks are midranks over the pooled sample; U1 = R1 − n1(n1+1)/2,
//!   U2 = n1·n2 − U1;
//! - two-sided p = min(1, 2·P(U ≥ max(U1, U2)));
//! - asymptotic: z = (max U − n1·n2/2 − 0.5)/σ with
//!   σ² = n1·n2/12 · ((n+1) − Σ(t³−t)/(n(n−1))), t the tie-group sizes,
//!   p = min(1, 2·(1 − Φ(z))). As in scipy the ½ continuity correction is
//!   skipped when max U equals n1·n2/2 exactly (scipy multiplies it by
//!   sign(U − mean)), so z = 0 and p = 1 there;
//! - `Method::Auto` is scipy's rule, from its 1.17 source and docstring:
//!   exact when `min(n1, n2) ≤ 8` and there are no ties (ties anywhere in
//!   the pooled sample, within-sample ties included), otherwise
//!   asymptotic. One addition: if the exact distribution is beyond this
//!   module's limits (only possible with the larger sample above ~200 000),
//!   `Auto` falls back to asymptotic instead of failing.
//!
//! Exact null distribution: the counts of U for sizes (m, n) are the
//! coefficients of the Gaussian binomial [m+n choose m]_q, built by m
//! steps of "multiply by (1 − q^(n+i)), divide by (1 − q^i)" in i128
//! integers (exact; every intermediate is bounded by C(m+n, m)), truncated
//! at the largest U needed. When C(m+n, m) does not fit in i128 (about
//! m = n ≥ 66) a probability recurrence in f64 is used instead (all terms
//! positive, so no cancellation), limited to n1·n2 ≤ 10 000; beyond that an
//! exact request is refused with `StatsError::ExactTooLarge`.
//!
//! Degenerate input: an empty sample is `EmptySample`, a NaN is
//! `NotANumber`; ±∞ are ranked like any other value. All values equal (or
//! any data with σ = 0) gives p = 1 with `z = None`. Single values work
//! (`[1]` vs `[2]` gives p = 1: no sample that small can be significant).

use super::normal::{normal_sf, normal_upper_quantile};
use super::StatsError;

/// How the p-value is computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Method {
    /// scipy's rule: `Exact` if `min(n1, n2) ≤ 8` and no ties, else `Asymptotic`.
    Auto,
    /// Exact null distribution of U; refused on tied data.
    Exact,
    /// Normal approximation, tie-corrected σ, continuity correction on.
    Asymptotic,
}

/// Result of [`mann_whitney`].
#[derive(Debug, Clone, PartialEq)]
pub struct MannWhitney {
    /// U of the first sample (scipy's `statistic`).
    pub u1: f64,
    /// U of the second sample, `n1·n2 − u1`.
    pub u2: f64,
    /// Two-sided p-value, in [0, 1].
    pub p_two_sided: f64,
    /// `Exact` or `Asymptotic` (never `Auto`).
    pub method_used: Method,
    /// Standardized statistic (≥ 0, from max U) when the asymptotic method
    /// ran and σ > 0; `None` for the exact method or when σ = 0.
    pub z: Option<f64>,
    /// Whether the pooled sample holds any tied values.
    pub ties: bool,
}

/// Above this n1·n2 the f64 fallback of the exact distribution is refused.
const FALLBACK_MAX_CELLS: usize = 10_000;

/// Two-sided Mann–Whitney U test of `x` against `y`. See the module docs
/// for conventions and for what degenerate input gives.
pub fn mann_whitney(x: &[f64], y: &[f64], method: Method) -> Result<MannWhitney, StatsError> {
    check_sample(x, "x")?;
    check_sample(y, "y")?;
    let (n1, n2) = (x.len(), y.len());
    let ranked = rank_pooled(x, y);
    let n1f = n1 as f64;
    let cells = n1f * n2 as f64;
    let u1 = ranked.rank_sum_x - n1f * (n1f + 1.0) / 2.0;
    let u2 = cells - u1;
    let u_max = u1.max(u2);

    let method_used = match method {
        Method::Exact if ranked.ties => return Err(StatsError::ExactWithTies),
        Method::Exact => Method::Exact,
        Method::Asymptotic => Method::Asymptotic,
        Method::Auto => {
            if !ranked.ties && n1.min(n2) <= 8 && exact_feasible(n1, n2) {
                Method::Exact
            } else {
                Method::Asymptotic
            }
        }
    };

    let (p, z) = match method_used {
        Method::Exact => {
            // No ties, so U is an integer; P(U ≥ u_max) = P(U ≤ n1·n2 − u_max).
            let k = (cells - u_max).round() as u64;
            (2.0 * exact_u_cdf(n1, n2, k)?, None)
        }
        _ => {
            let n = (n1 + n2) as f64;
            let var = cells / 12.0 * ((n + 1.0) - ranked.tie_term / (n * (n - 1.0)));
            if var.is_nan() || var <= 0.0 {
                (1.0, None)
            } else {
                let mut num = u_max - cells / 2.0;
                if num > 0.0 {
                    num -= 0.5;
                }
                let z = num / var.sqrt();
                (2.0 * normal_sf(z), Some(z))
            }
        }
    };
    Ok(MannWhitney { u1, u2, p_two_sided: p.min(1.0), method_used, z, ties: ranked.ties })
}

/// `P(U ≤ u)` under the null hypothesis for sample sizes `n1`, `n2`, no ties.
/// `u ≥ n1·n2` gives 1. Errors: `EmptySample` if a size is 0,
/// `ExactTooLarge` beyond the limits in the module docs.
pub fn exact_u_cdf(n1: usize, n2: usize, u: u64) -> Result<f64, StatsError> {
    if n1 == 0 || n2 == 0 {
        return Err(StatsError::EmptySample { sample: if n1 == 0 { "x" } else { "y" } });
    }
    let cells = (n1 as u64).saturating_mul(n2 as u64);
    if u >= cells {
        return Ok(1.0);
    }
    // Sum the shorter tail (the distribution is symmetric about cells/2):
    // P(U ≤ u) = 1 − P(U ≤ cells − u − 1).
    if u > cells / 2 {
        let upto = cells - u - 1;
        return Ok(1.0 - lower_cdf(n1, n2, upto as usize)?[upto as usize]);
    }
    Ok(lower_cdf(n1, n2, u as usize)?[u as usize])
}

/// Largest `u` with `2·P(U ≤ u) ≤ alpha_two_sided` under the null, by exact
/// enumeration (no ties) — the two-tailed table value: reject when
/// min(U1, U2) ≤ `u`. `None` when no `u` qualifies (samples too small), when
/// a size is 0, when α is not in (0, 1], or when the sizes exceed the
/// exact-distribution limits of the module docs.
pub fn critical_u(n1: usize, n2: usize, alpha_two_sided: f64) -> Option<u64> {
    if n1 == 0 || n2 == 0 || !(alpha_two_sided > 0.0 && alpha_two_sided <= 1.0) {
        return None;
    }
    let half = n1.checked_mul(n2)? / 2;
    let cdf = lower_cdf(n1, n2, half).ok()?;
    let mut best = None;
    for (u, &c) in cdf.iter().enumerate() {
        if 2.0 * c <= alpha_two_sided {
            best = Some(u as u64);
        } else {
            break;
        }
    }
    best
}

/// Normal-approximation counterpart of [`critical_u`], used for the Moses
/// interval: `floor(n1·n2/2 − z·σ − 0.5)` with `σ² = n1·n2·(n1+n2+1)/12`
/// (no ties) and `z` the upper α/2 normal quantile — the largest u with
/// `2·Φ((u + 0.5 − n1·n2/2)/σ) ≤ α`. `None` when that is negative, a size
/// is 0 or α is not in (0, 1).
pub fn approx_critical_u(n1: usize, n2: usize, alpha_two_sided: f64) -> Option<u64> {
    if n1 == 0 || n2 == 0 || !(alpha_two_sided > 0.0 && alpha_two_sided < 1.0) {
        return None;
    }
    let cells = n1 as f64 * n2 as f64;
    let sigma = (cells * ((n1 + n2) as f64 + 1.0) / 12.0).sqrt();
    let z = normal_upper_quantile(alpha_two_sided / 2.0);
    let c = (cells / 2.0 - z * sigma - 0.5).floor();
    if c >= 0.0 {
        Some(c as u64)
    } else {
        None
    }
}

fn check_sample(s: &[f64], name: &'static str) -> Result<(), StatsError> {
    if s.is_empty() {
        return Err(StatsError::EmptySample { sample: name });
    }
    match s.iter().position(|v| v.is_nan()) {
        Some(index) => Err(StatsError::NotANumber { sample: name, index }),
        None => Ok(()),
    }
}

struct Ranked {
    rank_sum_x: f64,
    /// Σ (t³ − t) over tie groups of the pooled sample.
    tie_term: f64,
    ties: bool,
}

/// Midranks of the pooled sample (no NaN inside). `-0.0` and `0.0` tie.
fn rank_pooled(x: &[f64], y: &[f64]) -> Ranked {
    let mut pooled: Vec<(f64, bool)> =
        x.iter().map(|&v| (v, true)).chain(y.iter().map(|&v| (v, false))).collect();
    pooled.sort_by(|a, b| a.0.total_cmp(&b.0));
    let (mut rank_sum_x, mut tie_term, mut ties) = (0.0, 0.0, false);
    let mut i = 0;
    while i < pooled.len() {
        let mut j = i + 1;
        while j < pooled.len() && pooled[j].0 == pooled[i].0 {
            j += 1;
        }
        // Positions i..j (0-based) share the midrank of ranks i+1 ..= j.
        let t = (j - i) as f64;
        let midrank = (i + 1 + j) as f64 / 2.0;
        let in_x = pooled[i..j].iter().filter(|p| p.1).count() as f64;
        rank_sum_x += in_x * midrank;
        if j - i > 1 {
            ties = true;
            tie_term += t * t * t - t;
        }
        i = j;
    }
    Ranked { rank_sum_x, tie_term, ties }
}

/// Whether [`lower_cdf`] can serve sizes (n1, n2).
fn exact_feasible(n1: usize, n2: usize) -> bool {
    binomial_i128(n1, n2).is_some() || n1.saturating_mul(n2) <= FALLBACK_MAX_CELLS
}

/// C(n1+n2, n1) if it fits in i128 (computed exactly, overflow-checked).
fn binomial_i128(n1: usize, n2: usize) -> Option<i128> {
    let (m, n) = (n1.min(n2), n1.max(n2));
    let mut c: i128 = 1;
    for i in 1..=m {
        // c = C(n+i−1, i−1) and c·(n+i)/i is an integer. With g = gcd(c, i),
        // i/g divides n+i, so no intermediate exceeds the result.
        let (i, top) = (i as i128, (n + i) as i128);
        let g = gcd(c, i);
        c = (c / g).checked_mul(top / (i / g))?;
    }
    Some(c)
}

fn gcd(mut a: i128, mut b: i128) -> i128 {
    while b != 0 {
        (a, b) = (b, a % b);
    }
    a
}

/// Cumulative null probabilities `P(U ≤ k)` for `k = 0..=upto`
/// (`upto` is clamped to n1·n2).
fn lower_cdf(n1: usize, n2: usize, upto: usize) -> Result<Vec<f64>, StatsError> {
    let upto = upto.min(n1.saturating_mul(n2));
    if let Some(total) = binomial_i128(n1, n2) {
        let counts = null_counts_i128(n1, n2, upto);
        let mut acc: i128 = 0;
        return Ok(counts
            .iter()
            .map(|&c| {
                acc += c;
                acc as f64 / total as f64
            })
            .collect());
    }
    if n1.saturating_mul(n2) > FALLBACK_MAX_CELLS {
        return Err(StatsError::ExactTooLarge { n1, n2 });
    }
    let pmf = null_pmf_f64(n1, n2, upto);
    let mut acc = 0.0;
    Ok(pmf
        .iter()
        .map(|&p| {
            acc += p;
            acc.min(1.0)
        })
        .collect())
}

/// Number of rank arrangements with U = k, k = 0..=upto: coefficients of
/// the Gaussian binomial [n1+n2 choose n1]_q. Caller ensures C(n1+n2, n1)
/// fits in i128, which bounds every intermediate value.
fn null_counts_i128(n1: usize, n2: usize, upto: usize) -> Vec<i128> {
    let (m, n) = (n1.min(n2), n1.max(n2));
    let mut a = vec![0i128; upto + 1];
    a[0] = 1;
    for i in 1..=m {
        // Multiply by (1 − q^(n+i)); descending so old values are read.
        let s = n + i;
        for k in (s..=upto).rev() {
            a[k] -= a[k - s];
        }
        // Divide by (1 − q^i): b[k] = a[k] + b[k − i], ascending.
        for k in i..=upto {
            a[k] += a[k - i];
        }
    }
    a
}

/// Null pmf of U for k = 0..=upto in f64 via the recurrence on the largest
/// pooled value: p_{i,j}(u) = i/(i+j)·p_{i−1,j}(u − j) + j/(i+j)·p_{i,j−1}(u),
/// p_{0,j} = p_{i,0} = δ₀. All terms are positive: no cancellation.
/// Cost about n1·n2·upto operations.
fn null_pmf_f64(n1: usize, n2: usize, upto: usize) -> Vec<f64> {
    let delta0 = {
        let mut v = vec![0.0; upto + 1];
        v[0] = 1.0;
        v
    };
    // prev[j] = p_{i−1, j}; start with i = 0.
    let mut prev: Vec<Vec<f64>> = vec![delta0.clone(); n2 + 1];
    for i in 1..=n1 {
        let mut cur: Vec<Vec<f64>> = Vec::with_capacity(n2 + 1);
        cur.push(delta0.clone());
        for j in 1..=n2 {
            let wi = i as f64 / (i + j) as f64;
            let wj = j as f64 / (i + j) as f64;
            let mut row = vec![0.0; upto + 1];
            for (u, r) in row.iter_mut().enumerate() {
                let from_x = if u >= j { prev[j][u - j] } else { 0.0 };
                *r = wi * from_x + wj * cur[j - 1][u];
            }
            cur.push(row);
        }
        prev = cur;
    }
    prev.pop().unwrap_or(delta0)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Brute force: every choice of which pooled ranks belong to x.
    fn brute_counts(n1: usize, n2: usize) -> Vec<u64> {
        let n = n1 + n2;
        let mut counts = vec![0u64; n1 * n2 + 1];
        for mask in 0u32..(1 << n) {
            if mask.count_ones() as usize != n1 {
                continue;
            }
            // U1 = Σ over x of (number of y below it).
            let (mut u, mut ys_below) = (0usize, 0usize);
            for r in 0..n {
                if mask & (1 << r) != 0 {
                    u += ys_below;
                } else {
                    ys_below += 1;
                }
            }
            counts[u] += 1;
        }
        counts
    }

    #[test]
    fn gaussian_binomial_counts_match_brute_force() {
        // Source: direct enumeration of all C(n1+n2, n1) arrangements.
        for (n1, n2) in [(1, 1), (1, 5), (3, 4), (5, 4), (6, 6), (2, 9), (7, 5)] {
            let want: Vec<i128> = brute_counts(n1, n2).iter().map(|&c| c as i128).collect();
            assert_eq!(null_counts_i128(n1, n2, n1 * n2), want, "{n1} x {n2}");
            assert_eq!(null_counts_i128(n2, n1, n1 * n2), want, "{n2} x {n1}");
        }
    }

    #[test]
    fn f64_fallback_matches_integer_counts() {
        // Source: the exact i128 path on a size both paths can serve.
        let (n1, n2) = (20, 17);
        let upto = n1 * n2 / 2;
        let total = binomial_i128(n1, n2).unwrap_or(0) as f64;
        let counts = null_counts_i128(n1, n2, upto);
        let pmf = null_pmf_f64(n1, n2, upto);
        for (k, (&c, &p)) in counts.iter().zip(&pmf).enumerate() {
            let want = c as f64 / total;
            assert!((p - want).abs() <= 1e-13 * want, "k = {k}: {p:e} vs {want:e}");
        }
    }

    #[test]
    fn binomial_limits() {
        // C(20, 10) = 184756 [well known]; C(130, 65) ≈ 9.5e37 fits in i128
        // (max ≈ 1.7e38) while C(134, 67) ≈ 1.5e39 does not.
        assert_eq!(binomial_i128(10, 10), Some(184_756));
        assert!(binomial_i128(65, 65).is_some());
        assert!(binomial_i128(67, 67).is_none());
        assert!(exact_feasible(67, 67)); // 4489 cells: f64 fallback
        assert!(!exact_feasible(200, 200));
    }
}
