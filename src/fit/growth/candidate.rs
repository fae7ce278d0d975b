//! One class fitted to the data: every subset of its lower-order terms is fitted with the
//! leading term kept, the non-negative subsets compete by AICc, and the class is rejected
//! when its leading coefficient cannot be positive, when it disagrees with the measured
//! slope, or when its leading term carries too little of the cost (see the `growth` module
//! doc for why). `fit_growth` calls this once per class and compares the candidates.

use super::classes::{admissible_slopes, curve_at, GrowthClass, Term};
use super::slopes::SLOPE_SIZES;
use crate::fit::lsq::{solve, LsqFit};
use crate::fit::FitError;

/// A relative residual SD below this counts as an exact fit (see module doc).
pub const EXACT_FIT_FLOOR: f64 = 1e-10;

/// A growing class is accepted only when its leading term carries at least this
/// share of the fitted cost at the largest size measured: a class nests the
/// slower ones, so with noise its leading term always takes a little; a term
/// that carries less than this has not shown in the data (and naming the class
/// after it would extrapolate noise).
pub const LEADING_SHARE_MIN: f64 = 0.15;

/// In counted values (bytes: no noise floor, `fit_growth`) a leading term with a smaller
/// share than [`LEADING_SHARE_MIN`] has still shown when its share is at least this…
pub const COUNTED_SHARE_MIN: f64 = 0.03;
/// …and at least this many times the class fit's relative residual SD: the term then
/// explains a bend the counts repeat exactly, not noise. Why: row-growth's
/// `extend-in-place` allocates 11.5 kB a row plus 0.08·n² bytes (doubling ratios 2.005,
/// 2.04, 2.05, 2.10, 2.19 up to 32k rows, the same in every run). Where the point budget
/// stopped it at 16k rows the n² term carried 10% of the bytes, under the 15% share, and
/// the bytes read "n or n log n" (with n² 22 AICc units better and a residual SD of 0.3%);
/// where it reached 32k (18%) they read n². Which of the two a run said was the point
/// budget's coin flip, and the prediction at 2M rows differed thirteenfold.
pub const COUNTED_SHARE_OVER_RESIDUAL: f64 = 10.0;

/// Whether a leading term carrying `share` of the cost at the largest size has shown in the
/// data ([`LEADING_SHARE_MIN`]; in counted values, [`COUNTED_SHARE_MIN`] well above the
/// fit's residual SD).
fn leading_term_shown(share: f64, residual_sd: f64, noise_floor: f64) -> bool {
    share >= LEADING_SHARE_MIN
        || (noise_floor == 0.0 && share >= COUNTED_SHARE_MIN && share >= COUNTED_SHARE_OVER_RESIDUAL * residual_sd)
}

/// Why a candidate class took no part in the comparison.
#[derive(Debug, Clone, PartialEq)]
pub enum Rejection {
    /// The best fit had `b < 0`: the cost would shrink as `n` grows.
    NegativeSlope { b: f64 },
    /// The least-squares fit itself failed (e.g. numerically singular).
    FitFailed(FitError),
    /// The measured log-log slope over the largest sizes is outside what the
    /// class can show ([`admissible_slopes`]).
    SlopeDisagrees { slope: f64 },
    /// The leading term carries less than [`LEADING_SHARE_MIN`] of the fitted
    /// cost at the largest size: the class has not shown in the data.
    LeadingTermNegligible { share: f64 },
}

/// One fitted candidate class.
#[derive(Debug, Clone, PartialEq)]
pub struct Candidate {
    pub class: GrowthClass,
    /// The terms of the chosen subset with their coefficients (all ≥ 0), in
    /// the order of [`GrowthClass::terms`]; empty when rejected.
    pub terms: Vec<(Term, f64)>,
    /// Intercept (0 when the subset has none).
    pub a: f64,
    /// Coefficient of the leading term (0 for the constant class).
    pub b: f64,
    /// AICc; `f64::INFINITY` when rejected.
    pub aicc: f64,
    /// Relative residual SD, `√(RSS/dof)`.
    pub residual_sd: f64,
    /// `Some` when the candidate was left out of the comparison.
    pub rejection: Option<Rejection>,
    /// The underlying least-squares fit, when there is one.
    pub lsq: Option<LsqFit>,
}

/// AICc of a weighted fit with `n` points and `k` parameters (see module doc).
fn aicc(rss: f64, n: usize, k: usize, noise_floor: f64) -> f64 {
    if n <= k + 1 {
        return f64::INFINITY;
    }
    let nf = n as f64;
    let kf = k as f64;
    let sigma2 = (rss / nf + noise_floor * noise_floor).max(EXACT_FIT_FLOOR * EXACT_FIT_FLOOR);
    nf * sigma2.ln()
        + nf * (1.0 + (2.0 * std::f64::consts::PI).ln())
        + 2.0 * kf
        + 2.0 * kf * (kf + 1.0) / (nf - kf - 1.0)
}

/// How far the fitted curve's own log-log slope over the largest sizes may be from the
/// measured one when a large constant flattens it (see `fit_class`).
const MODEL_SLOPE_TOLERANCE: f64 = 0.1;

/// The log-log slope of a fitted curve between the smallest and the largest of the sizes
/// the measured top slope is taken over.
fn model_top_slope(terms: &[(Term, f64)], sizes: &[f64]) -> Option<f64> {
    let mut distinct: Vec<f64> = sizes.to_vec();
    distinct.sort_by(f64::total_cmp);
    distinct.dedup();
    let tail = &distinct[distinct.len().saturating_sub(SLOPE_SIZES)..];
    let (n0, n1) = (*tail.first()?, *tail.last()?);
    let (y0, y1) = (curve_at(terms, n0), curve_at(terms, n1));
    (n1 > n0 && y0 > 0.0 && y1 > 0.0).then(|| (y1 / y0).ln() / (n1 / n0).ln())
}

/// Fit one class with every subset of its lower-order terms (leading term
/// kept), keep the subsets whose coefficients are all ≥ 0, and return the one
/// with the lowest AICc (module doc).
pub(super) fn fit_class(class: GrowthClass, sizes: &[f64], values: &[f64], weights: &[f64], top_slope: f64, noise_floor: f64) -> Candidate {
    let all = class.terms();
    let lower = all.len() - 1;
    let mut best: Option<(Vec<Term>, LsqFit, f64)> = None;
    let mut last_error = None;
    let mut leading_negative = None;
    for mask in 0..(1usize << lower) {
        let subset: Vec<Term> =
            (0..lower).filter(|i| mask & (1 << i) != 0).map(|i| all[i]).chain(std::iter::once(class.leading())).collect();
        let rows: Vec<Vec<f64>> = sizes.iter().map(|&n| subset.iter().map(|t| t.at(n)).collect()).collect();
        let fit = match solve(&rows, values, Some(weights)) {
            Ok(f) => f,
            Err(e) => {
                last_error = Some(e);
                continue;
            }
        };
        let lead = *fit.coef.last().unwrap_or(&0.0);
        if class != GrowthClass::Constant && lead <= 0.0 {
            leading_negative.get_or_insert(lead);
            continue;
        }
        if fit.coef.iter().any(|c| *c < 0.0) {
            continue;
        }
        let score = aicc(fit.rss, sizes.len(), subset.len() + 1, noise_floor);
        if best.as_ref().is_none_or(|b| score < b.2) {
            best = Some((subset, fit, score));
        }
    }
    let rejected = |rejection: Rejection| Candidate {
        class,
        terms: vec![],
        a: f64::NAN,
        b: f64::NAN,
        aicc: f64::INFINITY,
        residual_sd: f64::NAN,
        rejection: Some(rejection),
        lsq: None,
    };
    let Some((subset, fit, score)) = best else {
        return match (leading_negative, last_error) {
            (Some(b), _) => rejected(Rejection::NegativeSlope { b }),
            (None, Some(e)) => rejected(Rejection::FitFailed(e)),
            (None, None) => rejected(Rejection::NegativeSlope { b: 0.0 }),
        };
    };
    let terms: Vec<(Term, f64)> = subset.iter().copied().zip(fit.coef.iter().copied()).collect();
    let a = terms.iter().find(|t| t.0 == Term::One).map_or(0.0, |t| t.1);
    let b = if class == GrowthClass::Constant { 0.0 } else { terms.last().map_or(0.0, |t| t.1) };
    let (lo, hi) = admissible_slopes(class);
    let max_n = sizes.iter().copied().fold(f64::MIN, f64::max);
    let total = curve_at(&terms, max_n);
    let share = terms.last().map_or(0.0, |(t, c)| c * t.at(max_n)) / total;
    // A large fixed cost (a process's start-up, say) flattens the top of a linear curve
    // below the class's usual slopes: such a fit is still admitted when its own curve
    // bends the same way over the same sizes and its per-row term carries a real share.
    // Only for n: a constant plus a steeper term could mimic any late jump.
    let flattened = top_slope < lo
        && class == GrowthClass::Linear
        && a > 0.0
        && share >= LEADING_SHARE_MIN
        && model_top_slope(&terms, sizes).is_some_and(|m| (m - top_slope).abs() <= MODEL_SLOPE_TOLERANCE);
    let rejection = if !(lo..=hi).contains(&top_slope) && !flattened {
        Some(Rejection::SlopeDisagrees { slope: top_slope })
    } else if class.rank() > GrowthClass::Linear.rank() && !leading_term_shown(share, fit.residual_sd, noise_floor) {
        Some(Rejection::LeadingTermNegligible { share })
    } else {
        None
    };
    Candidate {
        class,
        terms,
        a,
        b,
        aicc: if rejection.is_some() { f64::INFINITY } else { score },
        residual_sd: fit.residual_sd,
        rejection,
        lsq: Some(fit),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn aicc_counts_variance_as_a_parameter() {
        // Hand computation: N = 10, k = 3: penalty 2k + 2k(k+1)/(N−k−1) = 6 + 4 = 10.
        let base = aicc(0.5, 10, 3, 0.0)
            - 10.0 * (0.05f64).ln()
            - 10.0 * (1.0 + (2.0 * std::f64::consts::PI).ln());
        assert!((base - 10.0).abs() < 1e-12, "{base}");
        // k = 2: 4 + 12/7.
        let base = aicc(0.5, 10, 2, 0.0)
            - 10.0 * (0.05f64).ln()
            - 10.0 * (1.0 + (2.0 * std::f64::consts::PI).ln());
        assert!((base - (4.0 + 12.0 / 7.0)).abs() < 1e-12, "{base}");
    }

}
