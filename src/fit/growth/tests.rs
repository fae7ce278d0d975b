//! Unit tests of the growth classifier: constructed curves whose class is known.

use super::*;

#[test]
fn negative_slope_is_rejected_and_constant_wins() {
    // A cost that shrinks with n: every growing class is either rejected
    // (its leading coefficient would be negative, or its class disagrees
    // with the falling slope) or far worse than the constant.
    let sizes = [1e3, 2e3, 4e3, 8e3, 16e3, 32e3];
    let values: Vec<f64> = sizes.iter().map(|n: &f64| 100.0 + 1e5 / n).collect();
    let fit = fit_growth(&sizes, &values).unwrap();
    assert_eq!(fit.best, GrowthClass::Constant);
    assert!(matches!(fit.alternative, None | Some(GrowthClass::Log)), "{:?}", fit.alternative);
    assert!(fit.evidence_weight > 0.9, "{fit:?}");
    for c in fit.candidates.iter().filter(|c| c.class.rank() >= GrowthClass::Linear.rank()) {
        assert!(c.rejection.is_some(), "{:?} should be rejected: {:?}", c.class, c);
    }
}

#[test]
fn hidden_quadratic_term_is_found_under_a_large_linear_cost() {
    // c₁·n + c₂·n² with the n² part a quarter of the n part at the
    // largest size: a single-term a + b·f(n) cannot see it; the n² class
    // fitted with its lower-order terms does, and extrapolates it.
    let sizes: Vec<f64> = (0..8).map(|k| 1000.0 * 2f64.powi(k)).collect();
    let (c1, c2) = (1.0, 0.25 / 128_000.0);
    let cost = |n: f64| 50.0 + c1 * n + c2 * n * n;
    let ys: Vec<f64> = sizes.iter().map(|&n| cost(n)).collect();
    let fit = fit_growth(&sizes, &ys).unwrap();
    assert_eq!(fit.best, GrowthClass::Quadratic, "{fit:?}");
    let far = 16.0 * 128_000.0;
    assert!((fit.cost_at(far) / cost(far) - 1.0).abs() < 1e-6, "{} vs {}", fit.cost_at(far), cost(far));
    assert!(fit.terms.iter().all(|t| t.1 >= 0.0));
}

#[test]
fn a_large_fixed_cost_does_not_hide_linear_growth() {
    // A whole process per run: 170 ms of start-up plus 0.24 µs per row, over sizes
    // 16k..256k. The top log-log slope is about 0.13, below the 0.3 the linear class
    // usually needs; the fitted curve bends the same way, so n is admitted, and the
    // cost at 16M is the line's, not a constant's.
    let sizes: Vec<f64> = (0..5).map(|k| 16_000.0 * 2f64.powi(k)).collect();
    let cost = |n: f64| 170e6 + 240.0 * n;
    let ys: Vec<f64> = sizes.iter().map(|&n| cost(n)).collect();
    let fit = fit_growth(&sizes, &ys).unwrap();
    assert_eq!(fit.best, GrowthClass::Linear, "{fit:?}");
    assert!(fit.top_slope < 0.3, "the case this guards: slope {}", fit.top_slope);
    let far = 16_000_000.0;
    assert!((fit.cost_at(far) / cost(far) - 1.0).abs() < 1e-6);
}

#[test]
fn a_class_must_agree_with_the_slope() {
    // Flat data with a late bump must not be called n² (slope check),
    // and a hundredfold rise must not be called constant.
    let sizes: Vec<f64> = (0..6).map(|k| 1000.0 * 2f64.powi(k)).collect();
    let flat = [10.0, 10.2, 9.9, 10.1, 10.0, 10.3];
    let fit = fit_growth(&sizes, &flat).unwrap();
    assert!(fit.best.rank() <= GrowthClass::Log.rank(), "{:?}", fit.best);
    let rising: Vec<f64> = sizes.iter().map(|n| n * 0.1).collect();
    let fit = fit_growth(&sizes, &rising).unwrap();
    assert_eq!(fit.best, GrowthClass::Linear);
    assert!(matches!(
        fit.candidate(GrowthClass::Constant).unwrap().rejection,
        Some(Rejection::SlopeDisagrees { .. })
    ));
}


#[test]
fn a_neighbour_whose_fit_is_the_chosen_curve_is_reported_beside_it() {
    // A line with a trace of n·log n (under 1% of the cost at the largest size): the
    // n log n class's leading term is negligible, its fit is the line's, and the data do
    // not rule it out: the pair is said rather than the line alone.
    let sizes: Vec<f64> = (0..6).map(|k| 1000.0 * 2f64.powi(k)).collect();
    let ys: Vec<f64> = sizes.iter().map(|&n| 500.0 + 1000.0 * n + 0.5 * n * n.ln()).collect();
    let fit = fit_growth(&sizes, &ys).unwrap();
    assert_eq!(fit.best, GrowthClass::Linear, "{fit:?}");
    assert!(matches!(fit.candidate(GrowthClass::Linearithmic).unwrap().rejection, Some(Rejection::LeadingTermNegligible { .. })));
    assert_eq!(fit.alternative, Some(GrowthClass::Linearithmic));
}

#[test]
fn a_noise_floor_keeps_a_few_percent_of_curvature_from_deciding() {
    // n·(1 + 0.03·ln(n/1000)) is exactly a + b·n + c·n·log n: without a floor the exact
    // n log n fit wins outright; at a 5% reproducibility the curvature (12% over the
    // range) no longer rules n out, and the two are reported as a pair.
    let sizes: Vec<f64> = (0..6).map(|k| 1000.0 * 2f64.powi(k)).collect();
    let ys: Vec<f64> = sizes.iter().flat_map(|&n| [0.99, 1.0, 1.01].map(|q| q * n * (1.0 + 0.03 * (n / 1000.0).ln()))).collect();
    let xs: Vec<f64> = sizes.iter().flat_map(|&n| [n; 3]).collect();
    let sharp = fit_growth(&xs, &ys).unwrap();
    assert_eq!((sharp.best, sharp.alternative), (GrowthClass::Linearithmic, None), "{sharp:?}");
    let floored = fit_growth_with(&xs, &ys, 0.05).unwrap();
    let pair = [floored.best, floored.alternative.unwrap_or(floored.best)];
    assert!(pair.contains(&GrowthClass::Linear) && pair.contains(&GrowthClass::Linearithmic), "{floored:?}");
}

#[test]
fn n_flattened_by_a_fixed_cost_is_paired_with_log_n() {
    // key-lookups' `hash-index-prebuilt` as swept on this project's 2-core machine (December
    // 2026): each size's time quartiles in µs. A fixed cost flattens n to a slope of about
    // 0.27 over the largest sizes, below what n usually shows; log n describes the same rise.
    let quartiles = [
        (4000.0, [110.3, 113.8, 118.5]),
        (16000.0, [171.2, 176.9, 181.1]),
        (64000.0, [270.6, 275.9, 280.8]),
        (256000.0, [430.3, 451.4, 476.8]),
        (1024000.0, [525.3, 568.6, 625.4]),
    ];
    let fit = fit_quartiles_us(&quartiles);
    assert!(fit.top_slope < admissible_slopes(GrowthClass::Linear).0, "the case this guards: slope {}", fit.top_slope);
    assert_eq!(fit.label(), "log n or n", "{:?} {:?}", fit.best, fit.alternative);
    // At a slope n usually shows, n keeps n log n as its neighbour.
    let steeper: Vec<(f64, [f64; 3])> = quartiles.iter().map(|&(n, _)| (n, [(2e4 + 3.0 * n) / 1e3; 3])).collect();
    let fit = fit_quartiles_us(&steeper);
    assert!(fit.top_slope >= 0.3 && fit.best == GrowthClass::Linear, "{} {:?}", fit.top_slope, fit.best);
    assert_ne!(fit.alternative, Some(GrowthClass::Log));
}

#[test]
fn a_small_quadratic_term_in_counted_bytes_is_found_before_it_dominates() {
    // Bytes allocated by row-growth's `extend-in-place`, 500 to 16k rows, as a catalog sweep
    // recorded them (identical in every sweep: allocation counts, not times). 11.5 kB a row
    // plus a term in n² that carries 10% of the bytes at 16k rows.
    let sizes = [500.0, 1e3, 2e3, 4e3, 8e3, 16e3];
    let bytes = [5_779_341.0, 11_601_064.0, 23_261_693.0, 47_510_132.0, 97_573_578.0, 204_749_493.0];
    let fit = fit_growth(&sizes, &bytes).unwrap();
    assert_eq!(fit.best, GrowthClass::Quadratic, "{:?} {:?}", fit.label(), fit.candidates);
    // Held out: the same sweep measured 449,135,157 bytes at 32k rows; the fit extrapolates
    // to it within 1%.
    let at_32k = fit.cost_at(32e3);
    assert!((at_32k / 449_135_157.0 - 1.0).abs() < 0.01, "{at_32k}");
    // The same bend under a ±2% wobble (what a noisy count would add) is not enough: the
    // term's 10% share is then under ten residual SDs and n² is not named alone.
    let wobbled: Vec<f64> = bytes.iter().enumerate().map(|(i, y)| y * if i % 2 == 0 { 1.02 } else { 0.98 }).collect();
    let fit = fit_growth(&sizes, &wobbled).unwrap();
    assert_ne!((fit.best, fit.alternative), (GrowthClass::Quadratic, None), "{}", fit.label());
    // Timed values (a noise floor) keep the 15% share.
    let fit = fit_growth_with(&sizes, &bytes, TIME_REPRODUCIBILITY).unwrap();
    assert_ne!(fit.best, GrowthClass::Quadratic, "{}", fit.label());
}
