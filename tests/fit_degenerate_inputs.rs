//! Degenerate inputs give typed errors, never panics: one point, two points,
//! all-equal values or sizes, zeros, NaN, infinities, negative sizes,
//! mismatched lengths — plus a seeded sweep of hostile random inputs through
//! every public entry point.

use framecost::fit::rng::SplitMix64;
use framecost::fit::{
    crossover, doubling_ratios, exponent_with_ci, fit_growth, loglog_slope, predict, solve,
    FitError, GrowthClass,
};

const SIZES: [f64; 6] = [1e3, 2e3, 4e3, 8e3, 16e3, 32e3];

#[test]
fn fit_growth_degenerate_cases() {
    assert_eq!(fit_growth(&[], &[]), Err(FitError::Empty));
    assert_eq!(
        fit_growth(&[1e3], &[1.0]),
        Err(FitError::TooFewPoints {
            found: 1,
            needed: 5
        })
    );
    assert_eq!(
        fit_growth(&[1e3, 2e3], &[1.0, 2.0]),
        Err(FitError::TooFewPoints {
            found: 2,
            needed: 5
        })
    );
    assert!(matches!(
        fit_growth(&SIZES, &[1.0; 5]),
        Err(FitError::LengthMismatch { .. })
    ));
    // All sizes equal: growth cannot be told apart.
    assert_eq!(
        fit_growth(&[7.0; 6], &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0]),
        Err(FitError::TooFewSizes {
            found: 1,
            needed: 3
        })
    );
    assert_eq!(
        fit_growth(&[1.0, 1.0, 1.0, 2.0, 2.0], &[1.0; 5]),
        Err(FitError::TooFewSizes {
            found: 2,
            needed: 3
        })
    );
    // Zeros, negatives, NaN, infinity.
    let mut v = vec![1.0; 6];
    v[2] = 0.0;
    assert!(matches!(
        fit_growth(&SIZES, &v),
        Err(FitError::NonPositive {
            what: "values",
            index: 2,
            ..
        })
    ));
    v[2] = f64::NAN;
    assert!(matches!(
        fit_growth(&SIZES, &v),
        Err(FitError::NonFinite {
            what: "values",
            index: 2
        })
    ));
    v[2] = f64::INFINITY;
    assert!(matches!(
        fit_growth(&SIZES, &v),
        Err(FitError::NonFinite {
            what: "values",
            index: 2
        })
    ));
    let neg = [-1e3, 2e3, 4e3, 8e3, 16e3, 32e3];
    assert!(matches!(
        fit_growth(&neg, &[1.0; 6]),
        Err(FitError::NonPositive {
            what: "sizes",
            index: 0,
            ..
        })
    ));
    let zero = [0.0, 2e3, 4e3, 8e3, 16e3, 32e3];
    assert!(matches!(
        fit_growth(&zero, &[1.0; 6]),
        Err(FitError::NonPositive { what: "sizes", .. })
    ));

    // All-equal values are a valid, constant cost.
    let fit = fit_growth(&SIZES, &[4.2; 6]).expect("constant data");
    assert_eq!(fit.best, GrowthClass::Constant);
    assert!((fit.a - 4.2).abs() < 1e-12);
    assert_eq!(fit.b, 0.0);
}

#[test]
fn slope_helpers_degenerate_cases() {
    assert_eq!(loglog_slope(&[], &[]), Err(FitError::Empty));
    assert_eq!(
        loglog_slope(&[10.0], &[1.0]),
        Err(FitError::TooFewSizes {
            found: 1,
            needed: 2
        })
    );
    assert_eq!(
        loglog_slope(&[10.0, 10.0], &[1.0, 2.0]),
        Err(FitError::TooFewSizes {
            found: 1,
            needed: 2
        })
    );
    assert!(matches!(
        loglog_slope(&[10.0, 20.0], &[1.0, 0.0]),
        Err(FitError::NonPositive { .. })
    ));
    assert!(matches!(
        loglog_slope(&[10.0, f64::NAN], &[1.0, 2.0]),
        Err(FitError::NonFinite { .. })
    ));
    // Two points are enough for a slope: exact n².
    assert!((loglog_slope(&[10.0, 20.0], &[100.0, 400.0]).expect("slope") - 2.0).abs() < 1e-12);

    assert_eq!(doubling_ratios(&[], &[]), Err(FitError::Empty));
    assert_eq!(
        doubling_ratios(&[10.0], &[1.0]),
        Err(FitError::TooFewPoints {
            found: 1,
            needed: 2
        })
    );
    assert_eq!(
        doubling_ratios(&[20.0, 10.0], &[1.0, 2.0]),
        Err(FitError::NotIncreasing { index: 1 })
    );
    assert_eq!(
        doubling_ratios(&[10.0, 10.0], &[1.0, 2.0]),
        Err(FitError::NotIncreasing { index: 1 })
    );
    assert!(matches!(
        doubling_ratios(&[-1.0, 10.0], &[1.0, 2.0]),
        Err(FitError::NonPositive { .. })
    ));

    assert_eq!(exponent_with_ci(&[], 3, 100, 1), Err(FitError::Empty));
    let one = [(10.0, vec![1.0, 2.0])];
    assert_eq!(
        exponent_with_ci(&one, 3, 100, 1),
        Err(FitError::TooFewSizes {
            found: 1,
            needed: 2
        })
    );
    let dup = [(10.0, vec![1.0]), (10.0, vec![2.0])];
    assert!(matches!(
        exponent_with_ci(&dup, 2, 100, 1),
        Err(FitError::BadArgument { .. })
    ));
    let nan = [(10.0, vec![1.0]), (20.0, vec![f64::NAN])];
    assert!(matches!(
        exponent_with_ci(&nan, 2, 100, 1),
        Err(FitError::NonFinite { .. })
    ));
    // One sample per size: the bootstrap interval collapses onto the slope.
    let exact = [
        (10.0, vec![100.0]),
        (20.0, vec![400.0]),
        (40.0, vec![1600.0]),
    ];
    let e = exponent_with_ci(&exact, 3, 50, 1).expect("estimate");
    assert!(
        (e.slope - 2.0).abs() < 1e-12 && e.lo == e.slope && e.hi == e.slope,
        "{e:?}"
    );
}

#[test]
fn predict_and_crossover_degenerate_cases() {
    let ys: Vec<f64> = SIZES.iter().map(|n| 1.0 + n).collect();
    let fit = fit_growth(&SIZES, &ys).expect("fit");
    assert!(matches!(
        predict(&fit, f64::NAN, 1e3),
        Err(FitError::NonFinite { .. })
    ));
    assert!(matches!(
        predict(&fit, -5.0, 1e3),
        Err(FitError::NonPositive { .. })
    ));
    assert!(matches!(
        predict(&fit, 5.0, 0.0),
        Err(FitError::NonPositive { .. })
    ));
    assert!(matches!(
        crossover(&fit, &fit, 10.0, 1.0, 100.0),
        Err(FitError::BadArgument { .. })
    ));
    assert!(matches!(
        crossover(&fit, &fit, f64::NAN, 1.0, 100.0),
        Err(FitError::NonFinite { .. })
    ));
    assert!(matches!(
        crossover(&fit, &fit, -1.0, 1.0, 100.0),
        Err(FitError::NonPositive { .. })
    ));
    // Identical fits: the log-ratio is 0 everywhere, which is no crossing.
    assert_eq!(
        crossover(&fit, &fit, 10.0, 100.0, 1000.0).expect("ok"),
        None
    );
}

#[test]
fn hostile_random_inputs_never_panic() {
    // Seeded sweep: values drawn from a menu of troublemakers mixed with
    // ordinary numbers. Every call must return (Ok or a typed Err); an Ok
    // must contain finite numbers.
    let menu = [
        0.0,
        -0.0,
        -1.0,
        1.0,
        1e-300,
        1e300,
        f64::NAN,
        f64::INFINITY,
        f64::NEG_INFINITY,
        5e-324,
        3.0,
        1e6,
    ];
    let mut rng = SplitMix64::new(2024);
    let pick = |rng: &mut SplitMix64| -> f64 {
        if rng.below(6) == 0 {
            menu[rng.below(menu.len())]
        } else {
            1.0 + 1e4 * rng.next_f64()
        }
    };
    let (mut oks, mut errs) = (0, 0);
    for _ in 0..3000 {
        let len = rng.below(12);
        let ns: Vec<f64> = (0..len).map(|_| pick(&mut rng)).collect();
        let ys: Vec<f64> = (0..len).map(|_| pick(&mut rng)).collect();
        match fit_growth(&ns, &ys) {
            Ok(fit) => {
                oks += 1;
                assert!(fit.a.is_finite() && fit.b.is_finite() && fit.evidence_weight > 0.0);
                let n = pick(&mut rng);
                if let Ok(p) = predict(&fit, n, fit.max_n) {
                    assert!(p.median.is_finite() && p.lo <= p.hi);
                }
                let _ = crossover(&fit, &fit, 1.0, 10.0, 100.0);
            }
            Err(_) => errs += 1,
        }
        let _ = loglog_slope(&ns, &ys);
        let _ = doubling_ratios(&ns, &ys);
        let rows: Vec<Vec<f64>> = ns.iter().map(|&n| vec![1.0, n, pick(&mut rng)]).collect();
        let w: Vec<f64> = (0..len).map(|_| pick(&mut rng)).collect();
        if let Ok(f) = solve(&rows, &ys, Some(&w)) {
            assert!(f.coef.iter().all(|c| c.is_finite()));
        }
        let pts: Vec<(f64, Vec<f64>)> = ns
            .iter()
            .map(|&n| (n, vec![pick(&mut rng), pick(&mut rng)]))
            .collect();
        let _ = exponent_with_ci(&pts, 3, 5, 1);
    }
    println!("hostile sweep: {oks} fits accepted, {errs} rejected with typed errors");
    assert!(oks > 0 && errs > 0, "the sweep should exercise both paths");
}
