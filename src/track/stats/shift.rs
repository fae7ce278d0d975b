//! How much slower (or faster) is the new run? Ratio estimates new/base
//! with distribution-free and bootstrap intervals.
//!
//! The one thing to know: **ratios are computed on the log scale, so every
//! value must be finite and > 0** (timings, byte counts); anything else is
//! `StatsError::NotPositiveFinite`. A ratio of 1.2 means "new is 20% larger".
//!
//! - [`hodges_lehmann_ratio`]: exp(median over all pairs of
//!   ln(newⱼ) − ln(baseᵢ)), the Hodges–Lehmann shift estimate on the log
//!   scale. It is consistent with the Mann–Whitney test: it is the shift
//!   that would make U1 ≈ n1·n2/2. Cost O(n1·n2·log(n1·n2)) time and
//!   O(n1·n2) memory (8 MB at 1000 × 1000).
//! - [`hodges_lehmann_ratio_ci`]: the Moses distribution-free interval:
//!   with the N = n1·n2 sorted pairwise log-differences D₍₁₎ ≤ … ≤ D₍N₎ and
//!   the two-sided critical value c at α = 1 − confidence, the interval is
//!   [D₍c+1₎, D₍N−c₎] (coverage ≥ 1 − 2·P(U ≤ c)). **c comes from the
//!   normal approximation** [`approx_critical_u`]:
//!   c = ⌊n1·n2/2 − z₁₋α/₂·σ − ½⌋, σ² = n1·n2·(n1+n2+1)/12. It equals the
//!   exact table value at n1 = n2 = 10, α = 0.05 (23) and is one lower
//!   (more conservative) at α = 0.01 (15 vs 16). If c < 0 no interval
//!   reaches the confidence and `TooFewForConfidence` is returned (e.g.
//!   3 vs 3 at 95%).
//! - [`bootstrap_ratio_ci`]: percentile bootstrap of median(new)/median(base),
//!   the two samples resampled independently, quantiles by Hyndman–Fan
//!   type 7 (linear between order statistics). Deterministic given `seed`
//!   ([`SplitMix64`]).

use super::rank::approx_critical_u;
use super::StatsError;

/// Hodges–Lehmann ratio new/base: exp(median of ln(newⱼ) − ln(baseᵢ)).
/// The median of an even number of differences is the mean of the middle two.
pub fn hodges_lehmann_ratio(base: &[f64], new: &[f64]) -> Result<f64, StatsError> {
    let d = sorted_log_differences(base, new)?;
    Ok(median_sorted(&d).exp())
}

/// `(lower, estimate, upper)` for the ratio new/base: the Hodges–Lehmann
/// estimate and the Moses interval (normal-approximation critical value;
/// see the module docs). `confidence` must be in (0, 1), e.g. 0.95.
pub fn hodges_lehmann_ratio_ci(
    base: &[f64],
    new: &[f64],
    confidence: f64,
) -> Result<(f64, f64, f64), StatsError> {
    check_confidence(confidence)?;
    let d = sorted_log_differences(base, new)?;
    let (n1, n2) = (base.len(), new.len());
    let c = approx_critical_u(n1, n2, 1.0 - confidence)
        .ok_or(StatsError::TooFewForConfidence { n1, n2, confidence })? as usize;
    let n = d.len();
    // 1-based ranks c+1 and N−c; 2c < N holds because c < N/2.
    let lower = d[c];
    let upper = d[n - 1 - c];
    Ok((lower.exp(), median_sorted(&d).exp(), upper.exp()))
}

/// Percentile-bootstrap interval `(lower, upper)` for median(new)/median(base),
/// from `resamples` independent resamples of each sample (with replacement),
/// seeded by `seed`. `confidence` in (0, 1); `resamples ≥ 1` (use ≥ 1000 in
/// practice — the error of a percentile interval shrinks like 1/√resamples).
pub fn bootstrap_ratio_ci(
    base: &[f64],
    new: &[f64],
    resamples: usize,
    confidence: f64,
    seed: u64,
) -> Result<(f64, f64), StatsError> {
    check_confidence(confidence)?;
    check_positive(base, "base")?;
    check_positive(new, "new")?;
    if resamples == 0 {
        return Err(StatsError::NoResamples);
    }
    let mut rng = SplitMix64::new(seed);
    let mut buf_base = vec![0.0; base.len()];
    let mut buf_new = vec![0.0; new.len()];
    let mut ratios = Vec::with_capacity(resamples);
    for _ in 0..resamples {
        resample(base, &mut buf_base, &mut rng);
        resample(new, &mut buf_new, &mut rng);
        buf_base.sort_by(f64::total_cmp);
        buf_new.sort_by(f64::total_cmp);
        ratios.push(median_sorted(&buf_new) / median_sorted(&buf_base));
    }
    ratios.sort_by(f64::total_cmp);
    let tail = (1.0 - confidence) / 2.0;
    Ok((quantile_type7(&ratios, tail), quantile_type7(&ratios, 1.0 - tail)))
}

pub use crate::fit::rng::SplitMix64;

fn resample(src: &[f64], dst: &mut [f64], rng: &mut SplitMix64) {
    for d in dst.iter_mut() {
        *d = src[rng.below(src.len())];
    }
}

fn check_confidence(c: f64) -> Result<(), StatsError> {
    if c > 0.0 && c < 1.0 {
        Ok(())
    } else {
        Err(StatsError::BadConfidence(c))
    }
}

fn check_positive(s: &[f64], name: &'static str) -> Result<(), StatsError> {
    if s.is_empty() {
        return Err(StatsError::EmptySample { sample: name });
    }
    match s.iter().position(|v| !(v.is_finite() && *v > 0.0)) {
        Some(index) => Err(StatsError::NotPositiveFinite { sample: name, index, value: s[index] }),
        None => Ok(()),
    }
}

fn sorted_log_differences(base: &[f64], new: &[f64]) -> Result<Vec<f64>, StatsError> {
    check_positive(base, "base")?;
    check_positive(new, "new")?;
    let ln_new: Vec<f64> = new.iter().map(|v| v.ln()).collect();
    let mut d = Vec::with_capacity(base.len() * new.len());
    for b in base {
        let lb = b.ln();
        d.extend(ln_new.iter().map(|ln| ln - lb));
    }
    d.sort_by(f64::total_cmp);
    Ok(d)
}

/// Median of a sorted, non-empty slice (mean of the middle two if even).
fn median_sorted(s: &[f64]) -> f64 {
    let n = s.len();
    if n % 2 == 1 {
        s[n / 2]
    } else {
        0.5 * (s[n / 2 - 1] + s[n / 2])
    }
}

/// Hyndman & Fan type 7 quantile of a sorted, non-empty slice, p in [0, 1].
fn quantile_type7(s: &[f64], p: f64) -> f64 {
    crate::fit::sample::quantile_sorted(s, p)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn splitmix64_reference_stream() {
        // [memory] the first outputs of Vigna's splitmix64.c from seed
        // 1234567, as widely quoted; reproduced here [computed] by an
        // independent Python transcription of the algorithm.
        let mut r = SplitMix64::new(1234567);
        let want = [
            6457827717110365317u64,
            3203168211198807973,
            9817491932198370423,
            4593380528125082431,
            16408922859458223821,
        ];
        for w in want {
            assert_eq!(r.next_u64(), w);
        }
    }

    #[test]
    fn quantile_type7_matches_python_statistics() {
        // [computed] REFERENCES.md: Python statistics.quantiles(
        // [2,4,4,5,7,9,10,15], n=4, method='inclusive') = [4.0, 6.0, 9.25].
        let s = [2.0, 4.0, 4.0, 5.0, 7.0, 9.0, 10.0, 15.0];
        for (p, want) in [(0.25, 4.0), (0.5, 6.0), (0.75, 9.25)] {
            assert!((quantile_type7(&s, p) - want).abs() < 1e-12);
        }
        assert_eq!(quantile_type7(&s, 0.0), 2.0);
        assert_eq!(quantile_type7(&s, 1.0), 15.0);
    }
}
