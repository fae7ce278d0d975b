//! Tracking across runs: the statistics a regression gate needs to compare a baseline run
//! with a new one size by size (rank test, shift estimates with intervals). The gate itself
//! builds on these.

pub mod completeness;
pub mod gate;
pub mod stats;
