//! framecost: replay several designs of one table job on synthetic tables of growing size,
//! measure time and allocations side by side, and record how each cost grows.
//!
//! Data flows one way: [`spec`] (YAML, checked) → [`plan`] (resolved) → [`table`] (seeded
//! synthetic DataFrame) → [`measure`] (timed, interleaved samples; allocation counts) →
//! [`results`] (JSON lines on disk, written as they come) → [`present`] (terminal). Later
//! stages read saved results only.

pub mod analyse;
pub mod builtin;
pub mod cli;
pub mod explain;
pub mod fit;
pub mod measure;
pub mod patterns;
pub mod plan;
pub mod present;
pub mod results;
pub mod shape;
pub mod spec;
pub mod table;
pub mod track;
pub mod units;

/// Exit codes shared by every command.
pub mod exit {
    pub const OK: i32 = 0;
    /// The gate found a regression.
    pub const REGRESSION: i32 = 1;
    /// Bad input or usage.
    pub const BAD_INPUT: i32 = 2;
    /// A run failed (a step failed, or designs that should agree did not).
    pub const RUN_FAILED: i32 = 3;
    /// Results could not be written (disk full, no permission, a read-only folder).
    pub const WRITE_FAILED: i32 = 4;
    /// The sweep was interrupted (Ctrl-C or SIGTERM); finished points were kept
    /// (128 + SIGINT, as shells report it).
    pub const INTERRUPTED: i32 = 130;

    /// Every code with what it means, for `--help` and the man page.
    pub const ALL: &[(i32, &str)] = &[
        (OK, "success (for `gate`: no regression)"),
        (REGRESSION, "`gate` found a regression"),
        (BAD_INPUT, "bad input or usage: a workload file, an option, a run, a partial gate"),
        (RUN_FAILED, "a run failed: a step failed or overran, or outputs that should agree did not"),
        (WRITE_FAILED, "results or reports could not be written (disk full, no permission)"),
        (INTERRUPTED, "the sweep was interrupted (Ctrl-C, SIGTERM); finished points were kept"),
    ];
}
