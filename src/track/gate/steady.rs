//! A design that moved the same way at (nearly) every size: judged over its sizes together.
//!
//! Point by point, a change a little past the threshold is lost between two sweeps: each
//! size's ratio moves with the machine by about as much as the change (per-size log-ratios
//! of unchanged code spread by 0.11 between back-to-back sweeps here), so a 15% slowdown
//! passes the threshold at some sizes and not at others and is rarely confirmed by a
//! neighbour (5 of 12 rehearsal pairings caught). Taken together, ten sizes that all moved
//! ×1.05–×1.2 are strong evidence even where no single one is. So each design's judged
//! log-ratios, each divided by its size's common move (`common::size_moves`; the
//! workload's where a size had fewer than two other designs), are also pooled:
//!
//! - their mean, with a 95% Student-t interval over the sizes, must pass the threshold (and
//!   [`super::COMMON_MODE_SPREADS`] spreads of the workload's common move, as a point must)
//!   with the whole interval on that side of ×1;
//! - all sizes but at most one moved that way;
//! - the **raw** ratios (no probe, no common move) moved that way too, by at least half the
//!   threshold on average: a correction may sharpen a change but never create one from
//!   equal medians;
//! - at least [`MIN_SIZES`] sizes, busy and split points left out (between runs), and not
//!   a design split at [`SPLIT_SIZES`] sizes or more;
//! - what is left after the corrections is at least as large as what they took out
//!   ([`MACHINE_SHARE`]): when the machine moved a design by ×1.4 between the sweeps and the
//!   probes and the sibling designs account for ×1.25 of it, the ×1.18 left over is within
//!   how differently designs answer the same move of the machine, not a change of the
//!   design.
//!
//! Measured on saved runs of unchanged code (36 ordered pairings of back-to-back catalog
//! sweeps and of the rehearsal workload, 1412 design comparisons): no design called. On the
//! rehearsal's 12 pairings of an unchanged and a 15%-slowed sweep: 11 caught, against 5 by
//! the point rule alone (the one missed moved ×1.09 judged, ×1.05 raw). Out of sample, on
//! sweeps made after the rule was set: 4 of 9 caught (the others moved ×1.03–×1.10 over
//! their sizes, under the threshold), no unchanged pairing called.
//!
//! Second version (4 December): two of six pairings of three new back-to-back catalog
//! sweeps failed on unchanged code, on leftovers [`MACHINE_SHARE`] now declines. Tried and
//! dropped the same day: asking the mean of the sizes to pass three standard errors of a
//! mean (spread / √sizes) instead of three spreads of one point. It caught row-growth's 15%
//! and 20% slowdown in 6 of 8 pairings of sweeps of that workload alone (before: 0), in
//! sample and out of it, but on two later catalog sweeps it failed 5 of 24 pairings of
//! unchanged code (before: 1): unchanged designs moved ×1.18–×1.40 over all their sizes
//! relative to their siblings (row-wise's `function-per-reused-row` ×1.3–×1.6 at every
//! size in one sweep), as large as the slowdowns it caught (×1.14–×1.21). Between separate
//! sweeps no bar tells them apart; measuring both versions in one sweep (`--pair`) does.
//!
//! Tried and dropped on 4 December (another machine): judging a design against three
//! spreads of its *siblings'* points instead of the whole workload's, since a slowed
//! design's own points widen that spread (row-growth's `build-once`, slowed 15%, moved
//! ×1.12–×1.16 over its sizes where three workload spreads asked ×1.13–×1.19). On the six
//! sweeps it was devised on it caught the slowdown in 8 of 8 pairings (before: 4) with no
//! unchanged pairing called; on three later sweeps, after the machine slowed ×1.2, it called
//! unchanged designs in one pairing more than the kept rule (10 of the 20 pairings across
//! that move, against 9) and more designs in six: the siblings' spread is exactly what
//! keeps a design that answers the machine's move differently from being called.

use super::{Call, WorkloadGate, COMMON_MODE_SPREADS};
use serde::{Deserialize, Serialize};

/// Fewest sizes a design is judged over as a whole.
pub const MIN_SIZES: usize = 4;

/// A design whose samples fell into two separate groups at this many sizes or more is not
/// judged as a whole: its medians jump between its two regimes from run to run at the
/// other sizes too (cross-column's `horizontal-sum`, split at 8k and 16k rows: ×1.25–×2.1 at
/// its five other sizes between two back-to-back sweeps of unchanged code; three spreads
/// of one point kept it uncalled, the lower bar tried the same day called it). Its points
/// are still judged one by one.
pub const SPLIT_SIZES: usize = 2;

/// How large the pooled move left after the corrections (drift probe, common move) must be,
/// as a share of the move they took out, for the design to be called. Designs do not answer
/// a move of the machine alike: a 50 µs cast moves more than the probe when call overheads
/// slow down, a query on two cores more than the single-threaded probe. Between three
/// back-to-back catalog sweeps (4 December), two of six pairings of unchanged code failed on
/// such a leftover: type-drift's `one-cast`, raw ×1.48 over its sizes, ×1.18 left after the
/// probe and the common move; sql-self-join's `window`, raw ×1.60, ×1.12 left. In every
/// rehearsal pairing that caught a slowed design (the recorded ones and 17 of the day's 18)
/// the corrections took out at most ×1.12, always less than was left (×1.10–×1.26), so
/// those calls stand.
pub const MACHINE_SHARE: f64 = 1.0;

/// One design's move over its sizes taken together.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DesignMove {
    pub design: String,
    /// Sizes pooled (busy and split points left out between runs).
    pub sizes: usize,
    /// Sizes that moved the same way as the pooled mean.
    pub same_way: usize,
    /// Geometric mean of the judged ratios, each divided by its size's common move (the
    /// workload's where the size had too few other designs).
    pub ratio: f64,
    /// 95% Student-t interval of that mean over the sizes.
    pub ratio_low: f64,
    pub ratio_high: f64,
    /// Geometric mean of the raw ratios of medians (no correction).
    pub raw_ratio: f64,
    /// Geometric mean of the files probe's ratios over the pooled sizes (designs that write
    /// files, when both runs probed every one of them). When it moved by
    /// `points::FILES_MOVE` or more the way the design did, the design is not called.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub files_ratio: Option<f64>,
    pub call: Call,
}

/// Every design of `wg` with [`MIN_SIZES`] or more usable points, judged as a whole. Busy
/// points count only when `busy_ok` (two designs of one sweep saw the same contention).
pub fn design_moves(wg: &WorkloadGate, busy_ok: bool) -> Vec<DesignMove> {
    let threshold = wg.threshold;
    let (common, spread) = wg.common_mode.as_ref().map_or((0.0, 0.0), |c| (c.ratio.ln(), c.spread));
    let mut names: Vec<&str> = wg.points.iter().map(|p| p.design.as_str()).collect();
    names.dedup();
    let mut out = Vec::new();
    for name in names {
        if wg.points.iter().filter(|p| p.design == name && p.split).count() >= SPLIT_SIZES {
            continue;
        }
        let pts: Vec<_> = wg.points.iter().filter(|p| p.design == name && !p.split && (busy_ok || !p.busy)).collect();
        let judged: Vec<f64> = pts.iter().map(|p| p.normalised_ratio.unwrap_or(p.ratio).ln() - super::common::centre(p, common)).filter(|x| x.is_finite()).collect();
        let raw: Vec<f64> = pts.iter().map(|p| p.ratio.ln()).filter(|x| x.is_finite()).collect();
        if judged.len() < MIN_SIZES || raw.len() != judged.len() {
            continue;
        }
        let files: Option<Vec<f64>> = pts.iter().map(|p| p.files_ratio.map(f64::ln)).collect();
        out.push(with_files(judge(name, &judged, &raw, threshold, spread), files.as_deref()));
    }
    out
}

/// A change of a design that writes files is left unjudged when the files probe (`files`,
/// log-ratios over the pooled sizes) moved by `points::FILES_MOVE` or more the same way on
/// average: the file system moved, and by how much of the design's time cannot be told
/// (`points::FILES_MOVE`).
fn with_files(mut m: DesignMove, files: Option<&[f64]>) -> DesignMove {
    let Some(files) = files.filter(|f| !f.is_empty()) else { return m };
    let mean = (files.iter().sum::<f64>() / files.len() as f64).exp();
    m.files_ratio = Some(mean);
    if super::points::moved_with(m.call, mean) {
        m.call = Call::Unclear;
    }
    m
}

/// The rule of the module doc on one design's log-ratios (judged, relative to the common
/// move; raw).
fn judge(design: &str, judged: &[f64], raw: &[f64], threshold: f64, spread: f64) -> DesignMove {
    let n = judged.len() as f64;
    let mean = judged.iter().sum::<f64>() / n;
    let sd = (judged.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
    let t = crate::fit::dist::student_t_quantile(0.975, n - 1.0).unwrap_or(f64::INFINITY);
    let half = t * sd / n.sqrt();
    let raw_mean = raw.iter().sum::<f64>() / n;
    let same_way = judged.iter().filter(|x| x.signum() == mean.signum() && **x != 0.0).count();
    let bar = (1.0 + threshold).ln().max(COMMON_MODE_SPREADS * spread);
    let beyond = mean.abs() > bar;
    let sure = mean.abs() > half
        && same_way + 1 >= judged.len()
        && raw_mean.signum() == mean.signum()
        && raw_mean.abs() >= (1.0 + threshold).ln() / 2.0
        && mean.abs() >= MACHINE_SHARE * (raw_mean - mean).abs();
    let call = match (beyond, sure) {
        (true, true) if mean > 0.0 => Call::Regression,
        (true, true) => Call::Improvement,
        (true, false) => Call::Unclear,
        (false, _) => Call::Same,
    };
    DesignMove {
        design: design.to_string(),
        sizes: judged.len(),
        same_way,
        ratio: mean.exp(),
        ratio_low: (mean - half).exp(),
        ratio_high: (mean + half).exp(),
        raw_ratio: raw_mean.exp(),
        files_ratio: None,
        call,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn logs(v: &[f64]) -> Vec<f64> {
        v.iter().map(|x: &f64| x.ln()).collect()
    }

    /// A rehearsal pairing the point rule missed (b4 → s1 of the 3 December rehearsal: ten
    /// sizes, probe-corrected ratios of the 15%-slowed design): every size slower, none
    /// past the threshold at two neighbouring sizes. Hand check of the pooled mean: the
    /// geometric mean of the ten ratios is 1.1137; sd of the logs 0.0764; t(0.975, 9) =
    /// 2.262 (any t table), so the interval is ×1.0545 to ×1.1763, above ×1.
    #[test]
    fn a_steady_fifteen_percent_slowdown_is_called_over_the_sizes_together() {
        let judged = [1.22, 1.199, 0.942, 1.171, 1.086, 1.138, 1.05, 1.075, 1.116, 1.169];
        let raw = [1.133, 1.293, 1.243, 1.173, 1.17, 0.949, 1.083, 1.1, 1.056, 1.162];
        let m = judge("build-once", &logs(&judged), &logs(&raw), 0.10, 0.0);
        assert_eq!(m.call, Call::Regression, "{m:?}");
        assert_eq!((m.sizes, m.same_way), (10, 9));
        assert!((m.ratio - 1.1137).abs() < 5e-4, "{}", m.ratio);
        assert!(m.ratio_low > 1.0 && m.ratio_low < m.ratio && m.ratio < m.ratio_high, "{m:?}");
        assert!((m.ratio_low - 1.0545).abs() < 5e-4 && (m.ratio_high - 1.1763).abs() < 5e-4, "{m:?}");
    }

    /// type-drift's `one-cast` between two back-to-back catalog sweeps of unchanged code
    /// (4 December, v2 → v1): judged ratios (drift-probe corrected, over the common move
    /// ×1.0577) and raw ratios at its five sizes, from `gate --json`. Hand check: the
    /// geometric mean of the judged ratios is 1.1757 (log 0.1619), of the raw 1.4756 (log
    /// 0.3890), so the corrections took out log 0.2271, more than the 0.1619 left.
    #[test]
    fn a_leftover_smaller_than_the_machine_move_taken_out_is_not_called() {
        let judged = [1.1556, 1.2508, 1.1477, 1.2351, 1.0963];
        let raw = [1.7508, 1.5898, 1.4317, 1.4105, 1.2448];
        let m = judge("one-cast", &logs(&judged), &logs(&raw), 0.10, 0.0511);
        assert!((m.ratio - 1.1757).abs() < 5e-4 && (m.raw_ratio - 1.4756).abs() < 5e-4, "{m:?}");
        assert!(m.ratio_low > 1.0 && m.same_way == 5, "{m:?}");
        assert_eq!(m.call, Call::Unclear, "{m:?}");
        // The same leftover with the raw medians moved by no more than it: called.
        let raw_small = [1.2, 1.3, 1.16, 1.25, 1.12];
        assert_eq!(judge("one-cast", &logs(&judged), &logs(&raw_small), 0.10, 0.0511).call, Call::Regression);
    }

    #[test]
    fn equal_raw_medians_are_never_made_a_change_by_the_correction() {
        // The probe says the machine was 15% faster; the design's medians did not move.
        let judged = [1.16, 1.15, 1.17, 1.14, 1.16, 1.15];
        let raw = [1.01, 0.99, 1.02, 1.0, 1.01, 0.98];
        assert_eq!(judge("d", &logs(&judged), &logs(&raw), 0.10, 0.0).call, Call::Unclear);
    }

    /// ipc-per-parcel between two sweeps of 5 December: raw ×1.64–×2.04 at its four sizes.
    /// With the files probe ×1.9 slower at those points the move is left unjudged; with the
    /// probe ×1.1 (less than `FILES_MOVE`) or moved the other way the call stands; a file
    /// system that moved never makes a change of equal medians.
    #[test]
    fn a_design_that_moved_with_the_file_system_is_not_called() {
        let raw = [2.02, 1.96, 2.04, 1.64];
        let m = judge("ipc-per-parcel", &logs(&raw), &logs(&raw), 0.10, 0.0);
        assert_eq!(m.call, Call::Regression);
        let probe = |q: f64| logs(&[q; 4]);
        let slower_files = with_files(m.clone(), Some(&probe(1.9)));
        assert_eq!(slower_files.call, Call::Unclear, "{slower_files:?}");
        assert!((slower_files.files_ratio.expect("a files ratio") - 1.9).abs() < 1e-9, "{slower_files:?}");
        assert_eq!(with_files(m.clone(), Some(&probe(1.1))).call, Call::Regression);
        assert_eq!(with_files(m.clone(), Some(&probe(0.5))).call, Call::Regression);
        assert_eq!(with_files(m.clone(), None).call, Call::Regression);
        let same = [1.01, 0.99, 1.0, 1.02];
        let m = judge("d", &logs(&same), &logs(&same), 0.10, 0.0);
        assert_eq!(with_files(m, Some(&probe(0.5))).call, Call::Same);
    }

    #[test]
    fn a_move_within_the_threshold_or_both_ways_is_not_called() {
        let small = [1.06, 1.08, 1.05, 1.07, 1.09];
        assert_eq!(judge("d", &logs(&small), &logs(&small), 0.10, 0.0).call, Call::Same);
        // Past the threshold on average, but two sizes went the other way.
        let mixed = [1.45, 1.3, 0.95, 1.25, 0.97, 1.2];
        assert_eq!(judge("d", &logs(&mixed), &logs(&mixed), 0.10, 0.0).call, Call::Unclear);
        // A workload whose points scatter widely needs a larger move: 3 spreads of 0.06 put
        // the bar at ×1.197, above this ×1.156, so the design counts as unmoved.
        let moved = [1.16, 1.15, 1.17, 1.14, 1.16];
        assert_eq!(judge("d", &logs(&moved), &logs(&moved), 0.10, 0.06).call, Call::Same);
        assert_eq!(judge("d", &logs(&moved), &logs(&moved), 0.10, 0.0).call, Call::Regression);
        let faster: Vec<f64> = moved.iter().map(|x| 1.0 / x).collect();
        assert_eq!(judge("d", &logs(&faster), &logs(&faster), 0.10, 0.0).call, Call::Improvement);
    }
}
