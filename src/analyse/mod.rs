//! Analysis of saved results: for each design, how its time, allocated bytes and peak
//! memory grow (a growth class chosen by AICc, the runner-up and how decisively it lost,
//! the empirical exponent with a bootstrap interval, doubling ratios), its predicted cost
//! at the size that matters, and where designs overtake one another.
//!
//! Works from [`RunResults`] alone. A newcomer must know: time is fitted on each size's
//! quartiles (three points per size), bytes and peaks on one value per size (they are exact counts), so bytes
//! need five measured sizes for a class and fall back to the exponent alone below that.
//!
//! The parts: the records (`output.rs`), how one design's fits are read — time on
//! quartiles, predictions, the cache reading (`fits.rs`) —, the copying term of a
//! prediction (`copying.rs`), and one design analysed (`design.rs`); this file runs them
//! over a workload and finds the crossovers.

pub mod caches;
mod copying;
mod trend;
mod design;
pub use design::{cores, cores_changed, CORES_CHANGE};
mod fits;
mod output;
mod shift;
pub use shift::{SizeShift, SHIFT_DESIGNS_MIN};

pub use fits::{bounded_by_bytes, fit_time, predict_with_alternative, MEMORY_HIERARCHY_SLOPE};
pub use output::{class_of, pair_of, CopyingOut, CrossoverOut, DesignAnalysis, ExponentOut, GrowthOut, HoldoutCheck, Meets, PredictionOut};

use crate::fit::predict::{crossover, Which};
use crate::results::reader::{RunResults, WorkloadResults};
use design::{analyse_design, Fitted};
use shift::shared_shifts;
use serde::{Deserialize, Serialize};

/// Settings of an analysis.
#[derive(Debug, Clone, Default)]
pub struct AnalyseOptions {
    /// Predict here instead of the workload's target.
    pub at: Option<u64>,
    /// Fit only sizes up to this many rows (to check predictions against larger sizes).
    pub fit_up_to: Option<u64>,
    /// Fit growth classes on only the largest this-many measured sizes (the regime that
    /// decides behaviour at scale); None: every size.
    pub top_sizes: Option<usize>,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Analysis {
    pub workloads: Vec<WorkloadAnalysis>,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct WorkloadAnalysis {
    pub workload: String,
    /// What x is in every fit: rows when absent, else the swept axis ("groups", "columns").
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub axis: Option<crate::results::AxisPlan>,
    /// Where predictions are made (swept values: rows, or the axis's), if anywhere.
    pub predict_at: Option<u64>,
    pub designs: Vec<DesignAnalysis>,
    pub crossovers: Vec<CrossoverOut>,
    /// Each size's shared shift, taken out of the time fits (`shift.rs`); empty when no size
    /// had three designs to estimate one from (or every move was beyond ×1.3), and in
    /// analyses written before it.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub shifts: Vec<SizeShift>,
}

/// Analyse every workload of a run.
pub fn analyse(r: &RunResults, opts: &AnalyseOptions) -> Analysis {
    Analysis { workloads: r.workloads.iter().map(|w| analyse_workload(w, opts)).collect() }
}

/// Analyse one workload: every design, then where their time curves cross.
pub fn analyse_workload(w: &WorkloadResults, opts: &AnalyseOptions) -> WorkloadAnalysis {
    let predict_at = opts.at.or(w.header.target);
    let each = |shifts: &[SizeShift]| -> (Vec<DesignAnalysis>, Vec<Fitted>) {
        w.header.designs.iter().map(|d| analyse_design(w, &d.name, opts, predict_at, shifts)).unzip()
    };
    let (designs, fitted) = each(&[]);
    // Sizes at which the designs ran slower or faster together are taken out of the time
    // fits, and every design is fitted again (`shift.rs`).
    let shifts = shared_shifts(w, &fitted);
    let (designs, fitted) = if shifts.is_empty() { (designs, fitted) } else { each(&shifts) };
    let crossovers = crossovers(&fitted, predict_at);
    WorkloadAnalysis { workload: w.header.workload.clone(), axis: w.header.axis.clone(), predict_at, designs, crossovers, shifts }
}

/// Every pair of designs whose fitted time curves cross, over the sizes both measured and
/// beyond (to the target, or a thousand times the largest size).
fn crossovers(fitted: &[Fitted], predict_at: Option<u64>) -> Vec<CrossoverOut> {
    let mut crossovers = Vec::new();
    for i in 0..fitted.len() {
        for j in i + 1..fitted.len() {
            let (a, b) = (&fitted[i], &fitted[j]);
            let (Some(fa), Some(fb)) = (&a.time, &b.time) else { continue };
            let lo = a.lo.max(b.lo);
            let hi = a.hi.min(b.hi);
            if !(lo > 0.0 && hi >= lo) {
                continue;
            }
            let far = (predict_at.unwrap_or(0) as f64).max(hi * 1000.0);
            if let Ok(Some(c)) = crossover(fa, fb, lo, hi, far) {
                let (below, above) = match c.faster_below {
                    Which::A => (a, b),
                    Which::B => (b, a),
                };
                // Past the measured sizes, the design that would win must still be the
                // cheaper one as predicted (copying term, recent trend), or there is no
                // crossing to report: the time classes alone leave those out.
                if !c.inside_measured && !still_cheaper_as_predicted(above, below, c.n_hi.max(2.0 * c.n)) {
                    continue;
                }
                let (below, above) = (&below.name, &above.name);
                crossovers.push(CrossoverOut {
                    faster_below: below.clone(),
                    faster_above: above.clone(),
                    rows: c.n,
                    rows_low: c.n_lo,
                    rows_high: c.n_hi,
                    inside_measured: c.inside_measured,
                    bounded: c.n_hi < far * 0.999 && c.n_lo > lo * 1.001,
                });
            }
        }
    }
    crossovers
}

/// Whether `above` is still cheaper than `below` at `n` as predictions count it: the
/// copying term and the recent trend only ever raise the time class's cost (true when
/// neither design has either).
fn still_cheaper_as_predicted(above: &Fitted, below: &Fitted, n: f64) -> bool {
    let raised = |f: &Fitted| f.copy.is_some() || f.trend.is_some_and(|t| n > t.rows as f64);
    if !raised(above) && !raised(below) {
        return true;
    }
    let cost = |f: &Fitted| match &f.time {
        Some(t) => {
            // The class's cost with any copying term, then the trend over it.
            let class = |x: f64| t.cost_at(x).max(f.copy.as_ref().map_or(f64::NAN, |c| c.cost_at(x)));
            let trend = f.trend.filter(|tr| n > tr.rows as f64).map_or(f64::NAN, |tr| tr.cost_at(n, &class));
            class(n).max(trend)
        }
        None => f64::NAN,
    };
    cost(above) < cost(below)
}

impl WorkloadAnalysis {
    /// The swept axis, for labels ("4k rows", "100 groups").
    pub fn axis(&self) -> crate::results::Axis<'_> {
        crate::results::Axis(self.axis.as_ref())
    }
}
