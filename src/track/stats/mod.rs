//! Statistics core of the regression gate: a rank test (is the new run's
//! timing distribution different from the baseline's?) and shift estimates
//! (by how much, as a ratio new/base, with an interval).
//!
//! The one thing to know: **everything is distribution-free and works on
//! ranks or on pairwise log-differences, so a few wild outliers move the
//! answers very little** — but the rank test only says *whether* the two
//! samples differ; use [`hodges_lehmann_ratio_ci`] (or
//! [`bootstrap_ratio_ci`]) to say *by how much*, and gate on both.
//!
//! Layout:
//! - [`rank`]: Mann–Whitney U test ([`mann_whitney`]), exact null
//!   distribution ([`exact_u_cdf`], [`critical_u`]). Conventions follow
//!   scipy 1.17.1 `scipy.stats.mannwhitneyu` (two-sided).
//! - [`shift`]: Hodges–Lehmann ratio with the Moses interval, percentile
//!   bootstrap of the median ratio, and the [`SplitMix64`] generator.
//! - [`normal`]: `erfc`, the normal survival function and its inverse.
//! - [`fdr`]: Benjamini–Hochberg adjusted p-values over a workload's tests.
//!
//! No function panics on any input slice; bad input gives a [`StatsError`].

pub mod fdr;
pub mod normal;
pub mod rank;
pub mod shift;

pub use fdr::benjamini_hochberg;
pub use normal::{erfc, normal_sf, normal_upper_quantile};
pub use rank::{approx_critical_u, critical_u, exact_u_cdf, mann_whitney, MannWhitney, Method};
pub use shift::{bootstrap_ratio_ci, hodges_lehmann_ratio, hodges_lehmann_ratio_ci, SplitMix64};



use std::fmt;

/// Why a statistic could not be computed. `sample` names the argument
/// (`"x"`, `"y"`, `"base"`, `"new"`).
#[derive(Debug, Clone, PartialEq)]
pub enum StatsError {
    /// A sample has no values.
    EmptySample { sample: &'static str },
    /// A sample holds a NaN at `index`.
    NotANumber { sample: &'static str, index: usize },
    /// A log-scale estimate got a value that is not finite and > 0.
    NotPositiveFinite { sample: &'static str, index: usize, value: f64 },
    /// `Method::Exact` was asked for on tied data; the exact null
    /// distribution computed here assumes no ties. Use `Auto`/`Asymptotic`.
    ExactWithTies,
    /// The exact null distribution is too large to enumerate here
    /// (see [`rank`] for the limits).
    ExactTooLarge { n1: usize, n2: usize },
    /// A confidence level outside the open interval (0, 1).
    BadConfidence(f64),
    /// The samples are too small for any order-statistic interval to reach
    /// the requested confidence.
    TooFewForConfidence { n1: usize, n2: usize, confidence: f64 },
    /// `resamples` was 0.
    NoResamples,
}

impl fmt::Display for StatsError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            StatsError::EmptySample { sample } => write!(f, "sample `{sample}` is empty"),
            StatsError::NotANumber { sample, index } => {
                write!(f, "sample `{sample}` holds NaN at index {index}")
            }
            StatsError::NotPositiveFinite { sample, index, value } => write!(
                f,
                "sample `{sample}` holds {value} at index {index}; a ratio needs finite values > 0"
            ),
            StatsError::ExactWithTies => {
                write!(f, "exact Mann-Whitney p-value requested on tied data")
            }
            StatsError::ExactTooLarge { n1, n2 } => {
                write!(f, "exact U distribution for {n1} x {n2} is too large to enumerate")
            }
            StatsError::BadConfidence(c) => write!(f, "confidence {c} is not in (0, 1)"),
            StatsError::TooFewForConfidence { n1, n2, confidence } => write!(
                f,
                "{n1} x {n2} values are too few for a {confidence} confidence interval"
            ),
            StatsError::NoResamples => write!(f, "bootstrap needs at least one resample"),
        }
    }
}

impl std::error::Error for StatsError {}
