//! Settings of a sweep that come from the command line, not the spec: shared by the runner,
//! the supervisor and the measuring child.

/// Settings of a sweep that are not in the spec.
#[derive(Debug, Clone)]
pub struct SweepOptions {
    /// Run sizes even when their estimated memory does not fit.
    pub force: bool,
    /// Share of the available memory one size may use.
    pub memory_share: f64,
    /// Runs (warm-up plus samples) a point must be predicted to afford; fewer and it is skipped.
    pub runs_needed: f64,
    /// Seed for the bootstrap of ratios.
    pub seed: u64,
    /// Start at a later size, after an earlier measuring process ended abnormally.
    pub resume: Option<super::worker::Resume>,
    /// Leave the caches as the previous sample left them (no sweep before each sample).
    pub warm_caches: bool,
    /// Measure one more size for designs whose time class the planned sizes leave
    /// unsettled (`extra.rs`); on with `sweep --extra-size`.
    pub extra_size: bool,
}

impl Default for SweepOptions {
    fn default() -> Self {
        SweepOptions { force: false, memory_share: 0.8, runs_needed: 4.0, seed: 0x0f2a_3e5c, resume: None, warm_caches: false, extra_size: false }
    }
}
