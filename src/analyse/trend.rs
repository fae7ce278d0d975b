//! The recent trend of a prediction: when the time per row was still rising over the
//! largest fitted sizes faster than the fitted class continues it, the prediction follows
//! that rise instead.
//!
//! Why: a class fitted to the whole ladder averages the curve, and costs that bend upward
//! at the top of the measured range (a working set leaving the last-level cache, per-row
//! work that meets a slower path) are continued by the class at the slope of the whole
//! ladder, not the slope they have now. Fitted on sizes up to N/4 and checked at N, over 24
//! saved catalog sweeps of this project (1497 predictions, `benches/prediction-accuracy.sh`
//! run per sweep), the class prediction landed within 25% in 67% and under by more than 25%
//! in 25%; raising it to the log-log slope of the last three fitted sizes, continued from
//! the largest one, when that is higher, landed within 25% in 72% and under in 14% (over
//! in 14%, from 8%). An under-prediction is the costly mistake (a job planned for minutes
//! that takes hours), so the trend only ever raises a prediction.
//!
//! A newcomer must know: the trend never changes the class or the fits; it is a second
//! reading of the same medians, reported beside the class's own prediction.

use super::output::{PredictionOut, TrendOut};
use crate::results::Measured;

/// How many of the largest fitted sizes the trend is read from.
pub const TREND_SIZES: usize = 3;
/// The steepest trend continued (n³): a steeper rise over three sizes is noise or a step.
pub const TREND_SLOPE_MAX: f64 = 3.0;
/// How far past the largest fitted size the trend is followed; beyond it the prediction
/// grows as the class does. A steeper stretch is a passage (a working set crossing a cache
/// size) more often than a new law, and a slope read from three sizes, continued over
/// decades, swings the prediction from run to run: followed all the way to the catalog's
/// targets, predictions of the same design agreed within ×2 across three sweeps for 56, 62
/// and 66 of 68 designs (three triples), handed over at ×4 for 60, 64 and 67, against 63,
/// 65 and 67 without the trend. (Continuing from the least-squares line at the largest size
/// instead of its median agreed no better, 60, 64, 68, and was within 25% less often.)
pub const TREND_REACH: f64 = 4.0;

/// The log-log slope of the medians over the largest [`TREND_SIZES`] measured sizes, and
/// where it starts from.
#[derive(Debug, Clone, Copy)]
pub struct Trend {
    pub slope: f64,
    /// The largest fitted size and its median.
    pub rows: u64,
    pub median_ns: f64,
}

/// The trend of `measured` (the points the time fit used), None with fewer than three sizes.
pub fn trend(measured: &[(u64, &Measured)]) -> Option<Trend> {
    let mut pts: Vec<(u64, f64)> = measured.iter().map(|(n, m)| (*n, m.median_ns)).filter(|(n, t)| *n > 0 && *t > 0.0).collect();
    pts.sort_by_key(|p| p.0);
    pts.dedup_by_key(|p| p.0);
    if pts.len() < TREND_SIZES {
        return None;
    }
    let top = &pts[pts.len() - TREND_SIZES..];
    let x: Vec<f64> = top.iter().map(|p| p.0 as f64).collect();
    let y: Vec<f64> = top.iter().map(|p| p.1).collect();
    let slope = crate::fit::growth::loglog_slope(&x, &y).ok()?;
    let (rows, median_ns) = *top.last()?;
    slope.is_finite().then_some(Trend { slope: slope.min(TREND_SLOPE_MAX), rows, median_ns })
}

impl Trend {
    /// The trend continued to `n` (past [`TREND_REACH`] times its start, see [`Trend::reach`]).
    pub fn at(&self, n: f64) -> f64 {
        self.median_ns * (n / self.rows as f64).powf(self.slope)
    }

    /// Where the trend hands over to the class.
    pub fn reach(&self) -> f64 {
        self.rows as f64 * TREND_REACH
    }

    /// The prediction at `n`: the trend up to [`Trend::reach`], then growing as `class` (the
    /// class's cost, with any copying term) grows from there.
    pub fn cost_at(&self, n: f64, class: &dyn Fn(f64) -> f64) -> f64 {
        let h = n.min(self.reach());
        let after = if n > h { class(n) / class(h) } else { 1.0 };
        self.at(h) * if after.is_finite() && after > 0.0 { after } else { 1.0 }
    }

    /// `base` raised to the trend at its size when the trend is higher; None when it is not
    /// (or the size is not past the trend's start). `class` is the cost `base` was predicted
    /// from. The interval keeps the class's lower bound and stretches its upper bound by the
    /// same factor as the median.
    pub fn raise(&self, base: &PredictionOut, class: &dyn Fn(f64) -> f64) -> Option<PredictionOut> {
        if base.rows <= self.rows {
            return None;
        }
        let t = self.cost_at(base.rows as f64, class);
        if !(t > base.median) {
            return None;
        }
        let high = base.high.max(t * base.high / base.median.max(f64::MIN_POSITIVE));
        Some(PredictionOut {
            median: t,
            high,
            rough: crate::fit::predict::is_rough(base.low, high),
            trend: Some(TrendOut { slope: self.slope, from_rows: self.rows, from_ns: self.median_ns, class_ns: base.median, reach_rows: self.reach() }),
            ..base.clone()
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn measured(t: f64) -> Measured {
        Measured::fixture(t)
    }

    fn base(rows: u64, median: f64) -> PredictionOut {
        PredictionOut {
            rows,
            median,
            low: median / 2.0,
            high: median * 2.0,
            extrapolation_decades: 0.6,
            far: false,
            rough: false,
            class: "n".into(),
            alternative: None,
            copying: None,
            trend: None,
            allowance: None,
        }
    }

    #[test]
    fn a_rise_steeper_than_the_class_raises_the_prediction() {
        // Medians 1, 2, 8 at 1k, 2k, 4k rows (the 500-row point is not among the largest
        // three): in log2 units x = 0, 1, 2 and y = 0, 1, 3, a least-squares slope of 1.5.
        let ms = [measured(1.0), measured(2.0), measured(8.0), measured(0.5)];
        let pts = [(1000, &ms[0]), (2000, &ms[1]), (4000, &ms[2]), (500, &ms[3])];
        let tr = trend(&pts).expect("three sizes");
        assert!((tr.slope - 1.5).abs() < 1e-9, "{tr:?}");
        assert_eq!(tr.rows, 4000);
        // At 16k rows (the reach, 4 × 4k) the trend says 8·4^1.5 = 64; a linear class said 32.
        let linear = |n: f64| n / 500.0;
        let p = tr.raise(&base(16_000, 32.0), &linear).expect("raised");
        assert!((p.median - 64.0).abs() < 1e-9);
        assert_eq!(p.low, 16.0);
        assert!((p.high - 128.0).abs() < 1e-9);
        assert_eq!(p.trend.as_ref().map(|t| t.class_ns), Some(32.0));
        // Past the reach it grows as the class does: ×4 more rows, ×4 the time.
        let p = tr.raise(&base(64_000, 128.0), &linear).expect("raised");
        assert!((p.median - 256.0).abs() < 1e-9, "{}", p.median);
        // A class already above the trend stays as it is.
        assert!(tr.raise(&base(16_000, 100.0), &linear).is_none());
        // Not past the trend's start: nothing to continue.
        assert!(tr.raise(&base(4000, 1.0), &linear).is_none());
    }

    #[test]
    fn two_sizes_give_no_trend() {
        let ms = [measured(1.0), measured(2.0)];
        assert!(trend(&[(1000, &ms[0]), (2000, &ms[1])]).is_none());
    }
}
