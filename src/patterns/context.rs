//! What a step may see besides its input, handed to every [`super::Step::run`]: the size's
//! tables and engine (for queries), the folder a step may write into, the deadline of the
//! run, and what the user allowed on the command line.
//!
//! The runner builds one context per design and size, before the clock starts; a step only
//! reads it, so passing it costs nothing inside the timed region. A newcomer must know:
//! a step that writes files asks for its folder under `temp` (never reads the environment
//! itself inside the timed region), and `RunContext::default()` is what tests and
//! stand-alone runs use — no tables, no deadline, nothing extra allowed, and an empty
//! `temp` that stands for the system's temp folder (so making one allocates nothing).

use crate::spec::model::EngineChoice;
use polars::prelude::LazyFrame;
use std::borrow::Cow;
use std::path::{Path, PathBuf};
use std::time::Instant;

/// What a step may see besides its input.
#[derive(Clone)]
pub struct RunContext {
    /// Every table by name, first table first (in memory, or scans of Parquet chunks).
    pub tables: Vec<(String, LazyFrame)>,
    pub engine: EngineChoice,
    /// The folder steps make their own temp folders in (the system's temp folder, read once
    /// when the runner makes the context); empty: read it when asked ([`RunContext::temp_base`]).
    pub temp: PathBuf,
    /// When the runaway guard would end this run; a step that can stop early may look.
    pub deadline: Option<Instant>,
    /// What the user allowed for this sweep.
    pub allowed: Allowed,
}

/// What the user allowed on the command line, as far as it reaches a run.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Allowed {
    /// `sweep --allow-programs`: designs that are programs may run.
    pub programs: bool,
    /// `sweep --force`: sizes run even when their estimated memory does not fit.
    pub oversize: bool,
}

impl Default for RunContext {
    fn default() -> Self {
        RunContext { tables: Vec::new(), engine: EngineChoice::default(), temp: PathBuf::new(), deadline: None, allowed: Allowed::default() }
    }
}

impl Allowed {
    /// What reaches a design's runs: `programs` for a program design (a workload with
    /// programs reaches the runner only with `--allow-programs`), `oversize` as `--force`.
    pub fn of(programs: bool, oversize: bool) -> Allowed {
        Allowed { programs, oversize }
    }
}

impl RunContext {
    /// The same context with the run's deadline and what the user allowed.
    pub fn limited(self, deadline: Instant, allowed: Allowed) -> RunContext {
        RunContext { deadline: Some(deadline), allowed, ..self }
    }

    /// A context for a sweep: the system's temp folder read now (outside any timed region).
    pub fn for_sweep(tables: Vec<(String, LazyFrame)>, engine: EngineChoice) -> RunContext {
        RunContext { tables, engine, temp: std::env::temp_dir(), ..RunContext::default() }
    }

    /// The folder to make temp folders in.
    pub fn temp_base(&self) -> Cow<'_, Path> {
        if self.temp.as_os_str().is_empty() {
            Cow::Owned(std::env::temp_dir())
        } else {
            Cow::Borrowed(&self.temp)
        }
    }
}
