//! Order statistics of a sample: median and the type-7 quantile.
//!
//! The one thing to know: quantiles here are Hyndman & Fan (1996) type 7 —
//! `h = (n−1)·p`, linear between the order statistics either side — the
//! same definition as Python's `statistics.quantiles(..., method='inclusive')`
//! and the default of R, so numbers can be cross-checked there.

use super::FitError;

/// Sort a copy of `values`, refusing NaN and infinities.
pub fn sorted_finite(values: &[f64]) -> Result<Vec<f64>, FitError> {
    if values.is_empty() {
        return Err(FitError::Empty);
    }
    super::check_finite("sample", values)?;
    let mut v = values.to_vec();
    v.sort_by(f64::total_cmp);
    Ok(v)
}

/// Type-7 quantile of an already sorted, non-empty, finite slice; `p` is
/// clamped to `[0, 1]`. Returns NaN for an empty slice.
pub fn quantile_sorted(sorted: &[f64], p: f64) -> f64 {
    let n = sorted.len();
    if n == 0 || p.is_nan() {
        return f64::NAN;
    }
    let h = (n - 1) as f64 * p.clamp(0.0, 1.0);
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(n - 1);
    let frac = h - lo as f64;
    sorted[lo] + frac * (sorted[hi] - sorted[lo])
}

/// Type-7 quantile of an unsorted sample.
pub fn quantile(values: &[f64], p: f64) -> Result<f64, FitError> {
    if !(0.0..=1.0).contains(&p) {
        return Err(FitError::BadArgument {
            what: "quantile probability",
            detail: format!("{p} is outside [0, 1]"),
        });
    }
    Ok(quantile_sorted(&sorted_finite(values)?, p))
}

/// Median of an unsorted sample (type-7 quantile at 1/2, which is the usual
/// middle value or mean of the two middle values).
pub fn median(values: &[f64]) -> Result<f64, FitError> {
    quantile(values, 0.5)
}

/// p50, p90, p99 and the largest of a point's samples (ns), as stored in `points.jsonl`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TailPercentiles {
    pub p50: f64,
    pub p90: f64,
    pub p99: f64,
    pub max: f64,
}

/// The percentiles the runner stores, exact, from every recorded sample: Hyndman & Fan
/// type 7 (linear between order statistics, as Python's
/// `statistics.quantiles(method='inclusive')`), so p50 is the median itself. Every sample
/// is kept, so nothing is gained from a histogram's buckets, and a histogram's nearest-rank
/// convention would put p50 apart from the median when samples are bimodal. Non-finite
/// samples are ignored. `None` without samples.
pub fn tail_percentiles(samples: &[f64]) -> Option<TailPercentiles> {
    let mut s: Vec<f64> = samples.iter().copied().filter(|x| x.is_finite()).collect();
    if s.is_empty() {
        return None;
    }
    s.sort_by(f64::total_cmp);
    let q = |p: f64| quantile_sorted(&s, p);
    Some(TailPercentiles { p50: q(0.5), p90: q(0.9), p99: q(0.99), max: s[s.len() - 1] })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1.0)
    }

    #[test]
    fn type7_matches_python_statistics_quantiles() {
        // Source [computed, REFERENCES.md]: Python 3.11
        // statistics.quantiles(data, n=..., method='inclusive').
        let data = [2.0, 4.0, 4.0, 5.0, 7.0, 9.0, 10.0, 15.0];
        let quartiles: Vec<f64> = (1..4)
            .map(|i| quantile(&data, i as f64 / 4.0).unwrap())
            .collect();
        for (got, want) in quartiles.iter().zip([4.0, 6.0, 9.25]) {
            assert!(close(*got, want), "{got} vs {want}");
        }
        let deciles: Vec<f64> = (1..10)
            .map(|i| quantile(&data, i as f64 / 10.0).unwrap())
            .collect();
        let want = [3.4, 4.0, 4.1, 4.8, 6.0, 7.4, 8.8, 9.6, 11.5];
        for (got, want) in deciles.iter().zip(want) {
            assert!(close(*got, want), "{got} vs {want}");
        }
        let one_to_ten: Vec<f64> = (1..=10).map(f64::from).collect();
        for (p, want) in [
            (0.25, 3.25),
            (0.5, 5.5),
            (0.75, 7.75),
            (0.01, 1.09),
            (0.05, 1.45),
            (0.95, 9.55),
            (0.99, 9.91),
        ] {
            let got = quantile(&one_to_ten, p).unwrap();
            assert!(close(got, want), "p={p}: {got} vs {want}");
        }
    }

    #[test]
    fn median_and_bad_input() {
        assert_eq!(median(&[3.0, 1.0, 2.0]).unwrap(), 2.0);
        assert_eq!(median(&[4.0, 1.0, 3.0, 2.0]).unwrap(), 2.5);
        assert_eq!(median(&[]), Err(FitError::Empty));
        assert!(matches!(
            median(&[1.0, f64::NAN]),
            Err(FitError::NonFinite { index: 1, .. })
        ));
        assert!(matches!(
            quantile(&[1.0], 1.5),
            Err(FitError::BadArgument { .. })
        ));
    }
}
