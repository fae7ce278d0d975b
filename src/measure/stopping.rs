//! When one design's sampling at one size stops: its median precise enough, a cap or a
//! budget reached — unless the budget left it two samples that disagree (`third_sample_due`).

use super::sampling::Active;
use super::stats::{median_ci_sorted, median_sorted};
use crate::plan::Budget;
use crate::results::StopReason;

/// Whether `a`'s median is precise enough to stop on (with at least the fewest samples).
pub(super) fn is_precise(a: &Active, b: &Budget) -> bool {
    if (a.samples.len() as u64) < b.min_samples {
        return false;
    }
    let mut s = a.samples.clone();
    s.sort_by(f64::total_cmp);
    let med = median_sorted(&s);
    median_ci_sorted(&s, 0.95).is_some_and(|(lo, hi)| med > 0.0 && (med - lo).max(hi - med) / med <= b.precision)
}

/// The cap or budget that ends `a`'s sampling now, if one does.
pub(super) fn limit(a: &Active, b: &Budget, run_elapsed_s: f64) -> Option<StopReason> {
    let n = a.samples.len() as u64;
    if n >= b.max_samples {
        return Some(StopReason::SampleCap);
    }
    if a.spent_s >= b.per_point_s && !third_sample_due(&a.samples, a.batch, a.spent_s, b.per_point_s) {
        return Some(StopReason::PointBudget);
    }
    if a.share_s.is_some_and(|s| a.spent_s >= s) {
        return Some(StopReason::RunBudget);
    }
    if run_elapsed_s >= b.whole_run_s {
        return Some(StopReason::RunBudget);
    }
    None
}

/// Two samples further apart than this (the larger over the smaller) disagree: the
/// run-to-run spread of one design at one size is a few per cent on a quiet machine.
pub const PAIR_APART: f64 = 1.25;
/// How far past its point budget a point may go for the third sample (a multiple of the
/// budget).
pub const THIRD_SAMPLE_GRACE: f64 = 1.5;

/// Whether a point that has used its budget on two samples that disagree takes a third.
///
/// Why: two samples have no middle, so their median is their mean and carries whichever of
/// them was disturbed. A catalog sweep measured tiny-containers' `series-per-row` at 256k
/// rows with samples of 1829 and 343 ms (three other sweeps: 281–310 ms), recorded
/// 1086 ms, and its prediction at the target came out ×7 above the other runs'. A third
/// sample makes the median one of the samples. It is taken only when it is expected to
/// fit (the smaller sample's time: `batch` runs of the smaller per-run time, since samples
/// are recorded per run) within [`THIRD_SAMPLE_GRACE`] times the point budget; the run
/// budget still applies.
pub fn third_sample_due(samples: &[f64], batch: u64, spent_s: f64, per_point_s: f64) -> bool {
    let [x, y] = samples else { return false };
    let (lo, hi) = (x.min(*y), x.max(*y));
    lo > 0.0 && hi / lo > PAIR_APART && spent_s + lo * batch.max(1) as f64 / 1e9 <= per_point_s * THIRD_SAMPLE_GRACE
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn two_samples_that_disagree_take_a_third_when_it_fits() {
        // The recorded point: 1829 and 343 ms after 3.69 s of a 3.5 s budget.
        assert!(third_sample_due(&[1_829_013_457.0, 343_117_645.0], 1, 3.69, 3.5));
        // Two samples that agree: their mean is as good as a median.
        assert!(!third_sample_due(&[343e6, 360e6], 1, 3.69, 3.5));
        // A third that would not fit within 1.5 budgets: stop.
        assert!(!third_sample_due(&[4e9, 2e9], 1, 6.5, 3.5));
        // One sample, or three: nothing to do here (three have a middle).
        assert!(!third_sample_due(&[1e9], 1, 3.6, 3.5));
        assert!(!third_sample_due(&[1e9, 3e8, 3e8], 1, 3.6, 3.5));
        // Samples are per run: a batch of 4 runs of 0.3 s is a 1.2 s sample, past 1.5 budgets.
        assert!(third_sample_due(&[1e9, 3e8], 1, 4.2, 3.5));
        assert!(!third_sample_due(&[1e9, 3e8], 4, 4.2, 3.5));
    }
}
