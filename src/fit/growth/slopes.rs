//! What the data show without a model: the log-log slope (over all sizes, or of the
//! per-size medians over the largest ones, which every class is checked against), the
//! growth per doubling of `n`, and the exponent with a bootstrap interval. These describe
//! the data; classes are chosen by comparing whole curves (`growth` module doc).

use crate::fit::rng::SplitMix64;
use crate::fit::sample::quantile_sorted;
use crate::fit::{check_positive, FitError};

/// How many of the largest sizes the slope check uses.
pub const SLOPE_SIZES: usize = 4;

/// Sizes and values paired one to one, non-empty, finite and strictly positive.
pub(super) fn check_pairs(sizes: &[f64], values: &[f64]) -> Result<(), FitError> {
    if sizes.is_empty() {
        return Err(FitError::Empty);
    }
    if values.len() != sizes.len() {
        return Err(FitError::LengthMismatch {
            what: "values",
            expected: sizes.len(),
            found: values.len(),
        });
    }
    check_positive("sizes", sizes)?;
    check_positive("values", values)?;
    Ok(())
}

/// Log-log slope of the per-size medians over the largest [`SLOPE_SIZES`]
/// distinct sizes.
pub(super) fn top_median_slope(sizes: &[f64], values: &[f64]) -> Result<f64, FitError> {
    let mut pairs: Vec<(f64, f64)> = sizes.iter().copied().zip(values.iter().copied()).collect();
    pairs.sort_by(|x, y| x.0.total_cmp(&y.0).then(x.1.total_cmp(&y.1)));
    let mut per_size: Vec<(f64, f64)> = Vec::new();
    let mut i = 0;
    while i < pairs.len() {
        let j = pairs[i..].iter().position(|p| p.0 != pairs[i].0).map_or(pairs.len(), |k| i + k);
        let group: Vec<f64> = pairs[i..j].iter().map(|p| p.1).collect();
        per_size.push((pairs[i].0, quantile_sorted(&group, 0.5)));
        i = j;
    }
    let tail = &per_size[per_size.len().saturating_sub(SLOPE_SIZES)..];
    let (x, y): (Vec<f64>, Vec<f64>) = tail.iter().copied().unzip();
    loglog_slope(&x, &y)
}

/// Ordinary least-squares slope of `ln y` on `ln n`: the apparent power-law
/// exponent. Describes the data; do not classify with it (see module doc).
pub fn loglog_slope(sizes: &[f64], values: &[f64]) -> Result<f64, FitError> {
    check_pairs(sizes, values)?;
    let u: Vec<f64> = sizes.iter().map(|n| n.ln()).collect();
    let v: Vec<f64> = values.iter().map(|y| y.ln()).collect();
    let m = u.len() as f64;
    let ubar = u.iter().sum::<f64>() / m;
    let vbar = v.iter().sum::<f64>() / m;
    let suu: f64 = u.iter().map(|x| (x - ubar) * (x - ubar)).sum();
    let suv: f64 = u.iter().zip(&v).map(|(x, y)| (x - ubar) * (y - vbar)).sum();
    if suu.is_nan() || suu <= 0.0 {
        let found = if u.iter().all(|x| *x == u[0]) { 1 } else { 2 };
        return Err(FitError::TooFewSizes { found, needed: 2 });
    }
    Ok(suv / suu)
}

/// For each step between consecutive sizes, the growth ratio normalised to a
/// doubling of `n`: `(y₂/y₁)^(ln 2 / ln(n₂/n₁))`. A cost `∝ n^k` gives `2^k`
/// at every step; `n·log₂ n` gives `2 + 2/log₂ n` on a doubling ladder.
/// Sizes must strictly increase.
pub fn doubling_ratios(sizes: &[f64], values: &[f64]) -> Result<Vec<f64>, FitError> {
    check_pairs(sizes, values)?;
    if sizes.len() < 2 {
        return Err(FitError::TooFewPoints {
            found: sizes.len(),
            needed: 2,
        });
    }
    let mut out = Vec::with_capacity(sizes.len() - 1);
    for i in 1..sizes.len() {
        if sizes[i] <= sizes[i - 1] {
            return Err(FitError::NotIncreasing { index: i });
        }
        let step = (sizes[i] / sizes[i - 1]).ln();
        let ratio = values[i] / values[i - 1];
        // An exact doubling needs no power (and keeps the ratio bit-exact).
        let r = if sizes[i] == 2.0 * sizes[i - 1] {
            ratio
        } else {
            ratio.powf(std::f64::consts::LN_2 / step)
        };
        out.push(r);
    }
    Ok(out)
}

/// A power-law exponent with a bootstrap confidence interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ExponentEstimate {
    /// Log-log slope of the per-size medians.
    pub slope: f64,
    /// 2.5 % bootstrap percentile of the slope.
    pub lo: f64,
    /// 97.5 % bootstrap percentile of the slope.
    pub hi: f64,
    /// How many of the largest sizes were used.
    pub sizes_used: usize,
}

/// Log-log slope of the medians over the `top` largest sizes, with a 95 %
/// percentile bootstrap interval: each resample redraws, with replacement,
/// the same number of samples within every size, takes medians and refits the
/// slope. Deterministic for a given `seed` (SplitMix64).
///
/// `points` are `(n, samples)`; sizes must be distinct, finite and positive,
/// samples non-empty, finite and positive. `top ≥ 2` (capped at the number
/// of sizes), `resamples ≥ 1` (use 1000 or more for a stable interval).
pub fn exponent_with_ci(
    points: &[(f64, Vec<f64>)],
    top: usize,
    resamples: usize,
    seed: u64,
) -> Result<ExponentEstimate, FitError> {
    if points.is_empty() {
        return Err(FitError::Empty);
    }
    if top < 2 {
        return Err(FitError::BadArgument {
            what: "top",
            detail: format!("{top} sizes cannot give a slope; need 2"),
        });
    }
    if resamples == 0 {
        return Err(FitError::BadArgument {
            what: "resamples",
            detail: "need at least 1".to_string(),
        });
    }
    let ns: Vec<f64> = points.iter().map(|(n, _)| *n).collect();
    check_positive("sizes", &ns)?;
    for (n, samples) in points {
        if samples.is_empty() {
            return Err(FitError::BadArgument {
                what: "samples",
                detail: format!("size {n} has no samples"),
            });
        }
        check_positive("samples", samples)?;
    }
    let mut order: Vec<usize> = (0..points.len()).collect();
    order.sort_by(|&i, &j| points[i].0.total_cmp(&points[j].0));
    for w in order.windows(2) {
        if points[w[0]].0 == points[w[1]].0 {
            return Err(FitError::BadArgument {
                what: "sizes",
                detail: format!("size {} appears twice; merge its samples", points[w[0]].0),
            });
        }
    }
    let used = top.min(points.len());
    if used < 2 {
        return Err(FitError::TooFewSizes {
            found: used,
            needed: 2,
        });
    }
    let chosen: Vec<&(f64, Vec<f64>)> = order[order.len() - used..]
        .iter()
        .map(|&i| &points[i])
        .collect();
    let sizes: Vec<f64> = chosen.iter().map(|(n, _)| *n).collect();

    let sorted: Vec<Vec<f64>> = chosen
        .iter()
        .map(|(_, s)| {
            let mut v = s.clone();
            v.sort_by(f64::total_cmp);
            v
        })
        .collect();
    let medians: Vec<f64> = sorted.iter().map(|s| quantile_sorted(s, 0.5)).collect();
    let slope = loglog_slope(&sizes, &medians)?;

    let mut rng = SplitMix64::new(seed);
    let mut slopes = Vec::with_capacity(resamples);
    let mut scratch = Vec::new();
    let mut boot_medians = vec![0.0; used];
    for _ in 0..resamples {
        for (k, s) in sorted.iter().enumerate() {
            scratch.clear();
            scratch.extend((0..s.len()).map(|_| s[rng.below(s.len())]));
            scratch.sort_by(f64::total_cmp);
            boot_medians[k] = quantile_sorted(&scratch, 0.5);
        }
        slopes.push(loglog_slope(&sizes, &boot_medians)?);
    }
    slopes.sort_by(f64::total_cmp);
    Ok(ExponentEstimate {
        slope,
        lo: quantile_sorted(&slopes, 0.025),
        hi: quantile_sorted(&slopes, 0.975),
        sizes_used: used,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bootstrap_is_deterministic_and_brackets_the_slope() {
        let mut rng = SplitMix64::new(3);
        let points: Vec<(f64, Vec<f64>)> = [1e3, 1e4, 1e5, 1e6]
            .iter()
            .map(|&n| {
                (
                    n,
                    (0..15)
                        .map(|_| n * (0.05 * rng.standard_normal()).exp())
                        .collect(),
                )
            })
            .collect();
        let a = exponent_with_ci(&points, 3, 500, 11).unwrap();
        let b = exponent_with_ci(&points, 3, 500, 11).unwrap();
        assert_eq!(a, b);
        assert_eq!(a.sizes_used, 3);
        assert!(a.lo <= a.slope && a.slope <= a.hi, "{a:?}");
        assert!((a.slope - 1.0).abs() < 0.05 && a.hi - a.lo < 0.1, "{a:?}");
        assert!(exponent_with_ci(&points, 1, 10, 0).is_err());
        assert!(exponent_with_ci(&points, 3, 0, 0).is_err());
        assert!(exponent_with_ci(&[(1.0, vec![])], 2, 10, 0).is_err());
    }
}
