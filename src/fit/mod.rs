//! Growth fitting: how a measured cost grows with the size of the data.
//!
//! This module is pure math on `f64` with no dependencies beyond `std`. It is
//! layered bottom-up, each file using only the ones above it:
//!
//! - [`rng`]: a small seeded generator (SplitMix64) so that bootstraps and
//!   test noise are reproducible bit for bit;
//! - [`sample`]: median and the type-7 sample quantile;
//! - [`dist`]: Student-t distribution (CDF and quantile) for intervals;
//! - `qr`: the Householder QR core of least squares (private);
//! - [`lsq`]: weighted linear least squares: input checks, centring, the fit's
//!   error estimates;
//! - [`growth`]: growth classes, in its own folder: the vocabulary of terms and
//!   classes (`classes.rs`), the slopes the data show — log-log slopes, doubling
//!   ratios, bootstrap exponents (`slopes.rs`), one class fitted with its
//!   lower-order terms, non-negative coefficients (`candidate.rs`), and the choice
//!   among classes by AICc, checked against the log-log slope (`mod.rs`);
//! - [`predict`](mod@predict): cost at an unmeasured size with a prediction interval, and
//!   the size where two designs cross.
//!
//! The one thing a newcomer must know: **every growth fit works in relative
//! error** (weights `1/y²`), because costs span many decades and a 10 %
//! wobble at the largest size must not drown the smallest sizes. Residual SDs,
//! AICc values and intervals are therefore all in relative terms.
//!
//! Every fallible function returns [`FitError`]; nothing here panics on bad
//! input (empty, NaN, mismatched lengths, zero or negative values).

pub mod dist;
pub mod growth;
pub mod lsq;
pub mod predict;
mod qr;
pub mod rng;
pub mod sample;

use std::fmt;

pub use growth::{
    admissible_slopes, curve_at, doubling_ratios, exponent_with_ci, fit_growth, fit_growth_with, loglog_slope, Candidate,
    ExponentEstimate, GrowthClass, GrowthFit, Rejection, Term,
};
pub use lsq::{solve, LsqFit};
pub use predict::{crossover, predict, Crossover, Prediction, Which};

/// Everything that can go wrong in this module, with the offending values.
#[derive(Debug, Clone, PartialEq)]
pub enum FitError {
    /// No data at all.
    Empty,
    /// Two inputs that must have the same length do not.
    LengthMismatch {
        what: &'static str,
        expected: usize,
        found: usize,
    },
    /// A row of the design matrix has a different number of columns.
    RaggedRows {
        row: usize,
        expected: usize,
        found: usize,
    },
    /// A NaN or infinity where a finite number was needed.
    NonFinite { what: &'static str, index: usize },
    /// A value that must be strictly positive is not (sizes, costs, weights).
    NonPositive {
        what: &'static str,
        index: usize,
        value: f64,
    },
    /// Fewer observations than the computation needs.
    TooFewPoints { found: usize, needed: usize },
    /// Fewer distinct sizes than needed to tell growth classes apart.
    TooFewSizes { found: usize, needed: usize },
    /// A column of the design matrix is (numerically) a combination of the
    /// columns before it.
    RankDeficient { column: usize },
    /// Sizes must strictly increase for this computation.
    NotIncreasing { index: usize },
    /// A parameter of the call itself is out of range.
    BadArgument { what: &'static str, detail: String },
    /// The inputs were valid but the arithmetic overflowed or lost all
    /// precision (for example values near 1e300).
    Numerical { detail: String },
    /// Every growth class was fitted, but none agrees with the measured
    /// log-log slope over the largest sizes: the growth is unclear.
    NoClassAgrees { slope: f64 },
}

impl fmt::Display for FitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            FitError::Empty => write!(f, "no data points"),
            FitError::LengthMismatch {
                what,
                expected,
                found,
            } => {
                write!(f, "{what}: expected {expected} values, found {found}")
            }
            FitError::RaggedRows {
                row,
                expected,
                found,
            } => {
                write!(f, "row {row} has {found} columns, expected {expected}")
            }
            FitError::NonFinite { what, index } => {
                write!(f, "{what}[{index}] is not a finite number")
            }
            FitError::NonPositive { what, index, value } => {
                write!(f, "{what}[{index}] = {value} must be greater than zero")
            }
            FitError::TooFewPoints { found, needed } => {
                write!(f, "{found} data points, need at least {needed}")
            }
            FitError::TooFewSizes { found, needed } => {
                write!(f, "{found} distinct sizes, need at least {needed}")
            }
            FitError::RankDeficient { column } => write!(
                f,
                "column {column} of the design matrix is a combination of the others"
            ),
            FitError::NotIncreasing { index } => {
                write!(f, "sizes must strictly increase (at index {index})")
            }
            FitError::BadArgument { what, detail } => write!(f, "{what}: {detail}"),
            FitError::Numerical { detail } => write!(f, "numerical failure: {detail}"),
            FitError::NoClassAgrees { slope } => write!(
                f,
                "unclear: no growth class agrees with the log-log slope {slope:.2} over the largest sizes"
            ),
        }
    }
}

impl std::error::Error for FitError {}

/// Check that every value is finite.
pub(crate) fn check_finite(what: &'static str, values: &[f64]) -> Result<(), FitError> {
    match values.iter().position(|v| !v.is_finite()) {
        Some(index) => Err(FitError::NonFinite { what, index }),
        None => Ok(()),
    }
}

/// Check that every value is finite and strictly positive.
pub(crate) fn check_positive(what: &'static str, values: &[f64]) -> Result<(), FitError> {
    check_finite(what, values)?;
    match values.iter().position(|&v| v <= 0.0) {
        Some(index) => Err(FitError::NonPositive {
            what,
            index,
            value: values[index],
        }),
        None => Ok(()),
    }
}
