//! The analysis's records: one metric's growth (`GrowthOut`), an exponent, a prediction, a
//! hold-out check, a design's whole analysis and a crossover — what `--json`, the
//! explanation, the pictures and the gate read — and the translation of a growth fit into
//! its record. Kept apart from the fitting so the records can be read without it.

use crate::fit::growth::{curve_at, GrowthClass, GrowthFit, Term};
use crate::fit::FitError;
use serde::{Deserialize, Serialize};

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
    /// Every class the fit tried, simplest first: how far its AICc came from the reported
    /// class's, or why it was left out. Empty in analyses written before it was recorded.
    #[serde(default)]
    pub tried: Vec<ClassTried>,
}

/// How one growth class fared in a fit ([`GrowthOut::tried`]).
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ClassTried {
    pub class: String,
    /// Its AICc minus the reported class's: positive fits worse; negative fitted better but
    /// lost to the parsimony rule or a reading of the bytes. None when left out.
    #[serde(default)]
    pub aicc_over_reported: Option<f64>,
    /// Why the class took no part ("slope 0.12 outside its range", say).
    #[serde(default)]
    pub left_out: Option<String>,
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
    /// The prediction carries a copying term: the time fitted as rows plus allocated
    /// bytes, because the bytes grow a class faster than the time (`analyse::copying`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub copying: Option<CopyingOut>,
    /// The prediction follows the rise over the largest fitted sizes, which was steeper
    /// than the class continues it (`analyse::trend`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub trend: Option<TrendOut>,
    /// The factor each way the interval was widened by for extrapolating past the largest
    /// fitted size (`fit::predict::extrapolation_allowance`), in quadrature with the noise;
    /// absent inside the fitted sizes and in analyses made before it existed.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub allowance: Option<f64>,
}

impl PredictionOut {
    /// How many times the largest fitted size the predicted size is (1 inside the fitted
    /// sizes).
    pub fn beyond_fitted(&self) -> f64 {
        10f64.powf(self.extrapolation_decades)
    }
}

/// The recent trend a prediction was raised to.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct TrendOut {
    /// Log-log slope of the medians over the largest three fitted sizes.
    pub slope: f64,
    /// The largest fitted size and its median (ns): where the trend is continued from.
    pub from_rows: u64,
    pub from_ns: f64,
    /// What the class (and any copying term) predicted (ns).
    pub class_ns: f64,
    /// The trend is followed up to this size; past it the prediction grows as the class.
    #[serde(default)]
    pub reach_rows: f64,
}

impl TrendOut {
    /// The trend continued to `n` (ns), up to `reach_rows`.
    pub fn cost_at(&self, n: f64) -> f64 {
        let n = if self.reach_rows > 0.0 { n.min(self.reach_rows) } else { n };
        self.from_ns * (n / self.from_rows.max(1) as f64).powf(self.slope)
    }
}

/// The copying term of a prediction.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct CopyingOut {
    /// How the allocated bytes grow ("n²").
    pub bytes_class: String,
    /// Fitted time per allocated byte (ns).
    pub ns_per_byte: f64,
    /// The bytes term's share of the fitted time at the largest fitted size.
    pub share_at_largest: f64,
    /// That size (0 from an old analysis).
    #[serde(default)]
    pub largest_rows: u64,
    /// Its share of the predicted time.
    pub share_predicted: f64,
    /// What the time class alone predicted there (ns).
    pub time_class_ns: f64,
    /// The fitted time: fixed cost (ns), cost per row (ns), and the bytes' growth curve
    /// (term label, coefficient) the cost per byte multiplies.
    #[serde(default)]
    pub fixed_ns: f64,
    #[serde(default)]
    pub per_row_ns: f64,
    #[serde(default)]
    pub bytes_terms: Vec<(String, f64)>,
}

impl CopyingOut {
    /// The copy model's time at `n` (None from an old analysis without its curve).
    pub fn cost_at(&self, n: f64) -> Option<f64> {
        if self.bytes_terms.is_empty() {
            return None;
        }
        let terms: Vec<(Term, f64)> = self.bytes_terms.iter().filter_map(|(t, c)| Term::from_label(t).map(|t| (t, *c))).collect();
        Some(self.fixed_ns + self.per_row_ns * n + self.ns_per_byte * curve_at(&terms, n))
    }
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
    /// Cores the design kept busy (CPU time over wall time) at the checked size, and at the
    /// largest fitted size: a step that goes parallel between them (polars splits work across
    /// threads above a size of its own) runs faster than any curve of the fitted sizes says.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cores: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cores_fitted: Option<f64>,
    /// The cache levels (2, 3…) the table passed between the largest fitted size and the
    /// checked one, by the rule of the `caches` finding (`analyse::caches`); empty when
    /// none, when the run recorded no caches, or for a groups or columns sweep.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub caches_passed: Vec<u8>,
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

impl CrossoverOut {
    /// The measured comparisons show this crossing: at some compared size below it
    /// `faster_below` was the cheaper of the two, and at some size above it `faster_above`
    /// was. Fitted curves alone may cross where every measurement has one design ahead (a
    /// columns sweep, and a related-tables sweep whose constant fit crossed a rising one at
    /// 1.4k rows while the constant design was measured faster from 1.3k to 21k rows): such
    /// a crossing inside the measured range is not stated.
    pub fn borne_out<'a>(&self, comparisons: impl IntoIterator<Item = &'a crate::results::ComparisonRecord>) -> bool {
        let (mut below, mut above) = (false, false);
        for m in comparisons {
            let r = |d: &str| m.ratios.iter().find(|x| x.design == d).map(|x| x.ratio);
            let (Some(lo), Some(hi)) = (r(&self.faster_below), r(&self.faster_above)) else { continue };
            below |= (m.rows as f64) < self.rows && lo < hi;
            above |= (m.rows as f64) > self.rows && hi < lo;
        }
        below && above
    }
}

impl GrowthOut {
    /// The class that came closest, in words: "next best n², ΔAICc 4.6", or — when the
    /// parsimony rule kept the slower-growing class over a better AICc (a negative ΔAICc,
    /// which printed bare reads as an error) — "n² fits 1.0 AICc units better, inside the
    /// parsimony margin, so the slower-growing class is kept". Empty without a runner-up.
    pub fn contender(&self) -> String {
        match &self.runner_up {
            None => String::new(),
            Some(r) if self.delta_aicc < 0.0 => format!("{r} fits {:.1} AICc units better, inside the parsimony margin, so the slower-growing class is kept", -self.delta_aicc),
            Some(r) => format!("next best {r}, ΔAICc {:.1}", self.delta_aicc),
        }
    }
    /// "n", "n or n log n", "n to n²", or "unclear (slope 0.42)".
    pub fn label(&self) -> String {
        if self.class == "unclear" {
            return format!("unclear (slope {:.2})", self.top_slope.unwrap_or(f64::NAN));
        }
        pair_of(&self.class, self.alternative.as_deref())
    }

    /// True when `class` is the chosen class, the alternative, or between them.
    pub fn admits(&self, class: GrowthClass) -> bool {
        let Some(best) = class_of(&self.class) else { return false };
        let alt = self.alternative.as_deref().and_then(class_of).unwrap_or(best);
        (best.rank().min(alt.rank())..=best.rank().max(alt.rank())).contains(&class.rank())
    }

    /// How this growth meets a workload's expected class (`expect: {time: …}`): the one
    /// reading the finding, the report's table and the terminal's share.
    pub fn meets(&self, expected: &str) -> Meets {
        let want = class_of(expected);
        // A pair ("n or n log n") meets an expectation of either class.
        if want.is_some_and(|c| self.admits(c)) {
            return Meets::Yes;
        }
        // Neighbours that a few decades of sizes cannot separate well: n and n log n,
        // constant and log n (a rise of a few percent per decade).
        use GrowthClass::*;
        match (want, class_of(&self.class)) {
            (Some(Linear), Some(Linearithmic)) | (Some(Linearithmic), Some(Linear)) | (Some(Constant), Some(Log)) | (Some(Log), Some(Constant)) => Meets::Near,
            _ => Meets::No,
        }
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
            tried: vec![],
        }
    }
}

/// A growth fit for the analysis: the class, or "unclear" when no class agrees with the
/// slope; other fit failures are returned as the note to record.
pub(super) fn growth_out(fit: &Result<GrowthFit, FitError>, sizes: usize) -> Result<GrowthOut, String> {
    match fit {
        Ok(f) => Ok(out(f)),
        Err(FitError::NoClassAgrees { slope }) => Ok(GrowthOut::unclear(*slope, sizes)),
        Err(e) => Err(e.to_string()),
    }
}

/// The record of a growth fit.
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
        tried: tried(f),
    }
}

/// Each class's standing in the fit `f`, against the class `f` reports.
fn tried(f: &GrowthFit) -> Vec<ClassTried> {
    use crate::fit::growth::Rejection;
    let reported = f.candidate(f.best).map_or(f64::NAN, |c| c.aicc);
    f.candidates
        .iter()
        .map(|c| {
            let left_out = c.rejection.as_ref().map(|r| match r {
                Rejection::NegativeSlope { .. } => "its leading coefficient cannot be positive".to_string(),
                Rejection::FitFailed(e) => format!("the fit failed: {e}"),
                Rejection::SlopeDisagrees { slope } => format!("slope {slope:.2} outside its range"),
                Rejection::LeadingTermNegligible { share } => format!("its leading term is {:.0}% of the cost at the largest size", share * 100.0),
            });
            let aicc_over_reported = (left_out.is_none() && c.aicc.is_finite() && reported.is_finite()).then(|| c.aicc - reported);
            ClassTried { class: c.class.label().to_string(), aicc_over_reported, left_out }
        })
        .collect()
}

/// How a measured growth meets an expected class ([`GrowthOut::meets`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Meets {
    /// The class, or one of the pair (or between them).
    Yes,
    /// A neighbouring class a few decades of sizes cannot separate well.
    Near,
    No,
}

impl Meets {
    /// "met", "close", "not met".
    pub fn word(self) -> &'static str {
        match self {
            Meets::Yes => "met",
            Meets::Near => "close",
            Meets::No => "not met",
        }
    }

    /// The terminal's mark: ✓, ≈, ✗.
    pub fn mark(self) -> &'static str {
        match self {
            Meets::Yes => "✓",
            Meets::Near => "≈",
            Meets::No => "✗",
        }
    }
}

/// A class label back to the class.
pub fn class_of(label: &str) -> Option<GrowthClass> {
    GrowthClass::from_label(label)
}

/// "n or n log n" from a class label and its alternative's (the label itself when it is no
/// class).
pub fn pair_of(class: &str, alternative: Option<&str>) -> String {
    match (class_of(class), alternative.and_then(class_of)) {
        (Some(best), alt) => crate::fit::growth::pair_label(best, alt),
        (None, _) => class.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::GrowthOut;

    #[test]
    fn the_closest_class_is_worded_by_the_sign_of_its_difference() {
        let mut g = GrowthOut::unclear(1.0, 5);
        assert_eq!(g.contender(), "");
        g.runner_up = Some("n²".into());
        g.delta_aicc = 4.6;
        assert_eq!(g.contender(), "next best n², ΔAICc 4.6");
        g.delta_aicc = -1.0;
        assert_eq!(g.contender(), "n² fits 1.0 AICc units better, inside the parsimony margin, so the slower-growing class is kept");
    }
}
