//! Reference checks for the regression gate's statistics core: every number
//! here comes from outside this crate, and its source is named beside it.
//! "REFERENCES.md" is the shared reference notes kept beside the project (each value's
//! source is also named below), section
//! "Rank test — Mann–Whitney U (scipy 1.17.1 `scipy.stats.mannwhitneyu`)".

use framecost::track::stats::{
    approx_critical_u, bootstrap_ratio_ci, critical_u, exact_u_cdf, hodges_lehmann_ratio,
    hodges_lehmann_ratio_ci, mann_whitney, Method, StatsError,
};

fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

const A_X: [f64; 10] = [10.2, 10.5, 9.8, 10.1, 10.9, 10.4, 9.9, 10.6, 10.3, 10.0];
const A_Y: [f64; 10] = [10.8, 11.2, 10.7, 11.5, 10.35, 11.1, 11.0, 10.65, 11.3, 10.45];
const B_X: [f64; 9] = [12.0, 15.0, 15.0, 17.0, 18.0, 18.0, 20.0, 21.0, 23.0];
const B_Y: [f64; 11] = [16.0, 18.0, 20.0, 20.0, 22.0, 24.0, 24.0, 25.0, 26.0, 27.0, 29.0];

#[test]
fn example_a_no_ties_exact_and_asymptotic() {
    // [computed] REFERENCES.md example A (scipy 1.17.1): U1 = 10,
    // exact p = 139/92378, asymptotic (continuity) p = 0.0028272720911168077.
    let exact = mann_whitney(&A_X, &A_Y, Method::Exact).unwrap();
    assert_eq!(exact.u1, 10.0);
    assert_eq!(exact.u2, 90.0);
    assert!(!exact.ties);
    assert_eq!(exact.method_used, Method::Exact);
    assert_eq!(exact.z, None);
    assert!(rel(exact.p_two_sided, 139.0 / 92378.0) < 1e-12, "{}", exact.p_two_sided);
    assert!(rel(exact.p_two_sided, 0.0015046872632011952) < 1e-12);

    let asym = mann_whitney(&A_X, &A_Y, Method::Asymptotic).unwrap();
    assert_eq!(asym.u1, 10.0);
    assert!(rel(asym.p_two_sided, 0.0028272720911168077) < 1e-9, "{}", asym.p_two_sided);
    // z = (90 − 50 − 0.5)/sqrt(100·21/12) by the REFERENCES.md formula.
    let z = asym.z.unwrap();
    assert!(rel(z, 39.5 / (2100.0_f64 / 12.0).sqrt()) < 1e-14);

    // scipy's Auto rule: both sizes 10 > 8, so asymptotic.
    let auto = mann_whitney(&A_X, &A_Y, Method::Auto).unwrap();
    assert_eq!(auto.method_used, Method::Asymptotic);
    assert_eq!(auto.p_two_sided, asym.p_two_sided);

    // The count behind 139/92378: 2·#{U ≤ 10}/C(20,10) ⇒ #{U ≤ 10} = 139.
    assert!(rel(exact_u_cdf(10, 10, 10).unwrap(), 139.0 / 184756.0) < 1e-15);
}

#[test]
fn example_a_is_symmetric_in_the_samples() {
    // Source: definition U2 = n1·n2 − U1 (scipy docstring, Notes).
    for m in [Method::Exact, Method::Asymptotic] {
        let xy = mann_whitney(&A_X, &A_Y, m).unwrap();
        let yx = mann_whitney(&A_Y, &A_X, m).unwrap();
        assert_eq!((yx.u1, yx.u2), (xy.u2, xy.u1));
        assert_eq!(yx.p_two_sided, xy.p_two_sided);
    }
}

#[test]
fn example_b_ties_asymptotic() {
    // [computed] REFERENCES.md example B (scipy 1.17.1): U1 = 16, asymptotic,
    // tie-corrected, continuity p = 0.01184894092834745.
    let r = mann_whitney(&B_X, &B_Y, Method::Auto).unwrap();
    assert_eq!(r.u1, 16.0);
    assert_eq!(r.u2, 83.0);
    assert!(r.ties);
    assert_eq!(r.method_used, Method::Asymptotic);
    assert!(rel(r.p_two_sided, 0.01184894092834745) < 1e-9, "{}", r.p_two_sided);
    // Exact is refused on tied data (documented choice; scipy would compute
    // an uncorrected exact p instead).
    assert_eq!(mann_whitney(&B_X, &B_Y, Method::Exact), Err(StatsError::ExactWithTies));
}

#[test]
fn scipy_documentation_example() {
    // [published] scipy.stats.mannwhitneyu docstring example:
    // males [19,22,16,29,24] vs females [20,11,17,12] → U1 = 17, exact p = 1/9.
    let males = [19.0, 22.0, 16.0, 29.0, 24.0];
    let females = [20.0, 11.0, 17.0, 12.0];
    let r = mann_whitney(&males, &females, Method::Exact).unwrap();
    assert_eq!(r.u1, 17.0);
    assert!(rel(r.p_two_sided, 1.0 / 9.0) < 1e-14, "{}", r.p_two_sided);
    // Auto takes the exact route here (sizes ≤ 8, no ties; scipy's rule).
    let auto = mann_whitney(&males, &females, Method::Auto).unwrap();
    assert_eq!(auto.method_used, Method::Exact);
    assert_eq!(auto.p_two_sided, r.p_two_sided);
}

#[test]
fn auto_rule_uses_min_size_and_ties() {
    // scipy 1.17.1 `_mwu_choose_method`: asymptotic if both sizes > 8 or any
    // tie; else exact. 3 vs 40 without ties → exact.
    let small: Vec<f64> = (0..3).map(|i| i as f64 * 10.0 + 0.5).collect();
    let big: Vec<f64> = (0..40).map(|i| i as f64).collect();
    assert_eq!(mann_whitney(&small, &big, Method::Auto).unwrap().method_used, Method::Exact);
    // A within-sample tie counts as a tie → asymptotic.
    let tied = [1.0, 2.0, 2.0];
    let other = [3.0, 4.0];
    let r = mann_whitney(&tied, &other, Method::Auto).unwrap();
    assert!(r.ties);
    assert_eq!(r.method_used, Method::Asymptotic);
}

#[test]
fn handbook_critical_values_n10() {
    // [published tables; verified by exact enumeration in REFERENCES.md]:
    // n1 = n2 = 10, two-tailed α = 0.05 → 23, α = 0.01 → 16;
    // 2·P(U ≤ 23) = 0.043257, 2·P(U ≤ 24) = 0.052426.
    assert_eq!(critical_u(10, 10, 0.05), Some(23));
    assert_eq!(critical_u(10, 10, 0.01), Some(16));
    assert!((2.0 * exact_u_cdf(10, 10, 23).unwrap() - 0.043257).abs() < 5e-7);
    assert!((2.0 * exact_u_cdf(10, 10, 24).unwrap() - 0.052426).abs() < 5e-7);
    // The normal approximation used by the Moses interval agrees at 0.05
    // and is one step more conservative at 0.01 (documented).
    assert_eq!(approx_critical_u(10, 10, 0.05), Some(23));
    assert_eq!(approx_critical_u(10, 10, 0.01), Some(15));
    // Too small for any rejection: 2·P(U ≤ 0) = 2/C(4,2) = 1/3 > 0.05.
    assert_eq!(critical_u(2, 2, 0.05), None);
    assert_eq!(critical_u(0, 5, 0.05), None);
    assert_eq!(critical_u(10, 10, 0.0), None);
    assert_eq!(critical_u(10, 10, f64::NAN), None);
}

#[test]
fn exact_and_asymptotic_agree_for_larger_samples() {
    // Interleaved values with a shift, no ties: the exact p against an
    // independent big-integer computation, and the normal approximation
    // within 0.002 of it (measured gaps: 7e-4 at 30 × 30, 9e-5 at 70 × 70).
    let x: Vec<f64> = (0..30).map(|i| i as f64).collect();
    let y: Vec<f64> = (0..30).map(|i| i as f64 + 6.5).collect();
    let e = mann_whitney(&x, &y, Method::Exact).unwrap();
    let a = mann_whitney(&x, &y, Method::Asymptotic).unwrap();
    // [computed] Python 3.11 big-integer recurrence of the U counts
    // (written for this check, independent of the Gaussian-binomial code):
    // 2·#{U ≤ 253}/C(60,30) = 0.009603686592127122.
    assert!(rel(e.p_two_sided, 0.009603686592127122) < 1e-13, "{}", e.p_two_sided);
    assert!((e.p_two_sided - a.p_two_sided).abs() < 0.002, "{} vs {}", e.p_two_sided, a.p_two_sided);
    // 70 vs 70 is past i128 (C(140,70) ≈ 9e40): the f64 fallback serves it.
    let x: Vec<f64> = (0..70).map(|i| i as f64).collect();
    let y: Vec<f64> = (0..70).map(|i| i as f64 + 12.5).collect();
    let e = mann_whitney(&x, &y, Method::Exact).unwrap();
    let a = mann_whitney(&x, &y, Method::Asymptotic).unwrap();
    // [computed] same Python recurrence: 2·#{U ≤ 1653}/C(140,70).
    assert!(rel(e.p_two_sided, 0.0008098096746609713) < 1e-12, "{}", e.p_two_sided);
    assert!((e.p_two_sided - a.p_two_sided).abs() < 0.002, "{} vs {}", e.p_two_sided, a.p_two_sided);
    // Far beyond the limits: refused, not a hang.
    let big: Vec<f64> = (0..300).map(|i| i as f64).collect();
    assert_eq!(
        mann_whitney(&big, &big.iter().map(|v| v + 0.5).collect::<Vec<_>>(), Method::Exact),
        Err(StatsError::ExactTooLarge { n1: 300, n2: 300 })
    );
}

#[test]
fn degenerate_inputs_do_not_panic() {
    // Source: this module's documented contract.
    assert_eq!(mann_whitney(&[], &[1.0], Method::Auto), Err(StatsError::EmptySample { sample: "x" }));
    assert_eq!(mann_whitney(&[1.0], &[], Method::Auto), Err(StatsError::EmptySample { sample: "y" }));
    assert_eq!(
        mann_whitney(&[1.0, f64::NAN], &[2.0], Method::Auto),
        Err(StatsError::NotANumber { sample: "x", index: 1 })
    );
    // All values equal: σ = 0 → p = 1, z = None, U1 = n1·n2/2.
    for m in [Method::Auto, Method::Asymptotic] {
        let r = mann_whitney(&[5.0, 5.0, 5.0], &[5.0, 5.0], m).unwrap();
        assert_eq!((r.u1, r.p_two_sided, r.z, r.ties), (3.0, 1.0, None, true));
    }
    // -0.0 and 0.0 are equal values, hence tied.
    let r = mann_whitney(&[-0.0], &[0.0], Method::Auto).unwrap();
    assert_eq!((r.u1, r.p_two_sided, r.ties), (0.5, 1.0, true));
    // Single values: exact P(U ≥ 1) = 1/2 → p = 1; asymptotic z = 0 → p = 1.
    let r = mann_whitney(&[1.0], &[2.0], Method::Auto).unwrap();
    assert_eq!((r.u1, r.p_two_sided, r.method_used), (0.0, 1.0, Method::Exact));
    let r = mann_whitney(&[1.0], &[2.0], Method::Asymptotic).unwrap();
    assert_eq!((r.p_two_sided, r.z), (1.0, Some(0.0)));
    // U exactly at the mean: p = 1 on both routes.
    let r = mann_whitney(&[1.0, 4.0], &[2.0, 3.0], Method::Exact).unwrap();
    assert_eq!((r.u1, r.p_two_sided), (2.0, 1.0));
    // Infinities rank like any value.
    let r = mann_whitney(&[f64::NEG_INFINITY, 1.0], &[2.0, f64::INFINITY], Method::Exact).unwrap();
    // Pooled order −∞, 1 (x) < 2, +∞ (y): U1 = 0, p = 2·P(U ≤ 0) = 2/C(4,2) = 1/3.
    assert_eq!(r.u1, 0.0);
    assert!(rel(r.p_two_sided, 1.0 / 3.0) < 1e-15);
    // exact_u_cdf edges.
    assert_eq!(exact_u_cdf(3, 4, 12), Ok(1.0));
    assert_eq!(exact_u_cdf(3, 4, 1_000_000), Ok(1.0));
    assert!(exact_u_cdf(0, 4, 1).is_err());
}

#[test]
fn exact_cdf_is_monotone_and_symmetric() {
    // Source: the null distribution of U is symmetric about n1·n2/2
    // (Mann & Whitney 1947): P(U ≤ k) = 1 − P(U ≤ n1·n2 − k − 1).
    let (n1, n2) = (7usize, 9usize);
    let cells = (n1 * n2) as u64;
    let mut last = 0.0;
    for k in 0..cells {
        let c = exact_u_cdf(n1, n2, k).unwrap();
        assert!(c >= last);
        let mirror = 1.0 - exact_u_cdf(n1, n2, cells - k - 1).unwrap();
        assert!((c - mirror).abs() < 1e-15, "k = {k}");
        last = c;
    }
}

// ---------------------------------------------------------------------------
// Hodges–Lehmann ratio and bootstrap.

const BASE: [f64; 12] = [
    101.0, 98.5, 103.2, 99.9, 100.4, 97.7, 104.8, 100.0, 99.1, 102.6, 96.3, 101.9,
];

fn scaled(s: &[f64], k: f64) -> Vec<f64> {
    s.iter().map(|v| v * k).collect()
}

#[test]
fn hodges_lehmann_exact_scaling() {
    // Source: definition. new = 1.2·base makes the pairwise log-differences
    // symmetric about ln 1.2, with the n diagonal pairs at the middle.
    let new = scaled(&BASE, 1.2);
    let r = hodges_lehmann_ratio(&BASE, &new).unwrap();
    assert!(rel(r, 1.2) < 1e-12, "{r}");
    let (lo, est, hi) = hodges_lehmann_ratio_ci(&BASE, &new, 0.95).unwrap();
    assert!(rel(est, 1.2) < 1e-12);
    assert!(lo < 1.2 && 1.2 < hi, "({lo}, {hi})");
    assert!(lo > 1.1 && hi < 1.3, "({lo}, {hi})"); // the base spread is ±4%
    // Swapped samples: ratio 1/1.2, interval mirrored.
    let s = hodges_lehmann_ratio(&new, &BASE).unwrap();
    assert!(rel(s, 1.0 / 1.2) < 1e-12, "{s}");
    let (slo, sest, shi) = hodges_lehmann_ratio_ci(&new, &BASE, 0.95).unwrap();
    assert!(rel(sest, 1.0 / 1.2) < 1e-12);
    assert!(rel(slo, 1.0 / hi) < 1e-12 && rel(shi, 1.0 / lo) < 1e-12);
    // Odd number of pairs too (3 × 5 = 15).
    let b = [3.0, 5.0, 4.0];
    let n = [1.2 * 3.0, 1.5 * 5.0, 1.1 * 4.0, 1.3 * 3.0, 1.25 * 4.0];
    let r = hodges_lehmann_ratio(&b, &n).unwrap();
    // Hand computation: the 8th of 15 sorted ratios new_j/base_i.
    let mut ratios: Vec<f64> = b.iter().flat_map(|bi| n.iter().map(move |nj| nj / bi)).collect();
    ratios.sort_by(f64::total_cmp);
    assert!(rel(r, ratios[7]) < 1e-12, "{r} vs {}", ratios[7]);
}

#[test]
fn moses_interval_ranks_n10() {
    // Source: Moses interval [D(c+1), D(N−c)] with c = 23 for n1 = n2 = 10 at
    // 95% (handbook value, REFERENCES.md). With base = 1..10 and new = base,
    // the sorted differences ln(j/i) are checked at ranks 24 and 77.
    let base: Vec<f64> = (1..=10).map(|v| v as f64).collect();
    let mut d: Vec<f64> =
        base.iter().flat_map(|b| base.iter().map(move |n| (n / b).ln())).collect();
    d.sort_by(f64::total_cmp);
    let (lo, est, hi) = hodges_lehmann_ratio_ci(&base, &base, 0.95).unwrap();
    assert!(rel(lo, d[23].exp()) < 1e-12 && rel(hi, d[76].exp()) < 1e-12);
    assert!(rel(est, 1.0) < 1e-12);
}

#[test]
fn hodges_lehmann_degenerate_inputs() {
    // Source: this module's documented contract.
    assert_eq!(hodges_lehmann_ratio(&[], &[1.0]), Err(StatsError::EmptySample { sample: "base" }));
    assert_eq!(hodges_lehmann_ratio(&[1.0], &[]), Err(StatsError::EmptySample { sample: "new" }));
    assert!(matches!(
        hodges_lehmann_ratio(&[1.0, 0.0], &[1.0]),
        Err(StatsError::NotPositiveFinite { sample: "base", index: 1, .. })
    ));
    assert!(matches!(
        hodges_lehmann_ratio(&[1.0], &[f64::NAN]),
        Err(StatsError::NotPositiveFinite { sample: "new", index: 0, .. })
    ));
    assert!(hodges_lehmann_ratio(&[1.0], &[-2.0]).is_err());
    assert!(hodges_lehmann_ratio(&[1.0], &[f64::INFINITY]).is_err());
    // Single values: the ratio itself.
    assert!(rel(hodges_lehmann_ratio(&[2.0], &[3.0]).unwrap(), 1.5) < 1e-15);
    // All equal: ratio 1, interval collapses to 1.
    let (lo, est, hi) = hodges_lehmann_ratio_ci(&[5.0; 10], &[5.0; 10], 0.95).unwrap();
    assert_eq!((lo, est, hi), (1.0, 1.0, 1.0));
    // Too small for 95%: 3 vs 3 (2·P(U ≤ 0) = 0.1).
    assert_eq!(
        hodges_lehmann_ratio_ci(&[1.0, 2.0, 3.0], &[1.0, 2.0, 3.0], 0.95),
        Err(StatsError::TooFewForConfidence { n1: 3, n2: 3, confidence: 0.95 })
    );
    for c in [0.0, 1.0, -0.5, 1.5, f64::NAN] {
        assert!(matches!(hodges_lehmann_ratio_ci(&BASE, &BASE, c), Err(StatsError::BadConfidence(_))));
        assert!(matches!(bootstrap_ratio_ci(&BASE, &BASE, 100, c, 1), Err(StatsError::BadConfidence(_))));
    }
}

#[test]
fn bootstrap_is_deterministic_and_sensible() {
    // Source: definition (percentile bootstrap of a median ratio).
    let new = scaled(&BASE, 1.2);
    let a = bootstrap_ratio_ci(&BASE, &new, 2000, 0.95, 42).unwrap();
    let b = bootstrap_ratio_ci(&BASE, &new, 2000, 0.95, 42).unwrap();
    assert_eq!(a, b, "same seed, same interval");
    let c = bootstrap_ratio_ci(&BASE, &new, 2000, 0.95, 43).unwrap();
    assert_ne!(a, c, "another seed, another resampling");
    for (lo, hi) in [a, c] {
        assert!(lo <= 1.2 && 1.2 <= hi, "({lo}, {hi})");
        assert!(lo > 1.1 && hi < 1.3, "({lo}, {hi})");
    }
    // A narrower confidence gives a nested interval (same resamples).
    let n = bootstrap_ratio_ci(&BASE, &new, 2000, 0.5, 42).unwrap();
    assert!(a.0 <= n.0 && n.1 <= a.1);
    // Degenerate: identical constants → (1, 1); one resample works;
    // zero resamples and bad values are errors.
    assert_eq!(bootstrap_ratio_ci(&[7.0; 5], &[7.0; 3], 100, 0.9, 0).unwrap(), (1.0, 1.0));
    assert!(bootstrap_ratio_ci(&[2.0], &[3.0], 1, 0.9, 0).is_ok());
    assert_eq!(bootstrap_ratio_ci(&BASE, &new, 0, 0.95, 1), Err(StatsError::NoResamples));
    assert!(bootstrap_ratio_ci(&[], &new, 10, 0.95, 1).is_err());
    assert!(bootstrap_ratio_ci(&BASE, &[1.0, -1.0], 10, 0.95, 1).is_err());
}
