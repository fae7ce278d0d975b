//! Measurement: the clock, the allocation counter, order statistics, machine facts, and
//! the runner that sweeps designs over sizes.

pub mod again;
pub mod alloc;
pub mod clock;
pub mod admit;
pub mod equivalence;
pub mod execute;
pub mod query_sizes;
pub mod extra;
pub mod files_probe;
pub mod headers;
pub mod hygiene;
pub mod inputs;
pub mod interrupt;
mod lap;
pub mod machine;
pub mod memory;
pub mod options;
mod point;
pub mod program;
pub mod runner;
pub mod sampling;
pub mod stopping;
pub mod scrub;
pub mod supervise;
pub mod stats;
pub mod watchdog;
pub mod worker;
