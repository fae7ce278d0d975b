//! Analysis of saved results: for each design, how its time, allocated bytes and peak
//! memory grow (a growth class chosen by AICc, the runner-up and how decisively it lost,
//! the empirical exponent with a bootstrap interval, doubling ratios), its predicted cost
//! at the size that matters, and where designs overtake one another.
//!
//! Works from [`RunResults`] alone. A newcomer must know: time is fitted on each size's
//! quartiles (three points per size), bytes and peaks on one value per size (they are exact counts), so bytes
//! need five measured sizes for a class and fall back to the exponent alone below that.

use crate::fit::growth::{curve_at, doubling_ratios, exponent_with_ci, fit_growth, GrowthClass, GrowthFit, Term};
use crate::fit::FitError;
use crate::fit::predict::{crossover, predict, Which};
use crate::results::reader::{RunResults, WorkloadResults};
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
}

/// One metric's growth.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct GrowthOut {
    /// "constant", "log n", "n", "n log n", "n²", "n³", or "unclear" when no class agrees
    /// with the measured slope (then `terms` is empty and `top_slope` says what was seen).
    pub class: String,
    /// A faster-growing class the data cannot tell apart from `class` ("n or n log n").
    #[serde(default)]
    pub alternative: Option<String>,
    /// The fitted curve: (term label, coefficient), all coefficients ≥ 0.
    #[serde(default)]
    pub terms: Vec<(String, f64)>,
    /// Log-log slope of the per-size medians over the largest sizes (what the class was
    /// checked against).
    #[serde(default)]
    pub top_slope: Option<f64>,
    pub a: f64,
    pub b: f64,
    pub runner_up: Option<String>,
    /// AICc of the runner-up minus the best (larger: more decisive).
    pub delta_aicc: f64,
    /// Akaike weight of the chosen class.
    pub evidence_weight: f64,
    pub sizes: usize,
    /// Relative residual spread of the fit.
    pub residual_sd: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ExponentOut {
    pub slope: f64,
    pub low: f64,
    pub high: f64,
    pub sizes_used: usize,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct PredictionOut {
    pub rows: u64,
    pub median: f64,
    pub low: f64,
    pub high: f64,
    /// Decades past the largest fitted size.
    pub extrapolation_decades: f64,
    pub far: bool,
    /// The interval spans more than ×10: an order of magnitude only.
    #[serde(default)]
    pub rough: bool,
    /// The class predicted with, and the alternative class whose prediction widened the
    /// interval (when the data cannot tell the two apart).
    #[serde(default)]
    pub class: String,
    #[serde(default)]
    pub alternative: Option<String>,
}

/// A prediction checked against a size that was measured but not fitted.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct HoldoutCheck {
    pub rows: u64,
    pub predicted_ns: f64,
    pub low_ns: f64,
    pub high_ns: f64,
    pub measured_ns: f64,
    /// (predicted − measured) / measured.
    pub error: f64,
    pub inside_interval: bool,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct DesignAnalysis {
    pub design: String,
    pub measured_sizes: Vec<u64>,
    pub time: Option<GrowthOut>,
    pub time_exponent: Option<ExponentOut>,
    /// (from rows, to rows, ratio normalised to a doubling).
    pub doubling: Vec<(u64, u64, f64)>,
    pub bytes: Option<GrowthOut>,
    pub bytes_exponent: Option<f64>,
    pub peak: Option<GrowthOut>,
    pub peak_exponent: Option<f64>,
    pub prediction: Option<PredictionOut>,
    pub bytes_prediction: Option<PredictionOut>,
    pub holdout: Vec<HoldoutCheck>,
    /// Why a fit is missing, when it is.
    pub notes: Vec<String>,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct CrossoverOut {
    /// Cheaper below the crossing.
    pub faster_below: String,
    /// Cheaper above it.
    pub faster_above: String,
    pub rows: f64,
    pub rows_low: f64,
    pub rows_high: f64,
    pub inside_measured: bool,
    /// The crossing's interval ends inside the search range on both sides (the prediction
    /// bands separate again): a crossover whose interval runs to the end of the search is
    /// not a finding.
    #[serde(default)]
    pub bounded: bool,
}

impl GrowthOut {
    /// "n", "n or n log n", "n to n²", or "unclear (slope 0.42)".
    pub fn label(&self) -> String {
        if self.class == "unclear" {
            return format!("unclear (slope {:.2})", self.top_slope.unwrap_or(f64::NAN));
        }
        match (class_of(&self.class), self.alternative.as_deref().and_then(class_of)) {
            (Some(best), alt) => crate::fit::growth::pair_label(best, alt),
            (None, _) => self.class.clone(),
        }
    }

    /// True when `class` is the chosen class, the alternative, or between them.
    pub fn admits(&self, class: GrowthClass) -> bool {
        let Some(best) = class_of(&self.class) else { return false };
        let alt = self.alternative.as_deref().and_then(class_of).unwrap_or(best);
        (best.rank().min(alt.rank())..=best.rank().max(alt.rank())).contains(&class.rank())
    }

    /// The fitted cost at `n` (None when unclear or from an old analysis without terms).
    pub fn cost_at(&self, n: f64) -> Option<f64> {
        if self.terms.is_empty() {
            return None;
        }
        let terms: Vec<(Term, f64)> = self.terms.iter().filter_map(|(t, c)| Term::from_label(t).map(|t| (t, *c))).collect();
        Some(curve_at(&terms, n))
    }

    /// A growth that no class explains.
    fn unclear(slope: f64, sizes: usize) -> GrowthOut {
        GrowthOut {
            class: "unclear".into(),
            alternative: None,
            terms: vec![],
            top_slope: Some(slope),
            a: 0.0,
            b: 0.0,
            runner_up: None,
            delta_aicc: 0.0,
            evidence_weight: 0.0,
            sizes,
            residual_sd: 0.0,
        }
    }
}

/// A growth fit for the analysis: the class, or "unclear" when no class agrees with the
/// slope; other fit failures are returned as the note to record.
fn growth_out(fit: &Result<GrowthFit, FitError>, sizes: usize) -> Result<GrowthOut, String> {
    match fit {
        Ok(f) => Ok(out(f)),
        Err(FitError::NoClassAgrees { slope }) => Ok(GrowthOut::unclear(*slope, sizes)),
        Err(e) => Err(e.to_string()),
    }
}

fn out(f: &GrowthFit) -> GrowthOut {
    GrowthOut {
        class: f.best.label().to_string(),
        alternative: f.alternative.map(|c| c.label().to_string()),
        terms: f.terms.iter().map(|(t, c)| (t.label().to_string(), *c)).collect(),
        top_slope: Some(f.top_slope),
        a: f.a,
        b: f.b,
        runner_up: f.runner_up.map(|c| c.label().to_string()),
        delta_aicc: f.delta_aicc,
        evidence_weight: f.evidence_weight,
        sizes: f.n_sizes,
        residual_sd: f.residual_sd(),
    }
}

/// A class label back to the class.
pub fn class_of(label: &str) -> Option<GrowthClass> {
    GrowthClass::from_label(label)
}

/// Fit how time grows over measured points `(rows, measured)`: the growth class on each
/// size's quartiles, and the log-log exponent of medians over the top four sizes with a 95%
/// bootstrap interval (deterministic from `seed`).
///
/// Each size enters the class fit as its three quartiles: every size weighs the same
/// however many samples it took, and the classifier works in the regime its known-answer
/// suite checks (three points per size). Fitting hundreds of raw samples would give AICc the
/// power to prefer n log n over n for curvature of a few percent (caches), which is not what
/// "how does it grow" asks.
pub fn fit_time(measured: &[(u64, &crate::results::Measured)], seed: u64) -> (Result<GrowthFit, crate::fit::FitError>, Option<ExponentOut>) {
    let (mut xs, mut ys) = (Vec::new(), Vec::new());
    for (rows, m) in measured {
        let mut v: Vec<f64> = m.samples_ns.iter().copied().filter(|x| *x > 0.0).collect();
        v.sort_by(f64::total_cmp);
        for q in [0.25, 0.5, 0.75] {
            if let Ok(x) = crate::fit::sample::quantile(&v, q) {
                xs.push(*rows as f64);
                ys.push(x);
            }
        }
    }
    let per_size: Vec<(f64, Vec<f64>)> = measured
        .iter()
        .map(|(rows, m)| (*rows as f64, m.samples_ns.iter().copied().filter(|v| *v > 0.0).collect::<Vec<_>>()))
        .filter(|(_, s)| !s.is_empty())
        .collect();
    let exponent = exponent_with_ci(&per_size, 4, 1000, seed)
        .ok()
        .map(|e| ExponentOut { slope: e.slope, low: e.lo, high: e.hi, sizes_used: e.sizes_used });
    (fit_growth(&xs, &ys), exponent)
}

/// The prediction of a fit at `rows`: its own class's interval, widened to cover the
/// alternative class's interval when the data cannot tell the two apart.
pub fn predict_with_alternative(f: &GrowthFit, rows: u64, max_fitted: f64) -> Option<PredictionOut> {
    let p = predict(f, rows as f64, max_fitted).ok()?;
    let alt = f.alternative.and_then(|c| f.as_class(c)).and_then(|g| predict(&g, rows as f64, max_fitted).ok());
    let (low, high) = match alt {
        Some(a) => (p.lo.min(a.lo), p.hi.max(a.hi)),
        None => (p.lo, p.hi),
    };
    Some(PredictionOut {
        rows,
        median: p.median,
        low,
        high,
        extrapolation_decades: p.extrapolation_decades,
        far: p.warn_far,
        rough: high > 10.0 * low,
        class: f.best.label().to_string(),
        alternative: alt.and(f.alternative).map(|c| c.label().to_string()),
    })
}

/// Below this log-log slope over the largest sizes, a superlinear time class is not taken
/// alone when the work's own evidence (allocated bytes) grows no faster than n log n.
pub const MEMORY_HIERARCHY_SLOPE: f64 = 1.5;

/// Time that looks quadratic while the bytes allocated grow at most as n log n: as a table
/// outgrows the processor's caches (here, from L1 through a 32 MiB L3 to main memory
/// between about 10k and 4M rows of a few columns) each row costs more, which bends the
/// time curve upward over exactly the sizes a sweep measures, and then it straightens
/// again. Over the measured range this cannot be told from a quadratic term by time alone,
/// so the class becomes the best slower class (n or n log n) with the superlinear class as
/// its alternative ("n or n²"): the prediction interval covers both. Designs whose bytes
/// grow superlinearly (repeated copying) keep their class. Without byte counts, the slope
/// must stay under 1.3 for the same reading.
///
/// The same one rank up: time that looks cubic (slope under 2.5) while the bytes grow as n²
/// — repeated copying of a table that grows, whose copies outgrow the caches — is read as
/// "n² or n³" (a columns sweep of `workloads/column-growth.yaml` showed time n³ with
/// doubling ratios of ×3.4 to ×4.6 and bytes growing ×4 per doubling).
pub fn bounded_by_bytes(time: &GrowthFit, bytes: Option<&GrowthFit>) -> Option<(GrowthFit, String)> {
    if time.best == GrowthClass::Cubic && time.top_slope < MEMORY_HIERARCHY_SLOPE + 1.0 {
        // With byte counts, they must grow as n²; without (a program), the slope must stay
        // under 2.3, as it must stay under 1.3 one rank down.
        let quadratic = match bytes {
            Some(b) => b.best == GrowthClass::Quadratic && b.alternative.is_none_or(|a| a.rank() <= GrowthClass::Quadratic.rank()),
            None => time.top_slope < 2.3,
        };
        let candidate = time.candidates.iter().any(|c| c.rejection.is_none() && c.class == GrowthClass::Quadratic);
        if quadratic && candidate {
            let mut f = time.as_class(GrowthClass::Quadratic)?;
            f.alternative = Some(time.best);
            let evidence = match bytes {
                Some(b) => format!("allocated bytes grow as {}", b.label()),
                None => "there are no byte counts to tell them apart".to_string(),
            };
            return Some((
                f,
                format!(
                    "time: {} fits best (slope {:.2} over the largest sizes) but {evidence}: read as {} or {} — data outgrowing the caches bends the curve the same way",
                    time.best.label(),
                    time.top_slope,
                    GrowthClass::Quadratic.label(),
                    time.best.label()
                ),
            ));
        }
    }
    if time.best.rank() < GrowthClass::Quadratic.rank() || time.top_slope >= MEMORY_HIERARCHY_SLOPE {
        return None;
    }
    let bytes_linear = match bytes {
        Some(b) => b.best.rank() <= GrowthClass::Linearithmic.rank() && b.alternative.is_none_or(|a| a.rank() <= GrowthClass::Linearithmic.rank()),
        None => time.top_slope < 1.3,
    };
    if !bytes_linear {
        return None;
    }
    let slower = time
        .candidates
        .iter()
        .filter(|c| c.rejection.is_none() && matches!(c.class, GrowthClass::Linear | GrowthClass::Linearithmic))
        .min_by(|x, y| x.aicc.total_cmp(&y.aicc))?;
    let mut f = time.as_class(slower.class)?;
    f.alternative = Some(time.best);
    let why = match bytes {
        Some(b) => format!("allocated bytes grow as {}", b.label()),
        None => "no byte counts".to_string(),
    };
    Some((
        f,
        format!(
            "time: {} fits best (slope {:.2} over the largest sizes) but {why}: read as {} or {} — data outgrowing the caches bends the curve the same way",
            time.best.label(),
            time.top_slope,
            slower.class.label(),
            time.best.label()
        ),
    ))
}

/// Analyse every workload of a run.
pub fn analyse(r: &RunResults, opts: &AnalyseOptions) -> Analysis {
    Analysis { workloads: r.workloads.iter().map(|w| analyse_workload(w, opts)).collect() }
}

/// Per design: the fit of its time (every sample), kept for crossovers.
struct Fitted {
    name: String,
    time: Option<GrowthFit>,
    lo: f64,
    hi: f64,
}

pub fn analyse_workload(w: &WorkloadResults, opts: &AnalyseOptions) -> WorkloadAnalysis {
    let predict_at = opts.at.or(w.header.target);
    let limit = opts.fit_up_to.unwrap_or(u64::MAX);
    let mut designs = Vec::new();
    let mut fitted = Vec::new();
    for d in &w.header.designs {
        let pts: Vec<_> = w.design_points(&d.name).into_iter().filter(|p| p.measured.is_some()).collect();
        let mut used: Vec<_> = pts.iter().filter(|p| p.rows <= limit).collect();
        let mut notes = Vec::new();
        // Memory is counted, not timed: a busy machine does not change it, so its fits keep
        // every size.
        let mut for_memory = used.clone();
        // Points measured on a busy machine never decide a class, as long as enough clean
        // sizes remain to fit one.
        let busy = used.iter().filter(|p| p.measured.as_ref().is_some_and(|m| m.is_contaminated())).count();
        if busy > 0 {
            if used.len() - busy >= crate::fit::growth::MIN_SIZES {
                used.retain(|p| !p.measured.as_ref().is_some_and(|m| m.is_contaminated()));
                notes.push(format!("{busy} size(s) measured on a busy machine were left out of the time fits"));
            } else {
                notes.push(format!("{busy} size(s) were measured on a busy machine and too few clean ones remain: the fits include them"));
            }
        }
        if let Some(k) = opts.top_sizes {
            let drop = used.len().saturating_sub(k.max(crate::fit::growth::MIN_SIZES));
            used.drain(..drop);
            let drop = for_memory.len().saturating_sub(k.max(crate::fit::growth::MIN_SIZES));
            for_memory.drain(..drop);
        }
        let measured: Vec<(u64, &crate::results::Measured)> = used.iter().filter_map(|p| p.measured.as_ref().map(|m| (p.rows, m))).collect();
        let seed = xxhash_rust::xxh3::xxh3_64(d.name.as_bytes());
        let (time_fit, time_exponent) = fit_time(&measured, seed);
        let medians: Vec<(f64, f64)> = used.iter().filter_map(|p| p.measured.as_ref().map(|m| (p.rows as f64, m.median_ns))).collect();
        let doubling = if medians.len() >= 2 {
            let (x, y): (Vec<f64>, Vec<f64>) = medians.iter().copied().unzip();
            doubling_ratios(&x, &y)
                .map(|r| r.into_iter().enumerate().map(|(i, v)| (x[i] as u64, x[i + 1] as u64, v)).collect())
                .unwrap_or_default()
        } else {
            vec![]
        };
        let metric = |get: &dyn Fn(&crate::results::Measured) -> f64| -> (Result<GrowthFit, FitError>, Option<f64>) {
            let v: Vec<(f64, f64)> =
                for_memory.iter().filter_map(|p| p.measured.as_ref().map(|m| (p.rows as f64, get(m)))).filter(|p| p.1 > 0.0).collect();
            let (x, y): (Vec<f64>, Vec<f64>) = v.iter().copied().unzip();
            let slope = crate::fit::growth::loglog_slope(&x, &y).ok();
            (fit_growth(&x, &y), slope)
        };
        let (bytes_res, bytes_exponent) = metric(&|m| m.alloc.bytes as f64);
        let (peak_res, peak_exponent) = metric(&|m| m.peak_bytes() as f64);
        // Sizes the memory fits used (all of them, busy or not), not the time fits'.
        let (bytes_out, peak_out) = (growth_out(&bytes_res, for_memory.len()).ok(), growth_out(&peak_res, for_memory.len()).ok());
        let bytes_fit = bytes_res.ok();
        let time_fit = time_fit.map(|t| match bounded_by_bytes(&t, bytes_fit.as_ref()) {
            Some((f, note)) => {
                notes.push(note);
                f
            }
            None => t,
        });
        let time_out = match growth_out(&time_fit, measured.len()) {
            Ok(g) => Some(g),
            Err(e) => {
                notes.push(format!("time: no growth class ({e})"));
                None
            }
        };
        let time = time_fit.ok();
        if bytes_out.is_none() && bytes_exponent.is_some() {
            notes.push("bytes: fewer than 5 measured sizes, exponent only".into());
        }
        let max_fitted = used.iter().map(|p| p.rows).max().unwrap_or(0) as f64;
        let min_fitted = used.iter().map(|p| p.rows).min().unwrap_or(0) as f64;
        let pred = |f: &Option<GrowthFit>, rows: u64| predict_with_alternative(f.as_ref()?, rows, max_fitted);
        let prediction = predict_at.and_then(|n| pred(&time, n));
        let bytes_prediction = predict_at.and_then(|n| pred(&bytes_fit, n));
        let holdout = pts
            .iter()
            .filter(|p| p.rows > limit)
            .filter_map(|p| {
                let m = p.measured.as_ref()?;
                let pr = pred(&time, p.rows)?;
                Some(HoldoutCheck {
                    rows: p.rows,
                    predicted_ns: pr.median,
                    low_ns: pr.low,
                    high_ns: pr.high,
                    measured_ns: m.median_ns,
                    error: (pr.median - m.median_ns) / m.median_ns,
                    inside_interval: pr.low <= m.median_ns && m.median_ns <= pr.high,
                })
            })
            .collect();
        designs.push(DesignAnalysis {
            design: d.name.clone(),
            measured_sizes: pts.iter().map(|p| p.rows).collect(),
            time: time_out,
            time_exponent,
            doubling,
            bytes: bytes_out,
            bytes_exponent,
            peak: peak_out,
            peak_exponent,
            prediction,
            bytes_prediction,
            holdout,
            notes,
        });
        fitted.push(Fitted { name: d.name.clone(), time, lo: min_fitted, hi: max_fitted });
    }
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
                    Which::A => (&a.name, &b.name),
                    Which::B => (&b.name, &a.name),
                };
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
    WorkloadAnalysis { workload: w.header.workload.clone(), axis: w.header.axis.clone(), predict_at, designs, crossovers }
}

impl WorkloadAnalysis {
    /// The swept axis, for labels ("4k rows", "100 groups").
    pub fn axis(&self) -> crate::results::Axis<'_> {
        crate::results::Axis(self.axis.as_ref())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::growth::fit_growth;

    #[test]
    fn a_cache_step_without_byte_counts_reads_as_n2_or_n3() {
        // A cost that is n² with a cubic part a quarter of it at the largest size (slope
        // about 2.1 over 2k..16k): exactly the shape a table outgrowing the caches gives an
        // n² design (measured: list membership in a Python program, doubling ratios 3.9,
        // 7.1, 4.1, 3.8). With no byte counts to tell them apart it is read as a pair.
        let sizes = [1000.0, 2000.0, 4000.0, 8000.0, 16000.0];
        let ms: Vec<f64> = sizes.iter().map(|n| n * n * (1.0 + n / 48_000.0)).collect();
        let time = fit_growth(&sizes, &ms).unwrap();
        assert_eq!(time.best, GrowthClass::Cubic, "the case this guards");
        assert!(time.top_slope < 2.3, "{}", time.top_slope);
        let (f, note) = bounded_by_bytes(&time, None).expect("read as a pair");
        assert_eq!(f.best, GrowthClass::Quadratic);
        assert_eq!(f.alternative, Some(GrowthClass::Cubic));
        assert!(note.contains("no byte counts"), "{note}");
        // A steeper rise (slope 2.9: a real cubic cost) keeps its class.
        let cubic: Vec<f64> = sizes.iter().map(|n| 1e-3 * n * n * n).collect();
        let time = fit_growth(&sizes, &cubic).unwrap();
        assert_eq!(time.best, GrowthClass::Cubic);
        assert!(bounded_by_bytes(&time, None).is_none());
    }
}
