//! False discovery rate over many tests at once: the Benjamini–Hochberg step-up procedure.
//!
//! A gate compares every size of every design of a workload, dozens of rank tests, each at
//! the same level; a few of them pass it by chance on unchanged code (measured: a noisy
//! design at two neighbouring sizes, p = 0.021 and 0.031, among a workload's 28 points).
//! The adjusted value of a test (its *q-value*) is the smallest false discovery rate at
//! which it would be called: `q(i) = min over j ≥ i of p(j)·m/j` with the p-values sorted
//! ascending and `m` tests. Calling the tests with `q < alpha` keeps the expected share of
//! false calls among the calls at or below `alpha` for independent (or positively
//! dependent) tests (Benjamini & Hochberg, J. R. Statist. Soc. B 57 (1995) 289–300).

/// Benjamini–Hochberg adjusted p-values, in the order given. Values outside [0, 1] are
/// clamped into it; a NaN stays NaN and takes no part (it counts in neither `m` nor the
/// ranks).
pub fn benjamini_hochberg(p: &[f64]) -> Vec<f64> {
    let mut idx: Vec<usize> = (0..p.len()).filter(|&i| !p[i].is_nan()).collect();
    idx.sort_by(|&a, &b| p[a].total_cmp(&p[b]));
    let m = idx.len() as f64;
    let mut q = vec![f64::NAN; p.len()];
    let mut running = 1.0f64;
    for (rank, &i) in idx.iter().enumerate().rev() {
        let v = (p[i].clamp(0.0, 1.0) * m / (rank + 1) as f64).min(1.0);
        running = running.min(v);
        q[i] = running;
    }
    q
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The worked example of the 1995 paper (15 p-values of a clinical trial; from memory:
    /// at q = 0.05 the procedure rejects the four smallest). The adjusted values were
    /// checked on this machine against statsmodels 0.15.0 (PyPI),
    /// `multipletests(p, alpha=0.05, method='fdr_bh')`, which gives the same four rejections.
    #[test]
    fn the_papers_example_matches_a_reference_library() {
        let p = [0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.3240, 0.4262, 0.5719, 0.6528, 0.7590, 1.000];
        let want = [0.0015, 0.003, 0.0095, 0.035625, 0.0603, 0.063857, 0.063857, 0.0645, 0.0765, 0.486, 0.581182, 0.714875, 0.753231, 0.813214, 1.0];
        let q = benjamini_hochberg(&p);
        for (got, want) in q.iter().zip(want) {
            assert!((got - want).abs() < 1e-6, "{got} vs {want}");
        }
        assert_eq!(q.iter().filter(|x| **x < 0.05).count(), 4);
    }

    /// Unsorted input with ties (statsmodels 0.15.0, as above: 0.048, 0.03, 0.048, 0.5,
    /// 0.006, 0.048), and a NaN left out of the count.
    #[test]
    fn order_ties_and_missing_values() {
        let q = benjamini_hochberg(&[0.04, 0.01, 0.03, 0.5, 0.001, 0.04]);
        for (got, want) in q.iter().zip([0.048, 0.03, 0.048, 0.5, 0.006, 0.048]) {
            assert!((got - want).abs() < 1e-12, "{q:?}");
        }
        let q = benjamini_hochberg(&[0.01, f64::NAN, 0.04]);
        assert!(q[1].is_nan() && (q[0] - 0.02).abs() < 1e-12 && (q[2] - 0.04).abs() < 1e-12, "{q:?}");
        assert!(benjamini_hochberg(&[]).is_empty());
    }
}
