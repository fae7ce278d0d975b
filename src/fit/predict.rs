//! Predicting cost at sizes that were not measured, and finding the size
//! where two designs swap places.
//!
//! The one thing a newcomer must know: **intervals are relative**. The growth
//! fit assumes each measurement is `true cost × (1 + ε)` with `ε` of constant
//! SD `σ` (the fit's relative residual SD). A new measurement at size `n`
//! therefore varies by `σ·ŷ(n)`, and the fitted curve itself by
//! `σ·√(x₀ᵀ(XᵀWX)⁻¹x₀)`. The 95 % prediction interval is
//!
//! ```text
//! ŷ · exp(± t(0.975, dof) · s),   s = σ · √(x₀ᵀ (XᵀWX)⁻¹ x₀ / ŷ² + 1)
//! ```
//!
//! with `x₀` the fitted terms at `n` and `t` the Student-t quantile on the
//! fit's residual degrees of freedom: the relative half-width `t·s` of the
//! usual interval, applied on the log scale, so the interval is never cut at
//! zero and is as wide in ratio above as below (a cost is positive and its
//! noise multiplicative). An interval whose ends are more than ×10 apart is
//! marked [`Prediction::rough`]: an order of magnitude only. Far outside the
//! measured sizes the interval only reflects noise *given the class is
//! right*; a wrong class is not in it — hence [`Prediction::warn_far`], and
//! [`extrapolation_allowance`], which the analysis adds to every reported time
//! prediction past the fitted sizes, and which the crossover search adds to
//! both bands ([`predict`]'s own intervals stay noise-only).
//!
//! ## Extrapolation allowance
//!
//! A cost measured at small sizes does not follow one curve forever: a step
//! goes parallel above a size of the engine's own, a working set leaves a
//! cache, the allocator switches to fresh pages. None of that is in the noise
//! of the fitted sizes. Checked on saved catalog sweeps (fit up to N/2, N/4,
//! N/8, N/16, predict every larger measured size: 1948 checks from six sweeps
//! of one session, 1246 from four of another), the noise-only 95 % intervals
//! held the measurement 67 % and 70 % of the time, and less the further
//! out: 78 % one doubling past the fitted sizes, 54 % four doublings past.
//! So each doubling past the largest fitted size adds
//! [`EXTRAPOLATION_SD_PER_DOUBLING`] to the standard deviation of the log
//! cost, combined with the noise half-width in quadrature:
//!
//! ```text
//! h' = √(h² + (1.96 · κ · log₂(n / n_max))²),   κ = 0.17
//! ```
//!
//! κ was set on the first set of sweeps (95.0 % held) and checked on the
//! second (95.3 %; per distance 99 % at one doubling, 97 % at two, 94 % at
//! three, 90 % at four) and on three sweeps made after it was set (96.4 % of
//! 921 checks). The price is width: about ×4 end to end at four
//! times the largest fitted size, past ×10 from about ten times — where
//! [`Prediction::warn_far`] already warned, an interval now says "order of
//! magnitude" too.
//!
//! ## Crossover method
//!
//! [`crossover`] looks for the first size where `g(n) = ln ĉ_A(n) − ln ĉ_B(n)`
//! changes sign strictly. It evaluates `g` on a log-spaced grid from `lo_n` to
//! `search_max_n` ([`GRID_PER_DECADE`] points per decade, grid points where a
//! fitted cost is not positive are skipped), then bisects the first bracketing
//! pair in `ln n` to full precision. The uncertainty range `[n_lo, n_hi]` is
//! the stretch of sizes around the crossing where the costs may still be equal:
//! the log distance between the two fitted costs is within their 95 %
//! half-widths combined in quadrature ([`may_be_equal`]), each half-width
//! widened past its fit's largest size by the extrapolation allowance (so a
//! crossing far past the data, of curves whose slopes differ by less than about
//! one, is left unbounded: the distance alone could move it anywhere): walking
//! the grid down (up) from the crossing to the first size where they cannot be
//! equal, then bisecting that edge. If they may still be equal at the end of
//! the search range, the edge is that end of the
//! range. Only the first crossing is reported.

use super::dist::student_t_quantile;
use super::growth::GrowthFit;
use super::FitError;

/// Grid density of the crossover search, points per decade of `n`.
pub const GRID_PER_DECADE: usize = 50;

/// Whether an interval `[lo, hi]` spans more than ×10: an order of magnitude only
/// ([`Prediction::rough`], and every interval the analysis widens after it).
pub fn is_rough(lo: f64, hi: f64) -> bool {
    hi > 10.0 * lo
}

/// Standard deviation of the log cost added per doubling past the largest
/// fitted size (module doc, "Extrapolation allowance"; set on saved sweeps).
pub const EXTRAPOLATION_SD_PER_DOUBLING: f64 = 0.17;

/// The half-width, on the log scale, that a 95 % interval at size `n` gains
/// for extrapolating past `max_fitted` (0 inside the fitted sizes): it is
/// combined with the noise half-width in quadrature ([`widen_for_extrapolation`]).
pub fn extrapolation_allowance(n: f64, max_fitted: f64) -> f64 {
    if !(n > max_fitted && max_fitted > 0.0 && n.is_finite()) {
        return 0.0;
    }
    1.959964 * EXTRAPOLATION_SD_PER_DOUBLING * (n / max_fitted).log2()
}

/// An interval `[low, high]` around `median` widened by `allowance` (a log
/// half-width) on each side, in quadrature with each side's own half-width.
pub fn widen_for_extrapolation(median: f64, low: f64, high: f64, allowance: f64) -> (f64, f64) {
    if !(allowance > 0.0 && median > 0.0) {
        return (low, high);
    }
    let down = if low > 0.0 { (median / low).ln().max(0.0) } else { f64::INFINITY };
    let up = (high / median).ln().max(0.0);
    let grow = |h: f64| (h * h + allowance * allowance).sqrt();
    (median * (-grow(down)).exp(), median * grow(up).exp())
}

/// A predicted cost with its 95 % prediction interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Prediction {
    /// Fitted cost ŷ(n): the median of a new measurement under symmetric noise.
    pub median: f64,
    /// Lower end of the 95 % prediction interval (> 0).
    pub lo: f64,
    /// Upper end of the 95 % prediction interval.
    pub hi: f64,
    /// `log10(n / measured_max_n)`, or 0 inside the measured range.
    pub extrapolation_decades: f64,
    /// True when `n` is more than one decade past the largest measured size.
    pub warn_far: bool,
    /// True when `hi / lo > 10`: read the prediction as an order of magnitude.
    pub rough: bool,
}

/// Cost of `fit`'s chosen class at size `n`, with a 95 % prediction interval
/// (see module doc). `measured_max_n` is the largest size measured (usually
/// `fit.max_n`).
pub fn predict(fit: &GrowthFit, n: f64, measured_max_n: f64) -> Result<Prediction, FitError> {
    if !n.is_finite() || !measured_max_n.is_finite() {
        return Err(FitError::NonFinite {
            what: "size",
            index: 0,
        });
    }
    if n <= 0.0 {
        return Err(FitError::NonPositive {
            what: "size",
            index: 0,
            value: n,
        });
    }
    if measured_max_n <= 0.0 {
        return Err(FitError::NonPositive {
            what: "measured_max_n",
            index: 0,
            value: measured_max_n,
        });
    }
    let x0 = fit.row(n);
    let median = fit.lsq.fitted(&x0);
    if !(median.is_finite() && median > 0.0) {
        return Err(FitError::Numerical {
            detail: format!("prediction at n = {n} is not a positive finite cost ({median})"),
        });
    }
    let t = student_t_quantile(0.975, fit.lsq.dof as f64)?;
    let rel = fit.lsq.residual_sd * (fit.lsq.quad_form(&x0).max(0.0) / (median * median) + 1.0).sqrt();
    let half = t * rel;
    if !half.is_finite() {
        return Err(FitError::Numerical {
            detail: format!("prediction at n = {n} overflows"),
        });
    }
    let (lo, hi) = (median * (-half).exp(), median * half.exp());
    let extrapolation_decades = (n / measured_max_n).log10().max(0.0);
    Ok(Prediction {
        median,
        lo,
        hi,
        extrapolation_decades,
        warn_far: extrapolation_decades > 1.0,
        rough: is_rough(lo, hi),
    })
}

/// Which of the two designs passed to [`crossover`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Which {
    A,
    B,
}

/// Where design A's fitted cost and design B's cross.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Crossover {
    /// The size where the fitted costs are equal.
    pub n: f64,
    /// Smallest size, around `n`, where the costs may still be equal ([`may_be_equal`]).
    pub n_lo: f64,
    /// Largest size, around `n`, where the costs may still be equal ([`may_be_equal`]).
    pub n_hi: f64,
    /// Whether `n` lies within the measured sizes `[lo_n, hi_n]`.
    pub inside_measured: bool,
    /// The design that is cheaper just below `n`.
    pub faster_below: Which,
}

/// The first size in `[lo_n, search_max_n]` where the fitted costs of `a`
/// and `b` cross (method in the module doc). `[lo_n, hi_n]` is the measured
/// range. `Ok(None)` when they do not cross in the search range.
pub fn crossover(
    a: &GrowthFit,
    b: &GrowthFit,
    lo_n: f64,
    hi_n: f64,
    search_max_n: f64,
) -> Result<Option<Crossover>, FitError> {
    check_range(lo_n, hi_n, search_max_n)?;
    let g = |n: f64| -> Option<f64> {
        let (ca, cb) = (a.cost_at(n), b.cost_at(n));
        (ca > 0.0 && cb > 0.0 && ca.is_finite() && cb.is_finite()).then(|| ca.ln() - cb.ln())
    };
    let (u_lo, u_hi) = (lo_n.ln(), search_max_n.ln());
    let decades = (search_max_n / lo_n).log10();
    let steps = ((decades * GRID_PER_DECADE as f64).ceil() as usize).max(1);
    let grid: Vec<f64> = (0..=steps)
        .map(|i| (u_lo + (u_hi - u_lo) * i as f64 / steps as f64).exp())
        .collect();
    let Some((j, i, g_low)) = bracket(&grid, &g) else {
        return Ok(None);
    };
    let n_cross = bisect(&g, grid[j], grid[i], g_low);
    // g < 0 below the crossing means A's cost is lower there.
    let faster_below = if g_low < 0.0 { Which::A } else { Which::B };
    let (n_lo, n_hi) = band_overlap(a, b, &grid, n_cross, lo_n, search_max_n)?;
    Ok(Some(Crossover {
        n: n_cross,
        n_lo: n_lo.min(n_cross),
        n_hi: n_hi.max(n_cross),
        inside_measured: (lo_n..=hi_n).contains(&n_cross),
        faster_below,
    }))
}

/// The search range: finite, positive, `lo_n ≤ hi_n ≤ search_max_n`.
fn check_range(lo_n: f64, hi_n: f64, search_max_n: f64) -> Result<(), FitError> {
    for (i, v) in [lo_n, hi_n, search_max_n].iter().enumerate() {
        if !v.is_finite() {
            return Err(FitError::NonFinite {
                what: "crossover range",
                index: i,
            });
        }
        if *v <= 0.0 {
            return Err(FitError::NonPositive {
                what: "crossover range",
                index: i,
                value: *v,
            });
        }
    }
    if !(lo_n <= hi_n && hi_n <= search_max_n) {
        return Err(FitError::BadArgument {
            what: "crossover range",
            detail: format!("need lo_n ≤ hi_n ≤ search_max_n, got {lo_n}, {hi_n}, {search_max_n}"),
        });
    }
    Ok(())
}

/// First pair of valid grid points where g has strictly opposite signs
/// (grid points with g exactly 0 are stepped over, so identical curves
/// never "cross"): their indices and g at the lower one.
fn bracket(grid: &[f64], g: &impl Fn(f64) -> Option<f64>) -> Option<(usize, usize, f64)> {
    let mut prev: Option<(usize, f64)> = None;
    for (i, &n) in grid.iter().enumerate() {
        let Some(gi) = g(n) else { continue };
        if gi == 0.0 {
            continue;
        }
        if let Some((j, gj)) = prev {
            if gj.signum() != gi.signum() {
                return Some((j, i, gj));
            }
        }
        prev = Some((i, gi));
    }
    None
}

/// Bisection in ln n between `below` and `above`, keeping g's lower-end sign (`g_low`) at
/// the lower end; returns the crossing.
fn bisect(g: &impl Fn(f64) -> Option<f64>, below: f64, above: f64, g_low: f64) -> f64 {
    let (mut lo, mut hi) = (below.ln(), above.ln());
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        match g(mid.exp()) {
            Some(gm) if gm != 0.0 && gm.signum() == g_low.signum() => lo = mid,
            Some(_) => hi = mid,
            // A fitted cost stops being positive inside the bracket; keep
            // what we have rather than guess.
            None => break,
        }
    }
    (0.5 * (lo + hi)).exp()
}

/// The stretch around the crossing where the two costs may still be equal: the sizes
/// below and above `n_cross` where the 95 % interval of `ln ĉ_A − ln ĉ_B` stops
/// including 0 (`lo_n` and `search_max_n` when it never does). Each design's log
/// half-width is its prediction band's, widened past its own fit's largest size for
/// the distance; the two are combined in quadrature, as for the difference of two
/// independent estimates. (Asking for the two bands to overlap adds the half-widths
/// instead: √2 too wide for equal ones, and with the distance allowance it left a
/// crossing that a later sweep measured at about 2k rows, fitted at 1.4k from sizes up
/// to 512, unbounded at the far end.)
fn band_overlap(a: &GrowthFit, b: &GrowthFit, grid: &[f64], n_cross: f64, lo_n: f64, search_max_n: f64) -> Result<(f64, f64), FitError> {
    // Each band as reported: widened past its own fit's largest size for the distance.
    let band = |f: &GrowthFit, n: f64| -> Result<(f64, f64, f64), FitError> {
        let p = predict(f, n, f.max_n)?;
        let (lo, hi) = widen_for_extrapolation(p.median, p.lo, p.hi, extrapolation_allowance(n, f.max_n));
        Ok((p.median, lo, hi))
    };
    let overlaps = |n: f64| -> Result<bool, FitError> {
        let (am, a_lo, a_hi) = band(a, n)?;
        let (bm, b_lo, b_hi) = band(b, n)?;
        Ok(may_be_equal((am, a_lo, a_hi), (bm, b_lo, b_hi)))
    };
    let edge = |inside: f64, outside: f64| -> Result<f64, FitError> {
        let (mut u_in, mut u_out) = (inside.ln(), outside.ln());
        for _ in 0..100 {
            let mid = 0.5 * (u_in + u_out);
            if mid == u_in || mid == u_out {
                break;
            }
            if overlaps(mid.exp())? {
                u_in = mid;
            } else {
                u_out = mid;
            }
        }
        Ok(u_in.exp())
    };
    let mut n_lo = lo_n;
    let mut inside = n_cross;
    for &n in grid.iter().rev().filter(|&&n| n < n_cross) {
        if overlaps(n)? {
            inside = n;
        } else {
            n_lo = edge(inside, n)?;
            break;
        }
    }
    let mut n_hi = search_max_n;
    let mut inside = n_cross;
    for &n in grid.iter().filter(|&&n| n > n_cross) {
        if overlaps(n)? {
            inside = n;
        } else {
            n_hi = edge(inside, n)?;
            break;
        }
    }
    Ok((n_lo, n_hi))
}

/// Whether two costs, each a median with its 95 % band `(median, lo, hi)`, may be equal:
/// the log distance between the medians is within the two facing half-widths combined in
/// quadrature. A band with a lower end that is not positive says nothing, so it may.
pub fn may_be_equal(a: (f64, f64, f64), b: (f64, f64, f64)) -> bool {
    let ((am, a_lo, a_hi), (bm, b_lo, b_hi)) = (a, b);
    if [am, a_lo, bm, b_lo].iter().any(|v| !(*v > 0.0)) {
        return true;
    }
    let d = am.ln() - bm.ln();
    // A above B: A's lower half-width faces B's upper one.
    let (down, up) = if d >= 0.0 { ((am / a_lo).ln(), (b_hi / bm).ln()) } else { ((bm / b_lo).ln(), (a_hi / am).ln()) };
    d.abs() <= down.hypot(up)
}

#[cfg(test)]
mod allowance_tests {
    use super::*;

    /// Hand check of the crossing's test: medians ×4 apart (ln 4 = 1.386) with bands of
    /// ×2 either way (ln 2 = 0.693 each) may not be equal: √(0.693² + 0.693²) = 0.980.
    /// The two bands still touch (2 ≤ 2), which is what the test they replaced asked.
    /// ×2 apart (0.693 ≤ 0.980) may be.
    #[test]
    fn two_costs_may_be_equal_within_their_half_widths_in_quadrature() {
        assert!(!may_be_equal((4.0, 2.0, 8.0), (1.0, 0.5, 2.0)));
        assert!(!may_be_equal((1.0, 0.5, 2.0), (4.0, 2.0, 8.0)));
        assert!(may_be_equal((2.0, 1.0, 4.0), (1.0, 0.5, 2.0)));
        // The facing sides decide: A above B uses A's lower side and B's upper side.
        // ln(3) = 1.0986; A's lower side ln(3/1) = 1.0986 alone reaches B's median.
        assert!(may_be_equal((3.0, 1.0, 3.3), (1.0, 0.99, 1.01)));
        assert!(!may_be_equal((3.0, 2.9, 30.0), (1.0, 0.1, 1.01)));
        // A band with no positive lower end says nothing.
        assert!(may_be_equal((4.0, 0.0, 8.0), (1.0, 0.5, 2.0)));
    }

    /// Hand check: four times the largest fitted size is two doublings, so the allowance is
    /// 1.959964 × 0.17 × 2 = 0.66639 on the log scale, ×1.947 each way (z = 1.959964, the
    /// normal 97.5% quantile, any table).
    #[test]
    fn the_allowance_grows_with_the_doublings_past_the_fitted_sizes() {
        assert_eq!(extrapolation_allowance(16_000.0, 16_000.0), 0.0);
        assert_eq!(extrapolation_allowance(8_000.0, 16_000.0), 0.0);
        assert!((extrapolation_allowance(64_000.0, 16_000.0) - 0.66639).abs() < 1e-4);
        assert!((extrapolation_allowance(64_000.0, 16_000.0).exp() - 1.947).abs() < 1e-3);
        assert!((extrapolation_allowance(256_000.0, 16_000.0) - 2.0 * 0.66639).abs() < 2e-4);
        assert_eq!(extrapolation_allowance(f64::INFINITY, 16_000.0), 0.0);
        assert_eq!(extrapolation_allowance(64_000.0, 0.0), 0.0);
    }

    /// Each side grows in quadrature: a noise half-width of ln 1.5 below and ln 2 above,
    /// with an allowance of 0.5, gives √(0.4055² + 0.5²) = 0.6437 below and
    /// √(0.6931² + 0.5²) = 0.8547 above.
    #[test]
    fn each_side_of_the_interval_widens_in_quadrature() {
        let (lo, hi) = widen_for_extrapolation(100.0, 100.0 / 1.5, 200.0, 0.5);
        assert!((lo - 100.0 * (-0.6437f64).exp()).abs() < 0.01, "{lo}");
        assert!((hi - 100.0 * 0.8547f64.exp()).abs() < 0.02, "{hi}");
        // No allowance: the interval is returned as it was.
        assert_eq!(widen_for_extrapolation(100.0, 90.0, 120.0, 0.0), (90.0, 120.0));
        // A zero-width side still widens by the allowance alone.
        let (lo, hi) = widen_for_extrapolation(100.0, 100.0, 100.0, 0.5);
        assert!((lo - 100.0 * (-0.5f64).exp()).abs() < 1e-9 && (hi - 100.0 * 0.5f64.exp()).abs() < 1e-9);
    }
}
