//! Known-answer suite for the growth classifier: synthetic costs built from
//! an exact `a + b·f(n)` for every class, with and without noise.
//!
//! Design of the suite (documented here because the rates depend on it):
//! - sizes: a doubling ladder 1 000 · 2^k, k = 0..9 (1k..512k), with 3
//!   samples per size (30 points), as a sweep would measure them;
//! - curves: `b = 1`, `a = 1 %` of `f(1000)` (so `a` is small next to
//!   `b·f(n)` everywhere), and `a = 1` for the constant class;
//! - noise: multiplicative log-normal, `y = truth · exp(σ·z)`, z standard
//!   normal from SplitMix64, σ = 0, 0.02 and 0.10;
//! - 200 seeds per class per noise level.
//!   Noise-free must be right every time; noisy must be right ≥ 95 %.

use framecost::fit::rng::SplitMix64;
use framecost::fit::{doubling_ratios, fit_growth, loglog_slope, FitError, GrowthClass};

fn doubling_ladder() -> Vec<f64> {
    (0..10).map(|k| 1000.0 * 2f64.powi(k)).collect()
}

fn truth(class: GrowthClass, a: f64, b: f64, n: f64) -> f64 {
    match class {
        GrowthClass::Constant => a,
        _ => a + b * class.shape(n),
    }
}

/// `(sizes, values)` with `reps` samples per size, noise σ (log-normal).
fn synth(
    class: GrowthClass,
    ladder: &[f64],
    reps: usize,
    sigma: f64,
    seed: u64,
) -> (Vec<f64>, Vec<f64>) {
    let mut rng = SplitMix64::new(seed);
    let a = if class == GrowthClass::Constant {
        1.0
    } else {
        0.01 * class.shape(1000.0)
    };
    let mut ns = Vec::new();
    let mut ys = Vec::new();
    for &n in ladder {
        for _ in 0..reps {
            ns.push(n);
            ys.push(truth(class, a, 1.0, n) * (sigma * rng.standard_normal()).exp());
        }
    }
    (ns, ys)
}

#[test]
fn noise_free_curves_are_always_classified_right() {
    // Several ladders and coefficient mixes, no noise: zero mistakes allowed.
    let ladders: Vec<(&str, Vec<f64>)> = vec![
        ("doubling 1k..512k", doubling_ladder()),
        ("decades 1e2..1e7", (2..=7).map(|k| 10f64.powi(k)).collect()),
        (
            "quarter decades 1e3..1e6",
            (0..=12).map(|k| 1e3 * 10f64.powf(k as f64 / 4.0)).collect(),
        ),
        ("small 10..50", vec![10.0, 20.0, 30.0, 40.0, 50.0]),
    ];
    let mut cases = 0;
    for (name, ladder) in &ladders {
        for class in GrowthClass::ALL {
            for a_frac in [0.0, 0.001, 0.01, 0.5] {
                for b in [1e-6, 1.0, 1e6] {
                    let a = if class == GrowthClass::Constant {
                        b
                    } else {
                        a_frac * b * class.shape(ladder[0]).abs()
                    };
                    let ys: Vec<f64> = ladder.iter().map(|&n| truth(class, a, b, n)).collect();
                    let fit = fit_growth(ladder, &ys).expect("noise-free fit");
                    assert_eq!(
                        fit.best, class,
                        "{name}: a={a}, b={b}, class {} classified as {} (runner-up {:?}, ΔAICc {})",
                        class.label(), fit.best.label(), fit.runner_up, fit.delta_aicc
                    );
                    cases += 1;
                }
            }
        }
    }
    println!("noise-free: {cases}/{cases} classified right");
}

#[test]
fn noisy_curves_are_classified_right_at_least_95_percent() {
    let seeds = 200u64;
    let mut worst = 1.0_f64;
    for sigma in [0.02, 0.10] {
        for class in GrowthClass::ALL {
            let mut right = 0;
            let mut wrong_as: Vec<&str> = Vec::new();
            for seed in 0..seeds {
                let (ns, ys) = synth(class, &doubling_ladder(), 3, sigma, 1_000_003 * seed + 7);
                let fit = fit_growth(&ns, &ys).expect("noisy fit");
                if fit.best == class {
                    right += 1;
                } else {
                    wrong_as.push(fit.best.label());
                }
            }
            let rate = right as f64 / seeds as f64;
            worst = worst.min(rate);
            println!(
                "noise {:>4.0}% class {:>8}: {right}/{seeds} right ({:.1}%), wrong as {wrong_as:?}",
                sigma * 100.0,
                class.label(),
                100.0 * rate
            );
            assert!(
                rate >= 0.95,
                "class {} at noise {sigma}: only {:.1}% right",
                class.label(),
                100.0 * rate
            );
        }
    }
    println!("worst noisy rate: {:.1}%", 100.0 * worst);
}

#[test]
fn n_log_n_doubling_ratios_match_references() {
    // Source [computed, REFERENCES.md "Order of growth"]: for
    // f(n) = n·log₂ n, T(2N)/T(N) = 2 + 2/log₂ N.
    let expected = [
        (1e3, 2.2006866637759877),
        (1e4, 2.1505149978319906),
        (1e5, 2.1204119982655927),
        (1e6, 2.1003433318879936),
    ];
    let f = |n: f64| n * n.log2();
    for (n, want) in expected {
        let r = doubling_ratios(&[n, 2.0 * n], &[f(n), f(2.0 * n)]).expect("ratio");
        assert_eq!(r.len(), 1);
        let e = ((r[0] - want) / want).abs();
        assert!(e < 1e-12, "N={n}: {} vs {want} (rel {e:e})", r[0]);
        // The closed form itself.
        assert!((r[0] - (2.0 + 2.0 / n.log2())).abs() < 1e-12);
    }
    // A non-doubling step is normalised to a doubling: n² over a ×10 step
    // gives (100)^(ln2/ln10) = 4.
    let r = doubling_ratios(&[10.0, 100.0], &[100.0, 10_000.0]).expect("ratio");
    assert!((r[0] - 4.0).abs() < 1e-12, "{r:?}");
}

#[test]
fn n_log_n_has_slope_1_1_but_is_classified_n_log_n() {
    // Source [computed, REFERENCES.md]: the least-squares log-log slope of
    // n·log n over N = 1e3, 1e4, 1e5, 1e6 is exactly 1.1 (f64:
    // 1.1000000000000003) — a naive power-law reading says "n^1.1".
    let decades = [1e3, 1e4, 1e5, 1e6];
    let f = |n: f64| n * n.log2();
    let ys: Vec<f64> = decades.iter().map(|&n| f(n)).collect();
    let slope = loglog_slope(&decades, &ys).expect("slope");
    assert!((slope - 1.1).abs() < 1e-12, "slope {slope}");

    // Four points are too few for AICc with 3 parameters: a typed error.
    assert_eq!(
        fit_growth(&decades, &ys),
        Err(FitError::TooFewPoints {
            found: 4,
            needed: 5
        })
    );

    // The same curve over the same range at quarter decades (13 sizes, which
    // include the four above) is classified "n log n", not a power of n.
    let sizes: Vec<f64> = (0..=12).map(|k| 1e3 * 10f64.powf(k as f64 / 4.0)).collect();
    let ys: Vec<f64> = sizes.iter().map(|&n| f(n)).collect();
    let fit = fit_growth(&sizes, &ys).expect("fit");
    assert_eq!(fit.best.label(), "n log n");
    assert!(fit.delta_aicc > 10.0, "ΔAICc {}", fit.delta_aicc);
    // And with 2 % noise on a doubling ladder with 3 samples per size it
    // still is (one deterministic seed; the rate test above covers many).
    let (ns, ys) = synth(GrowthClass::Linearithmic, &doubling_ladder(), 3, 0.02, 99);
    assert_eq!(
        fit_growth(&ns, &ys).expect("fit").best,
        GrowthClass::Linearithmic
    );
}

#[test]
fn fit_reports_coefficients_and_evidence() {
    // y = 3 + 2·n² exactly.
    let sizes = doubling_ladder();
    let ys: Vec<f64> = sizes.iter().map(|n| 3.0 + 2.0 * n * n).collect();
    let fit = fit_growth(&sizes, &ys).expect("fit");
    assert_eq!(fit.best, GrowthClass::Quadratic);
    assert!((fit.b - 2.0).abs() < 1e-9, "b {}", fit.b);
    assert!((fit.a - 3.0).abs() < 1e-3, "a {}", fit.a);
    // The n³ class is fitted with its lower-order terms (a + b·n + c·n² + d·n³), so it fits
    // this curve exactly too, with one useless parameter more: at N = 10 its AICc is 6 units
    // worse (2 for the parameter, 4 from the small-sample correction), an Akaike weight of
    // 1/(1 + e^-3) ≈ 0.95 for n².
    assert!(fit.evidence_weight > 0.9 && fit.evidence_weight <= 1.0, "{}", fit.evidence_weight);
    assert!(fit.delta_aicc > 5.0, "{}", fit.delta_aicc);
    assert_eq!(fit.alternative, None);
    assert_eq!(fit.candidates.len(), GrowthClass::ALL.len());
    let best = fit.candidate(GrowthClass::Quadratic).expect("candidate");
    for c in &fit.candidates {
        assert!(
            c.aicc >= best.aicc,
            "{:?} has lower AICc than the best",
            c.class
        );
    }
    assert_eq!(
        (fit.n_points, fit.n_sizes, fit.min_n, fit.max_n),
        (10, 10, 1000.0, 512_000.0)
    );
}
