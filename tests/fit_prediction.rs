//! Prediction intervals and crossovers of fitted growth curves.

use framecost::fit::rng::SplitMix64;
use framecost::fit::predict::may_be_equal;
use framecost::fit::{crossover, fit_growth, predict, GrowthClass, Which};

/// Doubling ladder 1k..512k.
fn ladder() -> Vec<f64> {
    (0..10).map(|k| 1000.0 * 2f64.powi(k)).collect()
}

#[test]
fn noise_free_linear_extrapolates_exactly() {
    let sizes = ladder();
    let big_n = *sizes.last().expect("ladder");
    let cost = |n: f64| 50.0 + 3.0 * n;
    let ys: Vec<f64> = sizes.iter().map(|&n| cost(n)).collect();
    let fit = fit_growth(&sizes, &ys).expect("fit");
    assert_eq!(fit.best, GrowthClass::Linear);

    let p = predict(&fit, 8.0 * big_n, fit.max_n).expect("predict");
    let err = ((p.median - cost(8.0 * big_n)) / cost(8.0 * big_n)).abs();
    assert!(err < 1e-9, "relative error {err:e}");
    assert!(p.lo <= p.median && p.median <= p.hi);
    assert!((p.extrapolation_decades - 8f64.log10()).abs() < 1e-12);
    assert!(!p.warn_far, "8N is 0.9 decades out");

    // Past a decade the warning is raised; inside the range it is zero.
    let far = predict(&fit, 11.0 * big_n, fit.max_n).expect("predict");
    assert!(far.warn_far && far.extrapolation_decades > 1.0);
    let inside = predict(&fit, 3000.0, fit.max_n).expect("predict");
    assert_eq!(inside.extrapolation_decades, 0.0);
    assert!(!inside.warn_far);
}

#[test]
fn interval_covers_about_95_percent_with_2_percent_noise() {
    // y = (20 + 0.5·n)·exp(0.02·z), 3 samples per size on 1k..512k, predict
    // at 8N, 200 seeds. A 95 % prediction interval should contain a fresh
    // measurement about 95 % of the time (allowing for extrapolation and for
    // the relative weighting being an approximation: assert ≥ 85 %), and must
    // not be so wide that it always does (assert ≤ 99.5 %).
    let sizes = ladder();
    let target = 8.0 * sizes[sizes.len() - 1];
    let cost = |n: f64| 20.0 + 0.5 * n;
    let seeds = 200;
    let (mut fresh_in, mut mean_in, mut class_right) = (0, 0, 0);
    for seed in 0..seeds {
        let mut rng = SplitMix64::new(77_000 + seed);
        let mut ns = Vec::new();
        let mut ys = Vec::new();
        for &n in &sizes {
            for _ in 0..3 {
                ns.push(n);
                ys.push(cost(n) * (0.02 * rng.standard_normal()).exp());
            }
        }
        let fit = fit_growth(&ns, &ys).expect("fit");
        class_right += usize::from(fit.best == GrowthClass::Linear);
        let p = predict(&fit, target, fit.max_n).expect("predict");
        let fresh = cost(target) * (0.02 * rng.standard_normal()).exp();
        fresh_in += usize::from(p.lo <= fresh && fresh <= p.hi);
        mean_in += usize::from(p.lo <= cost(target) && cost(target) <= p.hi);
    }
    let rate = fresh_in as f64 / seeds as f64;
    let mean_rate = mean_in as f64 / seeds as f64;
    println!(
        "coverage at 8N: fresh measurement {:.1}%, true cost {:.1}% ({class_right}/{seeds} fits chose n)",
        100.0 * rate,
        100.0 * mean_rate
    );
    assert!(rate >= 0.85, "fresh-measurement coverage {rate}");
    assert!(rate <= 0.995, "interval too wide: coverage {rate}");
    assert!(mean_rate >= 0.85, "true-cost coverage {mean_rate}");
}

#[test]
fn crossover_of_linear_and_quadratic_is_at_the_analytic_root() {
    // A = 1000 + n, B = 1 + 0.001·n². Equal where 0.001n² − n − 999 = 0:
    // n = (1 + √(1 + 4·0.001·999)) / (2·0.001) ≈ 1617.6 (quadratic formula).
    let sizes: Vec<f64> = (0..12).map(|k| 100.0 * 2f64.powi(k)).collect(); // 100..204800
    let ya: Vec<f64> = sizes.iter().map(|n| 1000.0 + n).collect();
    let yb: Vec<f64> = sizes.iter().map(|n| 1.0 + 0.001 * n * n).collect();
    let fa = fit_growth(&sizes, &ya).expect("fit A");
    let fb = fit_growth(&sizes, &yb).expect("fit B");
    assert_eq!(
        (fa.best, fb.best),
        (GrowthClass::Linear, GrowthClass::Quadratic)
    );

    let root = (1.0 + (1.0f64 + 4.0 * 0.001 * 999.0).sqrt()) / 0.002;
    let c = crossover(&fa, &fb, sizes[0], sizes[sizes.len() - 1], 1e7)
        .expect("valid range")
        .expect("the curves cross");
    let err = ((c.n - root) / root).abs();
    println!(
        "crossover {} vs analytic {root} (rel {err:.1e}), band [{}, {}]",
        c.n, c.n_lo, c.n_hi
    );
    assert!(err < 0.01, "crossover {} vs {root}", c.n);
    assert!(
        err < 1e-6,
        "noise-free fits should give the root almost exactly"
    );
    assert!(c.inside_measured);
    assert_eq!(
        c.faster_below,
        Which::B,
        "the quadratic design is cheaper at small n"
    );
    assert!(c.n_lo <= c.n && c.n <= c.n_hi);
    // Noise-free fits have (almost) zero-width bands.
    assert!(
        (c.n_hi / c.n_lo - 1.0) < 1e-3,
        "band [{}, {}]",
        c.n_lo,
        c.n_hi
    );

    // Swapping the designs swaps the answer, not the size.
    let s = crossover(&fb, &fa, sizes[0], sizes[sizes.len() - 1], 1e7)
        .expect("ok")
        .expect("cross");
    assert!(((s.n - c.n) / c.n).abs() < 1e-9);
    assert_eq!(s.faster_below, Which::A);
    // Searching only past the root finds nothing.
    assert_eq!(
        crossover(&fa, &fb, 5000.0, 10_000.0, 1e6).expect("ok"),
        None
    );
}

#[test]
fn noisy_crossover_has_a_band_around_it() {
    let sizes: Vec<f64> = (0..12).map(|k| 100.0 * 2f64.powi(k)).collect();
    let mut rng = SplitMix64::new(5);
    let mut noisy = |v: f64| v * (0.05 * rng.standard_normal()).exp();
    let mut ns = Vec::new();
    let (mut ya, mut yb) = (Vec::new(), Vec::new());
    for &n in &sizes {
        for _ in 0..3 {
            ns.push(n);
            ya.push(noisy(1000.0 + n));
            yb.push(noisy(1.0 + 0.001 * n * n));
        }
    }
    let fa = fit_growth(&ns, &ya).expect("fit A");
    let fb = fit_growth(&ns, &yb).expect("fit B");
    let c = crossover(&fa, &fb, 100.0, 204_800.0, 1e7)
        .expect("ok")
        .expect("cross");
    println!("noisy crossover {} in [{}, {}]", c.n, c.n_lo, c.n_hi);
    assert!(c.n_lo < c.n && c.n < c.n_hi, "{c:?}");
    assert!((c.n / 1617.6 - 1.0).abs() < 0.2, "{c:?}");
    // The band edges are where the two costs stop being possibly equal: the log distance
    // of the medians passes the facing half-widths in quadrature (inside the measured sizes,
    // so no allowance for the distance); just inside the edges they may still be equal.
    let band = |f: &framecost::fit::GrowthFit, n: f64| {
        let p = predict(f, n, f.max_n).expect("p");
        (p.median, p.lo, p.hi)
    };
    for (edge, outward, inward) in [(c.n_lo, 0.99, 1.01), (c.n_hi, 1.01, 0.99)] {
        assert!(!may_be_equal(band(&fa, edge * outward), band(&fb, edge * outward)), "still possibly equal just outside {edge}");
        assert!(may_be_equal(band(&fa, edge * inward), band(&fb, edge * inward)), "not possibly equal just inside {edge}");
        // Stricter than asking the two bands to overlap: they still do just outside.
        let (pa, pb) = (band(&fa, edge * outward), band(&fb, edge * outward));
        assert!(pa.1 <= pb.2 && pb.1 <= pa.2, "bands apart just outside {edge}: the edge should lie inside the overlap");
    }
}
